"""A hostile or mistyped ``.rulecheck.yaml``: exit code 2 with the file (and key) named, never a traceback."""

from __future__ import annotations

from pathlib import Path

import pytest

from tests.robustness.conftest import assert_no_traceback, run_cli
from tests.robustness.specs import CONVEYOR

CONFIGS = {
    "parent-folder": ("rule_paths: [../../etc]\n", "outside the folder"),
    "absolute-path": ("rule_paths: [/etc]\n", "outside the folder"),
    "unknown-key": ("rule_pahts: [rules]\n", "unknown key 'rule_pahts'"),
    "unknown-disable": ("disable: [no-such-rule]\n", "unknown rule id 'no-such-rule'"),
    "unknown-severity-rule": ("severity: {no-such-rule: warning}\n", "unknown rule id 'no-such-rule'"),
    "bad-severity-level": ("severity: {nameplate-power-torque-speed: fatal}\n", "'fatal' is not error"),
    "unknown-parameter": ("parameters: {nameplate-power-torque-speed: {deviation_eror: 3 %}}\n", "deviation_eror"),
    "unknown-parameter-name": ("parameters: {no_such_margin: 1.2}\n", "no_such_margin"),
    "limit-above-cap": ("limits: {max_bytes: 999999999999}\n", "limits.max_bytes"),
    "unknown-limit": ("limits: {max_time: 5}\n", "unknown limit 'max_time'"),
    "not-a-mapping": ("- rule_paths\n", "mapping"),
    "python-tag": ("fail_on: !!python/object/apply:os.system ['id']\n", "not allowed"),
    "duplicate-key": ("fail_on: error\nfail_on: info\n", "duplicate key 'fail_on'"),
    "binary": ("\x00\x01", "binary"),
    "rule-paths-number": ("rule_paths: 5\n", "rule_paths must be a list"),
    "fail-on-list": ("fail_on: [error]\n", "fail_on must be one of error, info, warning, not a list"),
    "units-mapping": ("units: {si: 1}\n", "units must be one of customary, si, not a dict"),
    "severity-list": ("severity: {torque-peak: [error]}\n", "is not error, warning or info"),
    "limit-raised-beside-specs": ("limits: {max_bytes: 2000000}\n", "may lower a limit but not raise it"),
}


@pytest.mark.parametrize("name", sorted(CONFIGS))
def test_bad_configuration_is_a_usage_error_naming_the_file(name: str, tmp_path: Path) -> None:
    text, words = CONFIGS[name]
    project = tmp_path / "project"
    (project / ".git").mkdir(parents=True)
    (project / "specs").mkdir()
    (project / "rules").mkdir()
    (project / "specs" / "cv-210.yaml").write_text(CONVEYOR, encoding="utf-8")
    (project / ".rulecheck.yaml").write_text(text, encoding="utf-8")
    proc = run_cli("check", str(project / "specs"))
    assert_no_traceback(proc)
    assert proc.returncode == 2, proc.stdout[-1500:]
    assert ".rulecheck.yaml" in proc.stderr and words in proc.stderr, proc.stderr


def _project(tmp_path: Path) -> Path:
    project = tmp_path / "project"
    (project / ".git").mkdir(parents=True)
    (project / "specs").mkdir()
    (project / "specs" / "cv-210.yaml").write_text(CONVEYOR, encoding="utf-8")
    return project


def test_a_pyproject_with_a_toml_error_is_not_dropped_silently(tmp_path: Path) -> None:
    project = _project(tmp_path)
    (project / "pyproject.toml").write_text('[tool.rulecheck]\nfail_on = "info"\n[project\nname = "x"\n',
                                            encoding="utf-8")
    proc = run_cli("check", str(project / "specs"))
    assert_no_traceback(proc)
    assert proc.returncode == 2 and "pyproject.toml" in proc.stderr and "invalid TOML" in proc.stderr, proc.stderr


def test_a_pyproject_without_the_section_is_still_no_configuration(tmp_path: Path) -> None:
    project = _project(tmp_path)
    (project / "pyproject.toml").write_text('[project\nname = "x"\n', encoding="utf-8")  # broken, not ours
    proc = run_cli("check", str(project / "specs"))
    assert_no_traceback(proc)
    assert proc.returncode in (0, 1), proc.stderr


def test_a_configuration_named_on_the_command_line_may_raise_a_limit(tmp_path: Path) -> None:
    project = _project(tmp_path)
    (project / "ci.yaml").write_text("limits: {max_bytes: 2000000}\n", encoding="utf-8")
    proc = run_cli("check", str(project / "specs"), "--config", str(project / "ci.yaml"))
    assert_no_traceback(proc)
    assert proc.returncode in (0, 1), proc.stderr
