"""Derive step: the drive train at the motor shaft — speeds, torques and inertia referred through the
transmission, output frequency, back-EMF at top speed, the motor's continuous capability T_cont(n) and the
worst continuous margin over the operating speed range."""

from __future__ import annotations

from collections.abc import Callable
from typing import Any

import numpy as np

from rulecheck.derive.record import Spec, put
from rulecheck.model import Model
from rulecheck.physics import dynamics as dyn
from rulecheck.physics import machines as mc
from rulecheck.physics import power_electronics as pe
from rulecheck.physics import transmission as tr

__all__ = ["MARGIN_SWEEP_POINTS", "capability", "derive_train"]

MARGIN_SWEEP_POINTS = 25  # speeds at which the continuous margin is looked at between speed_min and speed_max


def derive_train(m: Model, spec: Spec) -> None:
    """Everything referred to the motor shaft, and the continuous margin."""
    i = m.get("transmission.ratio")
    if i is None:
        return
    _speeds_and_torques(m, i)
    _inertia(m, i)
    if m.get("train.speed_max") is not None:
        _at_top_speed(m, m.get("train.speed_max"))
    _speed_limits(m, i)
    _acceleration(m)
    _cooling_table(m)
    _continuous(m)


def _speeds_and_torques(m: Model, i: float) -> None:
    eff = m.get("transmission.efficiency")
    put(m, "train.ratio", i, "ratio", ("transmission.ratio",), "motor speed ÷ load speed")
    nmax, nmin = m.get("load.speed_max"), m.get("load.speed_min")
    if nmax is not None:
        put(m, "train.speed_max", nmax * i, "ratio", ("load.speed_max", "transmission.ratio"), "load speed_max × i")
        put(m, "train.gear_input_speed_max", nmax * i, "ratio", ("load.speed_max", "transmission.ratio"),
            "load speed_max × i")
    if nmin is not None:
        put(m, "train.speed_min", nmin * i, "ratio", ("load.speed_min", "transmission.ratio"), "load speed_min × i")
    tl = m.get("load.torque_running")
    if tl is not None and eff:
        if tl * (nmax if nmax is not None else 1.0) >= 0:
            put(m, "train.load_torque", tr.motor_torque_motoring(tl, i, eff), "motor_torque_motoring",
                ("load.torque_running", "transmission.ratio", "transmission.efficiency"), "T_L ÷ (i·η)")
        else:  # the load drives the motor: the gear losses are supplied by the load
            put(m, "train.load_torque", tr.motor_torque_overhauling(tl, i, _reverse_efficiency(m)),
                "motor_torque_overhauling",
                ("load.torque_running", "transmission.ratio", "transmission.reverse_efficiency"),
                "T_L·η_rev ÷ i (overhauling: the load drives, negative = braking torque)")
        put(m, "train.load_overhauling", tl * (nmax if nmax is not None else 1.0) < 0, "power_flow",
            ("load.torque_running", "load.speed_max"), "sign of T_L·ω_L at the running point")
        put(m, "train.gear_output_torque", tl, "load", ("load.torque_running",), "running load torque")
    hold = m.get("load.holding_torque")
    if hold is not None:
        put(m, "train.holding_torque", hold * _reverse_efficiency(m) / i, "motor_torque_overhauling",
            ("load.holding_torque", "transmission.ratio", "transmission.reverse_efficiency"), "T_hold·η_rev ÷ i")


def _reverse_efficiency(m: Model) -> float:
    """η_rev of the transmission when the load drives: the declared value, else the forward efficiency."""
    return m.get("transmission.reverse_efficiency", m.get("transmission.efficiency")) or 1.0


def _inertia(m: Model, i: float) -> None:
    if m.has("load.inertia") or m.has("load.mass_inertia"):
        jl = (m.get("load.inertia") or 0.0) + (m.get("load.mass_inertia") or 0.0)
        put(m, "train.inertia_load", tr.reflected_inertia(jl, i), "reflected_inertia",
            ("load.inertia", "load.mass_inertia", "transmission.ratio"), "J_L ÷ i²")
    if not m.has("train.inertia_load"):
        return
    # what is known without the rotor: a lower bound of the total (never zero for the unknown rotor)
    known = m.get("train.inertia_load") + (m.get("transmission.inertia") or 0.0) + (m.get("motor.brake.inertia") or 0.0)
    put(m, "train.inertia_known", known, "sum",
        ("train.inertia_load", "transmission.inertia", "motor.brake.inertia"),
        "J_brake + J_gear + J_L ÷ i² (without the rotor)")
    jm = m.get("motor.inertia")
    if jm is not None:
        total = jm + known
        put(m, "train.inertia_total", total, "sum",
            ("motor.inertia", "train.inertia_load", "transmission.inertia", "motor.brake.inertia"),
            "J_m + J_brake + J_gear + J_L ÷ i²")
        put(m, "train.inertia_ratio", m.get("train.inertia_load") / jm, "inertia_ratio",
            ("train.inertia_load", "motor.inertia"), "referred load inertia ÷ motor inertia")


def _at_top_speed(m: Model, wmax: float) -> None:
    """Output frequency, back-EMF and armature voltage the highest operating speed asks for."""
    kind, poles = m.get("motor.kind"), m.get("motor.poles")
    if kind == "induction" and isinstance(poles, int) and m.has("motor.synchronous_speed", "motor.rated_speed"):
        slip_speed = m.get("motor.synchronous_speed") - m.get("motor.rated_speed")
        put(m, "train.output_frequency_required", pe.output_frequency_induction(wmax, poles, slip_speed),
            "output_frequency_induction", ("train.speed_max", "motor.poles", "motor.slip"),
            "pole pairs × (n_max + n_slip) ÷ 60")
    elif kind == "pm-synchronous" and isinstance(poles, int):
        put(m, "train.output_frequency_required", pe.output_frequency_synchronous(wmax, poles),
            "output_frequency_synchronous", ("train.speed_max", "motor.poles"), "pole pairs × n_max ÷ 60")
    ke = m.get("motor.back_emf_constant_ll_rms")
    if ke is not None:
        put(m, "train.back_emf_at_max", mc.back_emf_at_speed(ke, wmax), "back_emf_at_speed",
            ("motor.back_emf_constant_ll_rms", "train.speed_max"), "Ke × n_max")
    if kind != "dc" or not m.has("motor.rated_back_emf", "motor.rated_speed"):
        return
    # above base speed the field is weakened, so E stays at its rated value
    e = mc.dc_back_emf_at_speed(m.get("motor.rated_back_emf"), m.get("motor.rated_speed"),
                                min(wmax, m.get("motor.rated_speed")))
    put(m, "train.armature_emf_at_max", e, "dc_back_emf_at_speed", ("motor.rated_back_emf", "train.speed_max"),
        "E_N × min(n_max, n_N) ÷ n_N (field weakened above base speed)")
    ia, ra = m.get("motor.armature_current"), m.get("motor.armature_resistance")
    if ia is not None and ra is not None:
        put(m, "train.armature_voltage_required", mc.dc_armature_voltage(e, ia, ra, m.get("motor.brush_drop")),
            "dc_armature_voltage", ("motor.rated_back_emf", "train.speed_max", "motor.armature_current",
                                    "motor.armature_resistance", "motor.brush_drop"),
            "E(n_max) + I_a·R_a + V_br at rated armature current")


def _acceleration(m: Model) -> None:
    """J·ω/t of the acceleration (and of a ramped stop); with the rotor inertia unknown, the lower bound from the
    inertia that is known."""
    jt, wmax = m.get("train.inertia_total"), m.get("train.speed_max")
    tacc, tdec = m.get("load.acceleration_time"), m.get("load.deceleration_time")
    if wmax is None:
        return
    # the motor gives the deceleration torque only when a drive ramps it down (not coasting, not direct on line)
    ramped = m.get("drive.kind") in ("inverter", "dc-converter") and m.get("drive.stop") != "coast"
    if jt is not None:
        if tacc:
            put(m, "train.acceleration_torque", dyn.acceleration_torque(jt, wmax, tacc), "acceleration_torque",
                ("train.inertia_total", "train.speed_max", "load.acceleration_time"), "J_tot × ω_max ÷ t_acc")
        if tdec and ramped:
            put(m, "train.deceleration_torque", dyn.acceleration_torque(jt, wmax, tdec), "acceleration_torque",
                ("train.inertia_total", "train.speed_max", "load.deceleration_time"), "J_tot × ω_max ÷ t_dec")
        return
    jk = m.get("train.inertia_known")
    if jk is None:
        return
    if tacc:
        put(m, "train.acceleration_torque_min", dyn.acceleration_torque(jk, wmax, tacc), "acceleration_torque",
            ("train.inertia_known", "train.speed_max", "load.acceleration_time"),
            "J_known × ω_max ÷ t_acc: a lower bound, motor.inertia not given (J_known: the load side)")
    if tdec and ramped:
        put(m, "train.deceleration_torque_min", dyn.acceleration_torque(jk, wmax, tdec), "acceleration_torque",
            ("train.inertia_known", "train.speed_max", "load.deceleration_time"),
            "J_known × ω_max ÷ t_dec: a lower bound, motor.inertia not given (J_known: the load side)")


def _speed_limits(m: Model, i: float) -> None:
    if m.get("train.speed_max") is None:
        return
    limits = [x for x in (m.get("motor.max_speed"), m.get("transmission.input_speed_max"),
                          m.get("load.speed_limit") * i if m.get("load.speed_limit") else None) if x]
    if limits:
        put(m, "motor.max_speed_effective", min(limits), "minimum",
            ("motor.max_speed", "transmission.input_speed_max", "load.speed_limit"),
            "lowest speed limit of motor, gearbox and driven machine")


# --- continuous capability --------------------------------------------------------------------


def _cooling(m: Model) -> tuple[bool, float | None]:
    """Return (whether k_cool applies: a shaft-cooled motor at varied speed, the lowest n/n_b of a
    constant-torque range or None) for the motor's continuous capability."""
    kind, cooling = m.get("motor.kind"), m.get("motor.cooling", "self-ventilated")
    # only a shaft-mounted fan cools less at low speed; a non-ventilated (IC410) motor's rating is without one
    shaft_cooled = (kind not in ("pm-synchronous", "dc") and m.get("drive.kind") in ("inverter", "dc-converter")
                    and cooling == "self-ventilated")
    ct_min, nb = m.get("motor.constant_torque_speed_min"), m.get("motor.base_speed")
    if cooling in ("forced", "liquid", "non-ventilated"):
        return shaft_cooled, 0.0
    return shaft_cooled, (ct_min / nb if ct_min is not None else None)


def capability(m: Model) -> Callable[[Any], Any] | None:
    """Return T_cont(ω) [N*m] of the motor (cooling, field weakening, site derating) for a speed or an array of
    speeds [rad/s], or None without rated torque and base speed (:func:`machines.continuous_torque_capability`)."""
    tn, nb = m.get("motor.rated_torque"), m.get("motor.base_speed")
    if tn is None or not nb:
        return None
    shaft_cooled, ct_limit = _cooling(m)
    stall = m.get("motor.stall_torque") if m.get("motor.kind") == "pm-synchronous" else None
    options = {"shaft_cooled": shaft_cooled, "inverter_rated": bool(m.get("motor.inverter_rated", False)),
               "constant_torque_limit": ct_limit, "stall_torque": stall,
               "site_factor": m.get("site.motor_derating", 1.0)}
    return lambda w: mc.continuous_torque_capability(w, tn, nb, **options)


def _cooling_table(m: Model) -> None:
    """Whether the continuous capability below base speed comes from the default k_cool table."""
    if m.get("motor.kind") is None:
        return
    shaft_cooled, ct_limit = _cooling(m)
    used = m.get("motor.kind") == "induction" and shaft_cooled and ct_limit is None
    put(m, "train.cooling_table_default", used, "cooling_basis",
        ("motor.kind", "drive.kind", "motor.cooling", "motor.constant_torque_speed_min"),
        "common-practice k_cool table (references R06)" if used else "k_cool = 1 or the declared constant-torque range")


def _continuous(m: Model) -> None:
    """Worst continuous margin over the operating speed range, at the motor shaft."""
    cap = capability(m)
    i, eff, nmax = m.get("transmission.ratio"), m.get("transmission.efficiency"), m.get("load.speed_max")
    if cap is None or not i or not eff or nmax is None:
        return
    load_fn = m.functions.get("load_torque")
    if load_fn is None:
        if m.get("load.torque_running") is None:
            return
        t = m.get("load.torque_running")
        load_fn = lambda n: t  # noqa: E731 - the running torque at every speed
    speeds = np.linspace(m.get("load.speed_min", nmax), nmax, MARGIN_SWEEP_POINTS)
    load = np.array([float(load_fn(s)) for s in speeds.tolist()])
    # motoring T_L/(i·η); where the load drives (T_L·ω_L < 0) the braking torque |T_L|·η_rev/i
    required = np.where(load * speeds >= 0, np.abs(load) / (i * eff), np.abs(load) * _reverse_efficiency(m) / i)
    available = np.asarray(cap(speeds * i), dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        margins = np.where(required > 0, available / np.maximum(required, 1e-12), np.inf)
    k = int(np.argmin(margins))
    if not np.isfinite(margins[k]):
        return
    inputs = ("motor.rated_torque", "motor.base_speed", "motor.cooling", "load.speed_min", "load.speed_max")
    put(m, "train.continuous_margin", float(margins[k]), "continuous_margin", inputs,
        "smallest T_cont(n) ÷ T_req(n) between speed_min and speed_max")
    put(m, "train.continuous_speed_worst", float(speeds[k] * i), "continuous_margin", inputs,
        "motor speed of the smallest margin")
    put(m, "train.continuous_required_worst", float(required[k]), "continuous_margin", inputs,
        "|T_L| ÷ (i·η) at that speed (|T_L|·η_rev ÷ i where the load drives)")
    put(m, "train.continuous_capability_worst", float(available[k]), "continuous_margin", inputs,
        "T_N × k_cool × k_fw × k_env at that speed")
    shaft_cooled, ct_limit = _cooling(m)
    if m.get("motor.kind") == "induction" and shaft_cooled and ct_limit is None:
        ratio = float(speeds[k] * i) / m.get("motor.base_speed")
        put(m, "train.continuous_cooling_worst",
            mc.self_ventilated_cooling_factor(ratio, bool(m.get("motor.inverter_rated", False)), None),
            "self_ventilated_cooling_factor", (*inputs, "motor.inverter_rated"),
            "k_cool(n/n_b) at the speed of the smallest margin (common-practice table, references R06)")
