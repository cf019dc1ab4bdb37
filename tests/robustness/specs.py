"""Two valid specs of the demo scenario (Harrowgate water works, invented) that the corpus files are mutated from."""

from __future__ import annotations

CONVEYOR = """\
format: 1
tag: CV-210
title: Grit conveyor 2, inlet works
status: for-review
supply:
  voltage: 400 V
  frequency: 50 Hz
  phases: 3
  voltage_tolerance: 10 %
drive:
  kind: inverter
  rated_current: 18 A
  overload: {current: 150 %, duration: 60 s}
  output_voltage_max: 400 V
  output_frequency_max: 120 Hz
  dc_bus_trip: 800 V
  braking: {resistance: 47 ohm, power: 1.5 kW}
motor:
  kind: induction
  rated_power: 7.5 kW
  rated_voltage: 400 V
  rated_current: 14.8 A
  rated_frequency: 50 Hz
  rated_speed: 1455 r/min
  poles: 4
  rated_torque: 49.2 N*m
  power_factor: 0.82
  efficiency: 89.6 %
  breakdown_torque: 145 N*m
  peak_torque: 110 N*m
  max_speed: 3600 r/min
  inertia: 0.029 kg*m^2
  service_factor: 1.0
  cooling: self-ventilated
  enclosure: IP55
transmission:
  ratio: 23.8
  efficiency: 96 %
  rated_output_torque: 2400 N*m
  inertia: 0.002 kg*m^2
load:
  model: conveyor
  mass: 2500 kg
  incline: 8 deg
  friction_coefficient: 0.025
  pulley_diameter: 0.5 m
  line_speed: 1.6 m/s
  speed_min: 6 r/min
  speed_max: 61 r/min
  inertia: 2.5 kg*m^2
  duty:
    - {duration: 2 s, speed_to: 61 r/min}
    - {duration: 40 s, speed_to: 61 r/min}
    - {duration: 2 s, speed_to: 0 r/min}
    - {duration: 16 s, speed_to: 0 r/min}
environment:
  ambient_max: 45 degC
  altitude: 1800 m
  ingress_required: IP54
"""

PUMP = """\
format: 1
tag: P-305
title: Backwash pump 5, filter gallery
status: draft
supply:
  voltage: 400 V
  frequency: 50 Hz
  phases: 3
drive:
  kind: inverter
  rated_current: 32 A
  output_voltage_max: 400 V
  output_frequency_max: 60 Hz
motor:
  kind: induction
  rated_power: 15 kW
  rated_voltage: 400 V
  rated_current: 28.5 A
  rated_frequency: 50 Hz
  rated_speed: 2940 r/min
  poles: 2
  rated_torque: 50.5 N*m  # 15 kW / (2940 r/min x 2 pi / 60) = 48.72 N*m: 3.6 % off, a warning
  power_factor: 0.88
  efficiency: 92.1 %
  enclosure: IP55
load:
  model: quadratic
  torque_at_speed_max: 44 N*m
  speed_max: 2900 r/min
"""

VALID = {"cv-210.yaml": CONVEYOR, "p-305.yaml": PUMP}
