"""Every file rulecheck reads is bounded: a duty profile that links to a device, a FIFO nobody writes to, a spec
far over the size limit — each is refused with a message within the time limit, never read without end."""

from __future__ import annotations

import os
import time
from pathlib import Path

import pytest

from rulecheck.files import READ_CAP, ReadRefused, read_head, read_limited
from tests.ci_formats.test_precommit import SPEC
from tests.robustness.conftest import assert_no_traceback, run_cli


def _spec_with_profile(tmp_path: Path) -> Path:
    spec = tmp_path / "cv-301.yaml"
    spec.write_text(SPEC, encoding="utf-8")
    return tmp_path / "cv-301-profile.csv"


@pytest.mark.parametrize("cache", [True, False])
def test_a_profile_linking_to_an_endless_device_is_refused(tmp_path: Path, cache: bool) -> None:
    _spec_with_profile(tmp_path).symlink_to("/dev/zero")
    started = time.monotonic()
    args = ["check", str(tmp_path / "cv-301.yaml"), "--jobs", "1"]
    proc = run_cli(*args, *([] if cache else ["--no-cache"]), "--cache-dir", str(tmp_path / "cache"), timeout=60)
    assert time.monotonic() - started < 30
    assert_no_traceback(proc)
    assert "duty_profile must be a file beside the spec" in proc.stdout, proc.stdout  # and the key read it not


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="no named pipes here")
def test_a_profile_that_is_a_fifo_does_not_hang_the_run(tmp_path: Path) -> None:
    os.mkfifo(_spec_with_profile(tmp_path))
    proc = run_cli("check", str(tmp_path / "cv-301.yaml"), "--cache-dir", str(tmp_path / "cache"), timeout=60)
    assert_no_traceback(proc)
    assert "named pipe" in proc.stdout, proc.stdout


def test_a_spec_over_the_limit_is_read_only_to_the_limit(tmp_path: Path) -> None:
    big = tmp_path / "big.yaml"
    with big.open("wb") as handle:
        handle.write(b"format: 1\ntag: X\n")
        handle.seek(64 * 1_048_576)  # a sparse 64 MiB file: reading it whole would show in the time
        handle.write(b"\n")
    assert len(read_head(big, 1_048_576)) == 1_048_577
    proc = run_cli("check", str(big), "--cache-dir", str(tmp_path / "cache"), timeout=60)
    assert_no_traceback(proc)
    assert "limit" in proc.stdout, proc.stdout


def test_the_reader_refuses_what_is_not_a_regular_file(tmp_path: Path) -> None:
    with pytest.raises(ReadRefused, match="folder"):
        read_head(tmp_path, 100)
    with pytest.raises(ReadRefused, match="character device"):
        read_head("/dev/zero", 100)
    small = tmp_path / "small.txt"
    small.write_bytes(b"x" * 10)
    assert read_limited(small, 10) == b"x" * 10
    with pytest.raises(ReadRefused, match="more than the limit of 9"):
        read_limited(small, 9)
    assert len(read_head(small, READ_CAP * 4)) == 10  # the cap bounds any limit asked for
