"""Derive step: the driven load at its own shaft — speed range from line speed, the load torque T_L(n) of its
model (kept on the model as ``functions["load_torque"]`` for the sweeps and charts), the largest torque over
the speed range, inertia of linear masses, gravity, holding torque and overhauling."""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any

import numpy as np

from rulecheck.derive.record import Spec, put
from rulecheck.model import Model
from rulecheck.physics import loads as ld
from rulecheck.physics import transmission as tr

__all__ = ["HOLDBACK_FRICTION", "TORQUE_SWEEP_POINTS", "derive_load", "load_points"]

TWO_PI = 2.0 * math.pi
TORQUE_SWEEP_POINTS = 33  # speeds at which the load torque is looked at between speed_min and speed_max
# Friction factor credited against a belt's runback when a backstop or brake is sized: a reduced artificial
# friction coefficient of the kind belt-design practice uses for holdback and braking (value from memory; the
# belt designer's standard governs). The declared coefficient is used where it is lower.
HOLDBACK_FRICTION = 0.012


def derive_load(m: Model, spec: Spec) -> None:
    """Every load value: speeds, torque, inertia, gravity, holding torque, overhauling."""
    _speed_range(m, spec)
    torque_fn = _load_torque_function(m, spec)
    if torque_fn is not None:
        m.functions["load_torque"] = torque_fn
        _torque_sweep(m, torque_fn)
    _mass_inertia(m)
    model = m.get("load.model")
    gravity = bool(m.get("load.vertical")) or model == "hoist" or (
        model == "conveyor" and abs(m.get("load.incline", 0.0)) > 0)
    put(m, "load.gravity", gravity, "load model", ("load.model", "load.incline", "load.vertical"),
        "hoist, inclined conveyor or declared vertical load")
    _holding(m)
    count = len(spec.items("load", "duty"))
    negative = any((spec.quantity(f"load.duty[{k}].torque") or 0.0) < 0.0 for k in range(count))
    downhill = model == "conveyor" and m.get("load.incline", 0.0) < 0 and (m.get("load.holding_torque") or 0.0) > 0
    put(m, "load.overhauling", model == "hoist" or negative or downhill, "load model",
        ("load.model", "load.duty", "load.incline"),
        "hoist lowering, a declining belt that friction does not hold, or negative load torque in the duty cycle")


def _speed_range(m: Model, spec: Spec) -> None:
    model, v = m.get("load.model"), m.get("load.line_speed")
    if model == "conveyor" and v is not None and m.get("load.pulley_diameter"):
        put(m, "load.speed_max", ld.pulley_speed(v, m.get("load.pulley_diameter")), "pulley_speed",
            ("load.line_speed", "load.pulley_diameter"), "line speed ÷ (π × pulley diameter)")
    elif model == "hoist" and v is not None and m.get("load.drum_diameter"):
        put(m, "load.speed_max", ld.hoist_drum_speed(v, m.get("load.drum_diameter"), m.get("load.reeving") or 1),
            "hoist_drum_speed", ("load.line_speed", "load.drum_diameter", "load.reeving"),
            "reeving × line speed ÷ (π × drum diameter)")
    elif model == "constant-power" and v is not None and m.get("load.diameter_min"):
        put(m, "load.speed_max", ld.winder_speed(v, m.get("load.diameter_min")), "winder_speed",
            ("load.line_speed", "load.diameter_min"), "line speed ÷ (π × core diameter)")
    elif model == "lead-screw" and v is not None and m.get("load.lead"):
        put(m, "load.speed_max", ld.lead_screw_speed(v, m.get("load.lead")), "lead_screw_speed",
            ("load.line_speed", "load.lead"), "line speed ÷ lead")
    elif model == "points":
        pts = load_points(spec)
        if pts:
            put(m, "load.speed_max", max(s for s, _ in pts), "points", ("load.points",), "highest point speed")
    if model == "constant-power" and v is not None and m.get("load.diameter_max"):
        put(m, "load.speed_min", ld.winder_speed(v, m.get("load.diameter_max")), "winder_speed",
            ("load.line_speed", "load.diameter_max"), "line speed ÷ (π × full roll diameter)")


def _torque_sweep(m: Model, torque_fn: Callable[[float], float]) -> None:
    """Running torque at speed_max and the largest |T_L| between speed_min and speed_max."""
    nmax, model = m.get("load.speed_max"), m.get("load.model")
    if nmax is None:
        return
    inputs = tuple(k for k in m.values if k.startswith("load.") and m.provenance[k].source == "given")[:6]
    running = float(torque_fn(nmax))
    put(m, "load.torque_running", running, f"load model {model}", inputs, f"{model} load model at speed_max")
    speeds = np.linspace(m.get("load.speed_min", 0.0), nmax, TORQUE_SWEEP_POINTS)
    torques = np.array([float(torque_fn(s)) for s in speeds.tolist()])
    k = int(np.argmax(np.abs(torques)))
    put(m, "load.torque_max", float(torques[k]), f"load model {model}", inputs,
        "largest load torque between speed_min and speed_max")
    put(m, "load.speed_at_torque_max", float(speeds[k]), f"load model {model}", inputs,
        "load speed at the largest load torque")
    put(m, "load.power_running", running * nmax, "power_from_torque", ("load.torque_running", "load.speed_max"),
        "torque × speed")


def _mass_inertia(m: Model) -> None:
    model, mass = m.get("load.model"), m.get("load.mass")
    reeving = m.get("load.reeving") or 1
    if model == "conveyor" and mass and m.get("load.pulley_diameter"):
        r = m.get("load.pulley_diameter") / 2
        put(m, "load.mass_inertia", mass * r * r, "reflected_inertia_of_mass_on_radius",
            ("load.mass", "load.pulley_diameter"), "m·r² (belt and material at the pulley)")
    elif model == "hoist" and mass and m.get("load.drum_diameter"):
        r = m.get("load.drum_diameter") / 2 / reeving
        moving = mass + (m.get("load.counterweight") or 0.0)
        put(m, "load.mass_inertia", moving * r * r, "reflected_inertia_of_mass_on_radius",
            ("load.mass", "load.counterweight", "load.drum_diameter", "load.reeving"),
            "m·(r/reeving)² (payload and counterweight at the drum)")
    elif model == "lead-screw" and m.get("load.moving_mass") and m.get("load.lead"):
        inertia = tr.reflected_inertia_of_mass_on_screw(m.get("load.moving_mass"), m.get("load.lead"))
        put(m, "load.mass_inertia", inertia, "reflected_inertia_of_mass_on_screw", ("load.moving_mass", "load.lead"),
            "m·(L/2π)²")


def _holding(m: Model) -> None:
    model, mass, v = m.get("load.model"), m.get("load.mass"), m.get("load.line_speed")
    incline = m.get("load.incline", 0.0)
    if model == "conveyor":
        declared = m.get("load.friction_coefficient")
        put(m, "load.runback_friction", min(declared, HOLDBACK_FRICTION) if declared is not None else HOLDBACK_FRICTION,
            "holdback friction", ("load.friction_coefficient",),
            f"the lower of the declared friction coefficient and {HOLDBACK_FRICTION} (reduced factor for holdback and "
            "brake sizing, from memory)")
    if model == "hoist" and mass and m.get("load.drum_diameter"):
        reeving, cw = m.get("load.reeving") or 1, m.get("load.counterweight") or 0.0
        put(m, "load.rope_force", ld.hoist_rope_force(mass, reeving, cw), "hoist_rope_force",
            ("load.mass", "load.reeving", "load.counterweight"), "(m − m_cw)·g ÷ reeving")
        put(m, "load.holding_torque", ld.hoist_drum_torque(mass, m.get("load.drum_diameter"), reeving, cw),
            "hoist_drum_torque", ("load.mass", "load.drum_diameter", "load.reeving", "load.counterweight"),
            "rope force × drum radius")
        if v is not None and m.get("load.efficiency") is not None:
            put(m, "load.lowering_power", ld.hoist_lowering_power(mass, v, m.get("load.efficiency"), cw),
                "hoist_lowering_power", ("load.mass", "load.line_speed", "load.efficiency"), "m·g·v·η")
    elif model == "conveyor" and mass and m.get("load.pulley_diameter") and incline != 0:
        mu = m.get("load.friction_coefficient") or 0.0  # friction unknown: none credited (the larger torque)
        # at rest friction holds the belt back: the brake or backstop must hold the pull down the slope less
        # friction — uphill on an incline (runback), downhill on a declining belt (run-on); either sign of incline
        pull = mass * ld.STANDARD_GRAVITY * (math.sin(abs(incline)) - mu * math.cos(incline))
        put(m, "load.holding_torque", max(pull, 0.0) * m.get("load.pulley_diameter") / 2, "conveyor_force",
            ("load.mass", "load.incline", "load.friction_coefficient", "load.pulley_diameter"),
            "m·g·(sin |θ| − μ·cos θ) × pulley radius (pull down the slope at rest; 0 where friction holds the belt)")
        _runback(m, mass, incline)
    elif model == "lead-screw" and m.get("load.vertical") and m.get("load.thrust") and m.get("load.lead"):
        put(m, "load.holding_torque", m.get("load.thrust") * m.get("load.lead") / TWO_PI, "lead_screw_torque",
            ("load.thrust", "load.lead"), "F·L/2π (without friction, conservative)")
    elif model == "constant-torque" and m.get("load.vertical") and m.get("load.torque") is not None:
        # a vertical load given as its torque at the load shaft (a lift table, a vertical gate): that torque at rest
        put(m, "load.holding_torque", abs(m.get("load.torque")), "constant_torque", ("load.torque", "load.vertical"),
            "|T_L| of a vertical constant-torque load (gravity does not vanish at rest)")


def _runback(m: Model, mass: float, incline: float) -> None:
    """Runback (or run-on) torque of an inclined or declining belt at the pulley shaft, for sizing the backstop or
    brake: friction is credited only up to the low holdback factor."""
    f = m.get("load.runback_friction")
    pull = -float(ld.conveyor_force(mass, -abs(incline), f))
    put(m, "load.runback_torque", max(pull, 0.0) * m.get("load.pulley_diameter") / 2, "conveyor_force",
        ("load.mass", "load.incline", "load.runback_friction", "load.pulley_diameter"),
        "m·g·(sin |θ| − f·cos θ) × pulley radius at the holdback friction factor (0 where it holds the belt)")


def load_points(spec: Spec) -> list[tuple[float, float]]:
    """Return the declared (speed [rad/s], torque [N*m]) points sorted by speed; empty if any is unusable."""
    out = []
    for k in range(len(spec.items("load", "points"))):
        speed, torque = spec.quantity(f"load.points[{k}].speed"), spec.quantity(f"load.points[{k}].torque")
        if speed is None or torque is None:
            return []
        out.append((speed, torque))
    return sorted(out)


def _winder(tension: float, v: float, dmin: float, dmax: float) -> Callable[[float], float]:
    def winder(n: float) -> float:
        # the roll diameter that gives this speed at the line speed, within the roll's range
        d = min(max(v / (math.pi * n / TWO_PI) if n > 0 else dmax, dmin), dmax)
        return ld.winder_torque(tension, d)

    return winder


def _constant(t: float) -> Callable[[float], float]:
    return lambda n: t


def _through_losses(torque: float, efficiency: float | None) -> float:
    """Return the torque at the driven shaft of a load whose own losses (pulleys, rope, sheaves) are ``efficiency``:
    the driven shaft supplies them when it drives (T ÷ η); when the load drives (T < 0: a declining belt, a
    counterweight heavier than the hook) the losses take from what reaches the shaft (T·η)."""
    eta = efficiency or 1.0
    return torque / eta if torque >= 0.0 else torque * eta


def _load_torque_function(m: Model, spec: Spec) -> Any:  # noqa: C901 - one branch per load model
    model = m.get("load.model")
    if model == "constant-torque" and m.has("load.torque"):
        return _constant(m.get("load.torque"))
    if model == "quadratic" and m.has("load.torque_at_speed_max", "load.speed_max"):
        t, nmax, tb = m.get("load.torque_at_speed_max"), m.get("load.speed_max"), m.get("load.breakaway_torque", 0.0)
        return lambda n: ld.quadratic_torque(n, t, nmax, 0.0) if n > 0 else max(tb, 0.0)
    if model == "conveyor" and m.has("load.mass", "load.pulley_diameter"):
        force = ld.conveyor_force(m.get("load.mass"), m.get("load.incline", 0.0),
                                  m.get("load.friction_coefficient") or 0.0)
        return _constant(_through_losses(ld.pulley_torque(force, m.get("load.pulley_diameter")),
                                         m.get("load.efficiency")))
    if model == "hoist" and m.has("load.mass", "load.drum_diameter"):
        return _constant(_through_losses(ld.hoist_drum_torque(m.get("load.mass"), m.get("load.drum_diameter"),
                                                              m.get("load.reeving") or 1,
                                                              m.get("load.counterweight") or 0.0),
                                         m.get("load.efficiency")))
    if model == "lead-screw" and m.has("load.thrust", "load.lead", "load.screw_efficiency"):
        return _constant(ld.lead_screw_torque(m.get("load.thrust"), m.get("load.lead"), m.get("load.screw_efficiency")))
    if model == "constant-power" and m.has("load.tension", "load.line_speed", "load.diameter_min",
                                           "load.diameter_max"):
        return _winder(m.get("load.tension"), m.get("load.line_speed"), m.get("load.diameter_min"),
                       m.get("load.diameter_max"))
    if model == "points":
        pts = load_points(spec)
        if pts:
            return ld.points_interpolator([s for s, _ in pts], [t for _, t in pts])
    return None
