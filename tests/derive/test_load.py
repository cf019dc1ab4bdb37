"""The load step against hand calculations."""

from __future__ import annotations

import math

import pytest

from tests.derive.conftest import model_of

RPM = 2 * math.pi / 60


def test_points_are_read_from_the_parsed_quantities_and_interpolated() -> None:
    # points 0 → 100 N·m, 100 r/min → 200 N·m, 200 r/min → 150 N·m (written in mixed units): speed_max 200 r/min,
    # running torque 150 N·m, the largest 200 N·m at 100 r/min (linear interpolation, common practice)
    m = model_of({"load": {"model": "points", "points": [
        {"speed": "0 r/min", "torque": "100 N*m"}, {"speed": "100 r/min", "torque": "0.2 kN*m"},
        {"speed": "200 r/min", "torque": "150 N*m"}]}})
    assert m.get("load.speed_max") == pytest.approx(200 * RPM)
    assert m.get("load.torque_running") == pytest.approx(150.0)
    assert m.get("load.torque_max") == pytest.approx(200.0)
    assert m.get("load.speed_at_torque_max") == pytest.approx(100 * RPM)


def test_hoist_drum() -> None:
    # 1000 kg on a 0.4 m drum, reeving 2: rope force 1000 × 9.80665 / 2 = 4903.3 N; drum torque × 0.2 m = 980.67 N·m;
    # drum speed 2 × 0.5 m/s ÷ (π × 0.4 m) = 0.7958 r/s
    m = model_of({"load": {"model": "hoist", "mass": "1000 kg", "drum_diameter": "0.4 m", "reeving": 2,
                           "line_speed": "0.5 m/s"}})
    assert m.get("load.rope_force") == pytest.approx(4903.325)
    assert m.get("load.holding_torque") == pytest.approx(980.665)
    assert m.get("load.speed_max") == pytest.approx(2 * 0.5 / (math.pi * 0.4) * 2 * math.pi)
    assert m.get("load.overhauling") is True


def test_declining_belt_holding_torque_and_overhauling() -> None:
    # 25 000 kg at −6°, μ 0.012, pulley 0.8 m (statics of the loaded belt, docs/references.md R34):
    # pull down the slope at rest m·g·(sin 6° − 0.012·cos 6°) = 245 166 × (0.104528 − 0.011934) = 22 701 N;
    # × 0.4 m = 9080 N·m; the belt drives the motor, so the load is overhauling
    m = model_of({"load": {"model": "conveyor", "mass": "25000 kg", "incline": "-6 deg", "friction_coefficient": 0.012,
                           "pulley_diameter": "0.8 m", "line_speed": "2.5 m/s"}})
    assert m.get("load.holding_torque") == pytest.approx(9080.4, rel=1e-4)
    assert m.get("load.runback_torque") == pytest.approx(9080.4, rel=1e-4)
    assert m.get("load.overhauling") is True


def test_the_losses_of_a_load_that_drives_reduce_its_torque() -> None:
    # 5000 kg at −10°, μ 0.02, pulley 0.4 m, belt and pulley efficiency 90 %:
    # F = 5000 × 9.80665 × (0.02·cos 10° − sin 10°) = 49 033.25 × (0.019696 − 0.173648) = −7548.8 N;
    # at the pulley −7548.8 × 0.2 m = −1509.8 N·m; the belt drives, so its own losses take from that:
    # × 0.9 = −1358.8 N·m (÷ 0.9 = −1677.5 N·m would be the motoring formula). Uphill +10°:
    # F = 49 033.25 × (0.019696 + 0.173648) = 9480.3 N, × 0.2 = 1896.1 N·m, ÷ 0.9 = 2106.7 N·m.
    belt = {"model": "conveyor", "mass": "5000 kg", "incline": "-10 deg", "friction_coefficient": 0.02,
            "pulley_diameter": "0.4 m", "line_speed": "1 m/s", "efficiency": "90 %"}
    down = model_of({"load": belt})
    assert down.functions["load_torque"](1.0) == pytest.approx(-1358.8, rel=2e-4)
    up = model_of({"load": {**belt, "incline": "10 deg"}})
    assert up.functions["load_torque"](1.0) == pytest.approx(2106.7, rel=2e-4)


def test_runback_uses_the_holdback_friction_factor() -> None:
    # 5000 kg at 12°, declared μ 0.025, pulley 0.63 m: holding at the declared friction
    # 49 033 × (0.207912 − 0.025 × 0.978148) × 0.315 = 2833.6 N·m; runback at f = 0.012 (holdback sizing, from
    # memory) 49 033 × (0.207912 − 0.012 × 0.978148) × 0.315 = 3030.0 N·m; an inclined belt is not overhauling
    m = model_of({"load": {"model": "conveyor", "mass": "5000 kg", "incline": "12 deg", "friction_coefficient": 0.025,
                           "pulley_diameter": "0.63 m", "line_speed": "2 m/s"}})
    assert m.get("load.holding_torque") == pytest.approx(2833.6, rel=1e-4)
    assert m.get("load.runback_friction") == pytest.approx(0.012)
    assert m.get("load.runback_torque") == pytest.approx(3030.0, rel=1e-4)
    assert m.get("load.overhauling") is False


def test_a_belt_friction_holds_has_zero_runback_not_an_error() -> None:
    # 2° with μ 0.05: sin 2° = 0.0349 < 0.05·cos 2° = 0.0500, so friction holds it at the declared factor (holding 0);
    # at the holdback factor 0.012 it does not: 98 066.5 × (0.034899 − 0.011993) × 0.25 = 561.6 N·m
    m = model_of({"load": {"model": "conveyor", "mass": "10000 kg", "incline": "2 deg", "friction_coefficient": 0.05,
                           "pulley_diameter": "0.5 m", "line_speed": "2 m/s"}})
    assert m.get("load.holding_torque") == 0.0
    assert m.get("load.runback_torque") == pytest.approx(561.6, rel=1e-3)


def test_a_vertical_constant_torque_load_holds_its_torque_at_rest() -> None:
    # a lift table given as 350 N·m at the load shaft, declared vertical: gravity does not vanish at rest, so the
    # holding torque is |T_L| = 350 N·m (a horizontal constant-torque load has none)
    vertical = model_of({"load": {"model": "constant-torque", "torque": "-350 N*m", "vertical": True,
                                  "speed_max": "10 r/min"}})
    assert vertical.get("load.holding_torque") == pytest.approx(350.0)
    flat = model_of({"load": {"model": "constant-torque", "torque": "350 N*m", "speed_max": "10 r/min"}})
    assert flat.get("load.holding_torque") is None
