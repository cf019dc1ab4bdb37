"""The shipped rule folder is consistent: ids, file names, documentation, examples, basis."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

from rulecheck.check import BUILTIN_RULES
from rulecheck.derive import DERIVED
from rulecheck.engine.lint import lint_ruleset
from rulecheck.engine.ruleset import load_rules, rule_files, shipped_rules_dir

ROOT = Path(__file__).resolve().parents[2]
RULESET, ERRORS = load_rules([shipped_rules_dir()])


def test_every_file_is_a_rule_with_id_equal_to_its_name() -> None:
    assert ERRORS == []
    files = rule_files(shipped_rules_dir())
    assert sorted(p.stem for p in files) == sorted(RULESET.rules)
    assert not set(RULESET.rules) & set(BUILTIN_RULES)


def test_at_least_thirty_rules_ship() -> None:
    assert len(RULESET.rules) >= 30


def test_every_rule_is_documented_with_pass_and_fail_examples_and_a_basis() -> None:
    for rule in RULESET.rules.values():
        outcomes = [e["outcome"] for e in rule.examples]
        assert "pass" in outcomes and "fail" in outcomes, rule.id
        assert len(rule.description.strip()) >= 40, rule.id
        assert rule.basis and all(b["source"].strip() and b["status"] for b in rule.basis), rule.id
        assert rule.fix is not None and rule.message is not None, rule.id
        for example in rule.examples:
            if example["outcome"] == "fail":
                assert example.get("values"), f"{rule.id}: fail example {example['name']!r} asserts no value"


def test_every_rule_passes_the_dimensional_lint() -> None:
    _kinds, problems = lint_ruleset(RULESET, DERIVED)
    assert problems == []


def test_lint_command_passes_on_the_shipped_rules_and_rejects_a_broken_folder(tmp_path: Path) -> None:
    ok = subprocess.run([sys.executable, "-m", "rulecheck", "rules", "lint", str(shipped_rules_dir())],
                        capture_output=True, text=True, cwd=ROOT)
    assert ok.returncode == 0, ok.stdout + ok.stderr
    broken = tmp_path / "broken"
    broken.mkdir()
    text = (shipped_rules_dir() / "nameplate-power-torque-speed.yaml").read_text(encoding="utf-8")
    text = text.replace("id: nameplate-power-torque-speed", "id: torque-speed-mix")
    text = text.replace('abs(motor.rated_power - motor.rated_torque * motor.rated_speed) / motor.rated_power',
                        'abs(motor.rated_torque - motor.rated_speed) / motor.rated_power')
    (broken / "torque-speed-mix.yaml").write_text(text, encoding="utf-8")
    bad = subprocess.run([sys.executable, "-m", "rulecheck", "rules", "lint", str(broken)],
                         capture_output=True, text=True, cwd=ROOT)
    assert bad.returncode == 1
    line = next(line for line in bad.stdout.splitlines() if "torque-speed-mix.yaml:" in line)
    where = line.split("torque-speed-mix.yaml:", 1)[1].split(":")
    assert where[0].isdigit() and where[1].isdigit() and "dimension" in line, line
    assert "Traceback" not in bad.stdout + bad.stderr
