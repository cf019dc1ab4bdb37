"""The report of the real demo specs, as a reviewer receives it: Chromium shows it cleanly, offline."""

from __future__ import annotations

import re
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from . import browser

ROOT = Path(__file__).resolve().parents[2]


@pytest.fixture(scope="module")
def demo_report(tmp_path_factory) -> Path:
    out = tmp_path_factory.mktemp("demo") / "report.html"
    proc = subprocess.run([sys.executable, "-m", "rulecheck", "check", "specs_demo/", "--format", "html", "-o",
                           str(out), "--no-cache"], cwd=ROOT, capture_output=True, text=True)
    assert proc.returncode == 1, proc.stderr  # the demo carries seeded mistakes
    assert "Traceback" not in proc.stdout + proc.stderr
    return out


def test_every_demo_drive_train_has_its_torque_speed_chart(demo_report: Path) -> None:
    text = demo_report.read_text(encoding="utf-8")
    for spec in sorted((ROOT / "specs_demo").glob("*.yaml")):
        tag = next(line.split(":", 1)[1].strip() for line in spec.read_text(encoding="utf-8").splitlines()
                   if line.startswith("tag:"))
        assert tag in text
    # seven variable-speed drive trains have the torque–speed plane, the direct-on-line agitator (M-710) its start
    # instead; the hoist and the servo axis their duty cycles, the servo its back-EMF
    charts = re.findall(r'<svg [^>]*aria-labelledby="dt\d+-(\w+)-title', text)
    assert sorted(charts) == sorted(["torque_speed"] * 7 + ["starting", "duty", "duty", "back_emf"]), charts
    assert "Starting direct on line: motor torque during the start against the load" in text
    assert "<script" not in text.lower()


def test_demo_report_loads_offline_without_console_errors(chromium: str, demo_report: Path) -> None:
    with browser.DevTools(chromium) as devtools:
        session, log = devtools.open(demo_report.as_uri())
        assert log.requests == [demo_report.as_uri()], log.requests  # nothing fetched from anywhere else
        assert log.console == [] and log.exceptions == []
        assert [e for e in log.log_entries if e[0] in ("error", "warning")] == []
        pdf = devtools.print_pdf(session, "A4")
    assert browser.pdf_page_count(pdf) >= 8  # each drive train starts a page


FAIL_RGB = (0xB0, 0x00, 0x20)  # report/charts.py _FAIL: the failing cross (also a marker shape and a FAILS label)


def _chart_pixels(devtools, session, tag: str, key: str):
    """Return the chart of drive train ``tag`` as Chromium draws it: an RGB image of its element."""
    import base64
    import io

    from PIL import Image

    rect = devtools.evaluate(session, f"""(() => {{
        const svg = Array.from(document.querySelectorAll('svg.chart')).find(
            e => e.closest('[id$="-{key}"]') && e.closest('section, article').textContent.includes('{tag}'));
        const r = svg.getBoundingClientRect();
        return [r.left + window.scrollX, r.top + window.scrollY, r.width, r.height];
    }})()""")
    x, y, w, h = rect
    shot = devtools.call("Page.captureScreenshot", {"format": "png", "captureBeyondViewport": True,
                                                     "clip": {"x": x, "y": y, "width": w, "height": h, "scale": 1}},
                         session=session)
    return Image.open(io.BytesIO(base64.b64decode(shot["data"]))).convert("RGB")


def test_chromium_draws_the_failing_cross_only_where_a_rule_fails(chromium: str, demo_report: Path) -> None:
    # a screenshot of the charts as Chromium shows them: CV-120's chart carries the failing cross
    # (torque-margin-continuous fails at 360 r/min), CV-110's (every point rule passes) none
    with browser.DevTools(chromium) as devtools:
        session, _ = devtools.open(demo_report.as_uri(), width=1000, height=1200)
        counts = {}
        for tag in ("HR-CV-120", "HR-CV-110"):
            image = _chart_pixels(devtools, session, tag, "torque_speed")
            assert image.width > 300 and image.height > 150, (tag, image.size)
            pixels = np.asarray(image, dtype=int).reshape(-1, 3)
            counts[tag] = int((np.abs(pixels - FAIL_RGB) <= 40).all(axis=1).sum())
            dark = int((pixels.sum(axis=1) < 200).sum())
            assert dark > 2000, (tag, dark)  # curves and text drawn, not a blank box
    assert counts["HR-CV-120"] > 30 and counts["HR-CV-110"] == 0, counts
