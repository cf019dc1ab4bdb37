"""Every derive constant a rule depends on is pinned: perturbing it makes a rule example (worked by hand in the
rule file) or a hand-calculated derive test disagree. A constant no check notices could drift unseen."""

from __future__ import annotations

import math

import pytest

from rulecheck.derive import installation, load, motor, site, starting, supply
from rulecheck.engine.ruleset import load_rules, shipped_rules_dir
from rulecheck.physics import dynamics, machines
from rulecheck.physics import supply as supply_physics
from tests.derive import test_duty, test_motor, test_site
from tests.rules.harness import outcome_of, run_example, shipped_context

RULESET, _ = load_rules([shipped_rules_dir()])
EXAMPLES = [(rule.id, example) for rule in RULESET.rules.values() for example in rule.examples]

# (module, name, perturbed value[, hand-calculated derive tests that pin it where no rule example does]):
# each a value a rule reads through the derive stage
CONSTANTS = [
    (supply, "DEFAULT_VOLTAGE_TOLERANCE", 0.11),  # supply.voltage_min/max → supply-voltage-frequency
    (supply, "DEFAULT_FREQUENCY_TOLERANCE", 0.03),  # supply.frequency_tolerance → supply-voltage-frequency
    (supply, "DEFAULT_FIRING_ANGLE_MIN", math.radians(20.0)),  # drive.armature_voltage_max → dc-armature-voltage
    (motor, "VOLTAGE_ZONE_A", 0.03),  # motor.base_speed → base-speed-voltage-match (415 V motor on 400 V)
    (motor, "MAGNETISING_SHARE", 0.45),
    # motor.nameplate_band → nameplate-electrical-power (IEC 60034-1 tolerances, band values in its examples)
    (motor, "IEC_EFFICIENCY_TOLERANCE", (0.20, 0.10)),
    (motor, "IEC_EFFICIENCY_BREAKPOINT", 200e3),
    (motor, "IEC_POWER_FACTOR_TOLERANCE", (0.2, 0.02, 0.07)),  # I_0 → train.motor_current_* → drive-current-continuous
    # motor.rated_back_emf → dc-armature-voltage
    (motor, "DEFAULT_BRUSH_DROP", 3.0, [test_motor.test_dc_back_emf_with_the_default_brush_drop]),
    (site, "REFERENCE_AMBIENT", 35.0, [test_site.test_38_degrees_at_500_m_is_inside_the_rating]),
    # site.motor_derating without a given ambient → altitude-ambient-derating
    (site, "REFERENCE_AMBIENT", 45.0, [test_site.test_no_ambient_given_means_the_40_degree_reference]),
    (starting, "LOCKED_ROTOR_POWER_FACTOR", 0.45),  # train.starting_voltage → dol-starting
    (starting, "DOL_RUN_UP_END", 0.9),  # train.acceleration_time → acceleration-time
    (load, "HOLDBACK_FRICTION", 0.02),  # load.runback_torque → conveyor-runback
    (installation, "CABLE_PROPAGATION_SPEED", 120e6),  # cable.critical_length → inverter-insulation-reflected-wave
    # protection.full_load_current: 746 W must read the 1 hp row → conductor-and-protection-sizing
    (supply_physics, "NEC_HP_MATCH", 0.0001),
    # drive.input_thd from the front end → line-harmonics
    (supply_physics, "TYPICAL_INPUT_THD", {**supply_physics.TYPICAL_INPUT_THD, "six-pulse-dc-choke": 0.30}),
    (machines, "_COOLING_FACTOR", (0.55, 0.75, 0.85, 1.00)),  # k_cool → torque-margin-continuous
    (dynamics, "DEFAULT_STANDSTILL_FACTOR", 0.6,
     # β → duty.rms_torque → torque-rms-duty-cycle
     [test_duty.test_rms_torque_counts_half_the_standstill_of_a_self_ventilated_motor]),
]


def _disagreeing_examples() -> list[str]:
    ctx = shipped_context()
    wrong = []
    for rule_id, example in EXAMPLES:
        outcome = outcome_of(run_example(example, ctx), rule_id)
        same = outcome["outcome"] == example["outcome"] and outcome.get("severity") == example.get(
            "severity", outcome.get("severity"))
        for name, expected in (example.get("values") or {}).items():
            got = (outcome["values"].get(name) or {}).get("value")
            same = same and got is not None and math.isclose(got, expected, rel_tol=example.get("tolerance", 0.01),
                                                             abs_tol=1e-9)
        if not same:
            wrong.append(f"{rule_id}: {example.get('name', '')}")
    return wrong


def test_the_shipped_constants_agree_with_every_example() -> None:
    assert _disagreeing_examples() == []


def _fails(test) -> bool:
    try:
        test()
    except AssertionError:
        return True
    return False


@pytest.mark.parametrize("case", CONSTANTS, ids=[f"{c[1]}={c[2]:g}" if isinstance(c[2], float) else c[1]
                                                 for c in CONSTANTS])
def test_perturbing_a_derive_constant_fails_a_check(case, monkeypatch) -> None:
    module, name, value, *pinned_by = case
    for test in pinned_by[0] if pinned_by else ():
        test()  # passes with the shipped value
    monkeypatch.setattr(module, name, value)
    if pinned_by:
        assert all(_fails(test) for test in pinned_by[0]), f"{module.__name__}.{name} = {value!r} went unnoticed"
    else:
        assert _disagreeing_examples(), f"{module.__name__}.{name} = {value!r} changed no rule example"
