"""Load models at the load shaft: torque against speed, forces of conveyors, hoists and screws.

Torque-speed models accept a numpy array of speeds as well as a float.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any

import numpy as np

from rulecheck.physics._method import method

STANDARD_GRAVITY = 9.80665  # m/s^2, 3rd CGPM (1901); scipy.constants.g


def _scalar_or_array(value: np.ndarray) -> float | np.ndarray:
    return float(value) if np.ndim(value) == 0 else value


@method(returns="torque", torque="torque", speed="rotational_speed")
def constant_torque(torque: float, speed: float) -> float:
    """Return the load torque [N*m] of a constant-torque load at a speed (the same at every speed).

    Parameters
    ----------
    torque : the load torque [N*m]
    speed : shaft speed [rad/s]; a float or an array

    Method: T(n) = T (conveyors, positive-displacement pumps, extruders; pitfall 26).

    References
    ----------
    docs/references.md R34 (common practice).
    """
    return _scalar_or_array(np.full(np.shape(speed), float(torque)))


@method(
    returns="torque",
    speed="rotational_speed",
    rated_torque="torque",
    rated_speed="rotational_speed",
    breakaway_torque="torque",
)
def quadratic_torque(speed: float, rated_torque: float, rated_speed: float, breakaway_torque: float = 0.0) -> float:
    """Return the load torque [N*m] of a centrifugal pump or fan at a speed.

    Parameters
    ----------
    speed : shaft speed [rad/s]; a float or an array
    rated_torque : torque at the reference speed (usually the maximum speed) [N*m]
    rated_speed : reference speed [rad/s]
    breakaway_torque : torque at standstill (typically 5–15 % of rated) [N*m]

    Method: T(n) = T_0 + (T_N − T_0)·(n/n_N)², so T(0) = T_0 and T(n_N) = T_N; without breakaway this is
    the affinity law T ∝ n².

    References
    ----------
    Centrifugal pump affinity laws (pump handbooks); breakaway term common practice (docs/references.md R34, K27).
    """
    ratio = np.asarray(speed, dtype=float) / rated_speed
    return _scalar_or_array(breakaway_torque + (rated_torque - breakaway_torque) * ratio**2)


def affinity_scale(value: float, speed_from: float, speed_to: float, exponent: int) -> float:
    """Return a centrifugal-machine quantity scaled from one speed to another.

    Parameters
    ----------
    value : the quantity at ``speed_from`` (flow: exponent 1; head or torque: 2; power: 3)
    speed_from : speed of the known point [any speed unit, the same as speed_to]
    speed_to : speed of the point wanted
    exponent : 1, 2 or 3

    Method: affinity laws, Q ∝ n, H ∝ n², P ∝ n³ (same impeller, same fluid). Not for positive-displacement
    machines (pitfall 26).

    References
    ----------
    Centrifugal pump affinity laws (pump handbooks); docs/references.md K27.
    """
    return value * (speed_to / speed_from) ** exponent


@method(returns="power", power="power", speed_from="rotational_speed", speed_to="rotational_speed")
def affinity_power(power: float, speed_from: float, speed_to: float) -> float:
    """Return the shaft power [W] of a centrifugal pump or fan at a new speed.

    Parameters
    ----------
    power : power at the known speed [W]
    speed_from : known speed [rad/s]
    speed_to : new speed [rad/s]

    Method: P₂ = P₁·(n₂/n₁)³.

    References
    ----------
    Affinity laws (pump handbooks); docs/references.md K27.
    """
    return affinity_scale(power, speed_from, speed_to, 3)


@method(returns="length", head="length", speed_from="rotational_speed", speed_to="rotational_speed")
def affinity_head(head: float, speed_from: float, speed_to: float) -> float:
    """Return the head [m] of a centrifugal pump at a new speed.

    Parameters
    ----------
    head : head at the known speed [m]
    speed_from : known speed [rad/s]
    speed_to : new speed [rad/s]

    Method: H₂ = H₁·(n₂/n₁)².

    References
    ----------
    Affinity laws (pump handbooks); docs/references.md K27.
    """
    return affinity_scale(head, speed_from, speed_to, 2)


# --- constant power: centre winder ------------------------------------------------


@method(returns="torque", tension="force", diameter="length")
def winder_torque(tension: float, diameter: float) -> float:
    """Return the shaft torque [N*m] of a centre winder at a roll diameter.

    Parameters
    ----------
    tension : web tension F_t [N]
    diameter : roll diameter D [m]

    Method: T(D) = F_t·D/2.

    References
    ----------
    docs/references.md R34 (mechanics).
    """
    return tension * diameter / 2.0


@method(returns="rotational_speed", line_speed="velocity", diameter="length")
def winder_speed(line_speed: float, diameter: float) -> float:
    """Return the shaft speed [rad/s] of a centre winder at a roll diameter.

    Parameters
    ----------
    line_speed : web speed v [m/s]
    diameter : roll diameter D [m]

    Method: ω = 2·v/D (n = 60·v/(π·D) in r/min).

    References
    ----------
    docs/references.md R34 (kinematics).
    """
    return 2.0 * line_speed / diameter


@method(returns="power", tension="force", line_speed="velocity")
def winder_power(tension: float, line_speed: float) -> float:
    """Return the web power [W] of a centre winder, the same at every roll diameter.

    Parameters
    ----------
    tension : web tension [N]
    line_speed : web speed [m/s]

    Method: P = F_t·v = T(D)·ω(D).

    References
    ----------
    docs/references.md R34 (mechanics).
    """
    return tension * line_speed


@method(
    returns="inertia",
    core_inertia="inertia",
    density="density",
    width="length",
    diameter="length",
    core_diameter="length",
)
def roll_inertia(core_inertia: float, density: float, width: float, diameter: float, core_diameter: float) -> float:
    """Return the inertia [kg*m^2] of a wound roll on its core.

    Parameters
    ----------
    core_inertia : inertia of the core and shaft [kg*m^2]
    density : density of the wound material [kg/m^3]
    width : roll width [m]
    diameter : outer roll diameter D [m]
    core_diameter : core outer diameter d [m]

    Method: hollow cylinder, J = J_core + (π·ρ·w/32)·(D⁴ − d⁴).

    References
    ----------
    Moment of inertia of a hollow cylinder (mechanics handbooks); docs/references.md R34.
    """
    return core_inertia + math.pi * density * width / 32.0 * (diameter**4 - core_diameter**4)


# --- belt conveyor -------------------------------------------------------------------


@method(returns="force", mass="mass", incline="angle", friction_coefficient="fraction", extra_force="force")
def conveyor_force(mass: float, incline: float, friction_coefficient: float, extra_force: float = 0.0) -> float:
    """Return the steady belt pull [N] of a conveyor.

    Parameters
    ----------
    mass : moving mass, belt and material [kg]
    incline : incline angle θ, positive uphill [rad]
    friction_coefficient : rolling/sliding friction coefficient μ [1]
    extra_force : other resistances F_x (skirts, scrapers) [N]

    Method: F = m·g·(μ·cos θ + sin θ) + F_x.

    References
    ----------
    docs/references.md R34 (mechanics, inclined plane with friction).
    """
    return mass * STANDARD_GRAVITY * (friction_coefficient * np.cos(incline) + np.sin(incline)) + extra_force


@method(returns="torque", force="force", diameter="length")
def pulley_torque(force: float, diameter: float) -> float:
    """Return the shaft torque [N*m] of a drive pulley, drum or pinion transmitting a tangential force.

    Parameters
    ----------
    force : tangential force [N]
    diameter : pulley diameter [m]

    Method: T = F·D/2.

    References
    ----------
    docs/references.md R34 (mechanics).
    """
    return force * diameter / 2.0


@method(returns="rotational_speed", line_speed="velocity", diameter="length")
def pulley_speed(line_speed: float, diameter: float) -> float:
    """Return the shaft speed [rad/s] of a pulley or drum for a belt or rope speed.

    Parameters
    ----------
    line_speed : belt or rope speed [m/s]
    diameter : pulley or drum diameter [m]

    Method: ω = 2·v/D.

    References
    ----------
    Kinematics (docs/references.md R34).
    """
    return 2.0 * line_speed / diameter


# --- hoist ---------------------------------------------------------------------------


@method(returns="force", mass="mass", reeving="fraction", counterweight="mass")
def hoist_rope_force(mass: float, reeving: float = 1.0, counterweight: float = 0.0) -> float:
    """Return the rope force [N] at the drum of a hoist holding a load.

    Parameters
    ----------
    mass : load plus hook block [kg]
    reeving : number of falls n carrying the load [1] (1 = single rope)
    counterweight : counterweight acting against the load [kg]

    Method: F = (m − m_cw)·g/n (sheave friction neglected; include it in the efficiency).

    References
    ----------
    docs/references.md R34 (statics).
    """
    return (mass - counterweight) * STANDARD_GRAVITY / reeving


@method(returns="rotational_speed", line_speed="velocity", drum_diameter="length", reeving="fraction")
def hoist_drum_speed(line_speed: float, drum_diameter: float, reeving: float = 1.0) -> float:
    """Return the drum speed [rad/s] of a hoist for a hook speed.

    Parameters
    ----------
    line_speed : hook (load) speed [m/s]
    drum_diameter : drum pitch diameter [m]
    reeving : number of falls n [1]; the rope winds onto the drum n times faster than the hook moves

    Method: ω = 2·n·v/D.

    References
    ----------
    docs/references.md R34 (kinematics).
    """
    return 2.0 * reeving * line_speed / drum_diameter


@method(returns="torque", mass="mass", drum_diameter="length", reeving="fraction", counterweight="mass")
def hoist_drum_torque(mass: float, drum_diameter: float, reeving: float = 1.0, counterweight: float = 0.0) -> float:
    """Return the static drum torque [N*m] of a hoist holding a load.

    Parameters
    ----------
    mass : load plus hook block [kg]
    drum_diameter : drum pitch diameter [m]
    reeving : number of falls n [1]
    counterweight : counterweight [kg]

    Method: T = F_rope·D/2 = (m − m_cw)·g·D/(2·n).

    References
    ----------
    docs/references.md R34 (statics).
    """
    return hoist_rope_force(mass, reeving, counterweight) * drum_diameter / 2.0


@method(returns="power", mass="mass", line_speed="velocity", efficiency="fraction", counterweight="mass")
def hoist_lifting_power(mass: float, line_speed: float, efficiency: float, counterweight: float = 0.0) -> float:
    """Return the motor power [W] to lift a load at a steady speed.

    Parameters
    ----------
    mass : load plus hook block [kg]
    line_speed : hook speed [m/s]
    efficiency : hoist mechanism efficiency η [1]
    counterweight : counterweight [kg]

    Method: P_lift = (m − m_cw)·g·v/η.

    References
    ----------
    docs/references.md R34 (mechanics).
    """
    return (mass - counterweight) * STANDARD_GRAVITY * line_speed / efficiency


@method(returns="power", mass="mass", line_speed="velocity", efficiency="fraction", counterweight="mass")
def hoist_lowering_power(mass: float, line_speed: float, efficiency: float, counterweight: float = 0.0) -> float:
    """Return the power [W] a lowered load returns to the motor shaft (regeneration) at a steady speed.

    Parameters
    ----------
    mass : load plus hook block [kg]
    line_speed : hook speed [m/s]
    efficiency : hoist mechanism efficiency η (reverse direction) [1]
    counterweight : counterweight [kg]

    Method: P_lower = (m − m_cw)·g·v·η (losses come out of the load's power). Lowering is sustained
    regeneration: braking means and a fail-safe holding brake are required (docs/references.md R35, R36).

    References
    ----------
    docs/references.md R34 and K39 (mechanics).
    """
    return (mass - counterweight) * STANDARD_GRAVITY * line_speed * efficiency


# --- lead screw ---------------------------------------------------------------------


@method(returns="length", pitch="length", starts="fraction")
def screw_lead(pitch: float, starts: float = 1.0) -> float:
    """Return the lead [m] of a screw (travel per revolution).

    Parameters
    ----------
    pitch : thread pitch [m]
    starts : number of thread starts [1]

    Method: L = starts × pitch (pitfall 13).

    References
    ----------
    Shigley's Mechanical Engineering Design, power screws (from memory); docs/references.md pitfall 13.
    """
    return starts * pitch


@method(returns="torque", thrust="force", lead="length", efficiency="fraction")
def lead_screw_torque(thrust: float, lead: float, efficiency: float) -> float:
    """Return the screw-shaft torque [N*m] to push a thrust.

    Parameters
    ----------
    thrust : axial force [N]
    lead : lead (not pitch) [m]
    efficiency : screw efficiency η [1]

    Method: T = F·L/(2π·η).

    References
    ----------
    docs/references.md R34 and pitfall 13 (work balance T·2π = F·L/η per revolution).
    """
    return thrust * lead / (2.0 * math.pi * efficiency)


@method(returns="rotational_speed", line_speed="velocity", lead="length")
def lead_screw_speed(line_speed: float, lead: float) -> float:
    """Return the screw shaft speed [rad/s] for a linear speed.

    Parameters
    ----------
    line_speed : nut or table speed [m/s]
    lead : lead [m]

    Method: ω = 2π·v/L.

    References
    ----------
    Kinematics (docs/references.md R34).
    """
    return 2.0 * math.pi * line_speed / lead


# --- torque-speed points ----------------------------------------------------------


def torque_from_points(speeds: list[float] | np.ndarray, torques: list[float] | np.ndarray, speed: float) -> float:
    """Return the load torque [N*m] at a speed [rad/s] by linear interpolation in declared points.

    Parameters
    ----------
    speeds : point speeds [rad/s], strictly increasing
    torques : torque at each point [N*m]
    speed : the speed wanted [rad/s]; a float or an array

    Method: linear interpolation; outside the declared range the end value is held (a declared table is
    not extrapolated).

    References
    ----------
    Common practice.
    """
    return points_interpolator(speeds, torques)(speed)


def points_interpolator(speeds: list[float] | np.ndarray,
                        torques: list[float] | np.ndarray) -> Callable[[Any], float | np.ndarray]:
    """Return T(speed) for declared torque-speed points, checked once (see :func:`torque_from_points`)."""
    xs = np.asarray(speeds, dtype=float)
    ys = np.asarray(torques, dtype=float)
    if xs.ndim != 1 or xs.shape != ys.shape or xs.size < 1:
        raise ValueError("torque points need equal-length lists of speeds and torques")
    if xs.size > 1 and not np.all(np.diff(xs) > 0):
        raise ValueError("torque points must be given in strictly increasing speed")

    def torque(speed: Any) -> float | np.ndarray:
        return _scalar_or_array(np.interp(speed, xs, ys))

    return torque
