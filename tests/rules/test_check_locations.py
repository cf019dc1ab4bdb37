"""A check's own ``location:``: the finding of the check that fails points at its key (the first candidate the spec
gives), else at the rule's; ``rules lint`` refuses a location that is not a key of the spec format; ``rules show``
prints them."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

from rulecheck.config import Config
from rulecheck.derive import DERIVED
from rulecheck.engine.lint import lint_rule
from rulecheck.engine.ruleset import load_rule_file
from rulecheck.run import prepare
from tests.rules.harness import EXAMPLE_DAY, outcome_of, run_example

ROOT = Path(__file__).resolve().parents[2]
SHIPPED = ROOT / "rules" / "nameplate-power-torque-speed.yaml"
RULE = "location-probe"


def _probe(tmp_path: Path, rule_location: str, error_location: str | None, warning_location: str | None) -> Path:
    """Write a copy of nameplate-power-torque-speed (error above 5 %, warning above 2 % deviation) with the given
    locations; return its folder."""
    text = SHIPPED.read_text(encoding="utf-8").replace("id: nameplate-power-torque-speed", f"id: {RULE}")
    text = text.replace("location: motor.rated_torque\n", f"location: {rule_location}\n")
    error, warning = ('  - when: "deviation > deviation_error"\n    severity: error\n',
                      '  - when: "deviation > deviation_warning"\n    severity: warning\n')
    assert text.count(error) == 1 and text.count(warning) == 1
    if error_location:
        text = text.replace(error, error + f"    location: {error_location}\n")
    if warning_location:
        text = text.replace(warning, warning + f"    location: {warning_location}\n")
    folder = tmp_path / "rules"
    folder.mkdir(exist_ok=True)
    (folder / f"{RULE}.yaml").write_text(text, encoding="utf-8")
    return folder


def _run(folder: Path, torque: str, extra_motor: dict | None = None) -> dict:
    ctx = prepare(Config(), [folder], EXAMPLE_DAY, "si", None).context
    # 7.5 kW at 1455 r/min: P/ω = 7500 / (1455·2π/60) = 49.22 N·m (the shipped rule's example).
    # 59 N·m: |7500 − 59 × 152.37| / 7500 = 19.9 % (error); 50.5 N·m: |7500 − 7694.7| / 7500 = 2.6 % (warning)
    motor = {"kind": "induction", "rated_power": "7.5 kW", "rated_speed": "1455 r/min", "rated_torque": torque,
             **(extra_motor or {})}
    return outcome_of(run_example({"spec": {"motor": motor}}, ctx), RULE)


def test_the_failing_check_points_at_its_own_key(tmp_path: Path) -> None:
    folder = _probe(tmp_path, "motor.rated_torque", "motor.rated_speed", None)
    error = _run(folder, "59 N*m")
    assert (error["outcome"], error["severity"]) == ("fail", "error")
    assert error["location"]["path"] == "motor.rated_speed"
    warning = _run(folder, "50.5 N*m")  # the warning check has no location: the rule's
    assert (warning["outcome"], warning["severity"]) == ("fail", "warning")
    assert warning["location"]["path"] == "motor.rated_torque"


def test_the_first_candidate_the_spec_gives_wins_else_the_rules_location(tmp_path: Path) -> None:
    folder = _probe(tmp_path, "[motor.frame, motor.rated_power]", "[motor.efficiency, motor.rated_speed]",
                    "[motor.efficiency, motor.inertia]")
    error = _run(folder, "59 N*m")  # no efficiency in the spec: the speed
    assert error["location"]["path"] == "motor.rated_speed"
    error = _run(folder, "59 N*m", {"efficiency": "90 %"})
    assert error["location"]["path"] == "motor.efficiency"
    # neither efficiency nor inertia given: the rule's first candidate the spec gives (no frame: rated power)
    warning = _run(folder, "50.5 N*m")
    assert warning["location"]["path"] == "motor.rated_power"
    warning = _run(folder, "50.5 N*m", {"frame": "132M"})
    assert warning["location"]["path"] == "motor.frame"
    assert warning["location"]["line"] is not None


@pytest.mark.parametrize(("where", "location", "words"), [
    ("checks[0].location", "motor.rated_sped", "did you mean 'motor.rated_speed'?"),
    ("location", "motor.rated_torque_from_nameplate", "not a key of the spec format"),
    ("checks[1].location[1]", "[motor.rated_speed, moter.inertia]", "did you mean 'motor.inertia'?"),
])
def test_lint_refuses_a_location_that_is_not_a_spec_key(tmp_path: Path, where: str, location: str,
                                                          words: str) -> None:
    folder = _probe(tmp_path, location if where == "location" else "motor.rated_torque",
                    location if where.startswith("checks[0]") else None,
                    location if where.startswith("checks[1]") else None)
    rule = load_rule_file(folder / f"{RULE}.yaml")
    problems = [str(p) for p in lint_rule(rule, DERIVED)[1]]
    assert len(problems) == 1 and words in problems[0] and f"{where}:" in problems[0], problems
    pos = rule.doc.position(where)
    assert f"{RULE}.yaml:{pos.line}:{pos.column}:" in problems[0]


def test_a_location_must_be_a_key_path_or_a_list_of_them(tmp_path: Path) -> None:
    from rulecheck.engine.ruleset import RuleError

    folder = _probe(tmp_path, "motor.rated_torque", "{path: motor.rated_speed}", None)
    with pytest.raises(RuleError, match="checks"):
        load_rule_file(folder / f"{RULE}.yaml")


def test_rules_show_prints_each_checks_location() -> None:
    shown = subprocess.run([sys.executable, "-m", "rulecheck", "rules", "show", "gearbox-peak-speed-thermal"],
                           capture_output=True, text=True, cwd=ROOT, timeout=120)
    assert shown.returncode == 0, shown.stderr
    lines = shown.stdout.splitlines()
    at = next(i for i, line in enumerate(lines) if "train.gear_input_speed_max > n1_max" in line)
    assert lines[at + 1].strip() == "points at: transmission.input_speed_max"
    assert "points at: transmission.max_output_torque" in shown.stdout
