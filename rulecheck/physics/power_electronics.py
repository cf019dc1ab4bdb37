"""Power electronics: DC bus, inverter output voltage and frequency, braking, reflected wave.

Voltages are line-to-line RMS on the AC side and mean values on the DC side unless the
name says otherwise.
"""

from __future__ import annotations

import math

import numpy as np

from rulecheck.physics._method import method

SQRT2 = math.sqrt(2.0)
SQRT3 = math.sqrt(3.0)
SIX_PULSE_FACTOR = 3.0 * SQRT2 / math.pi  # 1.3505: mean DC of a six-pulse bridge per V_LL


@method(returns="voltage", supply_voltage="voltage")
def dc_bus_voltage_loaded(supply_voltage: float) -> float:
    """Return the mean DC-link voltage [V] of a loaded six-pulse diode rectifier.

    Parameters
    ----------
    supply_voltage : line-to-line RMS supply voltage [V]

    Method: V_dc = 3√2/π·V_LL ≈ 1.35·V_LL (continuous conduction, commutation overlap neglected).

    References
    ----------
    Six-pulse bridge mean output voltage (Mohan, Undeland, Robbins, Power Electronics, ch. on line-frequency
    rectifiers; from memory for the chapter); docs/references.md K28.
    """
    return SIX_PULSE_FACTOR * supply_voltage


@method(returns="voltage", supply_voltage="voltage")
def dc_bus_voltage_no_load(supply_voltage: float) -> float:
    """Return the DC-link voltage [V] of a diode rectifier at no load or during regeneration.

    Parameters
    ----------
    supply_voltage : line-to-line RMS supply voltage [V]

    Method: V_dc = √2·V_LL (the capacitor charges to the line-to-line peak).

    References
    ----------
    docs/references.md K28 and pitfall 9.
    """
    return SQRT2 * supply_voltage


@method(returns="voltage", dc_voltage="voltage")
def output_voltage_max_svpwm(dc_voltage: float) -> float:
    """Return the highest line-to-line RMS fundamental [V] of an inverter with space-vector PWM (linear range).

    Parameters
    ----------
    dc_voltage : DC-link voltage [V]

    Method: V_LL,1 = V_dc/√2 (peak line-to-line equals V_dc).

    References
    ----------
    docs/references.md R17 and K44 (modulation limits; Mohan/Undeland/Robbins, from memory).
    """
    return dc_voltage / SQRT2


@method(returns="voltage", dc_voltage="voltage")
def output_voltage_max_sine_triangle(dc_voltage: float) -> float:
    """Return the highest line-to-line RMS fundamental [V] of sine-triangle PWM at modulation index 1.

    Parameters
    ----------
    dc_voltage : DC-link voltage [V]

    Method: phase peak V_dc/2, so V_LL,1 = √3/(2√2)·V_dc ≈ 0.612·V_dc.

    References
    ----------
    docs/references.md K44 (modulation limits; Mohan/Undeland/Robbins, from memory).
    """
    return SQRT3 / (2.0 * SQRT2) * dc_voltage


@method(returns="voltage", dc_voltage="voltage")
def output_voltage_six_step(dc_voltage: float) -> float:
    """Return the line-to-line RMS fundamental [V] of six-step (square-wave) operation.

    Parameters
    ----------
    dc_voltage : DC-link voltage [V]

    Method: V_LL,1 = √6/π·V_dc ≈ 0.780·V_dc (Fourier fundamental of the six-step wave).

    References
    ----------
    docs/references.md K44 (modulation limits; Mohan/Undeland/Robbins, from memory).
    """
    return math.sqrt(6.0) / math.pi * dc_voltage


@method(returns="frequency", speed="rotational_speed", poles="fraction", slip_speed="rotational_speed")
def output_frequency_induction(speed: float, poles: float, slip_speed: float = 0.0) -> float:
    """Return the inverter output frequency [Hz] an induction motor needs for a shaft speed.

    Parameters
    ----------
    speed : shaft speed [rad/s]
    poles : number of poles p
    slip_speed : slip speed at the load [rad/s], added to reach the shaft speed

    Method: f = (p/2)·(n + n_slip)/60, i.e. (p/2)·(ω + ω_slip)/(2π).

    References
    ----------
    docs/references.md R16 (n_s = 120·f/p).
    """
    return (poles / 2.0) * (speed + slip_speed) / (2.0 * math.pi)


@method(returns="frequency", speed="rotational_speed", poles="fraction")
def output_frequency_synchronous(speed: float, poles: float) -> float:
    """Return the inverter output frequency [Hz] a synchronous (PM, SynRM) motor needs for a shaft speed.

    Parameters
    ----------
    speed : shaft speed [rad/s]
    poles : number of poles p

    Method: f = (p/2)·n/60 exactly (no slip).

    References
    ----------
    docs/references.md R05 and R16.
    """
    return (poles / 2.0) * speed / (2.0 * math.pi)


@method(returns="voltage", supply_voltage="voltage", firing_angle="angle")
def controlled_bridge_dc_voltage(supply_voltage: float, firing_angle: float) -> float:
    """Return the mean DC output voltage [V] of a three-phase fully controlled thyristor bridge.

    Parameters
    ----------
    supply_voltage : line-to-line RMS supply voltage [V]
    firing_angle : delay angle α [rad]

    Method: V_d = 3√2/π·V_LL·cos α ≈ 1.35·V_LL·cos α (continuous conduction, overlap neglected).

    References
    ----------
    Six-pulse controlled rectifier (power-electronics textbooks, e.g. Mohan/Undeland/Robbins, from memory);
    docs/references.md R21.
    """
    return SIX_PULSE_FACTOR * supply_voltage * np.cos(firing_angle)


@method(returns="energy", capacitance="capacitance", voltage_from="voltage", voltage_to="voltage")
def capacitor_energy(capacitance: float, voltage_from: float, voltage_to: float) -> float:
    """Return the energy [J] a capacitor takes up when charged from one voltage to another.

    Parameters
    ----------
    capacitance : C [F]
    voltage_from : starting voltage, e.g. nominal DC bus [V]
    voltage_to : final voltage, e.g. chopper threshold [V]

    Method: E = ½·C·(V_to² − V_from²).

    References
    ----------
    Energy stored in a capacitor (physics); docs/references.md R35 and K39.
    """
    return 0.5 * capacitance * (voltage_to**2 - voltage_from**2)


@method(returns="resistance", voltage="voltage", power="power")
def braking_resistance_max(voltage: float, power: float) -> float:
    """Return the largest braking resistance [Ω] that still absorbs a peak power at the chopper voltage.

    Parameters
    ----------
    voltage : chopper switching threshold [V]
    power : peak braking power to absorb [W]

    Method: R_max = V_ch²/P_pk.

    References
    ----------
    docs/references.md R35 and K39 (P = V²/R).
    """
    return voltage**2 / power


@method(returns="power", voltage="voltage", resistance="resistance")
def braking_resistor_power(voltage: float, resistance: float) -> float:
    """Return the power [W] a braking resistor takes at a DC voltage while the chopper conducts.

    Parameters
    ----------
    voltage : DC-link voltage with the chopper on [V]
    resistance : braking resistance [Ω]

    Method: P = V²/R.

    References
    ----------
    Joule's law; docs/references.md R35.
    """
    return voltage**2 / resistance


@method(returns="length", propagation_velocity="velocity", rise_time="time")
def reflected_wave_critical_length(propagation_velocity: float, rise_time: float) -> float:
    """Return the cable length [m] beyond which the reflected wave at the motor is nearly complete.

    Parameters
    ----------
    propagation_velocity : pulse velocity on the cable, typically 150–200 m/µs [m/s]
    rise_time : inverter output pulse rise time [s]

    Method: l_c = v·t_r/2 (the reflection returns to the inverter within the rise time).

    References
    ----------
    Transmission-line reflection, derived; docs/references.md R39 and K40.
    """
    return propagation_velocity * rise_time / 2.0


@method(
    returns="voltage",
    dc_voltage="voltage",
    cable_length="length",
    critical_length="length",
    reflection_coefficient="fraction",
)
def motor_peak_voltage(
    dc_voltage: float, cable_length: float, critical_length: float, reflection_coefficient: float = 1.0
) -> float:
    """Return an estimate of the peak line-to-line voltage [V] at the motor terminals on a PWM inverter.

    Parameters
    ----------
    dc_voltage : highest DC-link voltage (the larger of √2·V_LL,max and the chopper threshold) [V]
    cable_length : motor cable length [m]
    critical_length : l_c from :func:`reflected_wave_critical_length` [m]
    reflection_coefficient : Γ at the motor terminals [1]; default 1 (motor surge impedance ≫ cable's)

    Method: V_pk ≈ V_dc·(1 + Γ·min(1, L/l_c)); the linear rise below l_c is a common-practice simplification.

    References
    ----------
    docs/references.md R39 (voltage doubling at an open line end; the linear build-up is common practice).
    """
    return dc_voltage * (1.0 + reflection_coefficient * np.minimum(1.0, cable_length / critical_length))


@method(returns="voltage", rated_voltage="voltage")
def inverter_duty_insulation_peak_limit(rated_voltage: float) -> float:
    """Return the peak terminal voltage [V] an inverter-duty (NEMA MG 1 Part 31) motor withstands.

    Parameters
    ----------
    rated_voltage : motor rated line-to-line voltage V_N, ≤ 600 V class [V]

    Method: V_pk ≤ 3.1·V_N (1.1·2·√2 = 3.11, stated as 3.1: compare at that precision), at rise times of
    0.1 µs or more. A general-purpose motor (Part 30) is good for 1000 V peak at rise times of 2 µs or more.

    References
    ----------
    NEMA MG 1 Part 31 (inverter-fed definite-purpose motors); docs/references.md R39 and K30.
    """
    return 3.1 * rated_voltage
