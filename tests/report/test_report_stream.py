"""The HTML report written as results arrive (html.StreamedReport, `check --format html -o FILE`): the same page
as the report rendered whole, every section once and in the report's order, one spec held at a time."""

from __future__ import annotations

import copy
import importlib.util
import json
import os
import re
import subprocess
import sys
import weakref
from pathlib import Path

import pytest

from rulecheck import cli
from rulecheck.report import charts, common, html

from . import sample
from .htmlscan import scan

ROOT = Path(__file__).resolve().parents[2]


def _streamed(result: dict, *, chart_series: bool = False, drawings: list | None = None, **kw) -> str:
    """Return the page StreamedReport writes for ``result``'s specs fed one by one."""
    head = {k: v for k, v in result.items() if k not in ("specs", "summary")}
    report = html.StreamedReport(head, **kw)
    chunks: list[bytes] = []
    try:
        for k, spec in enumerate(result["specs"]):
            series = spec.get("charts") if chart_series else None
            report.add({key: v for key, v in spec.items() if key != "charts"}, series,
                       drawings[k] if drawings else None)
        report.write(chunks.append)
    finally:
        report.close()
    return b"".join(chunks).decode("utf-8")


@pytest.mark.parametrize("name", ["conveyor", "servo", "hoist", "invalid", "hostile", "plant"])
def test_streamed_page_is_the_page_rendered_whole(samples, name):
    result = samples[name]
    assert _streamed(result, charts=False) == html.render(result, charts=False)


def test_streamed_page_in_customary_units_with_a_page_header(samples):
    meta = {"project": "Harrowgate <terminal>", "revision": "C", "reviewer": "A. Reviewer", "paper": "letter"}
    whole = html.render(samples["plant"], charts=False, units="customary", meta=meta)
    assert _streamed(samples["plant"], charts=False, units="customary", meta=meta) == whole
    assert "Harrowgate &lt;terminal&gt;" in whole


def test_a_bad_paper_or_units_is_refused_before_any_spec():
    with pytest.raises(ValueError, match="paper"):
        html.StreamedReport({}, meta={"paper": "a3"})
    with pytest.raises(ValueError, match="units"):
        html.StreamedReport({}, units="imperial")


def test_a_chart_drawn_by_the_checking_is_used_and_the_others_are_drawn_here(samples):
    result = copy.deepcopy(samples["plant"])
    with_charts = [k for k, s in enumerate(result["specs"]) if charts.available(s)]
    assert with_charts, "the plant sample has charts"
    k = with_charts[0]
    keys = charts.available(result["specs"][k])
    given = '<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 10 10"><g id="given-body"></g></svg>'
    drawings: list = [None] * len(result["specs"])
    drawings[k] = {keys[0]: given}
    page = _streamed(result, chart_series=True, drawings=drawings, charts=True)
    total = sum(len(charts.available(s)) for s in result["specs"])
    assert page.count('class="chart" role="img"') == total  # every chart there: the given one and those drawn
    assert page.count("given-body") == 1  # the given drawing, its id prefixed for the page
    assert re.search(r'id="dt\d+-' + re.escape(keys[0]) + '-given-body"', page)
    ids = re.findall(r'\bid="([^"]+)"', page)
    assert len(ids) == len(set(ids))  # element ids stay unique across the sections' charts


class _Spec(dict):
    """A spec result that can be watched (a plain dict cannot be weakly referenced)."""


def test_the_writer_holds_one_spec_result_at_a_time(samples):
    base = samples["plant"]["specs"]
    alive: set[int] = set()
    most = [0]

    def results(n: int):
        for i in range(n):
            spec = _Spec(copy.deepcopy(base[i % len(base)]), tag=f"T-{i:03d}", title=f"Drive {i}")
            alive.add(i)
            weakref.finalize(spec, alive.discard, i)
            most[0] = max(most[0], len(alive))
            yield spec

    head = {k: v for k, v in samples["plant"].items() if k not in ("specs", "summary")}
    report = html.StreamedReport(head, charts=False)
    chunks: list[bytes] = []
    try:
        for spec in results(60):
            report.add(spec)
        assert len(alive) <= 1
        report.write(chunks.append)
    finally:
        report.close()
    assert most[0] <= 2  # the one being added and, at most, the one before it not yet collected
    page = b"".join(chunks).decode("utf-8")
    sections = re.findall(r'<span class="num-tag">\d+\.</span> (T-\d{3}) —', page)
    rows = re.findall(r'<a href="#dt-\d+">(T-\d{3}) —', page)
    assert sorted(sections) == sorted(rows) == [f"T-{i:03d}" for i in range(60)]  # each once, summary and section


def test_chart_series_are_let_go_once_written():
    class Stream:
        charts = [{"a": 1}, {"b": 2}]
        drawings = [{"a": "<svg/>"}]

    stream = Stream()
    assert cli._charts_of(stream, 0) == ({"a": 1}, {"a": "<svg/>"})
    assert cli._charts_of(stream, 1) == ({"b": 2}, None)
    assert stream.charts == [None, None] and stream.drawings == [None]


def _generate(folder: Path, n: int) -> None:
    spec = importlib.util.spec_from_file_location("bench_generate_stream", ROOT / "bench" / "generate.py")
    assert spec and spec.loader
    module = importlib.util.module_from_spec(spec)
    sys.modules["bench_generate_stream"] = module
    spec.loader.exec_module(module)
    module.generate(folder, n, 3)


def test_streamed_report_of_generated_specs_has_every_section_once_in_order(tmp_path):
    corpus = tmp_path / "corpus"
    _generate(corpus, 24)
    env = {**os.environ, "PYTHONPATH": str(ROOT), "XDG_STATE_HOME": str(tmp_path / "state")}
    proc = subprocess.run([sys.executable, "-m", "rulecheck", "check", "corpus", "--no-cache", "--no-charts",
                           "--format", "html", "-o", "r.html", "--report", "json=r.json", "--jobs", "2"],
                          cwd=tmp_path, capture_output=True, text=True, env=env)
    assert proc.returncode in (0, 1) and "Traceback" not in proc.stderr, proc.stderr
    result = json.loads((tmp_path / "r.json").read_text(encoding="utf-8"))
    page = (tmp_path / "r.html").read_text(encoding="utf-8")
    assert not [p for p in tmp_path.iterdir() if p.name.startswith(".")]  # no scratch or temporary file left
    expected = [common.spec_name(s) for s in common.sorted_specs(result["specs"])]
    assert len(expected) == 24
    summary_at = page.index('id="summary"')
    headings = re.findall(r'<h2 id="dt-(\d+)-h"><span class="num-tag">(\d+)\.</span> (.*?) <span class="badge',
                          page)
    assert [int(a) for a, _n, _name in headings] == list(range(1, 25))
    assert [int(n) for _a, n, _name in headings] == list(range(1, 25))
    shown = [scan(name).all_text.strip() for _a, _n, name in headings]
    assert shown == expected  # every section once, in the report's order
    assert summary_at < page.index('id="dt-1"')  # the summary first
    # the summary's rows link to the sections in the same order
    links = re.findall(r'<a href="#dt-(\d+)">(.*?)</a>', page[summary_at:page.index('id="dt-1"')])
    assert [scan(name).all_text.strip() for _n, name in links] == expected
    # the page reads as the report rendered whole from the same result
    assert page == html.render(result, charts=False)


def test_notes_and_errors_are_counted_in_words():
    one = sample._spec("a.yaml", "A-1", "Quiet belt", [sample._outcome("r-pass", "pass", severity="info")])
    one["counts"]["info"] = 1
    two = sample._spec("b.yaml", "B-2", "Quiet fan", [sample._outcome("r-pass", "pass", severity="info")])
    two["counts"].update({"info": 2, "pass": 2})
    page = html.render(sample.result(one), charts=False)
    body = scan(page).all_text
    assert "none (1 rule passed, 1 note)" in body
    assert "No finding: 1 rule passed (1 note)." in body
    assert "Totals: 0 errors, 0 warnings, 1 note," in body
    assert "1 notes" not in body and "1 rules" not in body
    body = scan(html.render(sample.result(one, two), charts=False)).all_text
    assert "none (2 rules passed, 2 notes)" in body and "No finding: 2 rules passed (2 notes)." in body
    assert "Totals: 0 errors, 0 warnings, 3 notes," in body
    assert html.counted(1, "error") == "1 error" and html.counted(0, "error") == "0 errors"
