"""The HTML report of a run: charts drawn in the check's workers and kept in the signed cache give the same report."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]


def test_html_report_is_the_same_drawn_here_in_the_workers_or_read_from_the_cache(tmp_path):
    env = {**os.environ, "PYTHONPATH": str(ROOT), "SOURCE_DATE_EPOCH": "1796083200",
           "XDG_STATE_HOME": str(tmp_path / "state")}

    def report(name: str, *extra: str) -> str:
        out = tmp_path / name
        proc = subprocess.run([sys.executable, "-m", "rulecheck", "check", "specs_demo", "-q", "--report",
                               f"html={out}", *extra], cwd=ROOT, capture_output=True, text=True, env=env)
        assert proc.returncode == 1 and "Traceback" not in proc.stderr, proc.stderr
        return out.read_text(encoding="utf-8")

    serial = report("serial.html", "--no-cache", "--jobs", "1")
    cache = ["--cache-dir", str(tmp_path / "cache"), "--jobs", "2"]
    first = report("first.html", *cache)  # drawn where each spec is checked, kept beside its chart series
    packs = sorted((tmp_path / "cache").rglob("*.pack"))
    size = sum(p.stat().st_size for p in packs)
    second = report("second.html", *cache)  # results and drawings read back
    assert serial == first == second
    assert sum(p.stat().st_size for p in sorted((tmp_path / "cache").rglob("*.pack"))) == size  # nothing new drawn
    assert first.count('class="chart" role="img"') == 11  # every demo chart drawn
