"""The shipped rule folder is consistent: ids, file names, documentation, examples, basis."""

from __future__ import annotations

import re
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


def test_the_shipped_rules_are_the_design_rules_of_the_references() -> None:
    # docs/references.md names one rule file per design rule R02, R03, … numbered without gaps (R01 is the built-in
    # unit check): the rule set loaded from the shipped folder holds exactly those, no more, no fewer
    text = (ROOT / "docs" / "references.md").read_text(encoding="utf-8")
    entries = re.findall(r"^#### (R\d\d)\b.*\n\n- \*\*Rule:\*\* "
                         r"(?:`rules/([a-z0-9-]+)\.yaml`|built-in check `([a-z-]+)`)", text, re.M)
    assert len(entries) >= 40
    assert [e[0] for e in entries] == [f"R{n:02d}" for n in range(1, len(entries) + 1)]
    assert sorted(RULESET.rules) == sorted(e[1] for e in entries if e[1])
    assert [e[2] for e in entries if e[2]] == ["units-and-dimensions"] and "units-and-dimensions" in BUILTIN_RULES


def test_every_rule_is_documented_with_pass_and_fail_examples_and_a_basis() -> None:
    for rule in RULESET.rules.values():
        outcomes = [e["outcome"] for e in rule.examples]
        assert "pass" in outcomes and "fail" in outcomes, rule.id
        assert len(rule.description.strip()) >= 40, rule.id
        assert rule.basis and all(b["source"].strip() and b["status"] for b in rule.basis), rule.id
        for example in rule.examples:
            if example["outcome"] == "fail":
                assert example.get("values"), f"{rule.id}: fail example {example['name']!r} asserts no value"


def test_a_rule_without_message_or_fix_is_refused_by_name(tmp_path: Path) -> None:
    # a finding must say what is wrong and what to do: the rule-file schema requires both
    text = (shipped_rules_dir() / "inertia-ratio.yaml").read_text(encoding="utf-8")
    for key in ("message", "fix"):
        folder = tmp_path / key
        folder.mkdir()
        lines = [line for line in text.splitlines() if not line.startswith(f"{key}:")]
        (folder / "inertia-ratio.yaml").write_text("\n".join(lines) + "\n", encoding="utf-8")
        ruleset, errors = load_rules([folder])
        assert "inertia-ratio" not in ruleset.rules
        assert len(errors) == 1 and f"'{key}'" in str(errors[0]), [str(e) for e in errors]


def test_every_rule_passes_the_dimensional_lint() -> None:
    _kinds, problems = lint_ruleset(RULESET, DERIVED)
    assert problems == []


def test_strict_lint_command_passes_on_the_shipped_rules_and_lint_rejects_a_broken_folder(tmp_path: Path) -> None:
    ok = subprocess.run([sys.executable, "-m", "rulecheck", "rules", "lint", "--strict", str(shipped_rules_dir())],
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
