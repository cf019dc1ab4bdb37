"""The pre-commit hook: which files it takes for specs, and the real pre-commit framework in a scratch repository.

The framework runs the hook exactly as `.pre-commit-hooks.yaml` ships it (its `files:`, `types:`,
`require_serial:`); only the entry is the worktree's module run by this interpreter (`language: system`), since
the shipped `language: python` would install rulecheck and its dependencies from the package index first.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import tomllib
from pathlib import Path

import pytest
import yaml

from rulecheck import precommit

ROOT = Path(__file__).resolve().parents[2]
HOOKS = ROOT / ".pre-commit-hooks.yaml"

WORKFLOW = """\
# a GitHub workflow: YAML, not a drive specification
name: specs
on: pull_request
jobs:
  check:
    runs-on: ubuntu-latest
    steps:
      - uses: actions/checkout@v4
      - run: echo "format: 1"
"""

COMPOSE = """\
services:
  db: {image: "postgres:16", ports: ["5432:5432"]}
"""

# A 7.5 kW 4-pole motor with forced cooling (k_cool = 1, beta = 1) on a measured profile.
# T_N = 7500 W / (1455 r/min x 2 pi / 60) = 7500 / 152.37 = 49.22 N*m.
SPEC = """\
# Line 1 transfer conveyor; measured duty profile beside the spec.
format: 1
tag: CV-301
title: Transfer conveyor
drive: {kind: inverter, rated_current: 17 A, output_voltage_max: 400 V}
motor: {kind: induction, rated_power: 7.5 kW, rated_speed: 1455 r/min, rated_voltage: 400 V, rated_current: 15.2 A,
        rated_frequency: 50 Hz, poles: 4, inertia: 0.029 kg*m^2, cooling: forced}
load:
  model: constant-torque
  torque: 20 N*m
  duty_profile: cv-301-profile.csv
"""

# RMS torque over the 60 s cycle, trapezoids of T^2 between samples (the torque-rms-duty-cycle rule's method):
# (2*(40^2+40^2)/2 + 18*(40^2+30^2)/2 + 2*(30^2+10^2)/2 + 38*(10^2+0)/2) / 60 = (3200+22500+1000+1900)/60 = 476.7
# T_rms = 21.83 N*m, U = 21.83 / 49.22 = 0.444: within the margin (U <= 1/1.1 = 0.909), the rule passes.
PROFILE = "time [s],speed [r/min],torque [N*m]\n0,0,40\n2,1455,40\n20,1455,30\n22,0,10\n60,0,0\n"
# The same profile with every torque tripled: T_rms = 65.5 N*m, U = 1.331 > 1: the motor overheats (error).
PROFILE_TRIPLED = "time [s],speed [r/min],torque [N*m]\n0,0,120\n2,1455,120\n20,1455,90\n22,0,30\n60,0,0\n"


def _write(path: Path, text: str | bytes) -> Path:
    path.parent.mkdir(parents=True, exist_ok=True)
    if isinstance(text, bytes):
        path.write_bytes(text)
    else:
        path.write_text(text, encoding="utf-8")
    return path


# --- which files are specs -------------------------------------------------------------------------------


def test_specs_are_told_by_their_header(tmp_path):
    spec = _write(tmp_path / "a" / "p-101.yaml", SPEC)
    flow = _write(tmp_path / "a" / "p-102.yml", '{format: 1, tag: P-102, motor: {kind: induction}}\n')
    quoted = _write(tmp_path / "a" / "p-103.yaml", '\ufeff# header comment\nformat: "1"   # version\ntag: P-103\n')
    workflow = _write(tmp_path / ".github" / "workflows" / "ci.yml", WORKFLOW)
    compose = _write(tmp_path / "compose.yaml", COMPOSE)
    nested = _write(tmp_path / "other.yaml", "report:\n  format: 1\n")
    words = _write(tmp_path / "notes.yaml", "format: markdown\n")
    assert precommit.is_spec(spec)
    assert precommit.is_spec(quoted)
    assert not precommit.is_spec(workflow)  # `format: 1` only inside a quoted command
    assert not precommit.is_spec(compose)
    assert not precommit.is_spec(nested)  # not a top-level key
    assert not precommit.is_spec(words)  # not a version number
    assert not precommit.is_spec(flow)  # flow style has no header line: name its folder with --specs
    assert precommit.is_spec(flow, [tmp_path / "a"])


def test_header_is_looked_for_in_the_first_kib_only(tmp_path):
    late = _write(tmp_path / "late.yaml", "#" + "x" * (precommit.HEADER_BYTES + 10) + "\nformat: 1\ntag: A\n")
    early = _write(tmp_path / "early.yaml", "# " + "x" * (precommit.HEADER_BYTES - 100) + "\nformat: 1\ntag: A\n")
    assert not precommit.is_spec(late)
    assert precommit.is_spec(early)


def test_spec_folders_take_every_yaml_but_configuration(tmp_path):
    folder = tmp_path / "specs"
    broken = _write(folder / "line" / "p-1.yaml", "formt: 1\ntag: P-1\n")  # misspelt header: checked, reported
    config = _write(folder / ".rulecheck.yaml", "disable: [bearing-currents]\n")
    csv = _write(folder / "p-1.csv", "time [s]\n")
    outside = _write(tmp_path / "p-2.yaml", "formt: 1\n")
    assert precommit.find_specs([str(broken), str(config), str(csv), str(outside)], [folder], root=tmp_path) == [
        broken]


@pytest.mark.skipif(not hasattr(os, "mkfifo"), reason="no named pipes on this platform")
def test_special_files_and_links_are_refused_without_reading(tmp_path):
    fifo = tmp_path / "pipe.yaml"
    os.mkfifo(fifo)  # opening it for reading would block without O_NONBLOCK; reading it would wait for a writer
    target = _write(tmp_path / "real.yaml", SPEC)
    link = tmp_path / "link.yaml"
    link.symlink_to(target)
    assert not precommit.is_spec(fifo)
    assert not precommit.is_spec(link)
    assert not precommit.is_spec(fifo, [tmp_path])


def test_a_changed_profile_brings_the_specs_that_name_it(tmp_path, monkeypatch):
    _write(tmp_path / "specs" / "cv-301.yaml", SPEC)
    _write(tmp_path / "specs" / "cv-302.yaml", SPEC.replace("CV-301", "CV-302"))
    _write(tmp_path / "specs" / "cv-303.yaml", SPEC.replace("cv-301-profile", "cv-303-profile"))
    _write(tmp_path / "specs" / "sub" / "cv-304.yaml",
           "format: 1\ntag: CV-304\nload: {model: constant-torque, duty_profile: ../cv-301-profile.csv}\n")
    _write(tmp_path / "specs" / "cv-305.yaml",
           "format: 1\ntag: CV-305\nload: {model: constant-torque, duty_profile: ./sub/cv-301-profile.csv}\n")
    _write(tmp_path / "unrelated.yaml", "steps: [{duty_profile: cv-301-profile.csv}]\n")  # not a spec
    _write(tmp_path / "specs" / "cv-301-profile.csv", PROFILE)
    monkeypatch.chdir(tmp_path)  # pre-commit runs hooks at the repository root with relative names; outside git: a walk
    found = precommit.find_specs(["specs/cv-301-profile.csv"])
    # the spec beside the CSV, its copy, and the one reaching up to it (derive refuses that one, and says so)
    assert sorted(map(str, found)) == ["specs/cv-301.yaml", "specs/cv-302.yaml", "specs/sub/cv-304.yaml"]
    assert precommit.find_specs(["specs/cv-301.yaml", "specs/cv-301-profile.csv"])[0] == Path("specs/cv-301.yaml")
    assert len(precommit.find_specs(["specs/cv-301.yaml", "specs/cv-301-profile.csv"])) == 3  # each once
    assert precommit.find_specs(["specs/other.csv"]) == []


def test_the_hook_runs_no_check_without_a_spec(tmp_path, monkeypatch, capsys):
    _write(tmp_path / "compose.yaml", COMPOSE)
    monkeypatch.chdir(tmp_path)
    import rulecheck.cli

    monkeypatch.setattr(rulecheck.cli, "main", lambda argv: pytest.fail(f"rulecheck ran on {argv}"))
    assert precommit.main(["compose.yaml"]) == 0
    _write(tmp_path / "p.yaml", SPEC)
    assert precommit.main(["--dry-run", "compose.yaml", "p.yaml"]) == 0
    assert capsys.readouterr().out.split() == ["p.yaml"]


def test_shipped_hook_and_console_script_agree():
    hooks = yaml.safe_load(HOOKS.read_text(encoding="utf-8"))
    (hook,) = [h for h in hooks if h["id"] == "rulecheck"]
    project = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["project"]
    assert project["scripts"][hook["entry"]] == "rulecheck.precommit:main"
    assert hook["language"] == "python" and hook["require_serial"] is True
    assert any(dep.startswith("pre-commit") for dep in project["optional-dependencies"]["test"])


# --- the real framework ----------------------------------------------------------------------------------


def _git(repo: Path, *args: str, check: bool = True) -> subprocess.CompletedProcess:
    return subprocess.run(["git", *args], cwd=repo, capture_output=True, text=True, check=check, timeout=300)


def _scratch_repository(tmp_path: Path) -> Path:
    pytest.importorskip("pre_commit", reason="pre-commit is in the test extra: pip install '.[test]'")
    repo = tmp_path / "plant"
    repo.mkdir()
    _git(repo, "init", "-q", "-b", "main")
    _git(repo, "config", "user.email", "reviewer@example.invalid")
    _git(repo, "config", "user.name", "Spec Reviewer")
    _git(repo, "config", "commit.gpgsign", "false")
    _write(repo / ".github" / "workflows" / "specs.yml", WORKFLOW)
    _write(repo / "compose.yaml", COMPOSE)
    _write(repo / "specs" / "line1" / "cv-301.yaml", SPEC)
    _write(repo / "specs" / "line1" / "cv-301-profile.csv", PROFILE)
    (hook,) = [h for h in yaml.safe_load(HOOKS.read_text(encoding="utf-8")) if h["id"] == "rulecheck"]
    hook = {**hook, "language": "system", "entry": f"{sys.executable} -m rulecheck.precommit", "verbose": True}
    _write(repo / ".pre-commit-config.yaml", yaml.safe_dump({"repos": [{"repo": "local", "hooks": [hook]}]}))
    return repo


def _environment(tmp_path: Path) -> dict[str, str]:
    env = {**os.environ, "PYTHONPATH": str(ROOT), "NO_COLOR": "1", "PRE_COMMIT_HOME": str(tmp_path / "pc-home"),
           "RULECHECK_CACHE_DIR": str(tmp_path / "rc-cache")}
    for name in ("GITHUB_ACTIONS", "GIT_DIR", "GIT_INDEX_FILE", "GIT_WORK_TREE"):
        env.pop(name, None)
    return env


@pytest.mark.skipif(shutil.which("git") is None, reason="git is not installed: the scratch repository needs it")
def test_pre_commit_framework_checks_specs_and_the_specs_of_changed_profiles(tmp_path):
    repo = _scratch_repository(tmp_path)
    env = _environment(tmp_path)

    def commit(message: str, *paths: str) -> subprocess.CompletedProcess:
        _git(repo, "add", *paths)
        return subprocess.run(["git", "commit", "-m", message], cwd=repo, env=env, capture_output=True, text=True,
                              timeout=600)

    install = subprocess.run([sys.executable, "-m", "pre_commit", "install"], cwd=repo, env=env,
                             capture_output=True, text=True, timeout=300)
    assert install.returncode == 0, install.stdout + install.stderr

    # 1. everything at once: the workflow and the compose file are passed to the hook but not checked
    first = commit("Line 1 transfer conveyor", ".")
    out = first.stdout + first.stderr
    assert first.returncode == 0, out
    assert "1 spec checked" in out and "spec-schema" not in out, out

    # 2. the workflow alone: the hook runs (the file matches) and checks nothing
    _write(repo / ".github" / "workflows" / "specs.yml", WORKFLOW + "# nightly too\n")
    second = commit("Workflow: note", ".github/workflows/specs.yml")
    out = second.stdout + second.stderr
    assert second.returncode == 0, out
    assert "rulecheck (drive specification design rules)" in out and "spec checked" not in out, out

    # 3. the profile alone, torque tripled: the spec that names it is checked again and the commit refused
    head = _git(repo, "rev-parse", "HEAD").stdout
    _write(repo / "specs" / "line1" / "cv-301-profile.csv", PROFILE_TRIPLED)
    third = commit("Line 1: measured profile after the feeder change", "specs/line1/cv-301-profile.csv")
    out = third.stdout + third.stderr
    assert third.returncode != 0, out
    assert "specs/line1/cv-301.yaml" in out and "error torque-rms-duty-cycle" in out, out
    assert "utilisation 1.331" in out, out  # 3 x 0.4436 (hand calculation above)
    assert _git(repo, "rev-parse", "HEAD").stdout == head  # nothing was committed

    # the same through `pre-commit run` on named files, as CI would call it
    run = subprocess.run([sys.executable, "-m", "pre_commit", "run", "--files", "compose.yaml",
                          ".github/workflows/specs.yml"], cwd=repo, env=env, capture_output=True, text=True,
                         timeout=300)
    assert run.returncode == 0, run.stdout + run.stderr
