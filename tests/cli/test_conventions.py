"""Command-line conventions: usage errors with a reason, standard input, colour, quiet, help, completion,
the rules subcommands and the shipped schema file."""

from __future__ import annotations

import argparse
import json
import shutil
import subprocess
from pathlib import Path

import pytest

from rulecheck import cli

from .conftest import DEMO, ROOT, run_cli

FAILING = DEMO / "h-310-maintenance-hoist.yaml"  # two safety errors: regen-braking-energy, holding-brake-vertical
CLEAN = DEMO / "cv-110-incline-conveyor.yaml"


# --- usage errors ------------------------------------------------------------------------------------


def test_a_folder_without_specs_is_a_usage_error_unless_allowed(tmp_path: Path) -> None:
    (tmp_path / "empty").mkdir()
    (tmp_path / "empty" / "notes.txt").write_text("no specs here\n", encoding="utf-8")
    proc = run_cli("check", "empty", "--no-cache", cwd=tmp_path)
    assert proc.returncode == 2
    assert "empty: no spec files found" in proc.stderr and "--allow-empty" in proc.stderr
    proc = run_cli("check", "empty", "--no-cache", "--allow-empty", "--format", "json", cwd=tmp_path)
    assert proc.returncode == 0 and json.loads(proc.stdout)["summary"]["specs"] == 0
    proc = run_cli("check", "no-such-folder", "--no-cache", cwd=tmp_path)
    assert proc.returncode == 2 and "no-such-folder: no such file or directory" in proc.stderr


def test_changed_since_outside_a_repository_gives_gits_reason(tmp_path: Path) -> None:
    shutil.copy(CLEAN, tmp_path / "s.yaml")
    proc = run_cli("check", "s.yaml", "--no-cache", "--changed-since", "HEAD~1", cwd=tmp_path,
                   env={"GIT_CEILING_DIRECTORIES": str(tmp_path.parent)})
    assert proc.returncode == 2
    assert "is not in a git repository" in proc.stderr and "(git: fatal: not a git repository" in proc.stderr


def test_changed_since_an_unknown_revision_gives_gits_reason(tmp_path: Path) -> None:
    shutil.copy(CLEAN, tmp_path / "s.yaml")
    env = {"GIT_AUTHOR_NAME": "t", "GIT_AUTHOR_EMAIL": "t@t.invalid", "GIT_COMMITTER_NAME": "t",
           "GIT_COMMITTER_EMAIL": "t@t.invalid", "PATH": "/usr/bin:/bin", "HOME": str(tmp_path)}
    for args in (("init", "-q"), ("add", "-A"), ("commit", "-q", "-m", "one")):
        subprocess.run(["git", *args], cwd=tmp_path, check=True, capture_output=True, env=env)
    proc = run_cli("check", "s.yaml", "--no-cache", "--changed-since", "HEAD~1", cwd=tmp_path)
    assert proc.returncode == 2
    assert "unknown revision 'HEAD~1'" in proc.stderr and "(git: fatal:" in proc.stderr


# --- standard input and pipes ------------------------------------------------------------------------


@pytest.mark.parametrize("name", ["-", "/dev/stdin"])
def test_a_spec_on_standard_input_is_read_once_with_the_cache_on(tmp_path: Path, name: str) -> None:
    """`cat spec | rulecheck check /dev/stdin` used to read the pipe twice (cache key, then check) and report
    an empty file."""
    text = FAILING.read_text(encoding="utf-8")
    for _ in range(2):  # the second run is served from the cache
        proc = subprocess.run(["sh", "-c", f"cat '{FAILING}' | {shlex_python()} -m rulecheck check {name} "
                               f"--cache-dir '{tmp_path / 'cache'}' --format json"],
                              cwd=ROOT, capture_output=True, text=True, timeout=300,
                              env={"PYTHONPATH": str(ROOT), "PATH": "/usr/bin:/bin", "NO_COLOR": "1"})
        assert proc.returncode == 1, proc.stderr
        spec = json.loads(proc.stdout)["specs"][0]
        assert spec["status"] == "checked" and spec["tag"] == "HR-H-310"
        assert spec["file"] == ("<stdin>" if name == "-" else name)
        assert {o["rule"] for o in spec["outcomes"] if o["outcome"] == "fail"} == {
            "regen-braking-energy", "holding-brake-vertical"}
    assert "yaml-syntax" not in text


def shlex_python() -> str:
    import shlex
    import sys

    return shlex.quote(sys.executable)


# --- colour and quiet --------------------------------------------------------------------------------


@pytest.mark.parametrize(("choice", "environ", "tty", "expected"), [
    ("auto", {}, True, True),
    ("auto", {}, False, False),
    ("auto", {"NO_COLOR": "1"}, True, False),
    ("auto", {"NO_COLOR": ""}, True, True),  # no-color.org: an empty NO_COLOR is as if unset
    ("auto", {"TERM": "dumb"}, True, False),
    ("auto", {"FORCE_COLOR": "1"}, False, True),  # force-color.org: any non-empty value forces colour
    ("auto", {"FORCE_COLOR": ""}, False, False),
    ("auto", {"FORCE_COLOR": "1", "TERM": "dumb"}, False, True),
    ("auto", {"FORCE_COLOR": "1", "NO_COLOR": "1"}, True, False),
    ("always", {"NO_COLOR": "1", "TERM": "dumb"}, False, True),  # the command line overrides the environment
    ("never", {"FORCE_COLOR": "1"}, True, False),
])
def test_colour_follows_the_published_conventions(choice: str, environ: dict[str, str], tty: bool,
                                                  expected: bool) -> None:
    assert cli.colour_wanted(choice, environ, tty) is expected


def test_color_always_colours_a_pipe_and_never_does_not() -> None:
    always = run_cli("check", str(FAILING), "--no-cache", "--color=always")
    never = run_cli("check", str(FAILING), "--no-cache", "--color", "never", env={"FORCE_COLOR": "1"})
    forced = run_cli("check", str(FAILING), "--no-cache", env={"FORCE_COLOR": "1", "NO_COLOR": ""})
    assert "\x1b[" in always.stdout and "\x1b[" in forced.stdout
    assert "\x1b[" not in never.stdout


def test_quiet_prints_only_the_findings() -> None:
    loud = run_cli("check", str(FAILING), "--no-cache")
    quiet = run_cli("check", str(FAILING), "--no-cache", "-q")
    assert quiet.returncode == loud.returncode == 1
    assert "Screening aid only" in loud.stdout and "Screening aid only" not in quiet.stdout
    assert quiet.stdout.count(": error ") == 2 and quiet.stderr == ""
    assert run_cli("check", str(CLEAN), "--no-cache", "--quiet").stdout.strip().count("\n") <= 1
    assert run_cli("check", str(CLEAN), "--no-cache", "-q", "-v").returncode == 2


# --- help, subcommands, completion -------------------------------------------------------------------


def _parsers(parser: argparse.ArgumentParser, name: str = "rulecheck"):
    yield name, parser
    for action in parser._actions:
        if isinstance(action, argparse._SubParsersAction):
            for sub_name, sub in action.choices.items():
                yield from _parsers(sub, f"{name} {sub_name}")


def test_every_option_of_every_command_has_help() -> None:
    missing = [f"{name} {action.option_strings or action.dest}"
               for name, parser in _parsers(cli._parser()) for action in parser._actions
               if not isinstance(action, argparse._SubParsersAction) and not (action.help or "").strip()]
    assert missing == []


def test_format_lists_its_choices_once() -> None:
    text = run_cli("check", "-h").stdout
    assert text.count("annotations") == 2  # once in --format's help, once under GitHub Actions' default
    assert "{text," not in text


@pytest.mark.parametrize(("action", "words"), [("show", "RULE"), ("lint", "DIR"), ("list", "--rules DIR")])
def test_rules_subcommands_have_their_own_help(action: str, words: str) -> None:
    proc = run_cli("rules", action, "-h")
    assert proc.returncode == 0 and proc.stdout.startswith(f"usage: rulecheck rules {action}")
    assert words in proc.stdout


def test_rules_show_and_list() -> None:
    shown = run_cli("rules", "show", "holding-brake-vertical")
    assert shown.returncode == 0 and shown.stdout.startswith("holding-brake-vertical: ")
    assert run_cli("rules", "show").returncode == 2  # the rule id is required
    assert run_cli("rules").stdout == run_cli("rules", "list").stdout


@pytest.mark.parametrize("shell", ["bash", "zsh", "tcsh"])
def test_shell_completion_is_generated_from_the_parser(shell: str) -> None:
    proc = run_cli("completion", shell)
    assert proc.returncode == 0
    for word in ("check", "baseline", "changed-since", "fail-on"):
        assert word in proc.stdout
    if shell == "bash" and shutil.which("bash"):
        syntax = subprocess.run(["bash", "-n"], input=proc.stdout, text=True, capture_output=True)
        assert syntax.returncode == 0, syntax.stderr


def test_completion_library_is_declared() -> None:
    text = (ROOT / "pyproject.toml").read_text(encoding="utf-8")
    assert '"shtab>=' in text


# --- rule lint of the shipped rules and a copy of them -----------------------------------------------


def test_linting_the_shipped_rules_is_clean() -> None:
    proc = run_cli("rules", "lint", "rules")
    assert proc.returncode == 0, proc.stdout + proc.stderr
    assert ", 0 problems" in proc.stderr


def test_a_copy_of_the_shipped_rules_is_not_reported_as_duplicates_of_itself(tmp_path: Path) -> None:
    """The repository's rules/ beside an installed copy: linting it must not report every id twice."""
    shutil.copytree(ROOT / "rules", tmp_path / "rules")
    proc = run_cli("rules", "lint", str(tmp_path / "rules"))
    assert proc.returncode == 0 and "already defined" not in proc.stdout, proc.stdout
    # a source tree's edited copy (rules/ beside rulecheck/) is linted on its own too
    (tmp_path / "rulecheck").mkdir()
    (tmp_path / "rulecheck" / "__init__.py").write_text("", encoding="utf-8")
    edited = tmp_path / "rules" / "inertia-ratio.yaml"
    edited.write_text(edited.read_text(encoding="utf-8") + "\n# edited\n", encoding="utf-8")
    proc = run_cli("rules", "lint", str(tmp_path / "rules"))
    assert proc.returncode == 0 and "already defined" not in proc.stdout, proc.stdout
    # a folder of one's own rules that repeats a shipped id is still reported
    own = tmp_path / "own"
    own.mkdir()
    shutil.copy(ROOT / "rules" / "inertia-ratio.yaml", own / "inertia-ratio.yaml")
    proc = run_cli("rules", "lint", str(own))
    assert proc.returncode == 1 and "rule id 'inertia-ratio' is already defined" in proc.stdout


# --- the schema ----------------------------------------------------------------------------------------


def test_schema_prints_the_shipped_file() -> None:
    proc = run_cli("schema")
    assert proc.returncode == 0
    assert proc.stdout == (ROOT / "rulecheck" / "schemas" / "spec.schema.json").read_text(encoding="utf-8")
