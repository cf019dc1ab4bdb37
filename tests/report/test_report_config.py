"""The printed report's page header and paper from the configuration's ``report:`` section."""

from __future__ import annotations

import shutil
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]


def _check(folder: Path, *extra: str) -> tuple[subprocess.CompletedProcess, str]:
    out = folder / "r.html"
    proc = subprocess.run([sys.executable, "-m", "rulecheck", "check", str(folder / "specs"), "--no-cache", "-q",
                           "--report", f"html={out}", "--report-date", "2026-12-05", *extra],
                          cwd=folder, capture_output=True, text=True, env={"PYTHONPATH": str(ROOT), "PATH": ""})
    return proc, " ".join(out.read_text(encoding="utf-8").split()) if out.exists() else ""


def _project(tmp_path: Path, config: str) -> Path:
    (tmp_path / ".git").mkdir()  # the configuration is looked for up to the repository's top
    (tmp_path / ".rulecheck.yaml").write_text(config, encoding="utf-8")
    (tmp_path / "specs").mkdir()
    shutil.copy(ROOT / "specs_demo" / "cv-110-incline-conveyor.yaml", tmp_path / "specs")
    return tmp_path


def test_report_section_fills_the_page_header_and_the_command_line_overrides_it(tmp_path):
    folder = _project(tmp_path, "report:\n  project: Quarry stage 2\n  revision: C\n  reviewer: A. Engineer\n"
                                "  paper: letter\n")
    proc, page = _check(folder)
    assert "Traceback" not in proc.stderr and proc.returncode in (0, 1), proc.stderr
    assert "Quarry stage 2 · rev. C · reviewer A. Engineer · 2026-12-05" in page
    assert "letter" in page.lower()
    proc, page = _check(folder, "--project", "Harbour plant", "--paper", "a4")
    assert "Harbour plant · rev. C · reviewer A. Engineer · 2026-12-05" in page


def test_bad_report_section_is_a_configuration_error_with_its_line(tmp_path):
    folder = _project(tmp_path, "fail_on: error\nreport:\n  paper: a3\n")
    proc, _ = _check(folder)
    assert proc.returncode == 2 and "Traceback" not in proc.stderr
    assert ".rulecheck.yaml:3: report.paper must be a4 or letter, not 'a3'" in proc.stderr
    folder.joinpath(".rulecheck.yaml").write_text("report:\n  sponsor: x\n", encoding="utf-8")
    proc, _ = _check(folder)
    assert proc.returncode == 2 and "report: unknown key 'sponsor'" in proc.stderr
