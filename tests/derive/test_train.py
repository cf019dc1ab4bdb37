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
