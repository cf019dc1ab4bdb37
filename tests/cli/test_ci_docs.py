"""The CI recipes of docs/ci.md, run as written in a scratch repository cloned from an 'origin' (the
GitHub Actions job with GITHUB_ACTIONS=true and a step summary file; the GitLab CI job's script), and every
rulecheck command in them accepted by the command line's own parser."""

from __future__ import annotations

import json
import os
import re
import shlex
import shutil
import subprocess
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest
import yaml

from rulecheck import cli

from .conftest import DEMO, ROOT

DOC = ROOT / "docs" / "ci.md"
GIT_ENV = {"GIT_AUTHOR_NAME": "t", "GIT_AUTHOR_EMAIL": "t@t.invalid", "GIT_COMMITTER_NAME": "t",
           "GIT_COMMITTER_EMAIL": "t@t.invalid", "PATH": "/usr/bin:/bin"}


def _blocks(lang: str) -> list[str]:
    return re.findall(rf"```{lang}\n(.*?)```", DOC.read_text(encoding="utf-8"), flags=re.S)


def _recipe(marker: str) -> dict:
    return next(yaml.safe_load(b) for b in _blocks("yaml") if marker in b)


def _github_commands() -> list[str]:
    steps = _recipe(".github/workflows")["jobs"]["rulecheck"]["steps"]
    return [s["run"] for s in steps if "run" in s and s["run"].startswith("rulecheck ")]


def _gitlab_commands() -> list[str]:
    return [c for c in _recipe(".gitlab-ci.yml")["rulecheck"]["script"] if c.startswith("rulecheck ")]


def test_every_documented_command_is_accepted_by_the_parser() -> None:
    commands = _github_commands() + _gitlab_commands()
    for block in _blocks("sh"):
        commands += [line.split("#")[0].split(">")[0].strip() for line in block.splitlines()
                     if line.startswith("rulecheck ")]
    assert len(commands) >= 8
    for command in commands:
        words = shlex.split(command.replace("${{ github.base_ref }}", "main").replace('"${fpath[1]}', ""))
        cli._parser().parse_args(words[1:])  # exits (SystemExit) on anything it does not accept


def _git(repo: Path, *args: str) -> None:
    subprocess.run(["git", *args], cwd=repo, check=True, capture_output=True, env={**GIT_ENV, "HOME": str(repo)})


def _run(command: str, cwd: Path, env: dict[str, str]) -> subprocess.CompletedProcess:
    words = shlex.split(command)
    assert words[0] == "rulecheck"
    base = {k: v for k, v in os.environ.items() if k not in ("GITHUB_ACTIONS", "GITHUB_STEP_SUMMARY", "CI")}
    return subprocess.run([sys.executable, "-m", "rulecheck", *words[1:], "--no-cache"], cwd=cwd,
                          capture_output=True, text=True, timeout=300,
                          env={**base, "PYTHONPATH": str(ROOT), **env})


@pytest.fixture()
def clone(tmp_path: Path) -> Path:
    """A clone of an 'origin' whose main has two specs and a baseline; the clone's branch changes one spec."""
    origin = tmp_path / "origin"
    (origin / "specs").mkdir(parents=True)
    shutil.copy(DEMO / "cv-110-incline-conveyor.yaml", origin / "specs" / "cv-110.yaml")
    shutil.copy(DEMO / "h-310-maintenance-hoist.yaml", origin / "specs" / "h-310.yaml")
    _git(origin, "init", "-q", "-b", "main")
    proc = _run("rulecheck baseline specs/", origin, {})
    assert proc.returncode == 0, proc.stderr
    _git(origin, "add", "-A")
    _git(origin, "commit", "-q", "-m", "specs and baseline")
    clone = tmp_path / "clone"
    subprocess.run(["git", "clone", "-q", str(origin), str(clone)], check=True, capture_output=True, env=GIT_ENV)
    _git(clone, "checkout", "-q", "-b", "feature")
    spec = clone / "specs" / "cv-110.yaml"
    spec.write_text(spec.read_text(encoding="utf-8").replace("enclosure: IP55", "enclosure: IP23"), encoding="utf-8")
    _git(clone, "commit", "-q", "-am", "cheaper motor enclosure")
    return clone


def test_the_github_actions_recipe(clone: Path) -> None:
    (command,) = _github_commands()
    summary = clone.parent / "summary.md"
    env = {"GITHUB_ACTIONS": "true", "GITHUB_STEP_SUMMARY": str(summary), "CI": "true"}
    proc = _run(command.replace("${{ github.base_ref }}", "main"), clone, env)
    # the changed spec has a new finding (the enclosure); the hoist's known findings are not re-checked
    assert proc.returncode == 1, proc.stderr
    lines = proc.stdout.splitlines()
    assert lines and all(line.startswith("::") for line in lines)
    assert any(line.startswith("::error file=specs/cv-110.yaml,") and "enclosure-ip" in line for line in lines)
    assert proc.stderr.startswith("rulecheck: 1 spec, 1 error") and "0 fixed" in proc.stderr
    assert "specs/cv-110.yaml" in summary.read_text(encoding="utf-8")
    sarif = json.loads((clone / "rulecheck.sarif").read_text(encoding="utf-8"))
    assert sarif["runs"][0]["artifacts"][0]["location"]["uri"] == "specs/cv-110.yaml"


def test_the_gitlab_ci_recipe(clone: Path) -> None:
    recipe = _recipe(".gitlab-ci.yml")["rulecheck"]
    for command in _gitlab_commands():
        proc = _run(command, clone, {"GITLAB_CI": "true", "CI": "true"})
        assert proc.returncode == 1, proc.stderr
    report = clone / recipe["artifacts"]["reports"]["junit"]
    cases = {c.get("file"): c for c in ET.parse(report).getroot().iter("testcase")}
    assert set(cases) == {"specs/cv-110.yaml", "specs/h-310.yaml"}
    assert cases["specs/cv-110.yaml"].find("failure") is not None
    assert "enclosure-ip" in cases["specs/cv-110.yaml"].find("failure").get("message")
