"""Mechanical transmission: torque and inertia across a ratio, screws, gearbox service factors.

The ratio i = n_motor/n_load, so i > 1 is a reduction. An efficiency η is the
motoring-direction efficiency; it moves to the other side of the equation when power
flows from the load back to the motor (pitfall 12).
"""

from __future__ import annotations

import math

import numpy as np

from rulecheck.physics._method import method


@method(returns="torque", load_torque="torque", ratio="fraction", efficiency="fraction")
def motor_torque_motoring(load_torque: float, ratio: float, efficiency: float) -> float:
    """Return the motor-shaft torque [N*m] that drives a load torque through a transmission (motoring).

    Parameters
    ----------
    load_torque : torque at the load shaft [N*m]
    ratio : i = n_motor/n_load [1]
    efficiency : transmission efficiency η [1]

    Method: T_m = T_L/(i·η) (losses are supplied by the motor).

    References
    ----------
    docs/references.md R06 and R33 (mechanics, common practice); pitfall 12.
    """
    return load_torque / (ratio * efficiency)


@method(returns="torque", load_torque="torque", ratio="fraction", efficiency="fraction")
def motor_torque_overhauling(load_torque: float, ratio: float, efficiency: float) -> float:
    """Return the motor-shaft torque [N*m] that holds back an overhauling load torque (regenerating).

    Parameters
    ----------
    load_torque : torque at the load shaft [N*m]
    ratio : i [1]
    efficiency : reverse (back-driving) efficiency η_rev [1]; for spur/helical gears ≈ the forward value

    Method: T_m = T_L·η/i (losses are supplied by the load).

    References
    ----------
    docs/references.md R33 (mechanics); pitfall 12.
    """
    return load_torque * efficiency / ratio


@method(
    returns="torque", load_torque="torque", load_speed="rotational_speed", ratio="fraction", efficiency="fraction"
)
def motor_torque_for_power_flow(load_torque: float, load_speed: float, ratio: float, efficiency: float) -> float:
    """Return the motor-shaft torque [N*m] for a load torque, with η on the side the power flow puts it.

    Parameters
    ----------
    load_torque : torque the load needs at its shaft, signed [N*m]
    load_speed : load shaft speed, signed [rad/s]
    ratio : i [1]
    efficiency : η, used in both directions [1]

    Method: motoring (T_L·ω_L ≥ 0) T_L/(i·η); overhauling (T_L·ω_L < 0) T_L·η/i. Works on arrays.

    References
    ----------
    docs/references.md R33 (mechanics); pitfall 12.
    """
    motoring = np.asarray(load_torque) * np.asarray(load_speed) >= 0
    result = np.where(motoring, load_torque / (ratio * efficiency), load_torque * efficiency / ratio)
    return float(result) if np.ndim(result) == 0 else result


@method(returns="inertia", inertia="inertia", ratio="fraction")
def reflected_inertia(inertia: float, ratio: float) -> float:
    """Return a load-side inertia [kg*m^2] referred to the motor shaft.

    Parameters
    ----------
    inertia : inertia at the load shaft [kg*m^2]
    ratio : i [1]

    Method: J_ref = J/i² (kinetic energy is the same on both sides; not J/i).

    References
    ----------
    docs/references.md R12 and pitfall 12 (mechanics).
    """
    return inertia / ratio**2


@method(returns="inertia", mass="mass", radius="length", ratio="fraction")
def reflected_inertia_of_mass_on_radius(mass: float, radius: float, ratio: float = 1.0) -> float:
    """Return the inertia [kg*m^2] at the motor shaft of a linearly moving mass driven by a drum, pulley or pinion.

    Parameters
    ----------
    mass : moving mass [kg]
    radius : drum, pulley or pinion radius [m]
    ratio : i between motor and that shaft [1]

    Method: J = m·r²/i² (v = ω·r).

    References
    ----------
    docs/references.md R12 (mechanics).
    """
    return mass * radius**2 / ratio**2


@method(returns="inertia", mass="mass", lead="length", ratio="fraction")
def reflected_inertia_of_mass_on_screw(mass: float, lead: float, ratio: float = 1.0) -> float:
    """Return the inertia [kg*m^2] at the motor shaft of a mass moved by a screw of a given lead.

    Parameters
    ----------
    mass : moving mass [kg]
    lead : screw lead (starts × pitch) [m per revolution]
    ratio : i between motor and screw [1]

    Method: J = m·(L/2π)²/i² (v = ω·L/2π).

    References
    ----------
    docs/references.md R12 and pitfall 13 (mechanics).
    """
    return mass * (lead / (2.0 * math.pi)) ** 2 / ratio**2


@method(returns="fraction", load_inertia="inertia", motor_inertia="inertia")
def inertia_ratio(load_inertia: float, motor_inertia: float) -> float:
    """Return the inertia ratio R_J [1] of a load inertia already referred to the motor shaft.

    Parameters
    ----------
    load_inertia : load inertia referred to the motor shaft [kg*m^2]
    motor_inertia : motor rotor inertia [kg*m^2]

    Method: R_J = J_L,ref/J_m.

    References
    ----------
    docs/references.md R12 and K43.
    """
    return load_inertia / motor_inertia


@method(returns="angle", lead="length", mean_diameter="length")
def screw_lead_angle(lead: float, mean_diameter: float) -> float:
    """Return the lead angle λ [rad] of a screw thread.

    Parameters
    ----------
    lead : lead [m]
    mean_diameter : mean (pitch) diameter [m]

    Method: tan λ = L/(π·d_m).

    References
    ----------
    Shigley's Mechanical Engineering Design, power screws (section 8-2; from memory for the section).
    """
    return math.atan(lead / (math.pi * mean_diameter))


@method(returns="angle", friction_coefficient="fraction", thread_angle="angle")
def screw_friction_angle(friction_coefficient: float, thread_angle: float = 0.0) -> float:
    """Return the friction angle φ′ [rad] of a screw thread.

    Parameters
    ----------
    friction_coefficient : thread friction coefficient μ [1]
    thread_angle : half the thread angle α (0 for square threads, 14.5° for Acme, 15° for trapezoidal) [rad]

    Method: tan φ′ = μ/cos α (the normal force on an inclined flank is larger by 1/cos α; the small
    difference between α and the normal-plane angle α_n is neglected).

    References
    ----------
    Shigley's Mechanical Engineering Design, power screws, Acme thread correction (from memory).
    """
    return math.atan(friction_coefficient / math.cos(thread_angle))


@method(returns="fraction", lead_angle="angle", friction_angle="angle")
def screw_efficiency(lead_angle: float, friction_angle: float) -> float:
    """Return the forward efficiency [1] of a screw turning rotation into thrust.

    Parameters
    ----------
    lead_angle : λ [rad]
    friction_angle : φ′ [rad]

    Method: η = tan λ / tan(λ + φ′) (thread only; collar or thrust-bearing friction not included).

    References
    ----------
    Shigley's Mechanical Engineering Design, power screws (from memory); docs/references.md R33.
    """
    return math.tan(lead_angle) / math.tan(lead_angle + friction_angle)


@method(returns="fraction", lead_angle="angle", friction_angle="angle")
def screw_reverse_efficiency(lead_angle: float, friction_angle: float) -> float:
    """Return the reverse efficiency [1] of a screw back-driven by its thrust; 0 when it is self-locking.

    Parameters
    ----------
    lead_angle : λ [rad]
    friction_angle : φ′ [rad]

    Method: η_rev = tan(λ − φ′)/tan λ, and 0 when λ ≤ φ′ (the load cannot turn the screw).

    References
    ----------
    Shigley's Mechanical Engineering Design, power screws, self-locking condition (from memory); docs/references.md R33.
    """
    if lead_angle <= friction_angle:
        return 0.0
    return math.tan(lead_angle - friction_angle) / math.tan(lead_angle)


def screw_is_self_locking(lead_angle: float, friction_angle: float) -> bool:
    """Return True when a screw cannot be back-driven by its thrust (static friction, no vibration).

    Parameters
    ----------
    lead_angle : λ [rad]
    friction_angle : φ′ [rad]

    Method: self-locking if λ ≤ φ′. Vibration and lower running friction can still let it creep: never
    rely on self-locking to hold a suspended load (docs/references.md R33, safety caution 3).

    References
    ----------
    Shigley's Mechanical Engineering Design, power screws (from memory).
    """
    return lead_angle <= friction_angle


@method(
    returns="torque", force="force", lead="length", mean_diameter="length", friction_coefficient="fraction"
)
def square_thread_raise_torque(force: float, lead: float, mean_diameter: float, friction_coefficient: float) -> float:
    """Return the thread torque [N*m] to raise a load with a square-thread power screw (collar excluded).

    Parameters
    ----------
    force : axial load [N]
    lead : lead [m]
    mean_diameter : mean thread diameter d_m [m]
    friction_coefficient : thread friction μ [1]

    Method: T_R = F·d_m/2·(L + π·μ·d_m)/(π·d_m − μ·L).

    References
    ----------
    Shigley's Mechanical Engineering Design, power-screw torque equation (eq. 8-1, from memory).
    """
    return force * mean_diameter / 2.0 * (lead + math.pi * friction_coefficient * mean_diameter) / (
        math.pi * mean_diameter - friction_coefficient * lead
    )


@method(
    returns="torque", force="force", lead="length", mean_diameter="length", friction_coefficient="fraction"
)
def square_thread_lower_torque(force: float, lead: float, mean_diameter: float, friction_coefficient: float) -> float:
    """Return the thread torque [N*m] to lower a load with a square-thread power screw; negative if it back-drives.

    Parameters
    ----------
    force : axial load [N]
    lead : lead [m]
    mean_diameter : mean thread diameter d_m [m]
    friction_coefficient : thread friction μ [1]

    Method: T_L = F·d_m/2·(π·μ·d_m − L)/(π·d_m + μ·L); a negative value means the load turns the screw.

    References
    ----------
    Shigley's Mechanical Engineering Design, power-screw torque equation (eq. 8-2, from memory).
    """
    return force * mean_diameter / 2.0 * (math.pi * friction_coefficient * mean_diameter - lead) / (
        math.pi * mean_diameter + friction_coefficient * lead
    )


@method(
    returns="fraction",
    rated_output_torque="torque",
    motor_rated_torque="torque",
    ratio="fraction",
    efficiency="fraction",
)
def gearbox_service_factor(
    rated_output_torque: float, motor_rated_torque: float, ratio: float, efficiency: float
) -> float:
    """Return the manufacturer-style service factor [1] of a gearbox behind a motor.

    Parameters
    ----------
    rated_output_torque : gearbox rated output torque T_2,rated [N*m]
    motor_rated_torque : motor rated torque T_m,N [N*m]
    ratio : i [1]
    efficiency : η [1]

    Method: SF = T_2,rated/(T_m,N·i·η).

    References
    ----------
    docs/references.md R31 (gearmotor catalogue practice).
    """
    return rated_output_torque / (motor_rated_torque * ratio * efficiency)


# Application service factors for an electric-motor prime mover: (hours per day up to, [uniform, moderate shock,
# heavy shock]). The classic gear-unit table (AGMA-style, common practice; docs/references.md R31, K32).
_SERVICE_FACTOR_ROWS = (
    (3.0, (0.8, 1.0, 1.5)),
    (10.0, (1.0, 1.25, 1.75)),
    (24.0, (1.25, 1.5, 2.0)),
)
_LOAD_CLASSES = {"uniform": 0, "moderate": 1, "heavy": 2, "moderate-shock": 1, "heavy-shock": 2}
GEARMOTOR_CLASS_SERVICE_FACTOR = {"I": 1.0, "II": 1.4, "III": 2.0}


def application_service_factor(hours_per_day: float, load_class: str) -> float:
    """Return the application service factor [1] of a gear unit driven by an electric motor.

    Parameters
    ----------
    hours_per_day : running time [h/day], 0 to 24
    load_class : ``uniform``, ``moderate`` (moderate shock) or ``heavy`` (heavy shock)

    Method: table look-up, the first row whose hours cover the duty: up to 3 h/day 0.8 / 1.0 / 1.5, up to
    10 h/day 1.0 / 1.25 / 1.75, more (to 24 h/day) 1.25 / 1.5 / 2.0 (uniform / moderate / heavy shock). Shorter
    occasional duty is held to the 3 h row. Frequent starts and reversals are not in the table (the maker's
    start factor applies).

    References
    ----------
    Classic gear-unit service-factor table for an electric-motor prime mover (AGMA-style; common practice, the
    clause not verified): docs/references.md R31 and K32.
    """
    if load_class not in _LOAD_CLASSES:
        raise ValueError(f"unknown load class {load_class!r}; use uniform, moderate or heavy")
    if not 0.0 <= hours_per_day <= 24.0:
        raise ValueError("hours per day must be between 0 and 24")
    column = _LOAD_CLASSES[load_class]
    for hours, factors in _SERVICE_FACTOR_ROWS:
        if hours_per_day <= hours:
            return factors[column]
    raise AssertionError("unreachable: the last row covers 24 h")


# Element factors for the pull of a transmission element on its shaft (common practice; docs/references.md R31).
ELEMENT_FACTORS = {"chain": 1.0, "gear": 1.25, "v-belt": 1.5, "flat-belt": 2.5}


@method(returns="force", torque="torque", pitch_diameter="length", element_factor="fraction")
def overhung_load(torque: float, pitch_diameter: float, element_factor: float) -> float:
    """Return the radial (overhung) load [N] a sprocket, pinion or pulley puts on its shaft.

    Parameters
    ----------
    torque : torque the element transmits [N*m]
    pitch_diameter : pitch diameter of the element [m]
    element_factor : f_z for the element's extra pull (chain 1.0, gear 1.25, V-belt 1.5, flat belt 2.5) [1]

    Method: F_R = 2·T/d·f_z: the tangential force T/(d/2), raised by the element factor for belt pre-tension,
    chain sag and tooth separating force.

    References
    ----------
    Statics (F = T/r); element factors: gear-unit catalogue practice (common practice), docs/references.md R31.
    """
    return 2.0 * torque / pitch_diameter * element_factor


def combined_efficiency(stage_efficiencies: list[float]) -> float:
    """Return the efficiency [1] of stages in series.

    Parameters
    ----------
    stage_efficiencies : efficiency of each stage [1]

    Method: η = Π η_k (per-stage efficiencies multiply; pitfall 12).

    References
    ----------
    docs/references.md pitfall 12 (mechanics).
    """
    return math.prod(stage_efficiencies)
