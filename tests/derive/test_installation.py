"""Derived values of the installation derive step, against hand calculations and docs/references.md check values."""

from __future__ import annotations

import math

import pytest
import yaml

from rulecheck.derive import build_model
from rulecheck.derive.motor import ip_digits, large_frame, nema_rated
from rulecheck.load import load_text
from rulecheck.schema import read_quantities

BASE_MOTOR = {"kind": "induction", "rated_power": "7.5 kW", "rated_speed": "1455 r/min", "rated_voltage": "400 V",
              "rated_current": "14.6 A", "rated_frequency": "50 Hz", "poles": 4}


def model(spec: dict):
    doc = load_text(yaml.safe_dump({"format": 1, "tag": "T", **spec}), "t.yaml")
    quantities, problems = read_quantities(doc)
    assert problems == []
    return build_model(doc, quantities, None)


def test_ip_digits_reads_x_and_9k() -> None:
    # IEC 60529: two numerals, X for "not specified", 9K for hot high-pressure water
    assert ip_digits("IP55") == (5, 5)
    assert ip_digits("IPX7") == (0, 7)
    assert ip_digits("IP69K") == (6, 9)
    assert ip_digits("NEMA 4X") is None


def test_frames_and_nema_marks() -> None:
    # bearing-current practice (bearing-currents rule basis: common practice): from IEC frame 315, not 280
    assert large_frame("315M") is True and large_frame("315S") is True
    assert large_frame("280M") is False and large_frame("250M") is False
    assert large_frame("5008L") is True and large_frame("449T") is False
    assert nema_rated(None, "254T", None) and nema_rated("B", None, None) and nema_rated(None, None, 1.15)
    assert not nema_rated("N", "132M", 1.0)


def test_induction_current_at_rms_torque() -> None:
    # docs/references.md R22: I = √(I_0² + (T/T_N)²·(I_N² − I_0²)), I_0 = 0.35·I_N (common practice)
    # T_N = 7500 W ÷ 152.367 rad/s = 49.223 N·m; T = 40 N·m → I = √(26.112 + 0.66036·187.048) = 12.233 A
    m = model({"drive": {"kind": "inverter"}, "motor": BASE_MOTOR,
               "load": {"model": "constant-torque", "torque": "40 N*m", "speed_max": "1455 r/min"}})
    assert m.get("train.continuous_torque_required") == pytest.approx(40.0)
    assert m.get("train.motor_current_required") == pytest.approx(12.233, rel=1e-3)


def test_pm_current_from_kt() -> None:
    m = model({"drive": {"kind": "inverter"},
               "motor": {"kind": "pm-synchronous", "rated_power": "4 kW", "rated_speed": "3000 r/min",
                         "torque_constant": "1.6 N*m/A"},
               "load": {"model": "constant-torque", "torque": "10 N*m", "speed_max": "3000 r/min"}})
    assert m.get("train.motor_current_required") == pytest.approx(6.25)


def test_application_service_factor_k32() -> None:
    # docs/references.md K32 (classic table, electric-motor prime mover; common practice): 10 h moderate 1.25,
    # 24 h heavy 2.0, 3 h uniform 0.8; starts per hour do not change it
    for hours, shock, starts, expected in ((10, "moderate", 0, 1.25), (24, "heavy", 0, 2.0), (3, "uniform", 20, 0.8)):
        m = model({"motor": {"kind": "induction"},
                   "transmission": {"kind": "helical", "ratio": 10, "hours_per_day": hours, "shock": shock},
                   "load": {"model": "constant-torque", "starts_per_hour": starts}})
        assert m.get("transmission.application_service_factor") == expected


def test_overhung_element_factor() -> None:
    # common practice: V-belt 1.5; a maker's factor replaces it
    m = model({"motor": {"kind": "induction"},
               "transmission": {"kind": "belt", "ratio": 2, "overhung_load": {"shaft": "motor", "element": "v-belt"}},
               "load": {"model": "constant-torque"}})
    assert m.get("transmission.overhung_load.element_factor") == 1.5
    m = model({"motor": {"kind": "induction"},
               "transmission": {"kind": "belt", "ratio": 2,
                                "overhung_load": {"shaft": "motor", "element": "v-belt", "element_factor": 2.0}},
               "load": {"model": "constant-torque"}})
    assert m.get("transmission.overhung_load.element_factor") == 2.0


def test_efficiency_band_per_stage() -> None:
    m = model({"motor": {"kind": "induction"}, "transmission": {"kind": "helical", "ratio": 10, "stages": 3},
               "load": {"model": "constant-torque"}})
    assert m.get("transmission.efficiency_band_low") == pytest.approx(0.97**3)
    assert m.get("transmission.efficiency_band_high") == pytest.approx(0.99**3)


def test_braking_energy_and_power_k39() -> None:
    # docs/references.md K39: J 2 kg·m², 1500 → 0 r/min → 24.67 kJ; peak (J·ω/t)·ω over 10 s = 4935 W
    m = model({"supply": {"voltage": "400 V"}, "drive": {"kind": "inverter"},
               "motor": {"kind": "induction", "rated_power": "15 kW", "rated_speed": "1470 r/min",
                         "inertia": "0.1 kg*m^2"},
               "load": {"model": "quadratic", "torque_at_speed_max": "0 N*m", "speed_max": "1500 r/min",
                        "inertia": "1.9 kg*m^2", "deceleration_time": "10 s", "starts_per_hour": 30}})
    w = 1500 * 2 * math.pi / 60
    assert m.get("train.braking_energy") == pytest.approx(0.5 * 2 * w**2, rel=1e-6)
    assert m.get("train.braking_energy") == pytest.approx(24674, rel=1e-3)
    assert m.get("train.braking_power_peak") == pytest.approx(4935, rel=1e-3)
    assert m.get("train.braking_power_mean") == pytest.approx(24674 * 30 / 3600, rel=1e-3)
    assert m.get("train.regeneration_sustained") is False


def test_hoist_regenerates_steadily() -> None:
    # docs/references.md K39: 1000 kg lowered at 0.5 m/s, η 0.85 → 4168 W returned
    m = model({"supply": {"voltage": "400 V"}, "drive": {"kind": "inverter"}, "motor": {"kind": "induction"},
               "load": {"model": "hoist", "mass": "1000 kg", "drum_diameter": "0.4 m", "line_speed": "0.5 m/s",
                        "efficiency": "85 %"}})
    assert m.get("train.regeneration_sustained") is True
    assert m.get("train.braking_power_mean") == pytest.approx(4168, rel=1e-3)


def test_drive_derating_uses_the_drives_ambient_limit() -> None:
    # common-practice default: 0 above the drive's stated maximum (48 °C > 45 °C)
    m = model({"drive": {"kind": "inverter", "ambient_max": "45 degC"}, "motor": {"kind": "induction"},
               "environment": {"ambient_max": "48 degC"}})
    assert m.get("site.drive_derating") == 0.0
    assert m.get("site.drive_derating_default_used") is True
    m = model({"drive": {"kind": "inverter", "ambient_max": "50 degC"}, "motor": {"kind": "induction"},
               "environment": {"ambient_max": "45 degC"}})
    assert m.get("site.drive_derating") == pytest.approx(0.95)


def test_ingress_minimum_from_location_and_ex_class() -> None:
    m = model({"motor": {"kind": "induction", "enclosure": "IP55", "ex_marking": "II 2G Ex db IIB T4 Gb"},
               "environment": {"location": "washdown",
                               "hazardous_area": {"classification": "zone-1", "temperature_class": "T3"}}})
    assert (m.get("environment.ingress_solids_min"), m.get("environment.ingress_water_min")) == (6, 5)
    assert m.get("environment.ingress_minimum") == "IP65"
    assert m.get("motor.ex_temperature_class") == 4
    assert m.get("environment.hazardous_area.temperature_class_number") == 3


def test_peak_duration_and_gear_peak() -> None:
    # J = 0.03 + 20/10² = 0.23 kg·m²; T_acc = 0.23 × 152.367 / 2 = 17.52 N·m; T_L/(i·η) = 400/9.6 = 41.667 N·m
    m = model({"motor": {"kind": "induction", "rated_power": "7.5 kW", "rated_speed": "1455 r/min",
                         "inertia": "0.03 kg*m^2"},
               "transmission": {"kind": "helical", "ratio": 10, "efficiency": "96 %"},
               "load": {"model": "constant-torque", "torque": "400 N*m", "speed_max": "145.5 r/min",
                        "inertia": "20 kg*m^2", "acceleration_time": "2 s"}})
    assert m.get("train.peak_duration") == 2.0
    assert m.get("train.gear_output_torque_peak") == pytest.approx((400 / 9.6 + 0.23 * 152.367 / 2) * 9.6, rel=1e-4)


DOWNHILL_BELT = {  # 22 kW belt, 12 t at −6°, μ 0.025, 0.5 m pulley, 2 m/s, i = 19, η 0.96, motor η 0.93
    "supply": {"voltage": "400 V"}, "drive": {"kind": "inverter"},
    "motor": {"kind": "induction", "rated_power": "22 kW", "rated_speed": "1470 r/min", "efficiency": "93 %",
              "inertia": "0.16 kg*m^2"},
    "transmission": {"ratio": 19, "efficiency": "96 %", "inertia": "0.01 kg*m^2"},
    "load": {"model": "conveyor", "mass": "12000 kg", "incline": "-6 deg", "friction_coefficient": 0.025,
             "pulley_diameter": "0.5 m", "line_speed": "2 m/s", "inertia": "30 kg*m^2"}}


def test_downhill_belt_regenerates_steadily() -> None:
    # mechanics (docs/references.md R34): F = m·g·(μ·cos θ + sin θ) = 117 680 × (0.024863 − 0.104528) = −9375 N;
    # 9375 N × 2 m/s = 18.75 kW at the pulley; × 0.96 × 0.93 = 16.74 kW to the DC bus, all the time
    # (tests/corpus/flawed/f12 hand calculation)
    m = model(DOWNHILL_BELT)
    force = 12000 * 9.80665 * (0.025 * math.cos(math.radians(6)) - math.sin(math.radians(6)))
    assert force == pytest.approx(-9375, abs=1)
    assert m.get("train.regeneration_sustained") is True
    assert m.get("train.braking_power_mean") == pytest.approx(-force * 2 * 0.96 * 0.93, rel=1e-9)
    assert m.get("train.braking_power_mean") == pytest.approx(16740, rel=1e-3)
    assert m.get("train.regenerates") is True


def test_downhill_belt_stop_brakes_inertia_and_pull() -> None:
    # ramped stop in 10 s at the top speed 8 rad/s × 19 = 152 rad/s: J = 0.16 + 0.01 + (30 + 12000·0.25²)/19²
    # = 2.3407 kg·m²; the motor brakes J·ω/t = 35.58 N·m and the pull 2343.8 N·m ÷ 19 = 123.36 N·m:
    # peak (35.58 + 123.36) × 152 × 0.96 × 0.93 = 21.57 kW; energy ∫(J·ω/t + T_ovh/i)·ω dt over a linear ramp
    # = (J·ω²/2 + T_ovh/i·ω·t/2) × η = (27 041 + 93 754) × 0.8928 = 107.8 kJ
    m = model({**DOWNHILL_BELT, "load": {**DOWNHILL_BELT["load"], "deceleration_time": "10 s"}})
    j = 0.16 + 0.01 + (30 + 12000 * 0.25**2) / 19**2
    pull = 9375.01 * 0.25 / 19
    w = 152.0
    assert m.get("train.braking_power_peak") == pytest.approx((j * w / 10 + pull) * w * 0.96 * 0.93, rel=1e-4)
    # trapezoid over 200 steps of a quadratic in time: within 1e-4
    assert m.get("train.braking_energy") == pytest.approx((j * w**2 / 2 + pull * w * 10 / 2) * 0.96 * 0.93, rel=1e-4)


def test_gentle_decline_held_by_friction_does_not_regenerate() -> None:
    # −1°, μ 0.025: F = m·g·(0.024996 − 0.017452) > 0, the motor drives the belt; coasting to rest returns nothing
    spec = {**DOWNHILL_BELT, "drive": {"kind": "inverter", "stop": "coast"},
            "load": {**DOWNHILL_BELT["load"], "incline": "-1 deg"}}
    m = model(spec)
    assert m.get("train.regeneration_sustained") is False
    assert m.get("train.braking_energy") == 0.0
    assert m.get("train.regenerates") is False


def test_hoist_stop_while_lowering() -> None:
    # 1000 kg, two falls on a 0.4 m drum, 0.5 m/s, η_load 0.85; i = 20, η 0.95; 1 s ramp. Drum torque
    # 1000·9.80665·0.1 = 980.7 N·m, lowering pull × 0.85 = 833.6 N·m ÷ 20 = 41.68 N·m at the motor; drum
    # 2·0.5/0.2 = 5 rad/s, motor 100 rad/s; J = 0.05 + 1000·0.1²/400 = 0.075 kg·m²: peak (7.5 + 41.68)·100 × 0.95
    # = 4672 W, above the steady lowering 4168 W × 0.95 = 3960 W
    m = model({"supply": {"voltage": "400 V"}, "drive": {"kind": "inverter"},
               "motor": {"kind": "induction", "rated_power": "15 kW", "rated_speed": "1470 r/min",
                         "inertia": "0.05 kg*m^2"},
               "transmission": {"ratio": 20, "efficiency": "95 %"},
               "load": {"model": "hoist", "mass": "1000 kg", "drum_diameter": "0.4 m", "reeving": 2,
                        "line_speed": "0.5 m/s", "efficiency": "85 %", "deceleration_time": "1 s"}})
    pull = 1000 * 9.80665 * 0.1 * 0.85 / 20
    assert m.get("train.braking_power_peak") == pytest.approx((0.075 * 100 / 1 + pull) * 100 * 0.95, rel=1e-4)
    assert m.get("train.braking_power_mean") == pytest.approx(1000 * 9.80665 * 0.5 * 0.85 * 0.95, rel=1e-9)


def test_coasting_pump_returns_nothing() -> None:
    m = model({"supply": {"voltage": "400 V"}, "drive": {"kind": "inverter", "stop": "coast"},
               "motor": {"kind": "induction", "rated_power": "15 kW", "rated_speed": "1470 r/min",
                         "inertia": "0.1 kg*m^2"},
               "load": {"model": "quadratic", "torque_at_speed_max": "90 N*m", "speed_max": "1470 r/min"}})
    assert m.get("train.regenerates") is False


def test_unknown_stop_leaves_regeneration_open() -> None:
    # no deceleration time, nothing overhauls: whether anything returns is unknown, so it is not derived
    m = model({"supply": {"voltage": "400 V"}, "drive": {"kind": "inverter"},
               "motor": {"kind": "induction", "rated_power": "15 kW", "rated_speed": "1470 r/min",
                         "inertia": "0.1 kg*m^2"},
               "load": {"model": "quadratic", "torque_at_speed_max": "90 N*m", "speed_max": "1470 r/min",
                        "inertia": "0.4 kg*m^2"}})
    assert m.has("train.inertia_total")
    assert not m.has("train.regenerates")
    assert not m.has("train.braking_energy")


def test_awg_size_gives_the_area_and_parallel_conductors_add() -> None:
    # 1/0 AWG = 53.49 mm² (K46); two in parallel per phase → 106.97 mm²
    m = model({"motor": BASE_MOTOR, "cable": {"length": "50 m", "conductor_size": "1/0 AWG", "parallel_conductors": 2}})
    assert m.get("cable.phase_area") == pytest.approx(2 * 53.49e-6, rel=1e-3)
    # a given area wins over the size
    both = model({"motor": BASE_MOTOR, "cable": {"conductor_area": "50 mm^2", "conductor_size": "1/0 AWG"}})
    assert both.get("cable.phase_area") == pytest.approx(50e-6)


def test_parallel_conductors_halve_the_drop() -> None:
    # K34: 50 A, 100 m, 16 mm² Cu, cos φ 0.85 → 2.68 %; two cables in parallel each carry 25 A → 1.34 %
    motor = {**BASE_MOTOR, "rated_current": "50 A", "power_factor": 0.85}
    one = model({"motor": motor, "cable": {"length": "100 m", "conductor_area": "16 mm^2"}})
    two = model({"motor": motor, "cable": {"length": "100 m", "conductor_area": "16 mm^2", "parallel_conductors": 2}})
    assert one.get("cable.voltage_drop") == pytest.approx(0.0268, rel=3e-3)
    assert two.get("cable.voltage_drop") == pytest.approx(one.get("cable.voltage_drop") / 2, rel=1e-12)


def test_single_phase_line_circuit_uses_out_and_return() -> None:
    # 230 V single-phase DOL, 10 A, 40 m of 2.5 mm², cos φ 0.8: 2·10·40·(9.0e-3·0.8 + 0.08e-3·0.6) = 5.798 V → 2.521 %
    motor = {"kind": "induction", "rated_voltage": "230 V", "rated_current": "10 A", "power_factor": 0.8}
    m = model({"supply": {"voltage": "230 V", "phases": 1}, "drive": {"kind": "direct-on-line"}, "motor": motor,
               "cable": {"length": "40 m", "conductor_area": "2.5 mm^2"}})
    assert m.get("cable.voltage_drop") == pytest.approx(5.798 / 230, rel=1e-3)
    # default ±10 % band: (207 − 5.798) ÷ 230 = 87.48 %
    assert m.get("cable.motor_voltage_low") == pytest.approx((207 - 5.798) / 230, rel=1e-3)


def test_inverter_on_single_phase_feeds_a_three_phase_motor_cable() -> None:
    motor = {"kind": "induction", "rated_voltage": "230 V", "rated_current": "10 A", "power_factor": 0.8}
    m = model({"supply": {"voltage": "230 V", "phases": 1}, "drive": {"kind": "inverter"}, "motor": motor,
               "cable": {"length": "40 m", "conductor_area": "2.5 mm^2"}})
    # three-phase form: (9.0e-3·0.8 + 0.08e-3·0.6)·40·10 = 2.899 V ÷ (230/√3) = 2.183 %; no line-voltage value
    assert m.get("cable.voltage_drop") == pytest.approx(2.899 / (230 / math.sqrt(3)), rel=1e-3)
    assert not m.has("cable.motor_voltage_low")


def test_dc_armature_circuit_needs_no_power_factor() -> None:
    # pr-x-202: 124 A, 120 ft (36.58 m) of 1/0 AWG: 2·0.0225·36.58/53.49·124 = 3.816 V ÷ 500 V = 0.763 %
    m = model({"supply": {"voltage": "480 V"}, "drive": {"kind": "dc-converter"},
               "motor": {"kind": "dc", "rated_voltage": "500 V", "armature_voltage": "500 V",
                         "armature_current": "124 A", "rated_power": "75 hp_mech"},
               "cable": {"length": "120 ft", "conductor_size": "1/0 AWG"}, "protection": {"code": "nec-2017"}})
    assert m.get("cable.voltage_drop") == pytest.approx(0.00763, rel=2e-3)
    assert m.get("protection.full_load_current") == 123.0  # Table 430.247, 75 hp, 500 V (K45)


def test_f17_motor_on_the_line_below_zone_b() -> None:
    # f17: 400 V −8 %, 28 A, 130 m of 4 mm², cos φ 0.84: ΔU = 30.06 V; (368 − 30.06)/400 = 84.48 %
    motor = {**BASE_MOTOR, "rated_current": "28 A", "power_factor": 0.84}
    m = model({"supply": {"voltage": "400 V", "voltage_tolerance": "8 %"}, "drive": {"kind": "direct-on-line"},
               "motor": motor, "cable": {"length": "130 m", "conductor_area": "4 mm^2"}})
    assert m.get("cable.voltage_drop") == pytest.approx(0.0752, rel=2e-3)
    assert m.get("cable.motor_voltage_low") == pytest.approx(0.8448, rel=1e-3)


def test_nec_single_phase_table_on_the_line() -> None:
    m = model({"supply": {"voltage": "230 V", "phases": 1}, "drive": {"kind": "direct-on-line"},
               "motor": {"kind": "induction", "rated_power": "2 hp_mech", "rated_voltage": "230 V"},
               "protection": {"code": "nec-2023"}})
    assert m.get("protection.full_load_current") == 12.0  # Table 430.248, 2 hp, 230 V (K45)


def test_fault_current_ratio_environment_and_typical_thd() -> None:
    # 10 MVA at 400 V: 14 434 A; R_sce = 10e6/(√3·400·30) = 481.1; public network → first environment
    m = model({"supply": {"voltage": "400 V", "fault_level": "10 MVA", "low_voltage_network": "public"},
               "drive": {"kind": "inverter", "input_current": "30 A", "front_end": "six-pulse-dc-choke"},
               "motor": BASE_MOTOR})
    assert m.get("supply.fault_current") == pytest.approx(14433.76, rel=1e-5)
    assert m.get("drive.short_circuit_ratio") == pytest.approx(481.13, rel=1e-4)
    assert m.get("supply.emc_environment") == "first"
    assert m.get("drive.input_thd") == 0.40
    stated = model({"supply": {"voltage": "400 V", "low_voltage_network": "private", "emc_environment": "first"},
                    "drive": {"kind": "inverter", "front_end": "six-pulse-no-choke", "input_thd": "33 %"},
                    "motor": BASE_MOTOR})
    assert stated.get("drive.input_thd") == pytest.approx(0.33)  # the drive's own value wins
    assert stated.get("supply.emc_environment") == "first"  # the stated environment wins
