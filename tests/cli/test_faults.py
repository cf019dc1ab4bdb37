"""Nothing lost: a crashed worker, a spec that takes too long, and Ctrl-C each end cleanly."""

from __future__ import annotations

import datetime as _dt
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

from rulecheck import run
from rulecheck.check import CheckContext, check_file
from rulecheck.config import Config
from rulecheck.load import Limits
from rulecheck.report import jsonout
from rulecheck.run import workers
from rulecheck.run.discovery import shown_paths

from .conftest import DEMO, ROOT


def _copies(folder: Path, count: int) -> list[Path]:
    folder.mkdir(parents=True, exist_ok=True)
    out = []
    for k in range(count):
        for src in sorted(DEMO.glob("*.yaml")):
            path = folder / f"{k:03d}-{src.name}"
            path.write_text(src.read_text(encoding="utf-8").replace("tag: HR-", f"tag: C{k}-"), encoding="utf-8")
            out.append(path)
    return out


_VICTIM: dict[str, str] = {}
_REAL_WORKER_CHECK = workers._worker_check


def _crash_on_victim(config_file, spec, *rest):
    if spec.endswith(_VICTIM["name"]):
        os._exit(3)  # the worker dies as if killed
    return _REAL_WORKER_CHECK(config_file, spec, *rest)


def test_a_crashing_worker_becomes_a_finding_and_the_run_completes(tmp_path: Path, monkeypatch) -> None:
    files = _copies(tmp_path / "specs", 3)
    victim = files[5].name
    _VICTIM["name"] = victim
    monkeypatch.setattr(workers, "_worker_check", _crash_on_victim)  # forked workers inherit the patch
    result = run.run(run.RunOptions(paths=[str(tmp_path / "specs")], jobs=2))
    assert result["summary"]["specs"] == len(files)
    by_file = {Path(s["file"]).name: s for s in result["specs"]}
    crashed = by_file[victim]
    assert crashed["status"] == "unreadable" and "worker process" in crashed["outcomes"][0]["message"]
    others = [s for name, s in by_file.items() if name != victim]
    assert all(s["status"] == "checked" for s in others)
    assert result["summary"]["exit_code"] == 1
    jsonout.load(jsonout.render(result))


def test_a_spec_over_its_time_limit_is_stopped_with_a_finding(tmp_path: Path, monkeypatch) -> None:
    from rulecheck import check as check_module

    ctx = run.prepare(Config(), [], _dt.date(2026, 12, 1), "si", None).context
    ctx = CheckContext(**{**ctx.__dict__, "limits": Limits(max_seconds=1)})

    def slow(*_args, **_kwargs):
        time.sleep(5)

    monkeypatch.setattr(check_module, "_check_file", slow)
    start = time.perf_counter()
    result = check_file(DEMO / "cv-110-incline-conveyor.yaml", ctx)
    assert time.perf_counter() - start < 3
    assert result["outcomes"][0]["rule"] == "internal-error" and "longer than the limit of 1 s" in \
        result["outcomes"][0]["message"]


@pytest.mark.skipif(not hasattr(signal, "setitimer"), reason="needs POSIX timers")
def test_the_time_limit_holds_with_a_worker_s_kept_alarm_handler(monkeypatch) -> None:
    from rulecheck import check as check_module

    ctx = run.prepare(Config(), [], _dt.date(2026, 12, 1), "si", None).context
    ctx = CheckContext(**{**ctx.__dict__, "limits": Limits(max_seconds=1)})
    previous = signal.getsignal(signal.SIGALRM)
    monkeypatch.setitem(check_module._ALARM, "kept", False)
    try:
        check_module.keep_alarm_handler()  # what a worker does when it starts
        assert check_module._ALARM["kept"] and signal.getsignal(signal.SIGALRM) is check_module._expire
        fine = check_file(DEMO / "cv-110-incline-conveyor.yaml", ctx)  # a quick spec leaves no timer running
        assert fine["status"] == "checked" and signal.getitimer(signal.ITIMER_REAL) == (0.0, 0.0)
        monkeypatch.setattr(check_module, "_check_file", lambda *_a, **_k: time.sleep(5))
        start = time.perf_counter()
        result = check_file(DEMO / "cv-110-incline-conveyor.yaml", ctx)
        assert time.perf_counter() - start < 3
        assert "longer than the limit of 1 s" in result["outcomes"][0]["message"]
        assert signal.getsignal(signal.SIGALRM) is check_module._expire  # kept, not swapped back
    finally:
        signal.signal(signal.SIGALRM, previous if previous is not None else signal.SIG_DFL)


@pytest.mark.skipif(not hasattr(signal, "SIGINT"), reason="needs POSIX signals")
def test_ctrl_c_exits_130_with_no_partial_report(tmp_path: Path) -> None:
    _copies(tmp_path / "specs", 150)
    out = tmp_path / "report.json"
    env = {**os.environ, "PYTHONPATH": str(ROOT), "NO_COLOR": "1"}
    proc = subprocess.Popen([sys.executable, "-m", "rulecheck", "check", str(tmp_path / "specs"), "--no-cache",
                             "-j", "2", "--format", "json", "-o", str(out)], cwd=tmp_path, env=env,
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    time.sleep(1.5)
    proc.send_signal(signal.SIGINT)
    stdout, stderr = proc.communicate(timeout=240)  # generous: a loaded CI machine is slow, not hung
    if proc.returncode == 1:
        pytest.skip("the run finished before the interrupt on this machine")
    assert proc.returncode == 130, stderr
    assert "Traceback" not in stdout + stderr
    assert not out.exists()
    assert not list(tmp_path.glob(".report.json.*"))


def test_a_spec_s_shown_path_is_worked_out_per_folder_as_for_each_spec(tmp_path: Path, monkeypatch) -> None:
    """The run works out each folder's shown path once; every spec's comes out as check.display_path gives it."""
    from rulecheck.check import display_path

    monkeypatch.chdir(tmp_path)
    (tmp_path / "a" / "b").mkdir(parents=True)
    base = Path.cwd()
    shown = shown_paths(base)
    cases = [Path("x.yaml"), Path("a/x.yaml"), Path("a/b/y.yml"), Path("./a/b/z.yaml"), Path("a/../a/x.yaml"),
             tmp_path / "a" / "x.yaml", tmp_path / "x.yaml", tmp_path.parent / "elsewhere" / "w.yaml",
             Path("/") / "top.yaml"]
    for spec in cases * 2:  # the second time from the folders worked out the first
        assert shown(spec) == display_path(spec, base), spec


@pytest.mark.skipif(not hasattr(signal, "SIGTERM"), reason="needs POSIX signals")
def test_sigterm_exits_143_and_leaves_no_temporary_file(tmp_path: Path) -> None:
    _copies(tmp_path / "specs", 150)
    out = tmp_path / "report.html"
    env = {**os.environ, "PYTHONPATH": str(ROOT), "NO_COLOR": "1"}
    proc = subprocess.Popen([sys.executable, "-m", "rulecheck", "check", str(tmp_path / "specs"), "--no-cache",
                             "-j", "2", "--report", f"html={out}", "-f", "json", "-o", str(tmp_path / "r.json")],
                            cwd=tmp_path, env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    time.sleep(1.5)
    proc.send_signal(signal.SIGTERM)
    stdout, stderr = proc.communicate(timeout=240)
    if proc.returncode in (0, 1):
        pytest.skip("the run finished before the signal on this machine")
    assert proc.returncode == 143, stderr
    assert "Traceback" not in stdout + stderr
    assert not out.exists() and not list(tmp_path.glob(".*.tmp"))


def test_a_temporary_file_left_by_a_killed_run_is_removed_by_the_next(tmp_path: Path) -> None:
    from rulecheck.files import write_atomic

    dead = subprocess.Popen([sys.executable, "-c", "pass"])
    dead.wait()  # a process id that no longer runs
    leftover = tmp_path / f".report.json.{dead.pid}.abcd1234.tmp"
    leftover.write_bytes(b"x" * 1000)
    mine = tmp_path / f".report.json.{os.getpid()}.abcd1234.tmp"  # a running writer's: left alone
    mine.write_bytes(b"y")
    write_atomic(tmp_path / "report.json", b"{}")
    assert not leftover.exists() and mine.exists() and (tmp_path / "report.json").read_bytes() == b"{}"
