"""Helpers to run the command line in a subprocess, as users and CI do."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "specs_demo"


def run_cli(*args: str, cwd: Path | None = None, env: dict[str, str] | None = None) -> subprocess.CompletedProcess:
    """Run ``python -m rulecheck ARGS`` and return the completed process (text output)."""
    full_env = {**os.environ, "PYTHONPATH": str(ROOT), "NO_COLOR": "1", **(env or {})}
    full_env.pop("GITHUB_ACTIONS", None)
    proc = subprocess.run([sys.executable, "-m", "rulecheck", *args], cwd=cwd or ROOT, env=full_env,
                          capture_output=True, text=True, timeout=300)
    assert "Traceback" not in proc.stdout + proc.stderr, proc.stdout + proc.stderr
    return proc


@pytest.fixture()
def cli():
    return run_cli
