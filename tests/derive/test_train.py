"""The train step against hand calculations, and the values it leaves to the rules."""

from __future__ import annotations

import math

import pytest

from tests.derive.conftest import model_of
from tests.rules.harness import outcome_of, run_example

RPM = 2 * math.pi / 60
MOTOR = {"kind": "induction", "rated_power": "15 kW", "rated_speed": "1460 r/min", "inertia": "0.1 kg*m^2",
         "max_speed": "3600 r/min"}


def test_referred_through_a_gear() -> None:
    # i = 10, η = 0.95: 146 r/min at the load → 1460 r/min; 500 N·m → 500/(10 × 0.95) = 52.63 N·m;
    # J_L 20 kg·m² → 20/10² = 0.2 kg·m², total 0.3, ratio 2 (Newton, referred quantities; drives textbooks)
    m = model_of({"motor": MOTOR, "transmission": {"ratio": 10, "efficiency": "95 %"},
                  "load": {"model": "constant-torque", "torque": "500 N*m", "speed_max": "146 r/min",
                           "inertia": "20 kg*m^2"}})
    assert m.get("train.speed_max") == pytest.approx(1460 * RPM)
    assert m.get("train.load_torque") == pytest.approx(500 / 9.5)
    assert m.get("train.inertia_total") == pytest.approx(0.3)
    assert m.get("train.inertia_ratio") == pytest.approx(2.0)


def test_continuous_margin_at_low_speed_uses_the_cooling_table() -> None:
    # T_N = 15000/(1460·2π/60) = 98.11 N·m; on an inverter at 146–1460 r/min the worst is n/n_b = 0.1:
    # k_cool 0.60 (docs/references.md R06), T_cont 58.87 N·m against 50 N·m → margin 1.177
    m = model_of({"motor": MOTOR, "drive": {"kind": "inverter"},
                  "load": {"model": "constant-torque", "torque": "50 N*m", "speed_max": "1460 r/min",
                           "speed_min": "146 r/min"}})
    t_n = 15000 / (1460 * RPM)
    assert m.get("train.continuous_speed_worst") == pytest.approx(146 * RPM)
    assert m.get("train.continuous_capability_worst") == pytest.approx(0.6 * t_n)
    assert m.get("train.continuous_margin") == pytest.approx(0.6 * t_n / 50)
    assert m.get("train.cooling_table_default") is True


def test_reachable_speed_follows_the_rules_overspeed_parameter() -> None:
    # the derive stage has no overspeed allowance of its own: 3000 r/min × 1.3 (the spec's margin) = 3900 r/min
    # in the rule, above the 3600 r/min limit (with the default 1.1 it would be 3300 r/min and pass)
    spec = {"motor": {**MOTOR, "rated_speed": "2950 r/min"},
            "load": {"model": "constant-torque", "torque": "10 N*m", "speed_max": "3000 r/min"}}
    assert "train.speed_abs_max" not in model_of(spec).values
    for factor, speed, outcome in ((1.3, 3900.0, "fail"), (1.1, 3300.0, "pass")):
        result = run_example({"spec": {**spec, "margins": {"overspeed_factor": factor}}, "outcome": outcome})
        found = outcome_of(result, "mechanical-max-speed")
        assert found["outcome"] == outcome
        assert found["values"]["reachable_speed"]["value"] == pytest.approx(speed)


# --- overhauling loads, unknown rotor inertia, ramped stops, IC410 (issue 15 points 4, 5, 10) ----------------

GEARED = {"ratio": 10, "efficiency": "95 %"}


def test_an_overhauling_load_is_referred_with_the_losses_on_the_load_side() -> None:
    # the load drives (T_L·ω_L < 0): T_m = T_L·η/i = −500·0.95/10 = −47.50 N·m, not T_L/(i·η) = −52.63 N·m
    # (mechanics, docs/references.md R33); η_rev 0.90 declared: −500·0.90/10 = −45.00 N·m
    load = {"model": "constant-torque", "torque": "-500 N*m", "speed_max": "146 r/min", "inertia": "20 kg*m^2"}
    m = model_of({"motor": MOTOR, "transmission": GEARED, "load": load})
    assert m.get("train.load_torque") == pytest.approx(-47.5, rel=1e-12)
    assert m.get("train.load_overhauling") is True
    m = model_of({"motor": MOTOR, "transmission": {**GEARED, "reverse_efficiency": "90 %"}, "load": load})
    assert m.get("train.load_torque") == pytest.approx(-45.0, rel=1e-12)


def test_overhauling_continuous_margin_uses_the_braking_torque() -> None:
    # T_N = 98.11 N·m; on a drive at base speed k_cool 1 (inverter-rated): braking 47.50 N·m → 98.11/47.50 = 2.0655
    m = model_of({"motor": {**MOTOR, "inverter_rated": True}, "drive": {"kind": "inverter"}, "transmission": GEARED,
                  "load": {"model": "constant-torque", "torque": "-500 N*m", "speed_max": "146 r/min",
                           "speed_min": "146 r/min"}})
    assert m.get("train.continuous_required_worst") == pytest.approx(47.5, rel=1e-12)
    assert m.get("train.continuous_margin") == pytest.approx(15000 / (1460 * RPM) / 47.5, rel=1e-9)


def test_the_peak_of_an_overhauling_load_is_the_braking_torque_of_the_ramped_stop() -> None:
    # J = 0.1 + 20/100 = 0.3 kg·m²; ω = 152.89 rad/s; 2 s ramps: 22.934 N·m. Start −47.50 + 22.93 = −24.57,
    # ramped stop −47.50 − 22.93 = −70.43 N·m: the peak is 70.43 N·m, braking
    m = model_of({"motor": MOTOR, "drive": {"kind": "inverter"}, "transmission": GEARED,
                  "load": {"model": "constant-torque", "torque": "-500 N*m", "speed_max": "146 r/min",
                           "inertia": "20 kg*m^2", "acceleration_time": "2 s", "deceleration_time": "2 s"}})
    dec = 0.3 * 1460 * RPM / 2
    assert m.get("train.deceleration_torque") == pytest.approx(dec, rel=1e-12)
    assert m.get("train.peak_torque_required") == pytest.approx(47.5 + dec, rel=1e-12)
    assert m.get("train.peak_torque_braking") is True
    assert m.get("train.peak_torque_lower_bound") is False


def test_a_coasting_stop_asks_no_braking_torque() -> None:
    m = model_of({"motor": MOTOR, "drive": {"kind": "inverter", "stop": "coast"}, "transmission": GEARED,
                  "load": {"model": "constant-torque", "torque": "500 N*m", "speed_max": "146 r/min",
                           "inertia": "20 kg*m^2", "acceleration_time": "2 s", "deceleration_time": "0.5 s"}})
    assert not m.has("train.deceleration_torque")
    assert m.get("train.peak_torque_required") == pytest.approx(500 / 9.5 + 0.3 * 1460 * RPM / 2, rel=1e-12)


def test_unknown_rotor_inertia_gives_a_lower_bound_not_zero() -> None:
    # rotor inertia not given: J ≥ J_gear 0.002 + 80/10² = 0.802 kg·m²; 146 r/min × 10 = 152.89 rad/s in 1 s:
    # ≥ 122.62 N·m; T_L = 288/(10·0.96) = 30.00 N·m; peak ≥ 152.62 N·m (f06's hand calculation)
    m = model_of({"motor": {k: v for k, v in MOTOR.items() if k != "inertia"},
                  "transmission": {"ratio": 10, "efficiency": "96 %", "inertia": "0.002 kg*m^2"},
                  "load": {"model": "constant-torque", "torque": "288 N*m", "speed_max": "146 r/min",
                           "inertia": "80 kg*m^2", "acceleration_time": "1 s"}})
    assert not m.has("train.inertia_total")
    assert m.get("train.inertia_known") == pytest.approx(0.802, rel=1e-12)
    assert m.get("train.acceleration_torque_min") == pytest.approx(0.802 * 1460 * RPM, rel=1e-12)
    assert m.get("train.peak_torque_required") == pytest.approx(152.62, abs=5e-3)
    assert m.get("train.peak_torque_lower_bound") is True


def test_a_non_ventilated_induction_motor_keeps_its_torque_at_low_speed() -> None:
    # IC410: no shaft fan, so no k_cool table: T_cont(146 r/min) = T_N = 98.11 N·m → 98.11/50 = 1.962
    m = model_of({"motor": {**MOTOR, "cooling": "non-ventilated"}, "drive": {"kind": "inverter"},
                  "load": {"model": "constant-torque", "torque": "50 N*m", "speed_max": "1460 r/min",
                           "speed_min": "146 r/min"}})
    assert m.get("train.continuous_margin") == pytest.approx(15000 / (1460 * RPM) / 50, rel=1e-9)
    assert m.get("train.cooling_table_default") is False
