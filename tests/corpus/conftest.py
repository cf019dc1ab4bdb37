"""Shared helper for the corpus tests: check a folder of specs once, through the public command line."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path
from typing import Any

ROOT = Path(__file__).resolve().parents[2]


def check_folder(folder: Path) -> dict[str, dict[str, Any]]:
    """Run ``python -m rulecheck check FOLDER -f json --no-cache`` and return the spec results by file name."""
    proc = subprocess.run([sys.executable, "-m", "rulecheck", "check", str(folder), "-f", "json", "--no-cache",
                           "--no-progress"], cwd=ROOT, capture_output=True, text=True, timeout=600)
    # exit code 0 (no error-level fail) or 1 (some fail); 2 and above mean the tool itself went wrong
    assert proc.returncode in (0, 1), proc.stderr
    result = json.loads(proc.stdout)
    return {Path(spec["file"]).name: spec for spec in result["specs"]}
