"""The charts' SVG drawing (report/plot.py): text widths from the font file, round-number ticks, escaping, and the
labels as a browser draws them (no two overlap, none wider than the layout allowed)."""

from __future__ import annotations

import itertools
import math
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
from hypothesis import given
from hypothesis import strategies as st

from rulecheck.report import charts, html, plot

from . import browser

ROOT = Path(__file__).resolve().parents[2]


def test_widths_are_the_advances_of_dejavu_sans():
    # the table is checked against the font file matplotlib ships (DejaVu Sans, unhinted horizontal advances at
    # 1000 units to the em): a label's box is as wide as the text a browser draws in that font
    from matplotlib import ft2font
    from matplotlib.font_manager import FontProperties, findfont

    font = ft2font.FT2Font(findfont(FontProperties(family="DejaVu Sans"), fallback_to_default=False))
    font.set_size(1000, 72)
    for ch, width in plot.WIDTHS.items():
        glyph = font.load_char(ord(ch), flags=ft2font.LoadFlags.NO_HINTING)
        assert width == round(glyph.horiAdvance / 64), ch
    assert plot.text_width("Torque", 10.0) == pytest.approx((611 + 612 + 411 + 635 + 634 + 615) / 100)
    # a character the table does not have counts a whole em: never narrower than drawn
    assert plot.text_width("\u4e2d", 9.0) == 9.0
    assert plot.text_width("ab\nabcd", 10.0) == plot.text_width("abcd", 10.0)


@given(st.floats(-1e6, 1e6, allow_nan=False), st.floats(1e-3, 1e6, allow_nan=False))
def test_ticks_are_round_numbers_inside_the_range(lo, span):
    hi = lo + span
    ticks = plot.nice_ticks(lo, hi, 8)
    assert 2 <= len(ticks) <= 9
    step = ticks[1] - ticks[0]
    mantissa = step / 10 ** math.floor(math.log10(step))
    assert min(abs(mantissa - m) for m in (1, 2, 2.5, 5, 10)) < 1e-4, step  # float rounding at 1e6 ± 1e-3
    for a, b in itertools.pairwise(ticks):
        assert b - a == pytest.approx(step, rel=1e-4)
    tol = 1e-9 * max(abs(lo), abs(hi), 1.0)
    assert lo - tol <= ticks[0] and ticks[-1] <= hi + tol
    assert ticks[0] - step < lo + tol and ticks[-1] + step > hi - tol  # no room left for another tick


def test_tick_labels():
    assert [plot.tick_text(v, 500.0) for v in (-1000.0, 0.0, 1500.0)] == ["−1000", "0", "1500"]
    assert [plot.tick_text(v, 2.5) for v in (0.0, 2.5, 7.5)] == ["0.0", "2.5", "7.5"]
    assert plot.tick_text(-1e-17, 0.2) == "0.0"  # no "−0.0"
    assert plot.tick_text(0.25, 0.05) == "0.25"


def test_text_is_escaped_and_the_drawing_is_xml():
    fig = plot.Figure(300, 200)
    ax = fig.add_axes(title="a < b & c", xlabel="x \"q\"", ylabel="y")
    ax.plot([0, 1], [0, 1], label="<script>alert(1)</script>", marker="X")
    ax.annotate("]]></svg><script>", 0.5, 0.5)
    ax.legend = "best"
    svg = fig.svg()
    assert "<script" not in svg
    root = ET.fromstring(svg)
    texts = ["".join(t.itertext()) for t in root.iter("{http://www.w3.org/2000/svg}text")]
    assert "a < b & c" in texts and "<script>alert(1)</script>" in texts and "]]></svg><script>" in texts


def test_a_level_and_the_data_set_the_limits():
    fig = plot.Figure(300, 200)
    ax = fig.add_axes()
    ax.plot([0, 100], [10, 20])
    ax.level(50.0)
    x0, x1, y0, y1 = ax.limits()
    assert (x0, x1) == (pytest.approx(-5.0), pytest.approx(105.0))  # 5 % margins, as usual for charts
    assert y0 == pytest.approx(10 - 2.0) and y1 == pytest.approx(50 + 2.0)
    ax.ylim = (0.0, None)
    assert ax.limits()[2] == 0.0


@pytest.fixture(scope="module")
def demo():
    sys.path.insert(0, str(ROOT))
    from rulecheck.run import RunOptions, run_with_charts

    result, series = run_with_charts(RunOptions(paths=[str(ROOT / "specs_demo")], charts=True, cache_dir=None))
    return result, series


def test_labels_drawn_by_a_browser_do_not_overlap(chromium, demo, tmp_path):
    # the demo's charts in headless Chromium: every label's drawn box (getBBox, in the chart's own units) is no
    # wider than the box the layout placed (the widths are DejaVu Sans's; a fallback font is narrower), and no two
    # drawn labels, nor a label and a legend, overlap
    from rulecheck.result import with_charts

    result, series = demo
    page = browser.write_report(tmp_path, "demo.html", html.render(with_charts(result, series)))
    expected = {}
    for number, spec in enumerate(html.common.sorted_specs(with_charts(result, series)["specs"]), start=1):
        for key in charts.available(spec):
            fig = charts.figure(key, spec["charts"][key], failing=charts.failing_rules(spec))
            expected[f"dt{number}-{key}"] = [lb for ax in fig.axes for lb in ax.labels]
    with browser.DevTools(chromium) as devtools:
        session, _ = devtools.open(page.as_uri())
        drawn = devtools.evaluate(session, """
            Object.fromEntries(Array.from(document.querySelectorAll('svg.chart')).map(svg => [
              svg.getAttribute('aria-labelledby').split(' ')[0].replace(/-title$/, ''),
              {labels: Array.from(svg.querySelectorAll('text.label')).map(t => {
                 const b = t.getBBox(); return [t.textContent, b.x, b.y, b.width, b.height]; }),
               legends: Array.from(svg.querySelectorAll('rect.legend')).map(r => {
                 const b = r.getBBox(); return [b.x, b.y, b.width, b.height]; })}]))""")
    assert set(drawn) == set(expected) and len(drawn) >= 11
    for chart, found in drawn.items():
        boxes = [plot.Box(x, y, x + w, y + h) for _text, x, y, w, h in found["labels"]]
        legends = [plot.Box(x, y, x + w, y + h) for x, y, w, h in found["legends"]]
        assert len(boxes) == len(expected[chart]), chart
        for (text, _x, _y, w, _h), placed in zip(found["labels"], expected[chart], strict=True):
            assert text == placed.text.replace("\n", "")
            assert w <= (placed.box.x1 - placed.box.x0) * 1.02 + 0.5, (chart, text, w, placed.box)
        for a, b in itertools.combinations(boxes, 2):
            assert not a.overlaps(b), (chart, a, b)
        for a in boxes:
            assert not any(a.overlaps(leg) for leg in legends), (chart, a)


def test_a_label_that_looks_like_markup_is_not_rewritten_with_the_ids():
    # charts.svg prefixes ids and references by plain replacement: text that reads like them stays as written
    from . import sample

    data = sample.conveyor()["charts"]["torque_speed"]
    data["load_points"] = [{"speed": 500, "torque": 12.5, "label": 'a id="b" url(#c) href="#d"'}]
    svg = charts.svg("torque_speed", data, chart_id="dt7-ts")
    texts = ["".join(t.itertext()) for t in ET.fromstring(svg).iter("text")]  # inline: no namespace
    assert 'a id="b" url(#c) href="#d"' in texts
    ids = {e.get("id") for e in ET.fromstring(svg).iter() if e.get("id")}
    assert ids and all(i.startswith("dt7-ts-") for i in ids)
