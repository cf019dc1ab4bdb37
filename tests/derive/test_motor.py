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
