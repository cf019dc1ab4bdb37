"""Derived values of the machine derive step, against hand calculations and docs/references.md check values."""

from __future__ import annotations

import cmath
import math

import pytest
import yaml
from scipy import integrate

from rulecheck.derive import DERIVED, build_model
from rulecheck.derive.starting import dol_motor_torque, rotor_resistance_ratio, soft_start_run_up
from rulecheck.load import load_text
from rulecheck.schema import read_quantities

RPM = 2 * math.pi / 60
MOTOR_75 = {"kind": "induction", "rated_power": "7.5 kW", "rated_speed": "1455 r/min", "rated_voltage": "400 V",
            "rated_current": "14.8 A", "rated_frequency": "50 Hz", "poles": 4, "breakdown_torque": "145 N*m",
            "inertia": "0.029 kg*m^2"}
T_N_75 = 7500 / (1455 * RPM)  # 49.22 N·m


def model(spec: dict):
    doc = load_text(yaml.safe_dump({"format": 1, "tag": "T", **spec}), "t.yaml")
    quantities, problems = read_quantities(doc)
    assert problems == []
    return build_model(doc, quantities, None)


def test_catalogue_holds_the_new_paths() -> None:
    for path in ("motor.electrical_input", "train.peak_torque_available", "train.starting_voltage",
                 "train.cooling_table_default", "train.breakaway_torque"):
        assert path in DERIVED


def test_electrical_input_forms() -> None:
    # docs/references.md K42: 7.5 kW, 400 V, cosφ 0.82, η 0.904 → 14.60 A, so the input is 7.5 kW/0.904 = 8296.5 W
    # (within the rounding of 14.60 A: √3·400·14.6·0.82 = 8294.5 W)
    three = model({"motor": {"kind": "induction", "rated_power": "7.5 kW", "rated_voltage": "400 V",
                             "rated_current": "14.6 A", "power_factor": 0.82}})
    assert three.get("motor.electrical_input") == pytest.approx(math.sqrt(3) * 400 * 14.6 * 0.82, rel=1e-9)
    assert three.get("motor.electrical_input") == pytest.approx(7500 / 0.904, rel=5e-4)  # K42 rounding of 14.60 A
    single = model({"supply": {"voltage": "230 V", "phases": 1}, "drive": {"kind": "direct-on-line"},
                    "motor": {"kind": "induction", "rated_voltage": "230 V", "rated_current": "10 A",
                              "power_factor": 0.9}})
    assert single.get("motor.electrical_input") == pytest.approx(230 * 10 * 0.9, rel=1e-9)
    # DC: V_a·I_a = 30 kW from the armature; the whole input adds the field's power, unknown until given
    dc = model({"motor": {"kind": "dc", "armature_voltage": "500 V", "armature_current": "60 A"}})
    assert dc.get("motor.armature_input") == pytest.approx(30000.0, rel=1e-9)
    assert not dc.has("motor.electrical_input")
    dc_pm = model({"motor": {"kind": "dc", "armature_voltage": "500 V", "armature_current": "60 A",
                             "field": {"kind": "permanent-magnet"}}})
    assert dc_pm.get("motor.electrical_input") == pytest.approx(30000.0, rel=1e-9)


def test_rated_torque_given_flag() -> None:
    assert model({"motor": {**MOTOR_75, "rated_torque": "49.2 N*m"}}).get("motor.rated_torque_given") is True
    assert model({"motor": MOTOR_75}).get("motor.rated_torque_given") is False


def test_cooling_table_flag_follows_cooling_and_declared_range() -> None:
    base = {"drive": {"kind": "inverter"}, "load": {"model": "constant-torque", "torque": "10 N*m",
                                                    "speed_max": "1455 r/min"}}
    assert model({**base, "motor": MOTOR_75}).get("train.cooling_table_default") is True
    assert model({**base, "motor": {**MOTOR_75, "cooling": "forced"}}).get("train.cooling_table_default") is False
    declared = {**MOTOR_75, "constant_torque_speed_min": "150 r/min"}
    assert model({**base, "motor": declared}).get("train.cooling_table_default") is False
    assert model({"drive": {"kind": "direct-on-line"}, "motor": MOTOR_75}).get("train.cooling_table_default") is False


def test_peak_torque_at_drive_overload_current() -> None:
    # T(I) = T_N·√((I² − I_0²)/(I_N² − I_0²)) (references R07) with I = 18 A × 150 % = 27 A, I_0 = 0.35 × 14.8 A:
    # 49.22·√((729 − 26.83)/(219.04 − 26.83)) = 94.08 N·m; the motor limit at rated speed is T_bd = 145 N·m.
    m = model({"drive": {"kind": "inverter", "output_voltage_max": "400 V", "rated_current": "18 A",
                         "overload": {"current": "150 %"}},
               "motor": MOTOR_75,
               "load": {"model": "constant-torque", "torque": "40 N*m", "speed_max": "1455 r/min"}})
    i0 = 0.35 * 14.8
    expected = T_N_75 * math.sqrt((27**2 - i0**2) / (14.8**2 - i0**2))
    assert expected == pytest.approx(94.08, abs=0.01)
    assert m.get("train.peak_torque_drive") == pytest.approx(expected, rel=1e-9)
    assert m.get("train.peak_torque_motor") == pytest.approx(145.0, rel=1e-9)
    assert m.get("train.peak_torque_available") == pytest.approx(expected, rel=1e-9)


def test_peak_torque_above_base_speed_falls_with_field_weakening() -> None:
    # at 2910 r/min = 2·n_b: motor limit min(T_bd·½, T_bd·¼) = 36.25 N·m; drive limit 94.08·½ = 47.04 N·m
    m = model({"drive": {"kind": "inverter", "output_voltage_max": "400 V", "rated_current": "18 A",
                         "overload": {"current": "150 %"}},
               "motor": MOTOR_75,
               "load": {"model": "constant-torque", "torque": "10 N*m", "speed_max": "2910 r/min"}})
    assert m.get("train.peak_torque_motor") == pytest.approx(145.0 / 4, rel=1e-9)
    assert m.get("train.peak_torque_drive") == pytest.approx(94.08 / 2, abs=0.01)
    assert m.get("train.peak_torque_available") == pytest.approx(36.25, rel=1e-9)


def test_acceleration_time_matches_k43() -> None:
    # K43: J 0.1 kg·m², 0 → 1500 r/min, net torque 20 N·m → t = 0.785 s.
    # PM motor: Kt 1 N·m/A × (10 A × 200 %) = 20 N·m below base speed (1500 r/min), no load torque;
    # J = 0.05 (rotor) + 0.05 (load) kg·m².
    m = model({"drive": {"kind": "inverter", "rated_current": "10 A", "overload": {"current": "200 %"}},
               "motor": {"kind": "pm-synchronous", "rated_power": "3 kW", "rated_speed": "1500 r/min",
                         "torque_constant": "1 N*m/A", "peak_torque": "30 N*m", "inertia": "0.05 kg*m^2"},
               "load": {"model": "constant-torque", "torque": "0 N*m", "speed_max": "1500 r/min",
                        "inertia": "0.05 kg*m^2"}})
    assert m.get("train.acceleration_stalls") is False
    assert m.get("train.acceleration_time") == pytest.approx(0.785, abs=0.0005)


def test_acceleration_stalls_when_load_exceeds_available_torque() -> None:
    m = model({"drive": {"kind": "inverter", "rated_current": "10 A", "overload": {"current": "200 %"}},
               "motor": {"kind": "pm-synchronous", "rated_power": "3 kW", "rated_speed": "1500 r/min",
                         "torque_constant": "1 N*m/A", "peak_torque": "30 N*m", "inertia": "0.05 kg*m^2"},
               "load": {"model": "constant-torque", "torque": "25 N*m", "speed_max": "1500 r/min",
                        "inertia": "0.05 kg*m^2"}})
    assert m.get("train.acceleration_stalls") is True
    assert not m.has("train.acceleration_time")


def test_dol_curve_passes_through_rated_breakdown_and_locked_rotor_points() -> None:
    ns = 1500 * RPM
    curve = dol_motor_torque(T_N_75, 145.0, 0.03, ns, locked_rotor_torque=108.3)
    assert curve(1455 * RPM) == pytest.approx(T_N_75, rel=1e-9)  # Kloss fitted to the rated point
    assert curve(0.0) == pytest.approx(108.3, rel=1e-9)
    b = 145.0 / T_N_75
    s_k = 0.03 * (b + math.sqrt(b * b - 1))
    assert curve(ns * (1 - s_k)) == pytest.approx(145.0, rel=1e-9)  # breakdown torque at the breakdown slip
    with pytest.raises(ValueError):
        dol_motor_torque(50.0, 40.0, 0.03, ns)


def test_dol_run_up_matches_closed_form_kloss_integral() -> None:
    # No load torque, Kloss curve: t = J·ω_s/(2·T_bd)·[(1 − s_e²)/(2·s_k) + s_k·ln(1/s_e)]
    # (integral of 1/T over slip; electric-machines textbooks' run-up time at no load), s_e at 95 % of n_N.
    m = model({"drive": {"kind": "direct-on-line"}, "motor": MOTOR_75,
               "load": {"model": "constant-torque", "torque": "0 N*m", "speed_max": "1455 r/min",
                        "inertia": "2 kg*m^2"}})
    b = 145.0 / T_N_75
    s_k = 0.03 * (b + math.sqrt(b * b - 1))
    s_e = 1 - 0.95 * 1455 / 1500
    closed = 2.029 * 1500 * RPM / (2 * 145.0) * ((1 - s_e**2) / (2 * s_k) + s_k * math.log(1 / s_e))
    assert closed == pytest.approx(3.664, abs=0.001)
    # Simpson over 100 steps on a smooth curve: agreement to 0.1 % is ample
    assert m.get("train.acceleration_time") == pytest.approx(closed, rel=1e-3)


def test_dol_run_up_with_load_matches_quadrature() -> None:
    # constant 30 N·m load, T_LR given: compare with scipy's adaptive quadrature of J/(T_m − T_L)
    m = model({"drive": {"kind": "direct-on-line"},
               "motor": {**MOTOR_75, "locked_rotor_torque": "108.3 N*m"},
               "load": {"model": "constant-torque", "torque": "30 N*m", "speed_max": "1455 r/min",
                        "inertia": "1 kg*m^2"}})
    curve = dol_motor_torque(T_N_75, 145.0, 0.03, 1500 * RPM, 108.3)
    expected, _ = integrate.quad(lambda w: 1.029 / (curve(w) - 30.0), 0.0, 0.95 * 1455 * RPM, limit=200)
    assert m.get("train.acceleration_time") == pytest.approx(expected, rel=1e-3)


def test_starting_voltage_of_supply_and_cable() -> None:
    # Z_m = 400/(√3·103.6) Ω at cosφ 0.35; supply j·400²/5 MVA; cable 100 m 16 mm² Cu:
    # R = 0.0225·100/16 = 0.1406 Ω (IEC 60364-5-52 Annex G ρ1), X = 0.08 mΩ/m·100 m = 0.008 Ω
    spec = {"supply": {"voltage": "400 V", "frequency": "50 Hz", "fault_level": "5 MVA"},
            "drive": {"kind": "direct-on-line"},
            "motor": {**MOTOR_75, "locked_rotor_current": "103.6 A"}}
    z_m = cmath.rect(400 / (math.sqrt(3) * 103.6), math.acos(0.35))
    no_cable = abs(z_m) / abs(z_m + 0.032j)
    assert model(spec).get("train.starting_voltage") == pytest.approx(no_cable, rel=1e-9)
    assert no_cable == pytest.approx(0.9867, abs=1e-4)
    with_cable = abs(z_m) / abs(z_m + 0.032j + complex(0.0225 * 100 / 16, 0.008))
    cabled = model({**spec, "cable": {"length": "100 m", "conductor_area": "16 mm^2", "material": "copper"}})
    assert cabled.get("train.starting_voltage") == pytest.approx(with_cable, rel=1e-9)
    assert with_cable < no_cable


def test_breakaway_torque_referred_to_motor_shaft() -> None:
    # 1200 N·m breakaway at the load through i = 20, η = 0.95: 1200/(20·0.95) = 63.16 N·m
    m = model({"motor": MOTOR_75, "transmission": {"ratio": 20, "efficiency": "95 %"},
               "load": {"model": "quadratic", "torque_at_speed_max": "900 N*m", "breakaway_torque": "1200 N*m",
                        "speed_max": "72 r/min"}})
    assert m.get("train.breakaway_torque") == pytest.approx(1200 / (20 * 0.95), rel=1e-9)


def test_dol_run_up_at_the_dipped_voltage() -> None:
    # torque ∝ U² (electric-machines textbooks): with no load torque the run-up time scales as 1/u²; on 0.3 MVA the
    # start dips this motor to u = 0.8150 (dol-starting example), so 3.664 s becomes 3.664/0.8150² = 5.516 s
    spec = {"supply": {"voltage": "400 V", "frequency": "50 Hz", "fault_level": "0.3 MVA"},
            "drive": {"kind": "direct-on-line"}, "motor": {**MOTOR_75, "locked_rotor_current": "103.6 A"},
            "load": {"model": "constant-torque", "torque": "0 N*m", "speed_max": "1455 r/min", "inertia": "2 kg*m^2"}}
    m = model(spec)
    u = m.get("train.starting_voltage")
    assert u == pytest.approx(0.8150, abs=1e-4)
    full = model({**spec, "supply": {"voltage": "400 V", "frequency": "50 Hz"}})
    assert full.get("train.acceleration_time") == pytest.approx(3.664, abs=0.001)
    assert m.get("train.acceleration_time") == pytest.approx(full.get("train.acceleration_time") / u**2, rel=1e-9)


SOFT_PUMP = {  # 90 kW two-pole pump on a soft starter (tests/corpus/sound/tb-p-108)
    "supply": {"voltage": "400 V", "frequency": "50 Hz"},
    "drive": {"kind": "soft-starter", "soft_start": {"current_limit": "400 %", "initial_voltage": "35 %",
                                                     "ramp_time": "10 s"}},
    "motor": {"kind": "induction", "rated_power": "90 kW", "rated_voltage": "400 V", "rated_current": "150 A",
              "rated_frequency": "50 Hz", "rated_speed": "2975 r/min", "poles": 2, "breakdown_torque": "870 N*m",
              "locked_rotor_torque": "720 N*m", "locked_rotor_current": "1125 A", "inertia": "0.65 kg*m^2",
              "safe_stall_time": "18 s"},
    "load": {"model": "quadratic", "torque_at_speed_max": "244.4 N*m", "breakaway_torque": "30 N*m",
             "speed_max": "2970 r/min", "inertia": "0.9 kg*m^2"}}


def test_soft_start_torque_at_the_current_limit() -> None:
    # current ∝ U at locked rotor, torque ∝ U²: T = T_LR·(I_lim/I_LR)² = 720·(600/1125)² = 204.8 N·m;
    # initial 720·0.35² = 88.2 N·m
    m = model(SOFT_PUMP)
    assert m.get("train.soft_start_voltage") == pytest.approx(600 / 1125, rel=1e-12)
    assert m.get("train.soft_start_torque") == pytest.approx(204.8, rel=1e-9)
    assert m.get("train.soft_start_initial_torque") == pytest.approx(88.2, rel=1e-9)


def test_soft_start_without_a_current_limit_derives_nothing() -> None:
    m = model({**SOFT_PUMP, "drive": {"kind": "soft-starter"}})
    assert not m.has("train.soft_start_torque")
    assert not m.has("train.acceleration_time")


def test_rotor_resistance_ratio_from_the_datasheet() -> None:
    # T = 3·I_r²·R_r/(s·ω_s): R_LR/R_N = (T_LR/T_N)·((I_N² − I_0²)/(I_LR² − I_0²))/s_N; 90 kW pump:
    # T_N = 288.9 N·m, I_0 = 52.5 A, s_N = 25/3000: 2.4923 × (19 744/1 262 869) / 0.008333 = 4.676
    t_n = 90000 / (2975 * RPM)
    ratio = rotor_resistance_ratio(t_n, 720, 150, 1125, 52.5, 25 / 3000)
    assert ratio == pytest.approx((720 / t_n) * ((150**2 - 52.5**2) / (1125**2 - 52.5**2)) / (25 / 3000), rel=1e-12)
    assert ratio == pytest.approx(4.676, abs=0.002)
    assert rotor_resistance_ratio(t_n, 720, 150, 1125, 52.5, 0.5) == 1.0  # never below the running value


def test_soft_start_run_up_constant_torque_after_the_ramp() -> None:
    # no ramp, constant motor torque 50 N·m, no load: t = J·ω/T = 2 × 100 / 50 = 4 s (midpoint rule exact)
    t = soft_start_run_up(2.0, lambda t, w: 50.0, lambda w: 0.0, 0.0, 0.0, 100.0)
    assert t == pytest.approx(4.0, rel=1e-12)


def test_soft_start_run_up_during_a_torque_ramp() -> None:
    # torque rising as k·t (k = 20 N·m/s), no load: ω = k·t²/(2J), so ω = 100 rad/s with J = 2 at t = √(2Jω/k)
    # = √20 = 4.472 s, inside a 10 s ramp; the midpoint rule on a linear rate is exact, the last step interpolated
    t = soft_start_run_up(2.0, lambda t, w: 20.0 * t, lambda w: 0.0, 0.0, 10.0, 100.0)
    assert t == pytest.approx(math.sqrt(20.0), rel=1e-3)


def test_soft_start_waits_for_breakaway_and_stalls_below_it() -> None:
    # torque 20·t against a 40 N·m breakaway: the shaft starts at 2 s; after that ω = 10·(t − 2)² (J = 1,
    # net 20·(t − 2)), 100 rad/s at t = 2 + √10 = 5.162 s
    t = soft_start_run_up(1.0, lambda t, w: 20.0 * min(t, 10.0), lambda w: 40.0, 40.0, 10.0, 100.0)
    assert t == pytest.approx(2 + math.sqrt(10.0), rel=2e-3)
    assert soft_start_run_up(1.0, lambda t, w: 30.0, lambda w: 40.0, 40.0, 0.0, 100.0) == math.inf
