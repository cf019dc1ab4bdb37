"""Project hygiene: the licence, the changelog, and `.ci/run` on a fresh Debian machine (root or sudo).

`.ci/run` is run for real by bash, with every outside command it calls (id, sudo, apt-get, python3, pip,
the venv) replaced by a logging stand-in on a PATH that holds nothing else: so the test sees what it
would install, how, and what it does with pytest's exit code, without touching this machine.
"""

from __future__ import annotations

import re
import shutil
import subprocess
import tomllib
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
BASH = shutil.which("bash")


def test_licence_is_mit_in_the_file_and_the_metadata():
    text = (ROOT / "LICENSE").read_text(encoding="utf-8")
    assert text.startswith("MIT License\n")
    assert "Permission is hereby granted, free of charge" in text and 'PROVIDED "AS IS"' in text
    project = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    assert project["project"]["license"] == "MIT"
    assert project["project"]["license-files"] == ["LICENSE"]
    assert not any(c.startswith("License ::") for c in project["project"].get("classifiers", []))  # PEP 639
    assert any(re.fullmatch(r"setuptools>=(\d+)", r) and int(r.split(">=")[1]) >= 77
               for r in project["build-system"]["requires"])  # the first setuptools to read an SPDX licence


def test_changelog_has_an_unreleased_section_first():
    text = (ROOT / "CHANGELOG.md").read_text(encoding="utf-8")
    sections = re.findall(r"^## \[([^\]]+)\]", text, re.M)
    assert sections[0] == "Unreleased"
    assert sections[1:] and all(re.fullmatch(r"\d+\.\d+\.\d+", s) for s in sections[1:])


def test_ci_runs_exactly_the_readme_test_command():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    (command,) = [ln for ln in readme.splitlines() if 'pip install ".[test]"' in ln]
    script = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    assert command.strip() in script


@pytest.mark.skipif(shutil.which("shellcheck") is None, reason="shellcheck is not installed")
def test_ci_script_is_shellcheck_clean():
    proc = subprocess.run(["shellcheck", str(ROOT / ".ci" / "run")], capture_output=True, text=True, timeout=60)
    assert proc.returncode == 0, proc.stdout + proc.stderr


STUB = """#!{bash}
printf '%s\\n' "{name} $*" >> "$CI_LOG"
{body}
"""


def _machine(tmp_path: Path, *, uid: int, have: set[str], pytest_exit: int) -> tuple[Path, dict[str, str]]:
    """A project folder with `.ci/run`, and a PATH of stand-ins: `have` names the tools already installed."""
    project = tmp_path / "project"
    (project / ".ci").mkdir(parents=True)
    shutil.copy2(ROOT / ".ci" / "run", project / ".ci" / "run")
    bin_dir = tmp_path / "bin"
    bin_dir.mkdir()
    for tool in ("dirname", "env", "cat", "mkdir", "printf"):
        real = shutil.which(tool)
        if real:
            (bin_dir / tool).symlink_to(real)
    venv_bin = tmp_path / "venv-bin"
    venv_bin.mkdir()
    stubs = {
        bin_dir / "id": 'echo "$CI_UID"',
        bin_dir / "apt-get": 'printf \'%s\\n\' "  DEBIAN_FRONTEND=${DEBIAN_FRONTEND:-}" >> "$CI_LOG"',
        bin_dir / "sudo": 'exec env "$@"',
        bin_dir / "python3": (
            'case "$1 $2" in\n'
            '  "-m ensurepip") [ -n "$CI_HAVE_VENV" ] || exit 1 ;;\n'
            '  "-m venv") mkdir -p "$3/bin"; printf \'PATH="%s:$PATH"\\n\' "$CI_VENV_BIN" > "$3/bin/activate" ;;\n'
            "esac"),
        bin_dir / "git": "",
        bin_dir / "chromium": "",
        venv_bin / "pip": "",
        venv_bin / "python": '[ "$1 $2" = "-m pytest" ] && exit "$CI_PYTEST_EXIT"; exit 0',
    }
    for path, body in stubs.items():
        if path.name in ("git", "chromium", "sudo") and path.name not in have:
            continue
        path.write_text(STUB.format(bash=BASH, name=path.name, body=body), encoding="utf-8")
        path.chmod(0o755)
    env = {"PATH": str(bin_dir), "CI_LOG": str(tmp_path / "log"), "CI_UID": str(uid), "CI_VENV_BIN": str(venv_bin),
           "CI_HAVE_VENV": "1" if "python3-venv" in have else "", "CI_PYTEST_EXIT": str(pytest_exit),
           "HOME": str(tmp_path)}
    return project, env


def _run(project: Path, env: dict[str, str]) -> tuple[subprocess.CompletedProcess, list[str]]:
    proc = subprocess.run([BASH, str(project / ".ci" / "run")], env=env, capture_output=True, text=True, timeout=60,
                          stdin=subprocess.DEVNULL)
    log = Path(env["CI_LOG"])
    return proc, log.read_text(encoding="utf-8").splitlines() if log.exists() else []


@pytest.mark.skipif(BASH is None, reason="bash is not installed")
def test_fresh_debian_as_a_user_with_sudo_installs_what_is_missing_once(tmp_path):
    project, env = _machine(tmp_path, uid=1000, have={"sudo"}, pytest_exit=0)
    proc, log = _run(project, env)
    assert proc.returncode == 0, proc.stderr
    apt = [ln for ln in log if ln.startswith(("sudo", "apt-get", "  DEBIAN"))]
    assert apt == [
        "sudo DEBIAN_FRONTEND=noninteractive apt-get update -qq",
        "apt-get update -qq", "  DEBIAN_FRONTEND=noninteractive",
        "sudo DEBIAN_FRONTEND=noninteractive apt-get install -y -qq python3-venv git chromium",
        "apt-get install -y -qq python3-venv git chromium", "  DEBIAN_FRONTEND=noninteractive",
    ]
    # then the README's command, in the venv
    assert log[-2:] == ['pip install .[test]', "python -m pytest"]


@pytest.mark.skipif(BASH is None, reason="bash is not installed")
def test_as_root_with_everything_installed_nothing_is_installed(tmp_path):
    project, env = _machine(tmp_path, uid=0, have={"python3-venv", "git", "chromium"}, pytest_exit=0)
    proc, log = _run(project, env)
    assert proc.returncode == 0, proc.stderr
    assert not any(ln.startswith(("apt-get", "sudo")) for ln in log), log
    assert log[-1] == "python -m pytest"


@pytest.mark.skipif(BASH is None, reason="bash is not installed")
def test_as_root_installs_git_alone_without_sudo(tmp_path):
    project, env = _machine(tmp_path, uid=0, have={"python3-venv", "chromium", "sudo"}, pytest_exit=0)
    proc, log = _run(project, env)
    assert proc.returncode == 0, proc.stderr
    assert [ln for ln in log if ln.startswith(("apt-get", "sudo"))] == ["apt-get update -qq",
                                                                        "apt-get install -y -qq git"]


@pytest.mark.skipif(BASH is None, reason="bash is not installed")
def test_not_root_and_no_sudo_stops_with_a_reason(tmp_path):
    project, env = _machine(tmp_path, uid=1000, have={"python3-venv", "chromium"}, pytest_exit=0)
    proc, log = _run(project, env)
    assert proc.returncode == 1
    assert "not root and no sudo" in proc.stderr and "git" in proc.stderr
    assert not any("pytest" in ln for ln in log)


@pytest.mark.skipif(BASH is None, reason="bash is not installed")
@pytest.mark.parametrize(("pytest_exit", "code", "says"), [(5, 1, "collected no tests"), (1, 1, "tests failed"),
                                                           (2, 2, "tests failed"), (0, 0, "")])
def test_pytest_exit_codes(tmp_path, pytest_exit, code, says):
    project, env = _machine(tmp_path, uid=0, have={"python3-venv", "git", "chromium"}, pytest_exit=pytest_exit)
    proc, _log = _run(project, env)
    assert proc.returncode == code, proc.stderr
    assert says in proc.stderr
    if not says:
        assert proc.stderr == ""

