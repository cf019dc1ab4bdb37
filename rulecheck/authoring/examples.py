"""Example values for templates, in spec form.

These are examples only (the field list comes from the rules, see :mod:`fields`). The base set is one
coherent drive train — a 45 kW four-pole induction motor on an inverter with a helical-bevel gearbox,
driving an inclined belt conveyor on a 400 V / 50 Hz site — so that a template for that choice, with its
examples kept, is a sound design. Other motor kinds and loads replace the values that differ. A field
with no example here gets its kind's example (``units.KINDS``) or a value the schema allows.
"""

from __future__ import annotations

from typing import Any

from rulecheck import units

__all__ = ["examples_for"]

BASE: dict[str, Any] = {
    "tag": "CV-101",
    "supply.voltage": "400 V", "supply.frequency": "50 Hz", "supply.phases": 3, "supply.voltage_tolerance": "10 %",
    "supply.frequency_tolerance": "1 %", "supply.source": "grid", "supply.fault_level": "20 MVA",
    "supply.phase_voltages": ["400 V", "398 V", "402 V"], "supply.low_voltage_network": "private",
    "drive.rated_current": "90 A", "drive.duty_class": "heavy", "drive.overload.current": "150 %",
    "drive.overload.duration": "60 s", "drive.overload.period": "300 s", "drive.input_voltage_min": "323 V",
    "drive.input_voltage_max": "528 V", "drive.input_current": "84 A", "drive.output_voltage_max": "400 V",
    "drive.output_frequency_max": "100 Hz", "drive.base_frequency": "50 Hz", "drive.switching_frequency": "4 kHz",
    "drive.control": "sensorless-vector", "drive.stop": "ramp", "drive.field_weakening": False,
    "drive.dc_bus_trip": "820 V", "drive.dc_bus_capacitance": "4.7 mF", "drive.dc_bus_rating": "900 V",
    "drive.ambient_max": "45 degC", "drive.max_cable_length": "150 m", "drive.derating": "100 %",
    "drive.braking.kind": "resistor", "drive.braking.resistance": "12 ohm", "drive.braking.power": "8 kW",
    "drive.braking.chopper_threshold": "780 V", "drive.braking.resistance_min": "9 ohm",
    "drive.motor_overload.kind": "electronic", "drive.motor_overload.setting": "81 A",
    "drive.sized_for_process_load": False,
    "drive.active_short_circuit": True, "drive.quadrants": 4, "drive.firing_angle_min": "15 deg",
    "motor.rated_power": "45 kW", "motor.rated_voltage": "400 V", "motor.rated_current": "81 A",
    "motor.rated_frequency": "50 Hz", "motor.rated_speed": "1480 r/min", "motor.poles": 4,
    "motor.rated_torque": "290 N*m", "motor.power_factor": 0.86, "motor.efficiency": "94.2 %",
    "motor.efficiency_class": "IE3", "motor.connection": "delta", "motor.design": "N", "motor.frame": "225M",
    "motor.breakdown_torque": "725 N*m", "motor.locked_rotor_torque": "638 N*m",
    "motor.locked_rotor_current": "607 A", "motor.locked_rotor_power_factor": 0.35,
    "motor.magnetising_current": "28 A", "motor.peak_torque": "725 N*m", "motor.max_speed": "3600 r/min",
    "motor.breakdown_torque_ratio": 2.5, "motor.peak_torque_ratio": 2.5,
    "motor.inertia": "0.62 kg*m^2", "motor.service_factor": 1.0, "motor.inverter_service_factor": 1.0,
    "motor.inverter_rated": True, "motor.insulation_peak_voltage": "1560 V", "motor.cooling": "self-ventilated",
    "motor.enclosure": "IP55", "motor.thermal_protection": "ptc", "motor.thermal_time_constant": "45 min",
    "motor.duty_type": "S1", "motor.temperature_rise": "80 K", "motor.insulated_bearing": True,
    "motor.shaft_grounding": True, "motor.starts_per_hour_max": 10, "motor.safe_stall_time": "12 s",
    "motor.constant_torque_speed_min": "750 r/min", "motor.ex_marking": "Ex ec IIC T3 Gc",
    "motor.duty_cdf": "40 %", "motor.duty_time": "30 min",
    "motor.brake.kind": "spring-applied", "motor.brake.static_torque": "400 N*m", "motor.brake.inertia": "0.02 kg*m^2",
    "transmission.kind": "helical-bevel", "transmission.ratio": 24.0, "transmission.stages": 3,
    "transmission.efficiency": "96 %", "transmission.reverse_efficiency": "96 %",
    "transmission.rated_output_torque": "9000 N*m", "transmission.max_output_torque": "18000 N*m",
    "transmission.input_speed_max": "1800 r/min", "transmission.thermal_power": "60 kW",
    "transmission.inertia": "0.02 kg*m^2", "transmission.self_locking": False, "transmission.stiff_coupling": False,
    "transmission.shock": "uniform", "transmission.hours_per_day": 20,
    "transmission.backstop.rated_torque": "6000 N*m", "transmission.backstop.shaft": "gear",
    "load.application": "speed-control", "load.mass": "9000 kg", "load.incline": "10 deg",
    "load.friction_coefficient": 0.03, "load.pulley_diameter": "0.63 m", "load.line_speed": "2.0 m/s",
    "load.efficiency": "100 %", "load.breakaway_torque": "2000 N*m", "load.speed_min": "45 r/min",
    "load.speed_max": "60 r/min", "load.speed_limit": "80 r/min", "load.runaway_speed": "70 r/min",
    "load.inertia": "120 kg*m^2", "load.acceleration_time": "10 s", "load.deceleration_time": "10 s",
    "load.starts_per_hour": 2, "load.vertical": False,
    "load.duty": [{"duration": "10 s", "speed_to": "60 r/min", "label": "start"},
                  {"duration": "600 s", "speed_to": "60 r/min", "label": "run"},
                  {"duration": "10 s", "speed_to": "0 r/min", "label": "stop"}],
    "load.duty_profile": "profile.csv",
    "environment.ambient_max": "35 degC", "environment.ambient_min": "-10 degC", "environment.altitude": "350 m",
    "environment.location": "general-industrial", "environment.ingress_required": "IP54",
    "environment.motor_derating": "100 %", "environment.hazardous_area.classification": "zone-2",
    "environment.hazardous_area.temperature_class": "T3",
    "cable.length": "60 m", "cable.conductor_area": "35 mm^2", "cable.material": "copper",
    "cable.reactance": "0.08 mohm/m", "cable.shielded": True, "cable.rise_time": "0.1 us",
    "cable.voltage_drop_limit": "5 %", "cable.conductor_size": "2 AWG", "cable.parallel_conductors": 1,
    # 20 MVA at 400 V is 28.9 kA ≤ 65 kA; IEEE 519 with a 1200 A plant demand: I_sc/I_L 24 → 8 %, TDD
    # 0.38/√1.144 × 84/1200 = 2.5 %; C3 behind the plant's own transformer (second environment)
    "drive.short_circuit_rating": "65 kA", "drive.front_end": "six-pulse-dc-choke", "drive.input_thd": "38 %",
    "drive.emc_category": "C3", "supply.emc_environment": "second", "supply.harmonic_standard": "ieee-519",
    "supply.demand_current": "1200 A",
    # IEC 60364-4-43: I_B 84 A ≤ I_n 125 A ≤ I_z 130 A; I_2 = 1.30 × 125 = 162.5 A ≤ 1.45 × 130 = 188.5 A
    "protection.code": "iec-60364", "protection.device": "breaker-iec-60947-2", "protection.device_rating": "125 A",
    "protection.conventional_tripping_current": "162.5 A",
    "protection.conductor_ampacity": "130 A", "protection.motor_conductor_ampacity": "110 A",
    "protection.holding_brake_count": 1, "protection.brake_sequencing": True, "protection.brake_test": True,
    "protection.overspeed_protection": True,
}

# a 3.3 kW ten-pole PM servo motor
PM: dict[str, Any] = {
    "drive.rated_current": "8 A", "drive.overload.current": "300 %", "drive.overload.duration": "3 s",
    "drive.overload.period": "60 s", "drive.input_current": "7 A", "drive.output_frequency_max": "400 Hz",
    "drive.base_frequency": "250 Hz", "drive.switching_frequency": "8 kHz", "drive.control": "servo",
    "drive.dc_bus_trip": "800 V", "drive.dc_bus_capacitance": "0.33 mF", "drive.braking.resistance": "100 ohm",
    "drive.braking.power": "600 W", "drive.braking.chopper_threshold": "760 V",
    "drive.braking.resistance_min": "60 ohm",
    "drive.motor_overload.setting": "5 A", "drive.field_weakening": False,
    "motor.rated_power": "3.3 kW", "motor.rated_current": "4.8 A", "motor.rated_frequency": "250 Hz",
    "motor.rated_speed": "3000 r/min", "motor.poles": 10, "motor.rated_torque": "10.5 N*m",
    "motor.stall_torque": "11.5 N*m", "motor.peak_torque": "32 N*m", "motor.peak_torque_ratio": 3.0,
    "motor.peak_current": "16 A",
    "motor.max_speed": "4500 r/min", "motor.inertia": "0.0014 kg*m^2", "motor.back_emf_constant": "135 V/krpm",
    "motor.back_emf_convention": "line-to-line-rms", "motor.torque_constant": "2.2 N*m/A",
    "motor.cooling": "non-ventilated", "motor.enclosure": "IP65", "motor.thermal_protection": "kty",
    "motor.thermal_time_constant": "25 min", "motor.frame": "100M", "motor.constant_torque_speed_min": "0 r/min",
    "motor.brake.static_torque": "12 N*m", "motor.brake.inertia": "0.0001 kg*m^2",
}

# a 45 kW separately excited DC motor on a thyristor converter
DC: dict[str, Any] = {
    "drive.rated_current": "110 A", "drive.input_voltage_min": "340 V", "drive.input_voltage_max": "460 V",
    "drive.control": "closed-loop-vector", "drive.motor_overload.setting": "98 A",
    "motor.rated_voltage": "400 V", "motor.rated_current": "98 A", "motor.rated_speed": "1750 r/min",
    "motor.armature_voltage": "400 V", "motor.armature_current": "98 A", "motor.armature_resistance": "0.28 ohm",
    "motor.brush_drop": "2 V", "motor.field.kind": "separate", "motor.field.voltage": "310 V",
    "motor.field.current": "3.5 A", "motor.field.power": "1.1 kW", "motor.peak_torque": "370 N*m",
    "motor.max_speed": "2200 r/min", "motor.inertia": "0.9 kg*m^2", "motor.cooling": "forced",
    "motor.enclosure": "IP44", "motor.thermal_protection": "thermostat",
}

# load models: the values that differ from the conveyor's
LOADS: dict[str, dict[str, Any]] = {
    "hoist": {"load.mass": "3200 kg", "load.drum_diameter": "0.4 m", "load.reeving": 2, "load.counterweight": "1600 kg",
              "load.line_speed": "0.25 m/s", "load.efficiency": "95 %", "load.vertical": True,
              "load.breakaway_torque": "3500 N*m", "load.speed_min": "1 r/min", "load.speed_max": "24 r/min",
              "load.speed_limit": "30 r/min", "load.runaway_speed": "30 r/min", "load.inertia": "5 kg*m^2",
              "load.acceleration_time": "2 s", "load.deceleration_time": "2 s", "load.starts_per_hour": 30},
    "quadratic": {"load.torque_at_speed_max": "140 N*m", "load.breakaway_torque": "20 N*m",
                  "load.speed_min": "900 r/min", "load.speed_max": "2950 r/min", "load.speed_limit": "3300 r/min",
                  "load.runaway_speed": "3300 r/min", "load.inertia": "0.4 kg*m^2", "load.acceleration_time": "10 s",
                  "load.deceleration_time": "20 s", "load.starts_per_hour": 2},
    "constant-torque": {"load.torque": "5000 N*m", "load.breakaway_torque": "6500 N*m", "load.speed_min": "10 r/min",
                        "load.speed_max": "70 r/min", "load.inertia": "900 kg*m^2", "load.acceleration_time": "8 s",
                        "load.starts_per_hour": 6},
    "constant-power": {"load.power": "30 kW", "load.tension": "12 kN", "load.diameter_min": "0.3 m",
                       "load.diameter_max": "1.2 m", "load.line_speed": "2.5 m/s", "load.speed_max": "160 r/min"},
    "lead-screw": {"load.application": "positioning", "load.vertical": True, "load.thrust": "1180 N",
                   "load.moving_mass": "120 kg", "load.lead": "20 mm", "load.screw_efficiency": "90 %",
                   "load.inertia": "0.0008 kg*m^2", "load.speed_min": "0 r/min", "load.speed_max": "4000 r/min",
                   "load.speed_limit": "4500 r/min", "load.runaway_speed": "4500 r/min",
                   "load.acceleration_time": "0.3 s", "load.deceleration_time": "0.3 s", "load.starts_per_hour": 1200},
    "points": {"load.points": [{"speed": "0 r/min", "torque": "800 N*m"}, {"speed": "30 r/min", "torque": "1000 N*m"},
                               {"speed": "60 r/min", "torque": "1300 N*m"}]},
}


def _fallback(node: dict[str, Any]) -> Any:
    """Return a value the schema accepts for a field with no example of its own."""
    if "x-dimension" in node:
        return units.KINDS[node["x-dimension"]].example
    if "enum" in node:
        return node["enum"][0]
    kind = node.get("type")
    if kind == "boolean":
        return False
    if kind in ("integer", "number"):
        low = node.get("minimum", node.get("exclusiveMinimum", 0))
        value = max(low, 1) if kind == "integer" else max(float(low), 1.0)
        return value + value % 2 if node.get("multipleOf") == 2 else value
    if kind == "string" and "pattern" not in node:
        return "text"
    return None


def examples_for(fields: dict[str, dict[str, Any]], motor_kind: str, load_model: str) -> dict[str, Any]:
    """Return an example value (spec form) for each of ``fields`` (path → schema node)."""
    table = {**BASE, **(PM if motor_kind == "pm-synchronous" else DC if motor_kind == "dc" else {}),
             **LOADS.get(load_model, {})}
    out = {}
    for path, node in fields.items():
        value = table.get(path, _fallback(node))
        if value is not None:
            out[path] = value
    return out
