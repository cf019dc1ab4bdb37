"""Display helpers, ordering and the table-driven hazard selection shared by the text renderers."""

from __future__ import annotations

import math

import pint
import pytest

from rulecheck.report import cautions, common

from . import sample


def test_speed_in_r_min_is_shown_as_given():
    assert common.display({"value": 1455.0, "unit": "r/min", "kind": "rotational_speed"}) == "1455 r/min"


def test_speed_in_rad_s_is_converted_back_to_r_min():
    # 2π·1455/60 rad/s is 1455 r/min (docs/references.md, conventions: ω = 2π·n/60)
    omega = 2 * math.pi * 1455 / 60
    assert common.display({"value": omega, "unit": "rad/s", "kind": "rotational_speed"}) == "1455 r/min"


def test_customary_display_matches_pint():
    ureg = pint.UnitRegistry()
    shown = common.display({"value": 7500.0, "unit": "W", "kind": "power"}, "customary")
    expected = ureg.Quantity(7500.0, "W").to("hp").magnitude  # pint's hp is mechanical horsepower, 745.7 W
    assert shown == f"{expected:.4g} hp"  # four significant digits


def test_fractions_as_percent_or_ratio():
    v = {"value": 0.896, "unit": "1", "kind": "fraction"}
    assert common.display(v) == "89.6 %"
    assert common.display(v, ratio=True) == "0.896"
    outcome = {"values": {"margin": {"value": 1.069, "unit": "1", "kind": "ratio"}},
               "limit": {"value": 1.1, "unit": "1", "kind": "ratio"}}
    assert common.value_items(outcome) == [("margin", "1.069")]
    assert common.display_limit(outcome) == "1.1"
    # the declared kind decides, not the name: a fraction is a percentage whatever it is called
    outcome = {"values": {"margin": {"value": 0.25, "unit": "1", "kind": "fraction"}},
               "limit": {"value": 0.1, "unit": "1", "kind": "fraction"}}
    assert common.value_items(outcome) == [("margin", "25 %")]
    assert common.display_limit(outcome) == "10 %"


@pytest.mark.parametrize("value,shown", [
    ({"value": None, "unit": "N*m", "kind": "torque"}, "—"),
    ({"value": "n/a", "unit": "1", "kind": "torque"}, "n/a"),
    ({"value": True, "unit": "", "kind": None}, "True"),
    ({"value": 3.0, "unit": "widgets", "kind": "nonsense"}, "3 widgets"),
    ({"value": 2.0, "unit": "furlong", "kind": "torque"}, "2 furlong"),
    ({"value": float("inf"), "unit": "V", "kind": "voltage"}, "inf V"),
    ("plain text\nwith a newline", "plain text with a newline"),
])
def test_odd_values_are_shown_not_raised(value, shown):
    assert common.display(value) == shown


def test_plain_removes_control_characters_and_cuts():
    assert common.plain("a\x00b\r\nc\td") == "a b c d"
    assert common.plain("x" * 50, 10) == "x" * 9 + "…"
    assert common.plain(None) == ""


def test_sorted_specs_worst_first():
    specs = sample.plant()["specs"]
    assert [s["tag"] or s["file"] for s in common.sorted_specs(reversed(specs))] == [
        "H-1", "AX-3", "specs_demo/broken.yaml", "CV-201"]


def test_group_outcomes_orders_failures_by_severity_and_safety():
    spec = sample.servo()
    groups = common.group_outcomes(spec)
    assert [o["rule"] for o in groups.failures] == ["pm-uncontrolled-generation", "inertia-ratio"]
    assert [o["rule"] for o in groups.passed] == ["mechanical-max-speed", "pm-back-emf-headroom"]


def test_summary_line_counts_verdicts():
    assert common.summary_line(sample.plant()) == "4 drive trains: 2 fail, 1 invalid, 1 warning"
    assert common.summary_line({"specs": []}) == "0 drive trains: nothing checked"


def _keys(*specs):
    return [h.hazard.key for h in cautions.select_hazards(list(specs))]


def test_hazards_come_from_applicable_outcomes_and_charts():
    assert _keys(sample.hoist()) == ["suspended-load", "stored-energy"]
    assert _keys(sample.servo()) == ["pm-generation", "stored-energy", "overspeed"]
    assert _keys(sample.conveyor()) == []  # its brake and PM rules are not applicable
    assert _keys(sample.invalid()) == []


def test_a_chart_alone_raises_no_hazard():
    # a back-EMF chart means a PM motor, but only a failing, waived or unchecked safety rule raises a hazard
    assert cautions.select_hazards([{"tag": "X", "outcomes": [], "charts": {"back_emf": {}}}]) == []


@pytest.mark.parametrize("outcome", ["pass", "not-applicable"])
def test_passes_never_raise_a_hazard(outcome):
    # every hazard's own trigger rule, passing (or not applying) on a safety-relevant rule: nothing is raised
    rules = ["holding-brake-vertical", "pm-back-emf-headroom", "regen-braking-energy", "mechanical-max-speed",
             "hazardous-area-flag", "inverter-insulation-reflected-wave", "bearing-currents"]
    spec = {"tag": "X", "outcomes": [{"rule": r, "topic": "hoist", "outcome": outcome, "safety": True,
                                      "severity": "error"} for r in rules]}
    assert cautions.select_hazards([spec]) == []


@pytest.mark.parametrize("outcome,safety,raised", [
    ("fail", True, True), ("not-checked", True, True), ("waived", True, True), ("fail", False, False),
    ("pass", True, False)])
def test_only_failing_waived_or_unchecked_safety_rules_raise(outcome, safety, raised):
    spec = {"tag": "X", "outcomes": [{"rule": "holding-brake-vertical", "topic": "regeneration-holding",
                                      "outcome": outcome, "safety": safety, "severity": "error"}]}
    assert bool(cautions.select_hazards([spec])) is raised


def test_hazard_reason_names_drive_trains_and_rules():
    selected = {h.hazard.key: h for h in cautions.select_hazards([sample.hoist(), sample.servo()])}
    energy = selected["stored-energy"]
    assert energy.tags == ["H-1", "AX-3"]
    assert "regen-braking-energy" in energy.rules and "pm-uncontrolled-generation" in energy.rules
    assert energy.reason.startswith("drive trains H-1, AX-3; rules ")


@pytest.mark.parametrize("rule,topic,key", [
    ("mechanical-max-speed", "speed", "overspeed"),
    ("field-weakening-induction", "speed", "overspeed"),
    ("conductor-and-protection-sizing", "installation", None),
    ("inverter-insulation-reflected-wave", "installation", "insulation"),
    ("hazardous-area-flag", "environment", "hazardous-area"),
    ("some-new-rule", "hoist-and-lifting", "suspended-load"),
    ("dc-bus-capacitor-energy", "x", "stored-energy"),
])
def test_hazard_table_triggers(rule, topic, key):
    spec = {"outcomes": [{"rule": rule, "topic": topic, "outcome": "fail", "safety": True, "severity": "error"}]}
    assert _keys(spec) == ([key] if key else [])


def test_general_cautions_name_the_codes_as_examples():
    text = " ".join(c.text for c in cautions.GENERAL)
    for words in ("NEC Article 430", "IEC 60364", "IEC 60204-1", "authority having jurisdiction", "licensed",
                  "arc-flash", "not an approval"):
        assert words in text, words


def test_suspended_load_wording_only_where_a_load_hangs():
    # a declining belt's regeneration failing (topic regeneration-holding) with the hoist rules not applicable:
    # stored energy, never "nobody works under a suspended load"; the same failure on a hoist raises both
    def spec(hoist: bool) -> dict:
        gate = "fail" if hoist else "not-applicable"
        return {"tag": "X", "outcomes": [
            {"rule": "regen-braking-energy", "topic": "regeneration-holding", "outcome": "fail", "safety": True,
             "severity": "error"},
            {"rule": "holding-brake-vertical", "topic": "regeneration-holding", "outcome": gate, "safety": True,
             "severity": "error" if hoist else "info"},
            {"rule": "hoist-overspeed-protection", "topic": "regeneration-holding", "outcome": "not-applicable",
             "safety": True, "severity": "info"}]}

    assert _keys(spec(False)) == ["stored-energy"]
    assert _keys(spec(True)) == ["suspended-load", "stored-energy"]


def test_conveyor_runback_has_its_own_wording():
    spec = {"outcomes": [{"rule": "conveyor-runback", "topic": "regeneration-holding", "outcome": "fail",
                          "safety": True, "severity": "error"},
                         {"rule": "holding-brake-vertical", "outcome": "not-applicable", "safety": True}]}
    # its topic (regeneration-holding) also selects stored energy (a loaded incline stores it); never the hoist text
    assert "runback" in _keys(spec) and "suspended-load" not in _keys(spec)
