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
