"""A scratch repository of specs with two commits, as a CI maintainer uses it: paths relative to the repository
root in every machine format, GitHub Actions mode, baselines with changed-only runs, update and prune."""

from __future__ import annotations

import json
import os
import shutil
import subprocess
import sys
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

from .conftest import DEMO, ROOT

HOIST = DEMO / "h-310-maintenance-hoist.yaml"  # two errors: regen-braking-energy, holding-brake-vertical
CONVEYOR = DEMO / "cv-110-incline-conveyor.yaml"  # passes (one info finding)
GIT_ENV = {"GIT_AUTHOR_NAME": "t", "GIT_AUTHOR_EMAIL": "t@t.invalid", "GIT_COMMITTER_NAME": "t",
           "GIT_COMMITTER_EMAIL": "t@t.invalid", "PATH": "/usr/bin:/bin"}


def _run(*args: str, cwd: Path, env: dict[str, str] | None = None) -> subprocess.CompletedProcess:
    """Run the command line with a clean environment (no CI variables unless given)."""
    base = {k: v for k, v in os.environ.items() if k not in ("GITHUB_ACTIONS", "GITHUB_STEP_SUMMARY", "CI")}
    proc = subprocess.run([sys.executable, "-m", "rulecheck", *args], cwd=cwd, capture_output=True, text=True,
                          timeout=300, env={**base, "PYTHONPATH": str(ROOT), "NO_COLOR": "1", **(env or {})})
    assert "Traceback" not in proc.stdout + proc.stderr, proc.stderr
    return proc


def _git(repo: Path, *args: str) -> None:
    subprocess.run(["git", *args], cwd=repo, check=True, capture_output=True, env={**GIT_ENV, "HOME": str(repo)})


@pytest.fixture()
def repo(tmp_path: Path) -> Path:
    """specs/hoist.yaml (fails), specs/conveyor.yaml (passes), a workflow file; two commits."""
    repo = tmp_path / "repo"
    (repo / "specs").mkdir(parents=True)
    (repo / ".github" / "workflows").mkdir(parents=True)
    (repo / ".github" / "workflows" / "ci.yml").write_text("on: push\njobs: {}\n", encoding="utf-8")
    shutil.copy(HOIST, repo / "specs" / "hoist.yaml")
    shutil.copy(CONVEYOR, repo / "specs" / "conveyor.yaml")
    _git(repo, "init", "-q", "-b", "main")
    _git(repo, "add", "-A")
    _git(repo, "commit", "-q", "-m", "specs")
    conveyor = repo / "specs" / "conveyor.yaml"
    conveyor.write_text(conveyor.read_text(encoding="utf-8") + "# reviewed\n", encoding="utf-8")
    _git(repo, "commit", "-q", "-am", "review note")
    return repo


# --- paths relative to the repository root -----------------------------------------------------------


def test_every_machine_format_names_specs_from_the_repository_root(repo: Path) -> None:
    out = repo / "out"
    out.mkdir()
    proc = _run("check", ".", "--no-cache", "--format", "text", "--report", f"sarif={out / 'r.sarif'}",
                "--report", f"junit={out / 'r.xml'}", "--report", f"json={out / 'r.json'}",
                "--report", f"annotations={out / 'r.txt'}", cwd=repo / "specs")
    assert proc.returncode == 1
    assert "\nhoist.yaml:" in "\n" + proc.stdout  # the terminal: as given, relative to the current folder
    sarif = json.loads((out / "r.sarif").read_text(encoding="utf-8"))
    uris = {a["location"]["uri"] for a in sarif["runs"][0]["artifacts"]}
    assert uris == {"specs/conveyor.yaml", "specs/hoist.yaml"}
    assert {r["locations"][0]["physicalLocation"]["artifactLocation"]["uri"]
            for r in sarif["runs"][0]["results"]} >= {"specs/hoist.yaml"}
    cases = ET.parse(out / "r.xml").getroot().iter("testcase")
    assert {c.get("file") for c in cases} == {"specs/conveyor.yaml", "specs/hoist.yaml"}
    assert {s["file"] for s in json.loads((out / "r.json").read_text(encoding="utf-8"))["specs"]} == {
        "specs/conveyor.yaml", "specs/hoist.yaml"}
    lines = (out / "r.txt").read_text(encoding="utf-8").splitlines()
    assert lines and all(line.startswith("::error file=specs/hoist.yaml,") for line in lines)


def test_root_option_sets_what_paths_are_relative_to(repo: Path) -> None:
    proc = _run("check", "specs", "--no-cache", "--format", "sarif", "--root", "specs", cwd=repo)
    uris = {a["location"]["uri"] for a in json.loads(proc.stdout)["runs"][0]["artifacts"]}
    assert uris == {"conveyor.yaml", "hoist.yaml"}
    assert _run("check", "specs", "--root", "nowhere", "--no-cache", cwd=repo).returncode == 2


# --- GitHub Actions ------------------------------------------------------------------------------------


def test_github_actions_mode_annotates_summarises_and_writes_the_step_summary(repo: Path) -> None:
    summary = repo / "step-summary.md"
    summary.write_text("## earlier step\n", encoding="utf-8")
    env = {"GITHUB_ACTIONS": "true", "GITHUB_STEP_SUMMARY": str(summary), "CI": "true"}
    proc = _run("check", "specs", "--no-cache", cwd=repo, env=env)
    assert proc.returncode == 1
    lines = proc.stdout.splitlines()
    assert len(lines) == 2 and all(line.startswith("::error file=specs/hoist.yaml,line=") for line in lines)
    assert proc.stderr.count("\n") == 1
    assert proc.stderr.startswith("rulecheck: 2 specs, 2 errors, 0 warnings")
    assert "(exit 1)" in proc.stderr
    text = summary.read_text(encoding="utf-8")
    assert text.startswith("## earlier step\n")  # appended, never replaced
    assert "specs/hoist.yaml" in text and "holding-brake-vertical" in text


def test_a_passing_run_under_github_actions_still_says_so(repo: Path) -> None:
    summary = repo / "step-summary.md"
    env = {"GITHUB_ACTIONS": "true", "GITHUB_STEP_SUMMARY": str(summary)}
    proc = _run("check", "specs/conveyor.yaml", "--no-cache", cwd=repo, env=env)
    assert proc.returncode == 0 and proc.stdout == ""
    assert proc.stderr.startswith("rulecheck: 1 spec, 0 errors") and "(exit 0)" in proc.stderr
    assert "conveyor.yaml" in summary.read_text(encoding="utf-8")


# --- baselines -----------------------------------------------------------------------------------------


def _json(proc: subprocess.CompletedProcess) -> dict:
    return json.loads(proc.stdout)


def test_unchecked_specs_are_neither_new_nor_fixed(repo: Path) -> None:
    assert _run("baseline", "specs", "--no-cache", cwd=repo).returncode == 0
    base = repo / ".rulecheck-baseline.json"
    recorded = [(f["file"], f["rule"]) for f in json.loads(base.read_text(encoding="utf-8"))["findings"]]
    assert recorded == [("specs/conveyor.yaml", "torque-margin-continuous"),  # an info finding
                        ("specs/hoist.yaml", "holding-brake-vertical"), ("specs/hoist.yaml", "regen-braking-energy")]
    # only the conveyor changed in the last commit: the hoist is not checked, so its findings are not "fixed"
    proc = _run("check", "specs", "--no-cache", "--changed-since", "HEAD~1", "--baseline", str(base),
                "--format", "json", cwd=repo)
    summary = _json(proc)["summary"]
    assert [s["file"] for s in _json(proc)["specs"]] == ["specs/conveyor.yaml"]
    assert summary["baseline"]["fixed"] == [] and summary["baseline"]["new"] == 0
    assert summary["baseline"]["matched"] == 1
    assert proc.returncode == 0


def test_known_findings_are_reported_as_known_and_the_summary_agrees_with_the_exit_code(repo: Path) -> None:
    assert _run("baseline", "specs", "--no-cache", cwd=repo).returncode == 0
    proc = _run("check", ".", "--no-cache", "--baseline", "../.rulecheck-baseline.json", cwd=repo / "specs")
    assert proc.returncode == 0, proc.stdout + proc.stderr  # run from a subfolder: the identities still match
    footer = proc.stdout.strip().splitlines()
    summary_line = next(line for line in footer if line.startswith("2 specs checked"))
    assert "fail" not in summary_line.split(";")[0] and "2 pass" in summary_line
    assert "findings: 0 error" in summary_line
    assert "baseline ../.rulecheck-baseline.json: 3 known, 0 new, 0 fixed" in proc.stdout
    assert "(in baseline)" in proc.stdout
    data = _json(_run("check", "specs", "--no-cache", "--baseline", ".rulecheck-baseline.json", "--format", "json",
                      cwd=repo))
    assert data["summary"]["fail"]["error"] == 0 and data["summary"]["baseline"]["known"]["error"] == 2
    assert data["summary"]["exit_code"] == 0
    assert {s["file"]: s["verdict"] for s in data["specs"]} == {"specs/conveyor.yaml": "pass",
                                                                 "specs/hoist.yaml": "pass"}


def test_baseline_update_keeps_unchecked_specs_and_prune_only_removes(repo: Path) -> None:
    base = repo / ".rulecheck-baseline.json"
    assert _run("baseline", "specs/hoist.yaml", "--no-cache", cwd=repo).returncode == 0
    before = json.loads(base.read_text(encoding="utf-8"))["findings"]
    assert len(before) == 2
    # the conveyor gets a finding; updating with the conveyor alone keeps the hoist's entries
    conveyor = repo / "specs" / "conveyor.yaml"
    text = conveyor.read_text(encoding="utf-8")
    assert "enclosure: IP55" in text
    conveyor.write_text(text.replace("enclosure: IP55", "enclosure: IP23"), encoding="utf-8")
    proc = _run("baseline", "specs/conveyor.yaml", "--update", "--no-cache", cwd=repo)
    assert proc.returncode == 0 and "2 added, 0 removed, 2 of specs not checked kept" in proc.stderr
    after = json.loads(base.read_text(encoding="utf-8"))["findings"]
    assert [(f["file"], f["rule"]) for f in after] == [("specs/conveyor.yaml", "enclosure-ip"),
                                                       ("specs/conveyor.yaml", "torque-margin-continuous")] + [
        (f["file"], f["rule"]) for f in before]
    # the conveyor's enclosure is put right again: prune removes that entry and keeps the rest
    conveyor.write_text(text, encoding="utf-8")
    hoist = repo / "specs" / "hoist.yaml"
    proc = _run("baseline", "specs", "--prune", "--no-cache", cwd=repo)
    assert proc.returncode == 0 and "0 added, 1 removed" in proc.stderr, proc.stderr
    pruned = json.loads(base.read_text(encoding="utf-8"))["findings"]
    assert [(f["file"], f["rule"]) for f in pruned] == [("specs/conveyor.yaml", "torque-margin-continuous"),
                                                        ("specs/hoist.yaml", "holding-brake-vertical"),
                                                        ("specs/hoist.yaml", "regen-braking-energy")]
    # a finding that is new since the baseline is not added by prune
    hoist.write_text(hoist.read_text(encoding="utf-8").replace("enclosure: IP55", "enclosure: IP23"),
                     encoding="utf-8")
    assert "enclosure: IP23" in hoist.read_text(encoding="utf-8")
    assert _run("baseline", "specs", "--prune", "--no-cache", cwd=repo).returncode == 0
    assert json.loads(base.read_text(encoding="utf-8"))["findings"] == pruned
    assert _run("baseline", "specs", "--prune", "-o", "missing.json", "--no-cache", cwd=repo).returncode == 2


def test_findings_of_a_deleted_spec_are_fixed_and_pruned(repo: Path) -> None:
    base = repo / ".rulecheck-baseline.json"
    assert _run("baseline", "specs", "--no-cache", cwd=repo).returncode == 0
    _git(repo, "rm", "-q", "specs/hoist.yaml")
    proc = _run("check", "specs", "--no-cache", "--changed-since", "HEAD", "--baseline", str(base), "--format",
                "json", cwd=repo)
    fixed = _json(proc)["summary"]["baseline"]["fixed"]
    assert [(f["file"], f["rule"]) for f in fixed] == [("specs/hoist.yaml", "holding-brake-vertical"),
                                                       ("specs/hoist.yaml", "regen-braking-energy")]
    proc = _run("baseline", "specs/conveyor.yaml", "--prune", "--no-cache", cwd=repo)
    assert proc.returncode == 0 and "2 removed" in proc.stderr, proc.stderr
    assert {f["file"] for f in json.loads(base.read_text(encoding="utf-8"))["findings"]} == {"specs/conveyor.yaml"}


def test_a_step_summary_too_large_for_the_runner_is_cut_at_a_line() -> None:
    from rulecheck import cli

    long = "".join(f"| spec-{i:06d}.yaml | pass |\n" for i in range(60_000))
    cut = cli._fit_step_summary(long)
    assert len(cut.encode("utf-8")) <= cli.STEP_SUMMARY_BYTES < len(long.encode("utf-8"))
    assert cut.endswith("`--report markdown=FILE`.)*\n") and "| spec-000000.yaml | pass |\n" in cut
    assert cli._fit_step_summary("short\n") == "short\n"
