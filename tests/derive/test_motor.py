"""The motor step against hand calculations (sources beside each)."""

from __future__ import annotations

import math

import pytest

from tests.derive.conftest import model_of

RPM = 2 * math.pi / 60


def test_dc_back_emf_with_the_default_brush_drop() -> None:
    # E_N = V_aN − I_aN·R_a − V_br = 460 − 50 × 0.5 − 2 = 433 V (DC machine equation, textbook; V_br 2 V common
    # practice for carbon brushes)
    m = model_of({"motor": {"kind": "dc", "rated_power": "20 kW", "rated_speed": "1500 r/min",
                            "armature_voltage": "460 V", "armature_current": "50 A",
                            "armature_resistance": "0.5 ohm"}})
    assert m.get("motor.brush_drop") == 2.0
    assert m.get("motor.rated_back_emf") == pytest.approx(433.0, rel=1e-12)


def test_induction_nameplate_worked_through() -> None:
    # 7.5 kW, 1455 r/min, 4 poles, 50 Hz: T_N = 7500/(1455·2π/60) = 49.224 N·m; n_s = 120·50/4 = 1500 r/min;
    # s = 45/1500 = 0.03; I_0 = 0.35 × 14.8 A = 5.18 A (common practice); √3·400·14.8·0.82 = 8408.0 W input
    m = model_of({"motor": {"kind": "induction", "rated_power": "7.5 kW", "rated_speed": "1455 r/min",
                            "rated_voltage": "400 V", "rated_current": "14.8 A", "rated_frequency": "50 Hz",
                            "poles": 4, "power_factor": 0.82}})
    assert m.get("motor.rated_torque") == pytest.approx(49.224, rel=1e-4)
    assert m.get("motor.synchronous_speed") == pytest.approx(1500 * RPM, rel=1e-12)
    assert m.get("motor.slip") == pytest.approx(0.03, rel=1e-9)
    assert m.get("motor.magnetising_current") == pytest.approx(5.18, rel=1e-12)
    assert m.get("motor.electrical_input") == pytest.approx(math.sqrt(3) * 400 * 14.8 * 0.82, rel=1e-12)
    assert m.get("motor.electrical_input") == pytest.approx(8408.0, rel=1e-4)


def _induction_on_400_v_drive(rated_voltage: str) -> dict:
    return {"supply": {"voltage": "400 V", "frequency": "50 Hz"}, "drive": {"kind": "inverter"},
            "motor": {"kind": "induction", "rated_power": "11 kW", "rated_speed": "1465 r/min",
                      "rated_voltage": rated_voltage, "rated_frequency": "50 Hz", "poles": 4}}


def test_400_v_motor_on_a_400_v_drive_keeps_its_rated_speed_as_base_speed() -> None:
    # drive output 0…U_in (drive datasheets) = 400 V = V_N: n_b = n_N = 1465 r/min, no field weakening below it
    m = model_of(_induction_on_400_v_drive("400 V"))
    assert m.get("motor.base_speed") == pytest.approx(1465 * RPM, rel=1e-12)


def test_a_deficit_inside_zone_a_is_no_derating() -> None:
    # 415 V motor, 400 V drive: 400/415 = 0.964, 3.6 % short, inside IEC 60034-1 zone A (±5 %): n_b = 1465 r/min
    m = model_of(_induction_on_400_v_drive("415 V"))
    assert m.get("motor.base_speed") == pytest.approx(1465 * RPM, rel=1e-12)


def test_a_deficit_beyond_zone_a_lowers_the_base_speed() -> None:
    # 440 V motor, 400 V drive: 400 < 0.95 × 440 = 418 V: n_b = 1465 × 400/440 = 1331.8 r/min (V/f law)
    m = model_of(_induction_on_400_v_drive("440 V"))
    assert m.get("motor.base_speed") / RPM == pytest.approx(1331.82, abs=0.01)


@pytest.mark.parametrize("ratio", [2.9, "290 %"])
def test_breakdown_and_peak_torque_as_a_multiple_of_rated_torque(ratio) -> None:
    # datasheets print T_b/T_N = 2.9 (or 290 %): T_N = 7500/(1455·2π/60) = 49.224 N·m → T_b = 2.9 × 49.224
    # = 142.75 N·m; peak 2.2 × 49.224 = 108.29 N·m
    m = model_of({"motor": {"kind": "induction", "rated_power": "7.5 kW", "rated_speed": "1455 r/min",
                            "breakdown_torque_ratio": ratio, "peak_torque_ratio": "220 %"}})
    assert m.get("motor.breakdown_torque") == pytest.approx(142.75, rel=1e-4)
    assert m.get("motor.peak_torque") == pytest.approx(108.29, rel=1e-4)
    assert m.provenance["motor.breakdown_torque"].inputs == ("motor.breakdown_torque_ratio", "motor.rated_torque")


def test_a_given_breakdown_torque_wins_over_its_ratio_and_a_contradiction_is_said() -> None:
    # 150 N·m given against 2.5 × 49.224 = 123.06 N·m: 18 % apart (more than 5 %): the given torque is used
    m = model_of({"motor": {"kind": "induction", "rated_power": "7.5 kW", "rated_speed": "1455 r/min",
                            "breakdown_torque": "150 N*m", "breakdown_torque_ratio": 2.5}})
    assert m.get("motor.breakdown_torque") == 150.0
    assert any("breakdown_torque_ratio disagree" in note for note in m.notes)


def test_dc_field_power_from_voltage_and_current_enters_the_input() -> None:
    # separately excited: P_f = 310 V × 1.3 A = 403 W; input 500 V × 60 A + 403 W = 30 403 W;
    # η_impl = 27 000/30 403 = 0.88807 (armature alone 0.900, an upper bound: the field's power is all loss)
    m = model_of({"drive": {"kind": "dc-converter"},
                  "motor": {"kind": "dc", "rated_power": "27 kW", "armature_voltage": "500 V",
                            "armature_current": "60 A", "field": {"kind": "separate", "voltage": "310 V",
                                                                  "current": "1.3 A"}}})
    assert m.get("motor.field.power") == pytest.approx(403.0, rel=1e-12)
    assert m.get("motor.electrical_input") == pytest.approx(30403.0, rel=1e-12)
    assert m.get("motor.implied_efficiency") == pytest.approx(0.88807, rel=1e-4)
    assert m.get("motor.armature_implied_efficiency") == pytest.approx(0.9, rel=1e-12)


def test_dc_permanent_magnet_field_takes_no_power_and_an_unknown_field_leaves_the_input_open() -> None:
    base = {"kind": "dc", "rated_power": "27 kW", "armature_voltage": "500 V", "armature_current": "60 A"}
    pm = model_of({"drive": {"kind": "dc-converter"}, "motor": {**base, "field": {"kind": "permanent-magnet"}}})
    assert pm.get("motor.field.power") == 0.0 and pm.get("motor.electrical_input") == 30000.0
    unknown = model_of({"drive": {"kind": "dc-converter"}, "motor": base})
    assert not unknown.has("motor.electrical_input")  # never the armature alone taken as the whole input
    assert unknown.get("motor.field_power_needed") is True
