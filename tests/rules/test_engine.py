"""The rule engine: outcomes, waivers, margins, configuration and severity overrides."""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import pytest

from rulecheck.config import read_config
from rulecheck.run import UsageError, prepare
from tests.rules.harness import EXAMPLE_DAY, outcome_of, run_example, shipped_context

# 7.5 kW at 1455 r/min is 49.22 N·m; 59 N·m deviates by 19.9 % (an error of nameplate-power-torque-speed)
BAD_NAMEPLATE = {"motor": {"kind": "induction", "rated_power": "7.5 kW", "rated_speed": "1455 r/min",
                           "rated_torque": "59 N*m"}}
RULE = "nameplate-power-torque-speed"


def _waiver(expires: str, rule: str = RULE) -> dict:
    return {"rule": rule, "reason": "Nameplate under correction by the vendor, agreed at review 7.",
            "approved_by": "Lead electrical engineer", "expires": expires}


def test_waived_rule_keeps_its_computed_result() -> None:
    result = run_example({"spec": {**BAD_NAMEPLATE, "waivers": [_waiver("2027-06-30")]}})
    o = outcome_of(result, RULE)
    assert o["outcome"] == "waived"
    assert o["waiver"]["approved_by"] == "Lead electrical engineer" and o["waiver"]["expires"] == "2027-06-30"
    assert o["values"]["deviation"]["value"] == pytest.approx(0.1986, rel=1e-3)
    assert not [x for x in result["outcomes"] if x["rule"] == "waiver-check"]


def test_expired_waiver_is_a_finding_and_the_failure_counts_again() -> None:
    result = run_example({"spec": {**BAD_NAMEPLATE, "waivers": [_waiver("2026-11-30")]}})
    assert outcome_of(result, RULE)["outcome"] == "fail"
    w = outcome_of(result, "waiver-check")
    assert w["outcome"] == "fail" and "expired on 2026-11-30" in w["message"]
    assert w["location"]["path"] == "waivers[0].expires" and w["location"]["line"]


def test_waiver_of_an_unknown_or_passing_rule_is_a_finding() -> None:
    unknown = run_example({"spec": {**BAD_NAMEPLATE, "waivers": [_waiver("2027-01-01", rule="no-such-rule")]}})
    assert "this run does not check (no such rule" in outcome_of(unknown, "waiver-check")["message"]
    good = {"motor": {**BAD_NAMEPLATE["motor"], "rated_torque": "49.2 N*m"}}
    stale = run_example({"spec": {**good, "waivers": [_waiver("2027-01-01")]}})
    assert "not needed" in outcome_of(stale, "waiver-check")["message"]


def test_spec_margins_set_parameters_and_unknown_names_are_findings() -> None:
    lenient = run_example({"spec": BAD_NAMEPLATE, "margins": {"deviation_error": "25 %", "deviation_warning": "21 %"}})
    assert outcome_of(lenient, RULE)["outcome"] == "pass"
    typo = run_example({"spec": BAD_NAMEPLATE, "margins": {"deviation_eror": "25 %"}})
    m = outcome_of(typo, "margins-check")
    assert m["outcome"] == "fail" and "deviation_error" in m["fix"]


def _prepare(tmp_path: Path, text: str):
    cfg_file = tmp_path / ".rulecheck.yaml"
    cfg_file.write_text(text, encoding="utf-8")
    return prepare(read_config(cfg_file), [], EXAMPLE_DAY, "si", None).context


def test_configuration_parameters_severity_and_disable(tmp_path: Path) -> None:
    ctx = _prepare(tmp_path, f"parameters:\n  {RULE}: {{deviation_error: 30 %}}\nseverity:\n  {RULE}: info\n")
    o = outcome_of(run_example({"spec": BAD_NAMEPLATE}, ctx), RULE)
    assert o["outcome"] == "fail" and o["severity"] == "info"  # 19.9 % is now only above the warning band
    ctx = _prepare(tmp_path, f"disable: [{RULE}]\n")
    assert not [o for o in run_example({"spec": BAD_NAMEPLATE}, ctx)["outcomes"] if o["rule"] == RULE]


@pytest.mark.parametrize(
    ("text", "words"),
    [
        ("disable: [no-such-rule]\n", "unknown rule id 'no-such-rule'"),
        ("severity: {no-such-rule: info}\n", "unknown rule id"),
        (f"parameters:\n  {RULE}: {{no_such_parameter: 1}}\n", "has no parameter 'no_such_parameter'"),
        ("parameters:\n  no_such_name: 1\n", "neither a rule id nor a rule parameter"),
    ],
)
def test_configuration_errors_name_the_file_and_key(tmp_path: Path, text: str, words: str) -> None:
    with pytest.raises(UsageError) as info:
        _prepare(tmp_path, text)
    assert words in str(info.value) and ".rulecheck.yaml" in str(info.value)


def test_safety_rule_that_cannot_be_evaluated_is_a_warning_never_a_pass() -> None:
    result = run_example({"spec": {"motor": {"kind": "pm-synchronous"}, "drive": {"kind": "inverter"}}})
    o = outcome_of(result, "pm-uncontrolled-generation")
    assert o["outcome"] == "not-checked" and o["severity"] == "warning" and o["safety"] is True
    assert o["missing"]


def test_every_rule_gives_exactly_one_outcome() -> None:
    result = run_example({"spec": BAD_NAMEPLATE})
    rules = [o["rule"] for o in result["outcomes"] if o["rule"] in shipped_context().ruleset.rules]
    assert sorted(rules) == sorted(shipped_context().ruleset.rules)
    assert {o["outcome"] for o in result["outcomes"]} <= {"pass", "fail", "not-checked", "not-applicable", "waived"}


def test_example_day_is_fixed() -> None:
    assert EXAMPLE_DAY == dt.date(2026, 12, 1)


def test_a_check_with_a_remedy_of_its_own_gives_that_fix() -> None:
    """A failing check names its own fix; the rule's fix (about peak torque here) is not shown for another cause."""
    from rulecheck.check import check_file

    spec = Path(__file__).resolve().parents[2] / "specs_demo" / "dc-510-crusher-feeder.yaml"
    result = check_file(spec, shipped_context())
    o = outcome_of(result, "gearbox-peak-speed-thermal")
    assert o["outcome"] == "fail" and "splash lubrication" in o["message"]
    assert "lubrication at 250 r/min" in o["fix"] and "momentary rating" not in o["fix"]


# a declining belt whose friction holds it, coasting to rest (the regen-braking-energy example):
# F = 5000 × 9.80665 × (0.025·cos 1° − sin 1°) = +370 N — the motor drives it downhill; nothing regenerates
COASTING_BELT = {
    "supply": {"voltage": "400 V", "frequency": "50 Hz"},
    "drive": {"kind": "inverter", "stop": "coast", "braking": {"kind": "none"}},
    "motor": {"kind": "induction", "rated_power": "4 kW", "rated_speed": "1440 r/min", "inertia": "0.019 kg*m^2"},
    "transmission": {"kind": "helical", "ratio": 20, "efficiency": "95 %"},
    "load": {"model": "conveyor", "mass": "5000 kg", "incline": "-1 deg", "friction_coefficient": 0.025,
             "pulley_diameter": "0.4 m", "line_speed": "1 m/s"},
}


def test_a_rule_that_does_not_apply_by_its_derived_values_says_why() -> None:
    o = outcome_of(run_example({"spec": COASTING_BELT}), "regen-braking-energy")
    assert o["outcome"] == "not-applicable"
    assert "nothing returns energy to the DC bus" in o["message"]
    braked = {**COASTING_BELT, "drive": {"kind": "inverter", "braking": {"kind": "none"}},
              "load": {**COASTING_BELT["load"], "incline": "-10 deg", "deceleration_time": "5 s"}}
    assert outcome_of(run_example({"spec": braked}), "regen-braking-energy")["outcome"] != "not-applicable"


def test_a_not_applicable_check_needs_its_reason_and_no_severity(tmp_path: Path) -> None:
    from rulecheck.engine.ruleset import RuleError, load_rule_file
    shipped = Path(__file__).resolve().parents[2] / "rules" / "regen-braking-energy.yaml"
    text = shipped.read_text(encoding="utf-8")
    reason = ("    outcome: not-applicable\n    message: \"nothing returns energy to the DC bus: the drive coasts to "
              "rest, or the load's own friction stops it within the deceleration ramp, and nothing overhauls — no "
              "braking means and no DC-bus data are needed\"\n")
    assert reason in text
    bad = tmp_path / "regen-braking-energy.yaml"
    bad.write_text(text.replace(reason, "    outcome: not-applicable\n"), encoding="utf-8")
    with pytest.raises(RuleError, match="checks"):
        load_rule_file(bad)
    rule = load_rule_file(shipped)
    assert rule.checks[0].not_applicable and not rule.checks[1].not_applicable
