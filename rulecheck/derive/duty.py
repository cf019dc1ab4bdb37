"""Derive step: the duty cycle (segments in the spec) or the duty profile (a CSV file beside it) reduced to
what the thermal and peak checks need — peak and RMS torque, times, energies, the speed-aware utilisation —
and the torques the train must give (from the duty cycle, or from the running load and the acceleration)."""

from __future__ import annotations

import math
from typing import Any

import numpy as np

from rulecheck.derive.record import Spec, put
from rulecheck.derive.train import capability
from rulecheck.model import Model
from rulecheck.physics import dynamics as dyn
from rulecheck.physics import transmission as tr
from rulecheck.physics.profile_csv import ProfileError, read_profile_csv

__all__ = ["CHART_PROFILE_POINTS", "derive_duty", "standstill_factor"]

CHART_PROFILE_POINTS = 600  # samples of a duty profile kept for charts


# Duty types whose rating is for an intermittent cycle (IEC 60034-1): the rated torque holds for the rated CDF only
INTERMITTENT_DUTY_TYPES = ("S3", "S4", "S5", "S6")


def standstill_factor(m: Model) -> float:
    """β, the share of standstill time that counts for cooling: the default only for a self-ventilated motor (its
    fan stops with the shaft); 1 for a fan of its own, liquid cooling, or none at all (IC410: a non-ventilated
    motor cools at standstill as it does running)."""
    return dyn.DEFAULT_STANDSTILL_FACTOR if m.get("motor.cooling", "self-ventilated") == "self-ventilated" else 1.0


def _braked_at_standstill(m: Model) -> bool:
    """A hoist's declared holding brake, set by a declared brake sequence at every stop (crane practice), carries
    the load while the shaft stands. A positioning axis may hold under torque: there a segment says so (torque 0)."""
    return (m.get("load.model") == "hoist" and bool(m.get("motor.brake.kind"))
            and m.get("protection.brake_sequencing") is True)


def _refer(m: Model, t_load: float, direction: float, i: float) -> float:
    """Load torque [N*m] referred to the motor by the direction of power flow: motoring (T·ω ≥ 0) T/(i·η),
    overhauling (the load drives) T·η_rev/i."""
    eff = m.get("transmission.efficiency")
    if t_load * direction >= 0:
        return tr.motor_torque_motoring(t_load, i, eff)
    return tr.motor_torque_overhauling(t_load, i, m.get("transmission.reverse_efficiency", eff))


def derive_duty(m: Model, spec: Spec) -> None:
    """Reduce the duty cycle or profile; then the peak and continuous torque the train must give."""
    i, eff = m.get("transmission.ratio"), m.get("transmission.efficiency")
    load = spec.data.get("load") or {}
    given = isinstance(load.get("duty"), list) or bool(load.get("duty_profile"))
    # always derivable (false without a cycle): it asks for no input, so a template never asks for a cycle for it
    put(m, "duty.cycle_given", given, "duty", (), "whether load.duty or load.duty_profile is given")
    if isinstance((spec.data.get("load") or {}).get("duty"), list) and i and eff:
        found = _cycle(m, spec, i)
        if found is None:
            return  # a segment lacks what it needs: nothing is derived from the cycle, nor guessed without it
        reduction, bound = found
        _reduced(m, reduction, ("load.duty", "train.inertia_total", "train.load_torque"), bound)
    elif (spec.data.get("load") or {}).get("duty_profile") and spec.base is not None:
        reduction = _profile(m, spec)
        if reduction is not None:
            _reduced(m, reduction, ("load.duty_profile",), False)
    else:
        _without_cycle(m)


def _segment_torque(m: Model, spec: Spec, k: int, speed: float, to: float, i: float) -> float | None:
    """Return the load torque of duty segment ``k`` at the motor shaft [N*m], or None when it cannot be known."""
    direction = speed if abs(speed) >= abs(to) else to  # signed: the sign of the power flow needs it
    t_load = spec.quantity(f"load.duty[{k}].torque")
    if t_load is not None:
        return _refer(m, t_load, direction or 1.0, i)  # held at standstill: referred as motoring (the larger)
    tl = m.get("load.torque_running")
    if not (speed or to):  # at standstill: the holding torque, unless a sequenced brake holds the load
        return _standstill_torque(m, tl, i)
    if tl is None:
        return None
    if direction >= 0:
        return _refer(m, tl, direction, i)
    if m.get("load.gravity"):
        # gravity keeps its direction when the travel reverses (lowering). A hoist's drum torque is known: lowering,
        # the load drives and supplies the rope, sheave and gear losses (T_drum·η_load·η_rev ÷ i, braking), the
        # torque the braking rules take. Other gravity loads give the torque of the forward run only: it is taken,
        # referred as motoring, as an upper bound of the reverse torque's magnitude (a segment that gives its
        # torque is referred by its own power flow)
        hold = m.get("load.holding_torque")
        if m.get("load.model") == "hoist" and hold is not None and hold > 0:
            return _refer(m, hold * (m.get("load.efficiency") or 1.0), direction, i)
        return tr.motor_torque_motoring(tl, i, m.get("transmission.efficiency"))
    return _refer(m, -tl, direction, i)  # friction and process forces turn with the direction of travel


def _standstill_torque(m: Model, tl: float | None, i: float) -> float | None:
    """Motor torque [N*m] while the shaft stands: 0 under a sequenced hoist brake or without gravity; else the holding
    torque, or — where it is not derived — the running torque referred as motoring, its upper bound (never zero)."""
    if _braked_at_standstill(m) or not m.get("load.gravity"):
        return 0.0
    if m.get("train.holding_torque") is not None:
        return m.get("train.holding_torque")
    return None if tl is None else abs(tr.motor_torque_motoring(tl, i, m.get("transmission.efficiency")))


def _known_inertia(m: Model) -> float:
    """The inertia at the motor shaft that is known [kg*m^2]: a lower bound of the total."""
    known = m.get("train.inertia_known")
    if known is None:  # no load inertia given: the motor side only
        known = sum(m.get(p) or 0.0 for p in ("transmission.inertia", "motor.brake.inertia"))
    return known + (m.get("motor.inertia") or 0.0)


def _segments(m: Model, spec: Spec, i: float) -> tuple[list[dyn.Segment], bool] | None:
    """Return the duty segments at the motor shaft and whether their inertia is only a lower bound (rotor inertia
    unknown), or None if one lacks its duration, end speed or torque."""
    jt = m.get("train.inertia_total")
    bound = jt is None  # the total is not known: the parts that are give a lower bound (never zero for the rest)
    inertia = jt if jt is not None else _known_inertia(m)
    segments, speed = [], 0.0
    for k in range(len(spec.items("load", "duty"))):
        duration, to = spec.quantity(f"load.duty[{k}].duration"), spec.quantity(f"load.duty[{k}].speed_to")
        if duration is None or to is None:
            return None
        to *= i
        t_motor = _segment_torque(m, spec, k, speed, to, i)
        if t_motor is None:
            return None
        segments.append(dyn.Segment(duration, speed, to, t_motor, inertia))
        speed = to
    return (segments, bound) if segments else None


def _cycle(m: Model, spec: Spec, i: float) -> tuple[dyn.DutyReduction, bool] | None:
    """Return the reduction of the duty cycle and whether its torques are lower bounds (rotor inertia unknown)."""
    found = _segments(m, spec, i)
    if found is None:
        return None
    segments, bound = found
    items = dyn.duty_cycle_torques_lower_bound(segments) if bound else dyn.duty_cycle_torques(segments)
    reduction = dyn.reduce_duty_cycle(items, standstill_factor(m), capability(m))
    labels = [(seg or {}).get("label", "") for seg in spec.items("load", "duty")]
    if not bound:  # a lower bound of each torque is no profile of the cycle: charts and energies need the real one
        m.lists["duty.segments"] = [
            {"duration": s.segment.duration, "speed_from": s.segment.speed_from, "speed_to": s.segment.speed_to,
             "torque": s.torque, "label": labels[k]}
            for k, s in enumerate(items)
        ]
    hold = max((abs(s.torque) for s in items if s.segment.speed_from == 0 and s.segment.speed_to == 0), default=0.0)
    put(m, "duty.holding_at_standstill", hold > 0.0, "duty", ("load.duty",), "torque held at standstill")
    put(m, "duty.standstill_torque", hold, "duty", ("load.duty",), "largest torque held at standstill")
    on = sum(s.segment.duration for s in items if s.segment.speed_from or s.segment.speed_to or abs(s.torque) > 0)
    put(m, "duty.on_time", on, "duty", ("load.duty",), "time with speed or torque")
    put(m, "duty.cdf", on / reduction.cycle_time, "duty", ("load.duty",), "on-time ÷ cycle time")
    return reduction, bound


def _duty_rating(m: Model, reduction: dyn.DutyReduction) -> None:
    """A motor rated S3–S6 is judged against its duty rating: its rated torque holds for the rated CDF."""
    rated = m.get("motor.duty_type") in INTERMITTENT_DUTY_TYPES
    put(m, "duty.rated_intermittent", rated, "duty_type", ("motor.duty_type",),
        "the motor's rating is for an intermittent duty (S3–S6), not S1")
    cdf, tn = m.get("motor.duty_cdf"), m.get("motor.rated_torque")
    if not rated or not cdf or not tn:
        return
    # √(Σ T²·t ÷ t_cycle), every second counted: the rating's rest already includes the standstill cooling
    mean_square_root = reduction.rms_torque * math.sqrt(reduction.effective_time / reduction.cycle_time)
    put(m, "duty.rms_torque_duty_rating", mean_square_root, "reduce_duty_cycle", ("load.duty",),
        "√(Σ T²·t ÷ t_cycle): every second counted, as the duty rating counts them")
    put(m, "duty.utilisation_duty_rating",
        dyn.duty_rating_utilisation(mean_square_root, tn * m.get("site.motor_derating", 1.0), cdf),
        "duty_rating_utilisation", ("load.duty", "motor.rated_torque", "motor.duty_cdf", "site.motor_derating"),
        "√(Σ T²·t ÷ (CDF_rated·t_cycle)) ÷ (T_N·k_env): the cycle's mean square torque against the rating's")


def _profile(m: Model, spec: Spec) -> dyn.DutyReduction | None:
    base = spec.base
    target = (base / spec.data["load"]["duty_profile"]).resolve()
    try:
        target.relative_to(base.resolve())
    except ValueError:
        m.notes.append("load.duty_profile must be a file beside the spec (or below its folder)")
        return None
    try:
        profile = read_profile_csv(target)
    except (ProfileError, OSError) as exc:
        m.notes.append(f"load.duty_profile: {exc}")
        return None
    reduction = dyn.reduce_profile(profile.time, profile.speed, profile.torque, standstill_factor(m),
                                   capability=capability(m))
    m.lists["duty.profile"] = _thin(profile.time, profile.speed, profile.torque)
    return reduction


def _thin(time: Any, speed: Any, torque: Any, points: int = CHART_PROFILE_POINTS) -> list[list[float]]:
    """Return at most ``points`` samples of a profile for charts (min/max preserving)."""
    n = len(time)
    if n <= points:
        idx = np.arange(n)
    else:
        idx = np.unique(np.concatenate([np.linspace(0, n - 1, points // 2).astype(int),
                                        np.array([int(np.argmax(np.abs(torque))), n - 1])]))
    return np.column_stack((np.asarray(time, dtype=float)[idx], np.asarray(speed, dtype=float)[idx],
                            np.asarray(torque, dtype=float)[idx])).tolist()


def _without_cycle(m: Model) -> None:
    """Peak and continuous torque without a cycle: the running load, accelerated and (on a drive, ramped) stopped.

    The peak is the largest magnitude of T_L + T_acc, T_L and T_L − T_dec: an overhauling load (T_L < 0) asks its
    largest braking torque while it is stopped. With the rotor inertia unknown, the acceleration and deceleration
    torques of the inertia that is known make the peak a lower bound (never zero for the unknown)."""
    tl = m.get("train.load_torque")
    if tl is None:
        return
    exact = m.has("train.inertia_total")
    suffix = "" if exact else "_min"
    acc, dec = m.get(f"train.acceleration_torque{suffix}"), m.get(f"train.deceleration_torque{suffix}")
    candidates = [(tl, "running load torque")]
    if acc is not None:
        candidates.append((tl + acc, "running load torque + acceleration torque"))
    if dec is not None:
        candidates.append((tl - dec, "running load torque − deceleration torque (ramped stop)"))
    torque, how = max(candidates, key=lambda c: abs(c[0]))
    bound = not exact and (acc is not None or dec is not None or m.has("load.acceleration_time"))
    inputs = ("train.load_torque", f"train.acceleration_torque{suffix}", f"train.deceleration_torque{suffix}")
    put(m, "train.peak_torque_required", abs(torque), "peak", inputs,
        f"|{how}|" + (": a lower bound, the total inertia is not known" if bound else ""))
    put(m, "train.peak_torque_braking", torque < 0, "peak", inputs, "the peak is a braking torque (load drives)")
    put(m, "train.peak_torque_lower_bound", bound, "peak", ("motor.inertia",),
        "the total inertia is not known (rotor or load): the peak is the least the train can need")
    put(m, "train.speed_at_peak", m.get("train.speed_max"), "duty", ("train.speed_max",),
        "top speed (end of acceleration, start of a ramped stop)")
    put(m, "train.continuous_torque_required", tl, "load", ("train.load_torque",), "running load torque")


def _reduced(m: Model, r: dyn.DutyReduction, source: tuple[str, ...], bound: bool) -> None:
    """Record a cycle's reduction; with the rotor inertia unknown (``bound``) only the torques, as lower bounds."""
    note = ": a lower bound, the total inertia is not known" if bound else ""
    put(m, "duty.peak_torque", r.peak_torque, "reduce_duty_cycle", source, "largest |T| of the cycle" + note)
    put(m, "duty.speed_at_peak", r.speed_at_peak, "reduce_duty_cycle", source, "speed at the peak torque")
    put(m, "duty.rms_torque", r.rms_torque, "reduce_duty_cycle", source, "√(Σ T²·t ÷ Σ t_eff)" + note)
    put(m, "duty.mean_abs_torque", r.mean_abs_torque, "reduce_duty_cycle", source, "time mean of |T|" + note)
    put(m, "duty.cycle_time", r.cycle_time, "reduce_duty_cycle", source, "sum of segment durations")
    put(m, "duty.standstill_time", r.standstill_time, "reduce_duty_cycle", source, "time at zero speed")
    put(m, "duty.max_speed", r.max_speed, "reduce_duty_cycle", source, "highest speed of the cycle")
    put(m, "duty.lower_bound", bound, "reduce_duty_cycle", ("motor.inertia",),
        "the total inertia is not known (rotor or load): torques are the least the cycle can need")
    if not bound:  # energies of lower-bound torques bound nothing: left to be derived with the rotor inertia
        put(m, "duty.regenerative_energy", r.regenerative_energy, "reduce_duty_cycle", source, "∫ max(0, −T·ω) dt")
        put(m, "duty.peak_braking_power", r.peak_braking_power, "reduce_duty_cycle", source, "max(−T·ω)")
    _duty_rating(m, r)
    rated = m.get("duty.utilisation_duty_rating")
    utilisation = rated if rated is not None else (None if m.get("duty.rated_intermittent") else r.utilisation)
    if utilisation is not None:
        put(m, "duty.utilisation", utilisation, "reduce_duty_cycle", source,
            ("against the motor's S3–S6 duty rating" if rated is not None else
             "√(Σ (T ÷ T_cont(n))²·t ÷ Σ t_eff) against the continuous (S1) capability") + note)
    put(m, "train.peak_torque_required", r.peak_torque, "duty", ("duty.peak_torque",), "duty-cycle peak torque" + note)
    put(m, "train.peak_torque_lower_bound", bound, "duty", ("motor.inertia",),
        "the total inertia is not known (rotor or load): the peak is the least the train can need")
    put(m, "train.speed_at_peak", r.speed_at_peak, "duty", ("duty.speed_at_peak",), "speed at the duty-cycle peak")
    put(m, "train.continuous_torque_required", r.rms_torque, "duty", ("duty.rms_torque",),
        "duty-cycle RMS torque" + note)
