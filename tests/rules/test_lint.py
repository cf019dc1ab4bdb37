"""The dimensional lint of rule expressions, including branches a spec might never take."""

from __future__ import annotations

from pathlib import Path

import pytest

from rulecheck.derive import DERIVED
from rulecheck.engine.lint import lint_rule
from rulecheck.engine.ruleset import load_rule_file

BASE = (Path(__file__).resolve().parents[2] / "rules" / "nameplate-power-torque-speed.yaml").read_text(encoding="utf-8")
ORIGINAL = "abs(motor.rated_power - motor.rated_torque * motor.rated_speed) / motor.rated_power"


def _rule(tmp_path: Path, deviation: str) -> list[str]:
    text = BASE.replace("id: nameplate-power-torque-speed", "id: probe").replace(ORIGINAL, deviation)
    path = tmp_path / "probe.yaml"
    path.write_text(text, encoding="utf-8")
    _kinds, problems = lint_rule(load_rule_file(path), DERIVED)
    return [str(p) for p in problems]


def test_shipped_form_is_clean(tmp_path: Path) -> None:
    assert _rule(tmp_path, ORIGINAL) == []


@pytest.mark.parametrize(
    "deviation",
    [
        "motor.rated_power + motor.rated_speed",  # power plus speed
        "(motor.rated_torque > motor.rated_speed) and 0.1",  # torque compared with speed
        "0.1 if motor.kind == 'induction' else motor.rated_power + motor.rated_speed",  # only the other branch
        "motor.rated_power + motor.rated_speed if motor.kind == 'dc' else 0.1",  # only the first branch
        "0.1 if motor.kind == 'induction' or motor.rated_voltage > motor.rated_current else 0.2",  # inside an `or`
        "torque_from_power(motor.rated_torque, motor.rated_speed) / motor.rated_torque",  # wrong kind to a method
        "motor.rated_torq / motor.rated_torque",  # a misspelt path
    ],
)
def test_dimensional_mistakes_are_found_with_their_line(tmp_path: Path, deviation: str) -> None:
    problems = _rule(tmp_path, deviation)
    assert problems, deviation
    assert "probe.yaml:" in problems[0] and problems[0].split("probe.yaml:")[1].split(":")[0].isdigit()


def test_a_check_fix_naming_an_unknown_value_is_reported(tmp_path: Path) -> None:
    text = BASE.replace("id: nameplate-power-torque-speed", "id: probe")
    start = text.index("  - when:")
    line_end = text.index("\n", text.index("severity:", start))
    text = text[:line_end + 1] + '    fix: "check {{ no_such_value }}"\n' + text[line_end + 1:]
    path = tmp_path / "probe.yaml"
    path.write_text(text, encoding="utf-8")
    _kinds, problems = lint_rule(load_rule_file(path), DERIVED)
    assert any("checks[0].fix" in str(p) and "no_such_value" in str(p) for p in problems), problems
