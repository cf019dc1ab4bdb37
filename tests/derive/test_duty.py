"""The duty step against hand calculations (equivalent-torque method, drives textbooks; docs/references.md R07, R08)."""

from __future__ import annotations

import math

import pytest

from tests.derive.conftest import model_of

LOAD = {"model": "constant-torque", "torque": "100 N*m", "speed_max": "1000 r/min"}
CYCLE = [{"duration": "10 s", "speed_to": "1000 r/min"}, {"duration": "20 s", "speed_to": "1000 r/min"},
         {"duration": "10 s", "speed_to": "0 r/min"}, {"duration": "20 s", "speed_to": "0 r/min"}]


# J = 0.05 (rotor) + 0.45 (load) = 0.5 kg·m²; ω = 1000 r/min = 104.720 rad/s; 10 s ramps: J·ω/t = 5.2360 N·m.
# Segments 105.236 N·m (10 s), 100 (20 s), 94.764 (10 s), 0 at standstill (20 s):
# Σ T²·t = 110 746.1 + 200 000 + 89 802.2 = 400 548.3 N²·m²·s
MOTOR = {"kind": "induction", "rated_power": "15 kW", "rated_speed": "1460 r/min", "inertia": "0.05 kg*m^2"}
ACC = 0.5 * 1000 * 2 * math.pi / 60 / 10
SQUARE = (100 + ACC) ** 2 * 10 + 100**2 * 20 + (100 - ACC) ** 2 * 10


def test_rms_torque_counts_half_the_standstill_of_a_self_ventilated_motor() -> None:
    # β = 0.5 (common practice, self-ventilated): T_rms = √(400 548.3 / (40 + 0.5 × 20)) = 89.504 N·m; cdf = 40/60
    m = model_of({"motor": MOTOR, "load": {**LOAD, "inertia": "0.45 kg*m^2", "duty": CYCLE}})
    assert SQUARE == pytest.approx(400548.3, abs=0.1)
    assert m.get("duty.rms_torque") == pytest.approx(math.sqrt(SQUARE / 50), rel=1e-12)
    assert m.get("duty.cdf") == pytest.approx(40 / 60, rel=1e-12)
    assert m.get("train.continuous_torque_required") == m.get("duty.rms_torque")
    assert m.get("duty.lower_bound") is False


def test_forced_cooling_counts_all_the_standstill() -> None:
    # β = 1: T_rms = √(400 548.3 / 60) = 81.706 N·m
    m = model_of({"motor": {**MOTOR, "cooling": "forced"}, "load": {**LOAD, "inertia": "0.45 kg*m^2", "duty": CYCLE}})
    assert m.get("duty.rms_torque") == pytest.approx(math.sqrt(SQUARE / 60), rel=1e-12)


def test_a_non_ventilated_motor_counts_all_the_standstill() -> None:
    # IC410 (no fan): standstill cools as running does, β = 1: the same 81.706 N·m as forced ventilation
    m = model_of({"motor": {**MOTOR, "cooling": "non-ventilated"},
                  "load": {**LOAD, "inertia": "0.45 kg*m^2", "duty": CYCLE}})
    assert m.get("duty.rms_torque") == pytest.approx(math.sqrt(SQUARE / 60), rel=1e-12)


def test_unknown_rotor_inertia_gives_lower_bounds_not_zero() -> None:
    # rotor inertia not given: the load's 0.45 kg·m² is known, J ≥ 0.45: J·ω/t ≥ 4.7124 N·m.
    # Accelerating (T_L and α both positive) |T| grows with J: ≥ 104.712 N·m; the stop (α < 0) could need 0 with a
    # large enough rotor: 0. Peak ≥ 104.712 N·m; RMS ≥ √((104.712²·10 + 100²·20)/50) = √(309 646/50) = 78.695 N·m
    m = model_of({"motor": {k: v for k, v in MOTOR.items() if k != "inertia"},
                  "load": {**LOAD, "inertia": "0.45 kg*m^2", "duty": CYCLE}})
    acc = 0.45 * 1000 * 2 * math.pi / 60 / 10
    assert m.get("duty.lower_bound") is True
    assert m.get("train.peak_torque_lower_bound") is True
    assert m.get("duty.peak_torque") == pytest.approx(100 + acc, rel=1e-12)
    assert m.get("duty.rms_torque") == pytest.approx(math.sqrt(((100 + acc) ** 2 * 10 + 100**2 * 20) / 50), rel=1e-12)
    assert m.get("duty.rms_torque") == pytest.approx(78.695, abs=5e-4)
    assert not m.has("duty.regenerative_energy")  # the energies of lower-bound torques bound nothing


def test_a_segment_with_negative_torque_marks_the_load_overhauling() -> None:
    # the sign of the parsed torque decides, however it is written
    for torque, overhauling in (("-50 N*m", True), ("-0.05 kN*m", True), ("50 N*m", False)):
        cycle = [*CYCLE[:2], {**CYCLE[2], "torque": torque}, CYCLE[3]]
        assert model_of({"load": {**LOAD, "duty": cycle}}).get("load.overhauling") is overhauling


# --- point 3 (braked standstill, duty ratings) and point 5 (direction of power flow) ---------------------------

HOIST = {"model": "hoist", "mass": "4000 kg", "reeving": 2, "drum_diameter": "0.4 m", "line_speed": "0.25 m/s",
         "efficiency": "95 %", "inertia": "2 kg*m^2",
         "duty": [{"duration": "1 s", "speed_to": "23.87 r/min"}, {"duration": "20 s", "speed_to": "23.87 r/min"},
                  {"duration": "1 s", "speed_to": "0 r/min"}, {"duration": "30 s", "speed_to": "0 r/min"}]}
HOIST_MOTOR = {"kind": "induction", "rated_power": "15 kW", "rated_speed": "1465 r/min", "inertia": "0.095 kg*m^2",
               "brake": {"kind": "spring-applied", "static_torque": "150 N*m"}}
GEAR = {"ratio": 60, "efficiency": "94 %"}


def test_a_sequenced_hoist_brake_carries_the_load_at_standstill() -> None:
    # brake set at every stop by a declared sequence (crane practice): the rest at the top needs no motor torque
    m = model_of({"motor": HOIST_MOTOR, "transmission": GEAR, "load": HOIST,
                  "protection": {"brake_sequencing": True}})
    assert m.lists["duty.segments"][3]["torque"] == 0.0
    assert m.get("duty.holding_at_standstill") is False


def test_without_a_brake_sequence_the_motor_holds_the_hoist() -> None:
    # holding 4000·9.80665/2·0.2 = 3923 N·m at the drum; the load drives: 3923·0.94/60 = 61.46 N·m at the motor
    m = model_of({"motor": HOIST_MOTOR, "transmission": GEAR, "load": HOIST})
    holding = 4000 * 9.80665 / 2 * 0.2 * 0.94 / 60
    assert m.lists["duty.segments"][3]["torque"] == pytest.approx(holding, rel=1e-9)
    assert m.get("duty.standstill_torque") == pytest.approx(61.46, abs=5e-3)


def test_friction_turns_with_the_direction_of_travel() -> None:
    # horizontal load, 100 N·m of friction (no gear): travelling back (−1000 r/min) needs −100 N·m, motoring
    cycle = [{"duration": "10 s", "speed_to": "-1000 r/min"}, {"duration": "20 s", "speed_to": "-1000 r/min"},
             {"duration": "10 s", "speed_to": "0 r/min"}, {"duration": "20 s", "speed_to": "0 r/min"}]
    m = model_of({"motor": MOTOR, "load": {**LOAD, "inertia": "0.45 kg*m^2", "duty": cycle}})
    torques = [s["torque"] for s in m.lists["duty.segments"]]
    assert torques == pytest.approx([-100 - ACC, -100.0, -100 + ACC, 0.0], rel=1e-12)


def test_a_given_reverse_torque_is_referred_by_its_own_power_flow() -> None:
    # −141.2 N·m at −23.87 r/min: T·ω > 0, motoring: −141.2/(60·0.94) = −2.5035 N·m (tb-t-117), not T·η/i = −2.212
    cycle = [{"duration": "20 s", "speed_to": "-23.87 r/min", "torque": "-141.2 N*m"}]
    m = model_of({"motor": MOTOR, "transmission": GEAR,
                  "load": {"model": "constant-torque", "torque": "141.2 N*m", "speed_max": "23.87 r/min",
                           "inertia": "480 kg*m^2", "duty": cycle}})
    seg = m.lists["duty.segments"][0]
    acc = (0.05 + 480 / 3600) * 23.87 * 60 * 2 * math.pi / 60 / 20
    assert seg["torque"] == pytest.approx(-141.2 / (60 * 0.94) - acc, rel=1e-9)


def test_an_s3_motor_is_judged_against_its_duty_rating() -> None:
    # T_N = 15000/(1460·2π/60) = 98.11 N·m for 40 % of the cycle (IEC 60034-1 S3 40 %):
    # U = √(Σ T²·t ÷ t_cycle) ÷ (T_N·√0.4) = √(400 548.3/60) ÷ (98.11·0.63246) = 81.706/62.051 = 1.3168
    m = model_of({"motor": {**MOTOR, "duty_type": "S3", "duty_cdf": "40 %"},
                  "load": {**LOAD, "inertia": "0.45 kg*m^2", "duty": CYCLE}})
    t_n = 15000 / (1460 * 2 * math.pi / 60)
    assert m.get("duty.rated_intermittent") is True
    assert m.get("duty.utilisation") == pytest.approx(math.sqrt(SQUARE / 60) / (t_n * math.sqrt(0.4)), rel=1e-12)
    assert m.get("duty.utilisation") == pytest.approx(1.3168, abs=5e-4)
    # without the rated CDF there is nothing to judge against: no utilisation (the rule is then not checked)
    m = model_of({"motor": {**MOTOR, "duty_type": "S3"}, "load": {**LOAD, "inertia": "0.45 kg*m^2", "duty": CYCLE}})
    assert not m.has("duty.utilisation")


def test_a_gravity_load_held_at_standstill_without_a_derived_holding_torque_is_never_zero() -> None:
    # a vertical load given as measured points (no holding torque derived for it): at rest the motor holds at most
    # the running torque referred as motoring, 100 N·m ÷ (10 × 0.9) = 11.11 N·m
    lift = {"model": "points", "vertical": True, "inertia": "2 kg*m^2",
            "points": [{"speed": "0 r/min", "torque": "100 N*m"}, {"speed": "60 r/min", "torque": "100 N*m"}],
            "duty": [{"duration": "2 s", "speed_to": "60 r/min"}, {"duration": "10 s", "speed_to": "60 r/min"},
                     {"duration": "2 s", "speed_to": "0 r/min"}, {"duration": "30 s", "speed_to": "0 r/min"}]}
    m = model_of({"motor": MOTOR, "transmission": {"ratio": 10, "efficiency": "90 %"}, "load": lift})
    assert m.get("train.holding_torque") is None
    assert m.lists["duty.segments"][3]["torque"] == pytest.approx(100 / (10 * 0.9), rel=1e-9)


def test_a_declining_belt_at_standstill_is_held_with_its_derived_holding_torque() -> None:
    # declining belt: holding torque at the pulley 25 000·9.80665·(sin 6° − 0.012·cos 6°)·0.4 = 9080.4 N·m (statics,
    # docs/references.md R34); the belt drives the gear, so at the motor 9080.4 × 0.96 ÷ 24.5 = 355.80 N·m
    belt = {"model": "conveyor", "mass": "25000 kg", "incline": "-6 deg", "friction_coefficient": 0.012,
            "pulley_diameter": "0.8 m", "line_speed": "2.5 m/s", "efficiency": "100 %", "inertia": "150 kg*m^2",
            "duty": [{"duration": "20 s", "speed_to": "59.68 r/min"}, {"duration": "60 s", "speed_to": "59.68 r/min"},
                     {"duration": "20 s", "speed_to": "0 r/min"}, {"duration": "30 s", "speed_to": "0 r/min"}]}
    m = model_of({"motor": MOTOR, "transmission": {"ratio": 24.5, "efficiency": "96 %"}, "load": belt})
    pull = 25000 * 9.80665 * (math.sin(math.radians(6)) - 0.012 * math.cos(math.radians(6))) * 0.4
    assert m.lists["duty.segments"][3]["torque"] == pytest.approx(pull * 0.96 / 24.5, rel=1e-9)
    assert m.lists["duty.segments"][3]["torque"] == pytest.approx(355.80, abs=5e-3)


def test_a_hoist_lowering_segment_takes_the_torque_the_load_asks() -> None:
    # lowering, the load drives and supplies the rope, sheave and gear losses: drum 4000·9.80665/2·0.2 = 3922.66 N·m
    # × η_load 0.95 × η_gear 0.94 ÷ 60 = 58.38 N·m at the motor (hoisting: 3922.66 ÷ 0.95 ÷ (60·0.94) = 73.21 N·m),
    # positive (it still holds the load up) at a negative speed: a braking segment
    lowering = [{"duration": "20 s", "speed_to": "-23.87 r/min"}, {"duration": "20 s", "speed_to": "-23.87 r/min"},
                {"duration": "20 s", "speed_to": "0 r/min"}]
    m = model_of({"motor": {**HOIST_MOTOR, "efficiency": "92.3 %"}, "transmission": GEAR,
                  "load": {**HOIST, "duty": lowering}, "drive": {"kind": "inverter"}})
    steady = m.lists["duty.segments"][1]
    assert steady["torque"] == pytest.approx(4000 * 9.80665 / 2 * 0.2 * 0.95 * 0.94 / 60, rel=1e-9)
    assert steady["torque"] * steady["speed_to"] < 0
    # energy returned while lowering steadily: 58.38 N·m × 23.87·60·2π/60 rad/s × 20 s at the motor shaft, only the
    # motor's own losses still to take (× 0.923): the gear's are already in the torque
    w = 23.87 * 60 * 2 * math.pi / 60
    steady_energy = 4000 * 9.80665 / 2 * 0.2 * 0.95 * 0.94 / 60 * w * 20
    assert m.get("train.braking_energy") >= steady_energy * 0.923 * (1 - 1e-9)
    assert m.get("train.braking_energy") == pytest.approx(m.get("duty.regenerative_energy") * 0.923, rel=1e-9)
