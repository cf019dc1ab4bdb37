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
