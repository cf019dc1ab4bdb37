"""The duty step against hand calculations (equivalent-torque method, drives textbooks; docs/references.md R07, R08)."""

from __future__ import annotations

import math

import pytest

from tests.derive.conftest import model_of

LOAD = {"model": "constant-torque", "torque": "100 N*m", "speed_max": "1000 r/min"}
CYCLE = [{"duration": "10 s", "speed_to": "1000 r/min"}, {"duration": "20 s", "speed_to": "1000 r/min"},
         {"duration": "10 s", "speed_to": "0 r/min"}, {"duration": "20 s", "speed_to": "0 r/min"}]


def test_rms_torque_counts_half_the_standstill_of_a_self_ventilated_motor() -> None:
    # 100 N·m for 40 s, nothing held for 20 s at standstill, β = 0.5 (common practice, self-ventilated):
    # T_rms = √(100² × 40 / (40 + 0.5 × 20)) = √8000 = 89.443 N·m; cdf = 40/60
    m = model_of({"motor": {"kind": "induction", "rated_power": "15 kW", "rated_speed": "1460 r/min"},
                  "load": {**LOAD, "duty": CYCLE}})
    assert m.get("duty.rms_torque") == pytest.approx(math.sqrt(8000.0), rel=1e-12)
    assert m.get("duty.cdf") == pytest.approx(40 / 60, rel=1e-12)
    assert m.get("train.continuous_torque_required") == m.get("duty.rms_torque")


def test_forced_cooling_counts_all_the_standstill() -> None:
    # β = 1: T_rms = √(100² × 40 / 60) = 81.650 N·m
    m = model_of({"motor": {"kind": "induction", "rated_power": "15 kW", "rated_speed": "1460 r/min",
                            "cooling": "forced"}, "load": {**LOAD, "duty": CYCLE}})
    assert m.get("duty.rms_torque") == pytest.approx(100 * math.sqrt(40 / 60), rel=1e-12)


def test_a_segment_with_negative_torque_marks_the_load_overhauling() -> None:
    # the sign of the parsed torque decides, however it is written
    for torque, overhauling in (("-50 N*m", True), ("-0.05 kN*m", True), ("50 N*m", False)):
        cycle = [*CYCLE[:2], {**CYCLE[2], "torque": torque}, CYCLE[3]]
        assert model_of({"load": {**LOAD, "duty": cycle}}).get("load.overhauling") is overhauling
