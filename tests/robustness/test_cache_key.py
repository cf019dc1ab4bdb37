"""A cache folder inside a checkout may come from a pull request: its entries must not forge a result, and no code
it holds is executed. The signing key lives apart from every cache folder, is created 0600 and refused otherwise."""

from __future__ import annotations

import os
import shutil
import stat
import subprocess
import sys
from pathlib import Path

import pytest

from rulecheck import cache as cache_mod
from rulecheck.cache import ResultCache, entry_of

ROOT = Path(__file__).resolve().parents[2]
FAILING = ROOT / "specs_demo" / "cv-120-stacker-conveyor.yaml"


@pytest.fixture
def fresh_key(monkeypatch: pytest.MonkeyPatch, tmp_path: Path) -> Path:
    """A process with no key read yet, its state folder in ``tmp_path/state``."""
    monkeypatch.setattr(cache_mod, "_KEY", [])
    monkeypatch.setattr(cache_mod, "KEY_PROBLEMS", [])
    monkeypatch.setenv("XDG_STATE_HOME", str(tmp_path / "state"))
    return tmp_path / "state" / "rulecheck" / "cache-key"


def _run(repo: Path, state: Path) -> subprocess.CompletedProcess[str]:
    env = {k: v for k, v in os.environ.items() if k not in ("GITHUB_ACTIONS", "CI", "XDG_CACHE_HOME")}
    env.update(NO_COLOR="1", PYTHONPATH=str(ROOT), XDG_STATE_HOME=str(state),
               RULECHECK_CACHE_DIR=str(repo / ".rulecheck-cache"))
    return subprocess.run([sys.executable, "-m", "rulecheck", "check", "spec.yaml", "--jobs", "1"], cwd=repo, env=env,
                          capture_output=True, text=True, timeout=120)


def _forge(folder: Path, key: bytes) -> int:
    """Rewrite every result in the cache ``folder`` as a pass, signed with ``key`` (what an attacker with that key
    can do); return how many were forged."""
    cache_mod._KEY[:] = [key]
    reader = ResultCache(folder)
    forged = 0
    for name in list(reader._load_index()):
        result = reader.get(name)
        if isinstance(result, dict) and "outcomes" in result:
            result = dict(result, verdict="pass", outcomes=[dict(o, outcome="pass") for o in result["outcomes"]])
            reader.put(name, entry_of(result))
            forged += 1
    return forged


def test_a_planted_cache_with_its_own_key_cannot_forge_a_pass(tmp_path: Path, monkeypatch: pytest.MonkeyPatch) -> None:
    repo = tmp_path / "repo"
    repo.mkdir()
    shutil.copy(FAILING, repo / "spec.yaml")
    attacker, victim = tmp_path / "attacker", tmp_path / "victim"
    assert _run(repo, attacker).returncode == 1  # the attacker's own run fills the cache in the checkout
    key = (attacker / "rulecheck" / "cache-key").read_bytes()
    monkeypatch.setattr(cache_mod, "_KEY", [])
    assert _forge(repo / ".rulecheck-cache" / "results", key) >= 1
    (repo / ".rulecheck-cache" / "signing-key").write_bytes(key)  # where the key used to be read from
    assert _run(repo, attacker).returncode == 0  # the forgery works for whoever holds the key ...
    proc = _run(repo, victim)  # ... and nobody else
    assert proc.returncode == 1, proc.stdout
    assert "error" in proc.stdout
    assert not (repo / ".rulecheck-cache" / "cache-key").exists()


def test_the_key_is_not_kept_in_the_cache_folder(fresh_key: Path, tmp_path: Path, monkeypatch) -> None:
    monkeypatch.setenv("RULECHECK_CACHE_DIR", str(tmp_path / "repo" / "cache"))
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "repo"))
    assert not cache_mod.key_path().is_relative_to(cache_mod.default_cache_dir())
    ResultCache(cache_mod.default_cache_dir())
    assert fresh_key.exists() and stat.S_IMODE(fresh_key.stat().st_mode) == 0o600
    assert len(fresh_key.read_bytes()) == cache_mod.KEY_BYTES


@pytest.mark.parametrize("mode, content, why", [
    (0o666, b"k" * 32, "0600 is required"),
    (0o644, b"k" * 32, "0600 is required"),
    (0o600, b"", "holds 0 bytes"),
    (0o600, b"k" * 8, "holds 8 bytes"),
])
def test_a_key_file_that_others_could_write_or_that_is_short_is_refused(fresh_key: Path, mode: int, content: bytes,
                                                                        why: str) -> None:
    fresh_key.parent.mkdir(parents=True)
    fresh_key.write_bytes(content)
    fresh_key.chmod(mode)
    key = cache_mod._secret()
    assert key != content and len(key) == cache_mod.KEY_BYTES
    assert any(why in p for p in cache_mod.KEY_PROBLEMS), cache_mod.KEY_PROBLEMS
    assert fresh_key.read_bytes() == content  # left for the user to look at, not replaced silently


def test_a_key_that_is_a_link_is_refused(fresh_key: Path, tmp_path: Path) -> None:
    target = tmp_path / "elsewhere"
    target.write_bytes(b"k" * 32)
    target.chmod(0o600)
    fresh_key.parent.mkdir(parents=True)
    fresh_key.symlink_to(target)
    assert cache_mod._secret() != b"k" * 32
    assert cache_mod.KEY_PROBLEMS


def test_a_key_inside_the_cache_folder_verifies_nothing(fresh_key: Path, tmp_path: Path, monkeypatch) -> None:
    folder = tmp_path / "state"  # the state folder pointed at the cache folder
    writer = ResultCache(folder)
    result = {"file": "s.yaml", "status": "checked", "verdict": "pass", "counts": {}, "outcomes": []}
    writer.put("a" * 64, entry_of(result))
    monkeypatch.setattr(cache_mod, "_KEY", [])
    assert ResultCache(folder).get("a" * 64) is None
    assert any("inside the cache folder" in p for p in cache_mod.KEY_PROBLEMS)


def test_the_refusal_is_said_on_the_terminal(tmp_path: Path) -> None:
    state = tmp_path / "state"
    (state / "rulecheck").mkdir(parents=True)
    (state / "rulecheck" / "cache-key").write_bytes(b"k" * 32)
    (state / "rulecheck" / "cache-key").chmod(0o666)
    repo = tmp_path / "repo"
    repo.mkdir()
    shutil.copy(FAILING, repo / "spec.yaml")
    proc = _run(repo, state)
    assert proc.returncode == 1 and "Traceback" not in proc.stderr
    assert "rulecheck: warning: cache key" in proc.stderr and "0600" in proc.stderr


def test_no_marshalled_code_is_ever_loaded() -> None:
    source = (ROOT / "rulecheck" / "engine" / "expr.py").read_text(encoding="utf-8")
    assert "import marshal" not in source and "marshal.loads" not in source
