"""The report of the real demo specs, as a reviewer receives it: Chromium shows it cleanly, offline."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

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
    assert text.count("Torque–speed plane") >= 8
    assert "<script" not in text.lower()


def test_demo_report_loads_offline_without_console_errors(chromium: str, demo_report: Path) -> None:
    with browser.DevTools(chromium) as devtools:
        session, log = devtools.open(demo_report.as_uri())
        assert log.requests == [demo_report.as_uri()], log.requests  # nothing fetched from anywhere else
        assert log.console == [] and log.exceptions == []
        assert [e for e in log.log_entries if e[0] in ("error", "warning")] == []
        pdf = devtools.print_pdf(session, "A4")
    assert browser.pdf_page_count(pdf) >= 8  # each drive train starts a page
