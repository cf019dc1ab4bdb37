"""Chart series (derive/charts.py) against hand calculations: the starting chart of a direct-on-line or
soft-starter start uses the curve the starting rules and the run-up use."""

from __future__ import annotations

import math

import pytest

from rulecheck.derive.charts import chart_data
from rulecheck.derive.starting import dol_motor_torque

from .conftest import model_of

RPM = 2 * math.pi / 60

# the dol-starting rule's "weak supply" example (rules/dol-starting.yaml), with a breakdown torque so the
# motor's speed-torque curve can be drawn
DOL = {
    "supply": {"voltage": "400 V", "frequency": "50 Hz", "fault_level": "0.3 MVA"},
    "drive": {"kind": "direct-on-line"},
    "motor": {"kind": "induction", "rated_power": "7.5 kW", "rated_speed": "1455 r/min", "rated_voltage": "400 V",
              "rated_current": "14.8 A", "rated_frequency": "50 Hz", "poles": 4, "locked_rotor_current": "103.6 A",
              "locked_rotor_torque": "108.3 N*m", "breakdown_torque": "145 N*m"},
    "load": {"model": "constant-torque", "torque": "40 N*m", "speed_max": "1455 r/min"},
}


def test_dol_start_is_a_starting_chart_at_the_dipped_voltage():
    charts = chart_data(model_of(DOL))
    assert "starting" in charts and "torque_speed" not in charts  # no variable-speed plane for a fixed-speed start
    st = charts["starting"]
    # the rule's hand calculation: u = 0.8150, T_start = 108.3 × 0.8150² = 71.94 N·m (rules/dol-starting.yaml)
    assert st["voltage_ratio"] == pytest.approx(0.8150, abs=5e-5) and st["voltage_dip_counted"] is True
    assert st["motor_starting"][0] == [0.0, pytest.approx(71.94, abs=0.01)]
    assert st["motor_full_voltage"][0] == [0.0, pytest.approx(108.3, rel=1e-4)]  # T(s = 1) = T_LR
    # torque ∝ U² at every speed: the starting curve is the full-voltage curve × u²
    u2 = st["voltage_ratio"] ** 2
    for (n, t), (n_full, t_full) in zip(st["motor_starting"], st["motor_full_voltage"], strict=True):
        assert n == n_full and t == pytest.approx(u2 * t_full, rel=2e-4, abs=1e-6)
    # the full-voltage curve is Kloss's fitted to T_N = 7500/(1455·2π/60) = 49.22 N·m, T_bd 145 N·m, s_N = 0.03
    kloss = dol_motor_torque(7500 / (1455 * RPM), 145.0, 0.03, 1500 * RPM, 108.3)
    n, t = st["motor_full_voltage"][30]
    assert n == pytest.approx(750.0) and t == pytest.approx(kloss(750.0 * RPM), rel=1e-4)
    # the load: 40 N·m constant from standstill to the end of the run-up, 95 % × 1455 = 1382.25 r/min (chart
    # values are kept to 5 significant digits: 1382.2, so within half a unit of the last digit)
    assert st["load_curve"][0] == [0.0, pytest.approx(40.0)]
    assert st["load_curve"][-1][0] == pytest.approx(1382.25, abs=0.051)
    start = next(p for p in st["load_points"] if p.get("rule") == "dol-starting")
    assert start["label"] == "start at 82 % of rated voltage" and start["torque"] == pytest.approx(71.94, abs=0.01)


def test_soft_start_chart_is_at_the_current_limit():
    # rules/soft-starter-starting.yaml example: I_lim = 3 × 40.2 = 120.6 A; u = 120.6/281 = 0.42918;
    # T_start = 286 × 0.42918² = 52.68 N·m; breakaway 2880/(20 × 0.96) = 150 N·m at the motor
    spec = {
        "supply": {"voltage": "400 V", "frequency": "50 Hz"},
        "drive": {"kind": "soft-starter", "soft_start": {"current_limit": "300 %", "ramp_time": "10 s"}},
        "motor": {"kind": "induction", "rated_power": "22 kW", "rated_voltage": "400 V", "rated_current": "40.2 A",
                  "rated_frequency": "50 Hz", "rated_speed": "1470 r/min", "poles": 4, "breakdown_torque": "400 N*m",
                  "locked_rotor_torque": "286 N*m", "locked_rotor_current": "281 A", "inertia": "0.16 kg*m^2",
                  "safe_stall_time": "15 s"},
        "transmission": {"kind": "helical-bevel", "ratio": 20, "efficiency": "96 %"},
        "load": {"model": "constant-torque", "torque": "2100 N*m", "breakaway_torque": "2880 N*m",
                 "speed_max": "73.5 r/min", "inertia": "40 kg*m^2"},
    }
    st = chart_data(model_of(spec))["starting"]
    assert st["method"] == "soft-starter"
    assert st["motor_starting"][0] == [0.0, pytest.approx(52.68, abs=0.01)]
    assert st["load_curve"][0] == [0.0, pytest.approx(150.0, rel=1e-6)]
    # never above the full-voltage curve
    assert all(t <= full + 1e-9 for (_, t), (_, full) in zip(st["motor_starting"], st["motor_full_voltage"],
                                                                strict=True))


def test_inverter_keeps_the_torque_speed_plane():
    spec = {**DOL, "drive": {"kind": "inverter", "output_voltage_max": "400 V"}}
    charts = chart_data(model_of(spec))
    assert "torque_speed" in charts and "starting" not in charts


def test_downhill_belt_brakes_in_the_reverse_torque_quadrant():
    # a belt running down a 14° decline: F = m·g·(μ·cos θ + sin θ) = 6000 × 9.80665 × (0.03 × 0.97030 − 0.24192)
    # = −12 522 N: the load drives. At the 0.5 m pulley 12 522 × 0.25 = 3130.4 N·m (η_load not given: 1); back
    # through the gearbox × η_rev (the forward 96 %) ÷ i 24 = 125.22 N·m braking torque at the motor, negative,
    # while the speed stays positive (15 × 24 = 360 up to 1.6/(π·0.5) × 60 × 24 = 61.116 × 24 = 1466.8 r/min)
    spec = {
        "supply": {"voltage": "400 V", "frequency": "50 Hz"},
        "drive": {"kind": "inverter", "output_voltage_max": "400 V", "braking": {"kind": "resistor"}},
        "motor": {"kind": "induction", "rated_power": "30 kW", "rated_speed": "1475 r/min", "rated_voltage": "400 V",
                  "rated_frequency": "50 Hz", "poles": 4, "rated_current": "55 A", "breakdown_torque": "520 N*m"},
        "transmission": {"kind": "helical-bevel", "ratio": 24, "efficiency": "96 %"},
        "load": {"model": "conveyor", "mass": "6000 kg", "incline": "-14 deg", "friction_coefficient": 0.03,
                 "pulley_diameter": "0.5 m", "line_speed": "1.6 m/s", "speed_min": "15 r/min"},
    }
    b = chart_data(model_of(spec))["torque_speed"]["braking"]
    assert b["quadrant"] == "reverse-torque" and b["means"] == "resistor" and b["rule"] == "regen-braking-energy"
    assert b["load"][0] == [pytest.approx(360.0, abs=0.05), pytest.approx(-125.22, abs=0.01)]
    assert b["load"][-1][0] == pytest.approx(1466.77, abs=0.06)
    # the motor's capability there, with the braking sign: T_N = 30 000 / (1475 × 2π/60) = 194.22 N·m, self-
    # ventilated table at 360/1475 = 0.2441: k_cool 0.6940 → 134.8 N·m (the same as motoring)
    assert b["motor_continuous"][0][1] == pytest.approx(-134.8, abs=0.05)
