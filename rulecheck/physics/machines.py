"""Electric machines: power, torque and speed; induction, PM synchronous and DC machine relations.

All arguments and results are plain floats in the internal SI units of
:mod:`rulecheck.units` (shaft speed in rad/s, torque in N*m, voltages line-to-line
RMS unless the name says otherwise). ``poles`` is the number of poles p; the
number of pole pairs is p/2.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from rulecheck.physics._method import method
from rulecheck.physics.efficiency_tables import (
    RATED_OUTPUTS_50HZ_KW,
    RATED_OUTPUTS_60HZ,
    TABLE_50HZ,
    TABLE_60HZ,
    TOP_ROW_UP_TO_KW,
)

SQRT2 = math.sqrt(2.0)
SQRT3 = math.sqrt(3.0)

# Default magnetising current as a share of rated current when the datasheet gives none (common practice).
DEFAULT_MAGNETISING_SHARE = 0.35


# --- power, torque, speed ----------------------------------------------------


@method(returns="torque", power="power", speed="rotational_speed")
def torque_from_power(power: float, speed: float) -> float:
    """Return the shaft torque [N*m] that carries a power at a shaft speed.

    Parameters
    ----------
    power : shaft power [W]
    speed : shaft speed [rad/s], not zero

    Method: T = P/ω (definition of rotational power).

    References
    ----------
    Definition of mechanical power P = T·ω; the revolution is 2π rad (SI Brochure, 9th ed., 2019).
    """
    return power / speed


@method(returns="power", torque="torque", speed="rotational_speed")
def power_from_torque(torque: float, speed: float) -> float:
    """Return the shaft power [W] of a torque at a shaft speed.

    Parameters
    ----------
    torque : shaft torque [N*m]
    speed : shaft speed [rad/s]

    Method: P = T·ω.

    References
    ----------
    Definition of mechanical power (SI Brochure, 9th ed., 2019).
    """
    return torque * speed


@method(returns="rotational_speed", power="power", torque="torque")
def speed_from_power(power: float, torque: float) -> float:
    """Return the shaft speed [rad/s] at which a torque carries a power.

    Parameters
    ----------
    power : shaft power [W]
    torque : shaft torque [N*m], not zero

    Method: ω = P/T.

    References
    ----------
    Definition of mechanical power (SI Brochure, 9th ed., 2019).
    """
    return power / torque


@method(returns="fraction", power="power", torque="torque", speed="rotational_speed")
def power_torque_speed_deviation(power: float, torque: float, speed: float) -> float:
    """Return the relative deviation [1] of a nameplate power from rated torque times rated speed.

    Parameters
    ----------
    power : rated output power [W], not zero
    torque : rated torque [N*m]
    speed : rated (slip) speed [rad/s]; not the synchronous speed

    Method: dev = |P_N − T_N·ω_N| / P_N (docs/references.md R02).

    References
    ----------
    Definition of mechanical power; docs/references.md R02 (common practice for the check itself).
    """
    return abs(power - torque * speed) / abs(power)


# --- synchronous speed, slip, poles -------------------------------------------


@method(returns="rotational_speed", frequency="frequency", poles="fraction")
def synchronous_speed(frequency: float, poles: float) -> float:
    """Return the synchronous shaft speed [rad/s] of a machine with p poles on a supply frequency.

    Parameters
    ----------
    frequency : electrical supply frequency [Hz]
    poles : number of poles p (not pole pairs)

    Method: n_s = 120·f/p [r/min], i.e. ω_s = 2π·f/(p/2) = 4π·f/p.

    References
    ----------
    Any electric-machines textbook, synchronous speed n_s = 120·f/p; docs/references.md K10.
    """
    return 4.0 * math.pi * frequency / poles


@method(returns="fraction", speed="rotational_speed", frequency="frequency", poles="fraction")
def slip(speed: float, frequency: float, poles: float) -> float:
    """Return the slip [1] of an induction machine running at a shaft speed.

    Parameters
    ----------
    speed : shaft speed [rad/s]
    frequency : supply frequency [Hz]
    poles : number of poles p

    Method: s = (n_s − n)/n_s.

    References
    ----------
    Electric-machines textbook definition of slip (e.g. ISBN 978-81-317-5456-6, Ex. 8.3); docs/references.md K11.
    """
    ws = synchronous_speed(frequency, poles)
    return (ws - speed) / ws


@method(returns="rotational_speed", slip="fraction", frequency="frequency", poles="fraction")
def speed_from_slip(slip: float, frequency: float, poles: float) -> float:
    """Return the shaft speed [rad/s] of an induction machine at a slip.

    Parameters
    ----------
    slip : slip s [1]
    frequency : supply frequency [Hz]
    poles : number of poles p

    Method: n = n_s·(1 − s).

    References
    ----------
    Electric-machines textbook (ISBN 978-81-317-5456-6, Ex. 8.4); docs/references.md K12.
    """
    return synchronous_speed(frequency, poles) * (1.0 - slip)


@method(returns="frequency", slip="fraction", frequency="frequency")
def rotor_frequency(slip: float, frequency: float) -> float:
    """Return the rotor current frequency [Hz] of an induction machine at a slip.

    Parameters
    ----------
    slip : slip s [1]
    frequency : supply frequency [Hz]

    Method: f_r = s·f.

    References
    ----------
    Electric-machines textbook (ISBN 978-81-317-5456-6, Ex. 8.3); docs/references.md K11.
    """
    return slip * frequency


@method(returns="fraction", rated_speed="rotational_speed", frequency="frequency")
def poles_from_rated_speed(rated_speed: float, frequency: float) -> int:
    """Return the number of poles [1] inferred from an induction motor's rated speed and frequency.

    Parameters
    ----------
    rated_speed : rated shaft speed [rad/s], positive and below synchronous speed
    frequency : rated frequency [Hz]

    Method: p = 2·floor(60·f/n_N) with n_N in r/min (docs/references.md R04). Valid while rated slip is below
    the gap to the next lower synchronous speed (true for line-fed motors; slip is a few percent).

    References
    ----------
    docs/references.md R04 (follows from n_s = 120·f/p and 0 < s < 1).
    """
    if not rated_speed > 0:
        raise ValueError("rated speed must be positive to infer the pole count")
    # 60·f/n[r/min] = 2π·f/ω; the small allowance keeps 1500 r/min at 50 Hz from flooring to 1.
    return 2 * math.floor(2.0 * math.pi * frequency / rated_speed + 1e-9)


@method(
    returns="rotational_speed",
    frequency="frequency",
    poles="fraction",
    rated_slip_speed="rotational_speed",
    torque="torque",
    rated_torque="torque",
)
def induction_speed_on_inverter(
    frequency: float, poles: float, rated_slip_speed: float, torque: float, rated_torque: float
) -> float:
    """Return the shaft speed [rad/s] of an induction motor on an inverter at an output frequency and load.

    Parameters
    ----------
    frequency : inverter output frequency [Hz]
    poles : number of poles p
    rated_slip_speed : rated slip speed n_s,N − n_N [rad/s]
    torque : load torque at the motor shaft [N*m]
    rated_torque : rated torque T_N [N*m]

    Method: n ≈ 120·f/p − s_N·n_s,N·(T/T_N): at constant flux the slip speed is about proportional to
    torque and independent of frequency, so open-loop speed is the synchronous speed minus it.

    References
    ----------
    docs/references.md R04 and pitfall 22 (common practice for constant-flux inverter operation).
    """
    return synchronous_speed(frequency, poles) - rated_slip_speed * (torque / rated_torque)


# --- nameplate electrical power ------------------------------------------------


@method(returns="power", voltage="voltage", current="current", power_factor="fraction", efficiency="fraction")
def three_phase_output_power(voltage: float, current: float, power_factor: float, efficiency: float) -> float:
    """Return the shaft output power [W] of a three-phase motor from its electrical nameplate.

    Parameters
    ----------
    voltage : line-to-line RMS voltage [V]
    current : line current [A]
    power_factor : cos φ [1]
    efficiency : efficiency η [1]

    Method: P = √3·V_LL·I·cosφ·η (nameplate power is output power; docs/references.md R03, pitfall 10).

    References
    ----------
    Three-phase power, electric-machines textbooks; docs/references.md R03 and K42.
    """
    return SQRT3 * voltage * current * power_factor * efficiency


@method(returns="current", power="power", voltage="voltage", power_factor="fraction", efficiency="fraction")
def three_phase_rated_current(power: float, voltage: float, power_factor: float, efficiency: float) -> float:
    """Return the line current [A] of a three-phase motor delivering an output power.

    Parameters
    ----------
    power : shaft output power [W]
    voltage : line-to-line RMS voltage [V]
    power_factor : cos φ [1]
    efficiency : efficiency η [1]

    Method: I = P/(√3·V_LL·cosφ·η).

    References
    ----------
    Three-phase power, electric-machines textbooks; docs/references.md K42.
    """
    return power / (SQRT3 * voltage * power_factor * efficiency)


@method(returns="fraction", power="power", voltage="voltage", current="current", power_factor="fraction")
def implied_efficiency_three_phase(power: float, voltage: float, current: float, power_factor: float) -> float:
    """Return the efficiency [1] a three-phase nameplate implies.

    Parameters
    ----------
    power : rated output power [W]
    voltage : rated line-to-line voltage [V]
    current : rated current [A]
    power_factor : rated cos φ [1]

    Method: η_impl = P_N/(√3·V·I·cosφ) (docs/references.md R03).

    References
    ----------
    docs/references.md R03 (three-phase power).
    """
    return power / (SQRT3 * voltage * current * power_factor)


@method(returns="power", voltage="voltage", current="current", power_factor="fraction", efficiency="fraction")
def single_phase_output_power(voltage: float, current: float, power_factor: float, efficiency: float) -> float:
    """Return the shaft output power [W] of a single-phase motor from its electrical nameplate.

    Parameters
    ----------
    voltage : supply voltage [V]
    current : current [A]
    power_factor : cos φ [1]
    efficiency : η [1]

    Method: P = V·I·cosφ·η (no √3; pitfall 10).

    References
    ----------
    Single-phase power, electric-machines textbooks; docs/references.md R03.
    """
    return voltage * current * power_factor * efficiency


@method(returns="fraction", power="power", voltage="voltage", current="current", power_factor="fraction")
def implied_efficiency_single_phase(power: float, voltage: float, current: float, power_factor: float) -> float:
    """Return the efficiency [1] a single-phase nameplate implies.

    Parameters
    ----------
    power : rated output power [W]
    voltage : rated voltage [V]
    current : rated current [A]
    power_factor : rated cos φ [1]

    Method: η_impl = P_N/(V·I·cosφ).

    References
    ----------
    docs/references.md R03.
    """
    return power / (voltage * current * power_factor)


@method(returns="power", voltage="voltage", current="current", efficiency="fraction")
def dc_output_power(voltage: float, current: float, efficiency: float) -> float:
    """Return the shaft output power [W] of a DC motor from armature voltage and current.

    Parameters
    ----------
    voltage : armature voltage V_a [V]
    current : armature current I_a [A]
    efficiency : η, field power excluded [1]

    Method: P = V_a·I_a·η.

    References
    ----------
    docs/references.md R03 (DC form).
    """
    return voltage * current * efficiency


@method(returns="fraction", power="power", voltage="voltage", current="current")
def implied_efficiency_dc(power: float, voltage: float, current: float) -> float:
    """Return the efficiency [1] a DC nameplate implies (field power excluded).

    Parameters
    ----------
    power : rated output power [W]
    voltage : rated armature voltage [V]
    current : rated armature current [A]

    Method: η_impl = P_N/(V_a·I_a).

    References
    ----------
    docs/references.md R03 (DC form).
    """
    return power / (voltage * current)


# --- induction motor current and torque ----------------------------------------


def _magnetising(rated_current: float, magnetising_current: float | None) -> float:
    return DEFAULT_MAGNETISING_SHARE * rated_current if magnetising_current is None else magnetising_current


@method(
    returns="current",
    torque="torque",
    rated_torque="torque",
    rated_current="current",
    magnetising_current="current",
)
def induction_current_at_torque(
    torque: float, rated_torque: float, rated_current: float, magnetising_current: float | None = None
) -> float:
    """Return the stator current [A] of an induction motor at a torque, at rated flux.

    Parameters
    ----------
    torque : shaft torque [N*m]
    rated_torque : rated torque T_N [N*m]
    rated_current : rated current I_N [A]
    magnetising_current : no-load (magnetising) current I_0 [A]; default 0.35·I_N (common practice)

    Method: the current has a magnetising part I_0 and a torque-producing part in quadrature that is
    proportional to torque: I(T) ≈ √(I_0² + (T/T_N)²·(I_N² − I_0²)). Approximation: constant flux
    (below base speed), saturation and the rise of torque current near breakdown ignored.

    References
    ----------
    docs/references.md R22 (vector decomposition of stator current, drives textbooks; the 0.35 default is common
    practice).
    """
    i0 = _magnetising(rated_current, magnetising_current)
    return (i0**2 + (torque / rated_torque) ** 2 * (rated_current**2 - i0**2)) ** 0.5


@method(
    returns="torque",
    current="current",
    rated_torque="torque",
    rated_current="current",
    magnetising_current="current",
)
def induction_torque_at_current(
    current: float, rated_torque: float, rated_current: float, magnetising_current: float | None = None
) -> float:
    """Return the torque [N*m] an induction motor gives at a stator current, at rated flux.

    Parameters
    ----------
    current : stator current [A]
    rated_torque : rated torque T_N [N*m]
    rated_current : rated current I_N [A]
    magnetising_current : magnetising current I_0 [A]; default 0.35·I_N (common practice)

    Method: inverse of :func:`induction_current_at_torque`, T(I) ≈ T_N·√((I² − I_0²)/(I_N² − I_0²));
    zero when I ≤ I_0. Same approximation (constant flux, no saturation).

    References
    ----------
    docs/references.md R07 (drives textbooks; default I_0 common practice).
    """
    i0 = _magnetising(rated_current, magnetising_current)
    torque_share = np.maximum(np.asarray(current, dtype=float) ** 2 - i0**2, 0.0) / (rated_current**2 - i0**2)
    result = rated_torque * np.sqrt(torque_share)
    return float(result) if np.ndim(result) == 0 else result


# --- field weakening and cooling ------------------------------------------------


def _base_over_speed(base_speed: float, speed: float | np.ndarray) -> float | np.ndarray:
    """n_b/n above base speed, 1 at or below it."""
    s = np.abs(np.asarray(speed, dtype=float))
    ratio = np.ones_like(s)
    above = s > base_speed
    ratio[above] = base_speed / s[above]
    return float(ratio) if ratio.ndim == 0 else ratio


@method(returns="torque", breakdown_torque="torque", base_speed="rotational_speed", speed="rotational_speed")
def breakdown_torque_field_weakening(breakdown_torque: float, base_speed: float, speed: float) -> float:
    """Return the breakdown (pull-out) torque [N*m] of an induction motor at a speed, with field weakening.

    Parameters
    ----------
    breakdown_torque : breakdown torque at rated voltage and frequency T_bd,N [N*m]
    base_speed : base speed n_b [rad/s] (where the drive reaches full voltage)
    speed : shaft speed [rad/s]

    Method: T_bd(n) ≈ T_bd,N·(n_b/n)² above base speed (flux ∝ V/f and T_bd ∝ (V/f)²); T_bd,N below.

    References
    ----------
    docs/references.md R18 and pitfall 24 (torque ∝ (V/f)², drives textbooks; from memory for the exact exponent at
    high speed where stator resistance is negligible).
    """
    return breakdown_torque * _base_over_speed(base_speed, speed) ** 2


@method(returns="torque", rated_torque="torque", base_speed="rotational_speed", speed="rotational_speed")
def continuous_torque_field_weakening(rated_torque: float, base_speed: float, speed: float) -> float:
    """Return the continuous torque capability [N*m] of a motor at a speed, constant power above base speed.

    Parameters
    ----------
    rated_torque : rated torque T_N [N*m]
    base_speed : base speed n_b [rad/s]
    speed : shaft speed [rad/s]

    Method: T_cont(n) ≈ T_N·n_b/n above base speed (rated current at reduced flux); T_N below.
    Cooling derating below base speed is separate: :func:`self_ventilated_cooling_factor`.

    References
    ----------
    docs/references.md R06 (k_fw) and R18 (drives textbooks, common practice).
    """
    return rated_torque * _base_over_speed(base_speed, speed)


@method(
    returns="rotational_speed",
    base_speed="rotational_speed",
    breakdown_torque="torque",
    rated_torque="torque",
    margin="fraction",
)
def constant_power_speed_limit(
    base_speed: float, breakdown_torque: float, rated_torque: float, margin: float = 1.3
) -> float:
    """Return the highest speed [rad/s] to which an induction motor can hold constant power.

    Parameters
    ----------
    base_speed : base speed n_b [rad/s]
    breakdown_torque : breakdown torque T_bd,N [N*m]
    rated_torque : rated torque T_N [N*m]
    margin : required margin of breakdown torque over load torque [1]; default 1.3 (common practice)

    Method: constant power T_N·n_b/n meets T_bd,N·(n_b/n)²/margin at n = n_b·(T_bd,N/T_N)/margin.

    References
    ----------
    docs/references.md R18 and K38 (derived; the 1.3 margin is common practice).
    """
    return base_speed * (breakdown_torque / rated_torque) / margin


# Default k_cool for a self-ventilated (IC411) motor on an inverter, constant-torque load, no manufacturer
# curve: docs/references.md R06 (common practice, to be replaced by manufacturer data).
_COOLING_SPEED_RATIO = (0.1, 0.33, 0.5, 0.8)
_COOLING_FACTOR = (0.60, 0.75, 0.85, 1.00)
_COOLING_FACTOR_NOT_INVERTER_RATED = 0.95
_COOLING_NEAR_STANDSTILL = 0.50


@method(returns="fraction", speed_ratio="fraction", constant_torque_limit="fraction")
def self_ventilated_cooling_factor(
    speed_ratio: float, inverter_rated: bool = True, constant_torque_limit: float | None = None
) -> float:
    """Return the cooling derating factor k_cool [1] of a self-ventilated motor at a speed ratio n/n_b.

    Parameters
    ----------
    speed_ratio : shaft speed over base speed, n/n_b [1]; a float or an array
    inverter_rated : False for a motor not rated for inverter supply (0.95 instead of 1.00 at n/n_b ≥ 0.8,
        for PWM harmonic losses)
    constant_torque_limit : lowest n/n_b of a declared constant-torque range (forced ventilation IC416,
        or a rating such as "CT 10:1" → 0.1); k_cool = 1 down to it

    Method: table 0.1 → 0.60, 0.33 → 0.75, 0.5 → 0.85, ≥ 0.8 → 1.00, interpolated linearly; below 0.1 the
    factor is 0.50 (continuous running near standstill deserves its own warning).

    References
    ----------
    docs/references.md R06 default k_cool (common practice; IEC 60034-17, IEC TS 60034-25 and NEMA MG 1 Parts 30/31
    state the need, from memory). Replace with the manufacturer's curve where one exists.
    """
    ratio = np.abs(np.asarray(speed_ratio, dtype=float))
    top = 1.0 if inverter_rated else _COOLING_FACTOR_NOT_INVERTER_RATED
    cool = np.interp(ratio, _COOLING_SPEED_RATIO, (*_COOLING_FACTOR[:-1], top))
    cool = np.where(ratio < _COOLING_SPEED_RATIO[0], _COOLING_NEAR_STANDSTILL, cool)
    if constant_torque_limit is not None:
        cool = np.where(ratio >= constant_torque_limit, 1.0, cool)
    return float(cool) if cool.ndim == 0 else cool


def continuous_torque_capability(
    speed: float | np.ndarray,
    rated_torque: float,
    base_speed: float,
    *,
    shaft_cooled: bool = False,
    inverter_rated: bool = True,
    constant_torque_limit: float | None = None,
    stall_torque: float | None = None,
    site_factor: float = 1.0,
) -> float | np.ndarray:
    """Return the continuous torque capability T_cont(n) [N*m] of a motor at a shaft speed (float or array).

    Parameters
    ----------
    speed : shaft speed [rad/s] (its magnitude counts)
    rated_torque : rated torque T_N [N*m]
    base_speed : base speed n_b [rad/s]
    shaft_cooled : the motor's fan turns with the shaft and the speed is varied (a self-ventilated induction
        motor on a drive): k_cool of :func:`self_ventilated_cooling_factor` applies below base speed
    inverter_rated, constant_torque_limit : as for :func:`self_ventilated_cooling_factor`
        (a forced-ventilated motor has a constant-torque range down to 0)
    stall_torque : standstill torque T_0 of a PM servo motor [N*m]; the capability then falls linearly from T_0
        to T_N at base speed, and as T_N·n_b/n above it
    site_factor : k_env, the site derating for altitude and ambient [1]

    Method: T_cont(n) = T_N·k_cool(n/n_b)·k_fw(n)·k_env, k_fw = n_b/n above base speed (constant power at
    rated current, reduced flux), 1 below; PM servo: T_0 + (T_N − T_0)·n/n_b up to n_b.

    References
    ----------
    docs/references.md R06 (k_cool, k_fw, k_env; common practice) and R18 (field weakening, drives textbooks);
    servo motor datasheets give T_0 and T_N as the ends of the continuous (S1) curve (common practice).
    """
    ratio = np.abs(np.asarray(speed, dtype=float)) / base_speed
    if stall_torque is not None:
        below = stall_torque + (rated_torque - stall_torque) * np.minimum(ratio, 1.0)
        torque = np.where(ratio <= 1.0, below, rated_torque / np.maximum(ratio, 1e-9)) * site_factor
    else:
        cool = self_ventilated_cooling_factor(ratio, inverter_rated, constant_torque_limit) if shaft_cooled else 1.0
        weakening = np.where(ratio > 1.0, 1.0 / np.maximum(ratio, 1e-9), 1.0)
        torque = rated_torque * cool * weakening * site_factor
    return float(torque) if np.ndim(torque) == 0 else torque


# --- permanent-magnet synchronous machines ---------------------------------------

BACK_EMF_CONVENTIONS = ("line-to-line-rms", "line-to-line-peak", "phase-rms", "phase-peak")
_TO_LINE_RMS = {
    "line-to-line-rms": 1.0,
    "line-to-line-peak": 1.0 / SQRT2,
    "phase-rms": SQRT3,
    "phase-peak": SQRT3 / SQRT2,
}


@method(returns="back_emf_constant", back_emf_constant="back_emf_constant", poles="fraction")
def back_emf_constant_line_rms(
    back_emf_constant: float,
    convention: str = "line-to-line-rms",
    poles: float | None = None,
    per_electrical_radian: bool = False,
) -> float:
    """Return a back-EMF constant [V*s/rad] normalised to line-to-line RMS volts per mechanical rad/s.

    Parameters
    ----------
    back_emf_constant : the datasheet value already in V*s/rad (``98 V/krpm`` parses to 0.9358 V*s/rad)
    convention : one of ``line-to-line-rms``, ``line-to-line-peak``, ``phase-rms``, ``phase-peak``
    poles : number of poles p, needed only when the constant is per electrical rad/s
    per_electrical_radian : True when the datasheet value is per electrical rad/s (ω_e = (p/2)·ω_m)

    Method: Ke_LL = √3·Ke_ph; RMS = peak/√2; per mechanical rad/s = per electrical rad/s × p/2.

    References
    ----------
    docs/references.md pitfall 7 (sinusoidal PMSM relations, derived).
    """
    if convention not in _TO_LINE_RMS:
        raise ValueError(f"unknown back-EMF convention {convention!r}; use one of {', '.join(BACK_EMF_CONVENTIONS)}")
    value = back_emf_constant * _TO_LINE_RMS[convention]
    if per_electrical_radian:
        if poles is None:
            raise ValueError("a back-EMF constant per electrical rad/s needs the number of poles")
        value *= poles / 2.0
    return value


@method(returns="voltage", back_emf_constant="back_emf_constant", speed="rotational_speed")
def back_emf_at_speed(back_emf_constant: float, speed: float) -> float:
    """Return the line-to-line RMS back-EMF [V] of a PM machine at a shaft speed.

    Parameters
    ----------
    back_emf_constant : Ke, line-to-line RMS [V*s/rad] (see :func:`back_emf_constant_line_rms`)
    speed : shaft speed [rad/s]

    Method: E = Ke·ω (E_LL,rms = Ke[V/krpm]·n/1000).

    References
    ----------
    docs/references.md R19 and K37 (derived).
    """
    return back_emf_constant * speed


@method(returns="torque_constant", back_emf_constant="back_emf_constant")
def torque_constant_from_back_emf(back_emf_constant: float) -> float:
    """Return the torque constant Kt [N*m/A] (per RMS ampere) of a sinusoidal PM machine from Ke.

    Parameters
    ----------
    back_emf_constant : Ke, line-to-line RMS [V*s/rad]

    Method: Kt = √3·Ke_LL,rms = 3·Ke_ph,rms (power balance 3·E_ph·I = T·ω for sinusoidal EMF and current
    in phase). Shortcut Kt ≈ Ke[V/krpm]/60.46.

    References
    ----------
    docs/references.md pitfall 7 and K36 (derived).
    """
    return SQRT3 * back_emf_constant


@method(returns="rotational_speed", back_emf_constant="back_emf_constant", voltage="voltage")
def speed_at_back_emf(back_emf_constant: float, voltage: float) -> float:
    """Return the shaft speed [rad/s] at which the back-EMF reaches a line-to-line RMS voltage.

    Parameters
    ----------
    back_emf_constant : Ke, line-to-line RMS [V*s/rad]
    voltage : available line-to-line RMS voltage [V]

    Method: ω = V/Ke.

    References
    ----------
    docs/references.md R19 (derived).
    """
    return voltage / back_emf_constant


@method(
    returns="voltage", back_emf_constant="back_emf_constant", speed="rotational_speed", cold_factor="fraction"
)
def uncontrolled_generation_voltage(back_emf_constant: float, speed: float, cold_factor: float = 1.05) -> float:
    """Return the DC-link voltage [V] a PM machine drives through the inverter diodes when modulation stops.

    Parameters
    ----------
    back_emf_constant : Ke, line-to-line RMS [V*s/rad]
    speed : highest shaft speed reachable [rad/s], including overspeed, coasting and overhauling
    cold_factor : Ke rise with cold magnets and tolerance [1]; default 1.05 (from memory, docs/references.md R20)

    Method: V_UCG = √2·Ke·ω·k_cold (the diode bridge charges the link to the line-to-line peak).

    References
    ----------
    docs/references.md R20 and K37 (rectified DC = √2 × line-to-line back-EMF; k_cold from memory).
    """
    return SQRT2 * back_emf_constant * speed * cold_factor


@method(
    returns="rotational_speed",
    back_emf_constant="back_emf_constant",
    dc_voltage="voltage",
    cold_factor="fraction",
)
def uncontrolled_generation_speed_limit(
    back_emf_constant: float, dc_voltage: float, cold_factor: float = 1.05
) -> float:
    """Return the highest shaft speed [rad/s] at which uncontrolled generation stays below a DC voltage.

    Parameters
    ----------
    back_emf_constant : Ke, line-to-line RMS [V*s/rad]
    dc_voltage : DC-link limit, e.g. the overvoltage trip [V]
    cold_factor : cold-magnet factor [1]; default 1.05 (from memory)

    Method: inverse of :func:`uncontrolled_generation_voltage`.

    References
    ----------
    docs/references.md R20 and K37 (derived).
    """
    return dc_voltage / (SQRT2 * back_emf_constant * cold_factor)


# --- DC machines -------------------------------------------------------------------


@method(returns="voltage", flux_constant="back_emf_constant", speed="rotational_speed")
def dc_back_emf(flux_constant: float, speed: float) -> float:
    """Return the armature back-EMF [V] of a DC machine.

    Parameters
    ----------
    flux_constant : k·Φ, machine constant times flux per pole [V*s/rad] (equal to N*m/A)
    speed : shaft speed [rad/s]

    Method: E = k·Φ·ω.

    References
    ----------
    DC machine EMF equation, electric-machines textbooks (e.g. Chapman, Electric Machinery Fundamentals,
    ch. on DC machines; from memory for the chapter).
    """
    return flux_constant * speed


def faraday_emf(turns: float, flux_change: float, duration: float) -> float:
    """Return the mean EMF [V] induced in a coil by a change of linked flux.

    Parameters
    ----------
    turns : number of turns N [1]
    flux_change : change of flux ΔΦ [Wb]
    duration : time over which it changes [s]

    Method: Faraday's law, e = N·dΦ/dt, here averaged: E = N·ΔΦ/Δt (sign per Lenz's law omitted).

    References
    ----------
    Faraday's law of induction (physics textbooks).
    """
    return turns * flux_change / duration


@method(
    returns="voltage",
    back_emf="voltage",
    armature_current="current",
    armature_resistance="resistance",
    brush_drop="voltage",
)
def dc_armature_voltage(
    back_emf: float, armature_current: float, armature_resistance: float, brush_drop: float = 2.0
) -> float:
    """Return the armature terminal voltage [V] a DC motor needs at a back-EMF and armature current.

    Parameters
    ----------
    back_emf : E [V]
    armature_current : I_a [A]
    armature_resistance : R_a, hot [Ω]
    brush_drop : total brush drop V_br [V]; default 2 V (common practice, docs/references.md R21)

    Method: V_a = E + I_a·R_a + V_br (motoring).

    References
    ----------
    DC machine voltage equation, electric-machines textbooks; docs/references.md R21 and K29.
    """
    return back_emf + armature_current * armature_resistance + brush_drop


@method(
    returns="voltage",
    armature_voltage="voltage",
    armature_current="current",
    armature_resistance="resistance",
    brush_drop="voltage",
)
def dc_back_emf_from_terminal(
    armature_voltage: float, armature_current: float, armature_resistance: float, brush_drop: float = 2.0
) -> float:
    """Return the back-EMF [V] of a DC motor from its terminal voltage and armature current.

    Parameters
    ----------
    armature_voltage : V_a [V]
    armature_current : I_a [A]
    armature_resistance : R_a [Ω]
    brush_drop : V_br [V]; default 2 V (common practice)

    Method: E = V_a − I_a·R_a − V_br.

    References
    ----------
    DC machine voltage equation; docs/references.md R21 and K29.
    """
    return armature_voltage - armature_current * armature_resistance - brush_drop


@method(
    returns="current",
    armature_voltage="voltage",
    back_emf="voltage",
    armature_resistance="resistance",
    brush_drop="voltage",
)
def dc_armature_current(
    armature_voltage: float, back_emf: float, armature_resistance: float, brush_drop: float = 2.0
) -> float:
    """Return the armature current [A] of a DC motor at a terminal voltage and back-EMF.

    Parameters
    ----------
    armature_voltage : V_a [V]
    back_emf : E [V]
    armature_resistance : R_a [Ω]
    brush_drop : V_br [V]; default 2 V (common practice)

    Method: I_a = (V_a − E − V_br)/R_a.

    References
    ----------
    DC machine voltage equation; docs/references.md K29.
    """
    return (armature_voltage - back_emf - brush_drop) / armature_resistance


@method(
    returns="voltage",
    rated_back_emf="voltage",
    rated_speed="rotational_speed",
    speed="rotational_speed",
    field_ratio="fraction",
)
def dc_back_emf_at_speed(rated_back_emf: float, rated_speed: float, speed: float, field_ratio: float = 1.0) -> float:
    """Return the back-EMF [V] of a DC machine at a speed and field (flux) ratio.

    Parameters
    ----------
    rated_back_emf : E_N at rated speed and flux [V]
    rated_speed : n_N [rad/s]
    speed : shaft speed [rad/s]
    field_ratio : Φ/Φ_N [1]; below 1 in field weakening

    Method: E(n) = E_N·(n/n_N)·(Φ/Φ_N), since E = k·Φ·ω.

    References
    ----------
    docs/references.md R21 and pitfall 30 (DC machine EMF equation).
    """
    return rated_back_emf * (speed / rated_speed) * field_ratio


@method(returns="current", torque="torque", flux_constant="back_emf_constant")
def dc_armature_current_for_torque(torque: float, flux_constant: float) -> float:
    """Return the armature current [A] a DC motor needs for a torque.

    Parameters
    ----------
    torque : electromagnetic torque [N*m]
    flux_constant : k·Φ [V*s/rad] = [N*m/A]

    Method: T = k·Φ·I_a, so I_a = T/(k·Φ).

    References
    ----------
    DC machine torque equation; docs/references.md R22.
    """
    return torque / flux_constant


# --- IEC 60034-30-1 efficiency classes --------------------------------------------


@dataclass(frozen=True)
class EfficiencyLimit:
    """One minimum efficiency of an IE class, and how it was found."""

    efficiency: float  # [1]
    interpolated: bool  # False: a tabulated rated output; True: between two tabulated outputs
    source: str


_IEC_60034_30_1 = "IEC 60034-30-1:2014 efficiency tables (from memory, docs/references.md K24)"
# a 60 Hz rating given in hp matches its row when within this share of the row's hp or kW value: the table's kW
# column is the hp rating rounded to a preferred kW value (125 hp = 93.2 kW sits in the 90 kW row)
_ROW_MATCH_60HZ = 0.02
_HP = 745.69987158  # W, docs/references.md K01


def _ie_class_number(ie_class: int | float | str) -> int:
    text = str(ie_class).strip().upper()
    text = text[2:] if text.startswith("IE") else text
    try:
        number = int(float(text))
    except ValueError:
        raise ValueError(f"unknown efficiency class {ie_class!r}; write IE1 to IE4") from None
    if number not in (1, 2, 3, 4):
        raise ValueError(f"unknown efficiency class {ie_class!r}; write IE1 to IE4")
    return number


def _between(kw: float, outputs: tuple[float, ...], values: tuple[float, ...]) -> tuple[float, bool]:
    """The value at ``kw``: a row's own value, or linear in log10(P) between the neighbouring rows, to 0.1 %."""
    for k, out in enumerate(outputs):
        if math.isclose(kw, out, rel_tol=1e-6):
            return values[k], False
        if kw < out:
            x = math.log10(kw / outputs[k - 1]) / math.log10(out / outputs[k - 1])
            return round(values[k - 1] + x * (values[k] - values[k - 1]), 1), True
    raise AssertionError("unreachable: callers keep kw within the table")


def _limit_50hz(number: int, poles: int, kw: float) -> EfficiencyLimit | None:
    outputs = RATED_OUTPUTS_50HZ_KW
    if not outputs[0] * (1 - 1e-6) <= kw <= TOP_ROW_UP_TO_KW * (1 + 1e-6):
        return None
    values = TABLE_50HZ[number][poles]
    if kw >= outputs[-1]:
        return EfficiencyLimit(values[-1] / 100.0, False, _IEC_60034_30_1)
    value, interpolated = _between(kw, outputs, values)
    return EfficiencyLimit(value / 100.0, interpolated, _IEC_60034_30_1)


def _limit_60hz(number: int, poles: int, kw: float) -> EfficiencyLimit | None:
    if number not in TABLE_60HZ:
        return None
    values = TABLE_60HZ[number][poles]
    for k, (hp, row_kw) in enumerate(RATED_OUTPUTS_60HZ):
        if abs(kw / row_kw - 1) <= _ROW_MATCH_60HZ or abs(kw * 1000.0 / (hp * _HP) - 1) <= _ROW_MATCH_60HZ:
            return EfficiencyLimit(values[k] / 100.0, False, _IEC_60034_30_1)
    outputs = tuple(row_kw for _, row_kw in RATED_OUTPUTS_60HZ)
    if not outputs[0] < kw < outputs[-1]:
        return None
    value, _ = _between(kw, outputs, values)
    return EfficiencyLimit(value / 100.0, True, _IEC_60034_30_1)


def efficiency_class_entry(
    ie_class: int | str, rated_power: float, poles: float, frequency: float = 50.0
) -> EfficiencyLimit | None:
    """Return the IEC 60034-30-1 minimum efficiency of a class at a rated power [W] and poles, or None if not held.

    Parameters
    ----------
    ie_class : ``IE1`` … ``IE4`` or 1 … 4
    rated_power : rated output power [W]
    poles : number of poles (2, 4, 6 or 8; other pole numbers are outside the standard's tables)
    frequency : rated frequency [Hz]: 50 Hz (IE1–IE4, 0.12–1000 kW) or 60 Hz (IE2 and IE3, 0.75–150 kW held)

    Method: table look-up; between two tabulated rated outputs the value is interpolated linearly in
    log10(P_N) and rounded to 0.1 %. IEC 60034-30-1 gives a formula A·x³ + B·x² + C·x + D with x = log10(P_N/1 kW)
    for intermediate outputs; its coefficients are not held here, and the linear interpolation agrees with it
    within 0.1 point where they are known (tests/physics/test_efficiency_classes.py). Above 200 kW at 50 Hz
    the 200 kW value holds up to 1000 kW (the table's last row).

    References
    ----------
    IEC 60034-30-1:2014 efficiency tables (IE1–IE4 at 50 Hz; IE2/IE3 at 60 Hz = NEMA MG 1 Tables 12-11 and
    12-12, enclosed motors), all from memory: docs/references.md K24 and R30.
    """
    number = _ie_class_number(ie_class)
    if int(poles) != poles or int(poles) not in (2, 4, 6, 8) or rated_power <= 0:
        return None
    kw = rated_power / 1000.0
    if abs(frequency - 50.0) < 0.5:
        return _limit_50hz(number, int(poles), kw)
    if abs(frequency - 60.0) < 0.5:
        return _limit_60hz(number, int(poles), kw)
    return None


@method(returns="fraction", ie_class="fraction", rated_power="power", poles="fraction", frequency="frequency")
def efficiency_class_limit(
    ie_class: int | str,
    rated_power: float,
    poles: float,
    frequency: float = 50.0,
) -> float | None:
    """Return the minimum efficiency [1] of an IE class at a rated power, or None where no value is held.

    Parameters
    ----------
    ie_class : ``IE1`` … ``IE4`` or 1 … 4
    rated_power : rated output power [W]
    poles : number of poles
    frequency : rated frequency [Hz] (50 or 60 Hz)

    Method: table look-up with interpolation (:func:`efficiency_class_entry`).

    References
    ----------
    IEC 60034-30-1:2014 efficiency tables (from memory); docs/references.md K24 and R30.
    """
    entry = efficiency_class_entry(ie_class, rated_power, poles, frequency)
    return None if entry is None else entry.efficiency
