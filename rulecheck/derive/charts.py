"""Chart data for reports, computed from the model (renderers only draw what is here): the continuous
capability comes from the same T_cont(n) as the continuous margin (:func:`rulecheck.derive.train.capability`).

All at the motor shaft: speeds in r/min, torques in N*m, voltages in V, times in s.
"""

from __future__ import annotations

import inspect
from typing import Any

import numpy as np

from rulecheck import units
from rulecheck.derive.installation import _overhauling_torque as overhauling_torque
from rulecheck.derive.starting import _available as peak_available
from rulecheck.derive.starting import _dol_curve as full_voltage_curve
from rulecheck.derive.starting import _load_at_motor as load_at_motor
from rulecheck.derive.starting import _run_up_end as run_up_end
from rulecheck.derive.starting import dol_starting_curve, soft_start_limited_curve
from rulecheck.derive.train import _reverse_efficiency as reverse_efficiency
from rulecheck.derive.train import capability
from rulecheck.model import Model
from rulecheck.physics import machines as mc

__all__ = ["chart_data"]

RPM = units.RPM_PER_RAD_S


def _r(x: float) -> float:
    return float(f"{x:.5g}")


def chart_data(model: Model) -> dict[str, Any]:
    """Return the torque–speed (or, for a direct-on-line or soft-starter start, the starting), duty-cycle and
    back-EMF chart data that the model supports."""
    charts: dict[str, Any] = {}
    starting = _starting(model)
    ts = None if starting else _torque_speed(model)
    if starting:
        charts["starting"] = starting
    if ts:
        charts["torque_speed"] = ts
    duty = _duty(model)
    if duty:
        charts["duty"] = duty
    emf = _back_emf(model)
    if emf:
        charts["back_emf"] = emf
    return charts


def _torque_speed(m: Model) -> dict[str, Any] | None:
    cap = capability(m)
    nb = m.get("motor.base_speed")
    if cap is None or not nb:
        return None
    top = max(x for x in (m.get("motor.max_speed"), m.get("train.speed_max"), nb * 1.2) if x)
    speeds = np.unique(np.concatenate([np.linspace(0.0, top, 41), [nb]]))
    cont = np.asarray(cap(speeds), dtype=float)
    peak_limit = m.get("motor.peak_torque") or m.get("motor.breakdown_torque")
    out: dict[str, Any] = {
        "speed_unit": "r/min",
        "torque_unit": "N*m",
        "motor_continuous": [[_r(s * RPM), _r(t)] for s, t in zip(speeds, cont, strict=True)],
    }
    available = peak_available(m)
    if available is not None:
        # the short-time torque the peak rule compares with: the motor's, limited by the drive's overload current
        out["motor_peak"] = [[_r(s * RPM), _r(available(float(s)))] for s in speeds]
    elif peak_limit:
        bd = m.get("motor.breakdown_torque")
        peak = []
        for s in speeds:
            ratio = s / nb
            if ratio <= 1.0:
                value = peak_limit
            elif m.get("motor.kind") == "induction" and bd:
                # pull-out torque falls with the square of the field-weakening ratio
                value = min(peak_limit * (1.0 / ratio), mc.breakdown_torque_field_weakening(bd, nb, s))
            else:
                value = peak_limit / ratio
            peak.append([_r(s * RPM), _r(value)])
        out["motor_peak"] = peak
    curve = _load_curve(m)
    if curve:
        out["load_curve"] = curve
    if not m.get("duty.cycle_given"):
        crossings = _crossings(m, cap)
        if crossings:
            out["continuous_crossings"] = crossings
    out["load_points"] = _points(m)
    braking = _braking(m, cap, available)
    if braking:
        out["braking"] = braking
    out["duty_segments"] = [
        {"speed_from": _r(s["speed_from"] * RPM), "speed_to": _r(s["speed_to"] * RPM), "torque": _r(s["torque"]),
         "label": s.get("label", "")}
        for s in m.lists.get("duty.segments", [])
    ][:200]
    return out


def _braking(m: Model, cap: Any, available: Any) -> dict[str, Any] | None:
    """Return the generating quadrant where the load overhauls at steady speed (the torque with which it drives,
    the same as the braking rules take: :func:`rulecheck.derive.installation._overhauling_torque`), referred to
    the motor shaft (× η_rev ÷ i), with the motor's continuous and short-time capability there (the same
    functions as motoring: a motor brakes with the torque it can give). A hoist lowers at negative speed holding
    a positive torque; a downhill belt runs forward against a negative torque."""
    found = overhauling_torque(m)
    i, nmax = m.get("transmission.ratio"), m.get("load.speed_max")
    if found is None or not i or not nmax:
        return None
    torque = found[0] * reverse_efficiency(m) / i
    lowering = m.get("load.model") == "hoist"
    lo, hi = (m.get("load.speed_min") or 0.0) * i, nmax * i
    speeds = -np.linspace(hi, lo, 25) if lowering else np.linspace(lo, hi, 25)
    sign = 1.0 if lowering else -1.0  # the sign of the motor's torque in the generating quadrant
    out: dict[str, Any] = {
        "quadrant": "reverse-speed" if lowering else "reverse-torque",
        "load": [[_r(w * RPM), _r(sign * torque)] for w in speeds],
        "motor_continuous": [[_r(w * RPM), _r(sign * float(cap(abs(float(w)))))] for w in speeds],
        "means": str(m.get("drive.braking.kind") or "none"),
        "how": found[1],
        "rule": "regen-braking-energy",  # the rule that judges the means of taking the braking energy
    }
    if available is not None:
        out["motor_peak"] = [[_r(w * RPM), _r(sign * available(abs(float(w))))] for w in speeds]
    return out


def _points(m: Model) -> list[dict[str, Any]]:
    """Return the operating points, each with the rule that judges it (``rule``; the report marks a point whose
    rule failed): the worst point of the continuous sweep, the peak and the RMS torque of a duty cycle."""
    points: list[dict[str, Any]] = []
    i, eff = m.get("transmission.ratio"), m.get("transmission.efficiency")
    fn = m.functions.get("load_torque")
    nmin, nmax = m.get("load.speed_min"), m.get("load.speed_max")
    if fn is not None and i and eff and nmax is not None:
        for label, n in (("minimum speed", nmin), ("maximum speed", nmax)):
            if n is not None:
                points.append({"speed": _r(n * i * RPM), "torque": _r(abs(float(fn(n))) / (i * eff)), "label": label})
    duty = bool(m.get("duty.cycle_given"))
    if not duty and m.has("train.continuous_speed_worst", "train.continuous_required_worst"):
        # the point torque-margin-continuous reports: its worst speed and the torque needed there
        points.append({"speed": _r(m.get("train.continuous_speed_worst") * RPM),
                       "torque": _r(m.get("train.continuous_required_worst")), "label": "continuous worst",
                       "rule": "torque-margin-continuous"})
    if m.has("train.speed_at_peak", "train.peak_torque_required"):
        points.append({"speed": _r(m.get("train.speed_at_peak") * RPM),
                       "torque": _r(m.get("train.peak_torque_required")), "label": "peak", "rule": "torque-peak"})
    if duty and m.has("train.continuous_torque_required", "train.speed_max"):
        points.append({"speed": _r(m.get("train.speed_max") * RPM),
                       "torque": _r(m.get("train.continuous_torque_required")), "label": "RMS",
                       "rule": "torque-rms-duty-cycle"})
    return points


START_POINTS = 61  # speeds from standstill to synchronous speed on the starting chart


def _starting(m: Model) -> dict[str, Any] | None:
    """Return the starting chart of a direct-on-line or soft-starter start: the motor's torque during the start
    (the same curve the run-up and soft-start margin use: × u² at the start's voltage dip, or at the soft
    starter's current limit), its full-voltage curve, and the load from breakaway to the end of the run-up."""
    kind = m.get("drive.kind")
    if kind not in ("direct-on-line", "soft-starter") or m.get("motor.kind") != "induction":
        return None
    load, ns, breakaway = load_at_motor(m), m.get("motor.synchronous_speed"), m.get("train.breakaway_torque")
    if kind == "direct-on-line":
        found = dol_starting_curve(m)
        full, u = (full_voltage_curve(m), found[1]) if found else (None, None)
        during, rule = (found[0] if found else None), "dol-starting"
    else:
        during, rule, u = soft_start_limited_curve(m), "soft-starter-starting", m.get("train.soft_start_voltage")
        full = full_voltage_curve(m)
    if during is None or full is None or load is None or not ns or not m.get("motor.rated_speed"):
        return None
    speeds = np.linspace(0.0, ns, START_POINTS)
    end = run_up_end(m)
    out: dict[str, Any] = {
        "speed_unit": "r/min",
        "torque_unit": "N*m",
        "method": kind,
        "motor_full_voltage": [[_r(w * RPM), _r(full(float(w)))] for w in speeds],
        "motor_starting": [[_r(w * RPM), _r(during(float(w)))] for w in speeds],
        "load_curve": [[_r(w * RPM), _r(breakaway if k == 0 and breakaway is not None else load(float(w)))]
                       for k, w in enumerate(np.linspace(0.0, end, 41))],
        "run_up_end": _r(end * RPM),
    }
    if u is not None:
        out["voltage_ratio"] = _r(u)
        out["voltage_dip_counted"] = kind == "soft-starter" or m.has("train.starting_voltage")
    # the start the rule judges (the motor's torque at standstill during the start: the voltage dip or the
    # current limit), the load's breakaway torque, and on a soft starter the speed of the smallest margin
    start = "start at the current limit" if kind == "soft-starter" else (
        f"start at {u * 100:.0f} % of rated voltage" if out.get("voltage_dip_counted") else "start at full voltage")
    points = [{"speed": 0.0, "torque": _r(during(0.0)), "label": start, "rule": rule}]
    if breakaway is not None:
        points.append({"speed": 0.0, "torque": _r(breakaway), "label": "breakaway"})
    if kind == "soft-starter" and m.has("train.soft_start_margin_speed"):
        w = m.get("train.soft_start_margin_speed")
        if w > 0:
            points.append({"speed": _r(w * RPM), "torque": _r(load(w)), "label": "smallest margin"})
    out["load_points"] = points
    if m.get("motor.rated_torque") is not None:
        out["rated_torque"] = _r(m.get("motor.rated_torque"))
    return out


def _crossings(m: Model, cap: Any) -> list[dict[str, float]]:
    """Return the speeds in the load's continuous range where the load torque at the motor shaft meets the
    continuous capability (the two functions torque-margin-continuous compares), each found by bisection to
    1e-6 of the range: where the load passes from above the capability to below it, or back."""
    load = load_at_motor(m)
    i, nmax = m.get("transmission.ratio", 1.0) or 1.0, m.get("load.speed_max")
    if load is None or not nmax:
        return []

    def gap(w: float) -> float:
        return float(load(w)) - float(cap(w))

    speeds = np.linspace((m.get("load.speed_min") or 0.0) * i, nmax * i, 2 * LOAD_CURVE_POINTS + 1).tolist()
    out = []
    for a, b in zip(speeds, speeds[1:], strict=False):
        ga, gb = gap(a), gap(b)
        if ga == 0.0 or ga * gb >= 0.0:
            continue
        for _ in range(60):
            mid = 0.5 * (a + b)
            if gap(mid) * ga > 0.0:
                a = mid
            else:
                b = mid
        w = 0.5 * (a + b)
        out.append({"speed": _r(w * RPM), "torque": _r(float(cap(w))),
                    "direction": "falls below" if ga > 0.0 else "rises above"})
    return out


LOAD_CURVE_POINTS = 25  # speeds of the load curve across the continuous range


def _load_curve(m: Model) -> list[list[float]]:
    """Return the load torque at the motor shaft across the continuous speed range (the load model, referred
    through the transmission as the continuous-margin sweep refers it), as [motor r/min, N*m] pairs."""
    load = load_at_motor(m)
    i = m.get("transmission.ratio", 1.0) or 1.0
    nmax = m.get("load.speed_max")
    if load is None or not nmax:
        return []
    nmin = m.get("load.speed_min") or 0.0
    speeds = np.linspace(nmin * i, nmax * i, LOAD_CURVE_POINTS)
    return [[_r(w * RPM), _r(load(float(w)))] for w in speeds]


def _duty(m: Model) -> dict[str, Any] | None:
    samples: list[list[float]] = []
    if m.lists.get("duty.segments"):
        t = 0.0
        for s in m.lists["duty.segments"][:500]:
            samples.append([_r(t), _r(s["speed_from"] * RPM), _r(s["torque"])])
            t += s["duration"]
            samples.append([_r(t), _r(s["speed_to"] * RPM), _r(s["torque"])])
    elif m.lists.get("duty.profile"):
        samples = [[_r(t), _r(w * RPM), _r(q)] for t, w, q in m.lists["duty.profile"]]
    if not samples:
        return None
    out: dict[str, Any] = {"time_unit": "s", "speed_unit": "r/min", "torque_unit": "N*m", "samples": samples}
    # the lines the RMS rule compares: the cycle's RMS torque (every second counted where the motor has an S3–S6
    # rating, derived only then) and the motor's rated torque
    rms = m.get("duty.rms_torque_duty_rating")
    rms = rms if rms is not None else m.get("duty.rms_torque")
    if rms is not None:
        out["rms_torque"] = _r(rms)
        out["rms_rule"] = "torque-rms-duty-cycle"  # the rule that judges it; the report marks it when it fails
    if m.get("motor.rated_torque") is not None:
        out["rated_torque"] = _r(m.get("motor.rated_torque"))
    return out


def _back_emf(m: Model) -> dict[str, Any] | None:
    ke = m.get("motor.back_emf_constant_ll_rms")
    if ke is None or m.get("motor.kind") != "pm-synchronous":
        return None
    # up to the highest speed the shaft may see without a rule's overspeed allowance: the motor's limit,
    # the top operating speed or the load's runaway speed at the motor, whichever is highest
    runaway = m.get("load.runaway_speed") * m.get("transmission.ratio", 1.0) if m.has("load.runaway_speed") else None
    top = max((x for x in (m.get("motor.max_speed"), m.get("train.speed_max"), runaway) if x),
              default=m.get("motor.rated_speed"))
    if not top:
        return None
    speeds = np.linspace(0.0, top, 21)
    out: dict[str, Any] = {
        "speed_unit": "r/min",
        "voltage_unit": "V",
        "speed": [_r(s * RPM) for s in speeds],
        "emf_line_rms": [_r(mc.back_emf_at_speed(ke, s)) for s in speeds],
        "rectified_peak": [_r(mc.uncontrolled_generation_voltage(ke, s)) for s in speeds],
        # the factor the rectified peak carries (cold magnets and Ke tolerance), stated on the chart
        "rectified_peak_factor": inspect.signature(mc.uncontrolled_generation_voltage).parameters[
            "cold_factor"].default,
    }
    if m.get("drive.output_voltage_max") is not None:
        out["available_voltage"] = _r(m.get("drive.output_voltage_max"))
    trip = m.get("drive.dc_bus_trip")
    if trip is not None:
        out["dc_bus_trip"] = _r(trip)
        # where the rectified peak reaches the drawn trip level (the physics function pm-uncontrolled-generation
        # uses for its safe speed); the report marks it when that rule fails
        reach = mc.uncontrolled_generation_speed_limit(ke, trip, out["rectified_peak_factor"])
        if 0.0 < reach <= top:
            out["trip_crossing"] = {"speed": _r(reach * RPM), "voltage": _r(trip), "rule": "pm-uncontrolled-generation"}
    return out
