"""Shared fixtures of the robustness tests: the check context of the shipped rules, and a CLI runner."""

from __future__ import annotations

import datetime as dt
import os
import subprocess
import sys
from pathlib import Path

import pytest

from rulecheck.check import CheckContext
from rulecheck.config import Config
from rulecheck.run import prepare

ROOT = Path(__file__).resolve().parents[2]
DAY = dt.date(2026, 6, 1)


@pytest.fixture(scope="session")
def ctx() -> CheckContext:
    """Return the check context of the shipped rules with no configuration."""
    return prepare(Config(), [], DAY, "si", None).context


def run_cli(*args: str, cwd: Path | None = None, timeout: float = 60) -> subprocess.CompletedProcess[str]:
    """Return the finished ``python -m rulecheck`` process (text output, no colour, no CI detection)."""
    env = {k: v for k, v in os.environ.items() if k not in ("GITHUB_ACTIONS", "CI")}
    env["NO_COLOR"] = "1"
    env["PYTHONPATH"] = str(ROOT)
    return subprocess.run([sys.executable, "-m", "rulecheck", *args], cwd=cwd or ROOT, env=env, capture_output=True,
                          text=True, timeout=timeout, errors="replace")


def assert_no_traceback(proc: subprocess.CompletedProcess[str]) -> None:
    """Fail when the process printed a Python traceback."""
    assert "Traceback" not in proc.stdout and "Traceback" not in proc.stderr, proc.stderr[-3000:]
