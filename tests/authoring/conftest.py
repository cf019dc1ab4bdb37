"""Helpers for the authoring tests: the command line in a subprocess, and the validation 'rulecheck check' does."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path
from typing import Any

import pytest

ROOT = Path(__file__).resolve().parents[2]
MOTOR_LIST = ROOT / "specs_demo" / "motor-list"


def run_cli(*args: str, cwd: Path | None = None) -> subprocess.CompletedProcess:
    """Run ``python -m rulecheck ARGS`` and return the completed process (text output)."""
    env = {**os.environ, "PYTHONPATH": str(ROOT), "NO_COLOR": "1"}
    env.pop("GITHUB_ACTIONS", None)
    proc = subprocess.run([sys.executable, "-m", "rulecheck", *args], cwd=cwd or ROOT, env=env,
                          capture_output=True, text=True, timeout=300)
    assert "Traceback" not in proc.stdout + proc.stderr, proc.stdout + proc.stderr
    return proc


def problems(text: str) -> list[Any]:
    """Return the errors 'rulecheck check' finds in a spec's structure and units."""
    from rulecheck.load import load_text
    from rulecheck.schema import check_structure, read_quantities

    doc = load_text(text, "spec.yaml")
    found = check_structure(doc) + read_quantities(doc)[1]
    return [p for p in found if p.severity == "error"]


@pytest.fixture()
def cli():
    return run_cli
