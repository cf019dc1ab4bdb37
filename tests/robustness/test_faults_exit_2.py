"""Faults of the machine or of files a pull request may edit end as one line and exit 2 (or the documented code),
never a traceback with exit 1, which would read as "findings"."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

from rulecheck import cli
from tests.robustness.conftest import ROOT, assert_no_traceback, run_cli

SPEC = str(ROOT / "specs_demo" / "cv-110-incline-conveyor.yaml")


@pytest.mark.parametrize("name, data, words", [
    ("latin1.json", b"\xff\xfe{", "not UTF-8"),
    ("deep.json", b"[" * 100_000, "nested too deeply"),
    ("not-json.json", b"{oops", "baseline"),
])
def test_a_broken_baseline_is_a_usage_error(tmp_path: Path, name: str, data: bytes, words: str) -> None:
    (tmp_path / name).write_bytes(data)
    proc = run_cli("check", SPEC, "--baseline", str(tmp_path / name), "--no-cache")
    assert_no_traceback(proc)
    assert proc.returncode == 2 and words in proc.stderr, proc.stderr


@pytest.mark.parametrize("option, address", [("--from", "x@@"), ("--to", "a@b@c"), ("--to", "")])
def test_a_malformed_address_is_a_usage_error(tmp_path: Path, option: str, address: str) -> None:
    args = ["mail", SPEC, "--eml", str(tmp_path / "m.eml"), "--no-cache", "--to", "a@b.example"]
    proc = run_cli(*args, option, address)
    assert_no_traceback(proc)
    assert proc.returncode == 2 and "address" in proc.stderr, proc.stderr
    assert not (tmp_path / "m.eml").exists()


@pytest.mark.skipif(not os.path.exists("/dev/full"), reason="no /dev/full here")
def test_a_full_disk_is_a_usage_error() -> None:
    proc = run_cli("check", SPEC, "-f", "json", "-o", "/dev/full", "--no-cache")
    assert_no_traceback(proc)
    assert proc.returncode == 2 and "No space left" in proc.stderr, proc.stderr


def test_a_cache_folder_that_is_a_file_or_a_loop_does_not_stop_the_check(tmp_path: Path) -> None:
    (tmp_path / "file").write_text("x")
    os.symlink(tmp_path / "b", tmp_path / "a")
    os.symlink(tmp_path / "a", tmp_path / "b")
    for folder in ("file", "a"):
        proc = run_cli("check", SPEC, "--cache-dir", str(tmp_path / folder))
        assert_no_traceback(proc)
        assert proc.returncode in (0, 1), proc.stderr


def test_a_windows_pipe_encoding_does_not_end_in_a_traceback() -> None:
    env = {k: v for k, v in os.environ.items() if k not in ("GITHUB_ACTIONS", "CI")}
    env.update(PYTHONIOENCODING="cp1252", PYTHONPATH=str(ROOT), NO_COLOR="1")
    proc = subprocess.run([sys.executable, "-m", "rulecheck", "check", str(ROOT / "specs_demo"), "--no-cache"],
                          env=env, capture_output=True, timeout=120)
    assert b"Traceback" not in proc.stderr and proc.returncode in (0, 1), proc.stderr[-2000:]
    assert b"N?m" in proc.stdout or b"N\xb7m" in proc.stdout  # the middle dot is in cp1252, the Greek letters not


def test_a_300_byte_name_is_a_message(tmp_path: Path) -> None:
    proc = run_cli("check", str(tmp_path / ("x" * 300 + ".yaml")))
    assert_no_traceback(proc)
    assert proc.returncode == 2


def test_any_other_fault_is_one_line_and_exit_2(monkeypatch, capsys) -> None:
    def broken(_args):
        raise ValueError("a value nobody expected")

    monkeypatch.setattr(cli, "_cmd_schema", broken)
    monkeypatch.delenv("RULECHECK_DEBUG", raising=False)
    assert cli.main(["schema"]) == 2
    err = capsys.readouterr().err
    assert "unexpected ValueError: a value nobody expected" in err and "RULECHECK_DEBUG" in err
    assert "Traceback" not in err
