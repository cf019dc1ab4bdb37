"""Derive step: the duty cycle (segments in the spec) or the duty profile (a CSV file beside it) reduced to
what the thermal and peak checks need — peak and RMS torque, times, energies, the speed-aware utilisation —
and the torques the train must give (from the duty cycle, or from the running load and the acceleration)."""

from __future__ import annotations

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


def standstill_factor(m: Model) -> float:
    """β, the share of standstill time that counts for cooling: 1 with a fan of its own, else the default."""
    return 1.0 if m.get("motor.cooling") in ("forced", "liquid") else dyn.DEFAULT_STANDSTILL_FACTOR


def derive_duty(m: Model, spec: Spec) -> None:
    """Reduce the duty cycle or profile; then the peak and continuous torque the train must give."""
    i, eff = m.get("transmission.ratio"), m.get("transmission.efficiency")
    if isinstance((spec.data.get("load") or {}).get("duty"), list) and i and eff:
        reduction = _cycle(m, spec, i, eff)
        if reduction is None:
            return  # a segment lacks what it needs: nothing is derived from the cycle, nor guessed without it
        _reduced(m, reduction, ("load.duty", "train.inertia_total", "train.load_torque"))
    elif (spec.data.get("load") or {}).get("duty_profile") and spec.base is not None:
        reduction = _profile(m, spec)
        if reduction is not None:
            _reduced(m, reduction, ("load.duty_profile",))
    else:
        _without_cycle(m)


def _segments(m: Model, spec: Spec, i: float, eff: float) -> list[dyn.Segment] | None:
    """Return the duty segments at the motor shaft, or None if one lacks its duration, end speed or torque."""
    jt, tl = m.get("train.inertia_total"), m.get("train.load_torque")
    segments, speed = [], 0.0
    for k in range(len(spec.items("load", "duty"))):
        duration, to = spec.quantity(f"load.duty[{k}].duration"), spec.quantity(f"load.duty[{k}].speed_to")
        if duration is None or to is None:
            return None
        to *= i
        t_load = spec.quantity(f"load.duty[{k}].torque")
        if t_load is not None:
            t_motor = tr.motor_torque_for_power_flow(t_load, max(abs(speed), abs(to)) or 1.0, i, eff)
        elif tl is not None:
            t_motor = tl if (speed or to) else (m.get("train.holding_torque") or 0.0)
        else:
            return None
        segments.append(dyn.Segment(duration, speed, to, t_motor, jt or 0.0))
        speed = to
    return segments or None


def _cycle(m: Model, spec: Spec, i: float, eff: float) -> dyn.DutyReduction | None:
    segments = _segments(m, spec, i, eff)
    if segments is None:
        return None
    items = dyn.duty_cycle_torques(segments)
    reduction = dyn.reduce_duty_cycle(items, standstill_factor(m), capability(m))
    labels = [(seg or {}).get("label", "") for seg in spec.items("load", "duty")]
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
    return reduction


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
    tl = m.get("train.load_torque")
    if tl is None:
        return
    acc = m.get("train.acceleration_torque") or 0.0
    put(m, "train.peak_torque_required", tl + acc, "sum", ("train.load_torque", "train.acceleration_torque"),
        "running load torque + acceleration torque")
    put(m, "train.speed_at_peak", m.get("train.speed_max"), "duty", ("train.speed_max",),
        "top speed (end of acceleration)")
    put(m, "train.continuous_torque_required", tl, "load", ("train.load_torque",), "running load torque")


def _reduced(m: Model, r: dyn.DutyReduction, source: tuple[str, ...]) -> None:
    put(m, "duty.peak_torque", r.peak_torque, "reduce_duty_cycle", source, "largest |T| of the cycle")
    put(m, "duty.speed_at_peak", r.speed_at_peak, "reduce_duty_cycle", source, "speed at the peak torque")
    put(m, "duty.rms_torque", r.rms_torque, "reduce_duty_cycle", source, "√(Σ T²·t ÷ Σ t_eff)")
    put(m, "duty.mean_abs_torque", r.mean_abs_torque, "reduce_duty_cycle", source, "time mean of |T|")
    put(m, "duty.cycle_time", r.cycle_time, "reduce_duty_cycle", source, "sum of segment durations")
    put(m, "duty.standstill_time", r.standstill_time, "reduce_duty_cycle", source, "time at zero speed")
    put(m, "duty.max_speed", r.max_speed, "reduce_duty_cycle", source, "highest speed of the cycle")
    put(m, "duty.regenerative_energy", r.regenerative_energy, "reduce_duty_cycle", source, "∫ max(0, −T·ω) dt")
    put(m, "duty.peak_braking_power", r.peak_braking_power, "reduce_duty_cycle", source, "max(−T·ω)")
    if r.utilisation is not None:
        put(m, "duty.utilisation", r.utilisation, "reduce_duty_cycle", source, "√(Σ (T ÷ T_cont(n))²·t ÷ Σ t_eff)")
    put(m, "train.peak_torque_required", r.peak_torque, "duty", ("duty.peak_torque",), "duty-cycle peak torque")
    put(m, "train.speed_at_peak", r.speed_at_peak, "duty", ("duty.speed_at_peak",), "speed at the duty-cycle peak")
    put(m, "train.continuous_torque_required", r.rms_torque, "duty", ("duty.rms_torque",), "duty-cycle RMS torque")

