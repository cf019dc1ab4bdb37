"""Derive steps for the drive, supply, environment, transmission-rating, braking and installation rules.

Runs after the main derive stage (all of its values are available). Every value
is derived only when its inputs are present; given values are never
overwritten. Text fields that rules compare piece by piece (IP codes, the
temperature class of an Ex marking, NEMA frame designations) are read here,
because rule expressions have no string methods.
"""

from __future__ import annotations

import math
import re
from pathlib import Path
from typing import Any

from rulecheck.model import Model
from rulecheck.physics import machines as mc
from rulecheck.physics import supply as sp
from rulecheck.physics import transmission as tr

__all__ = ["DERIVED", "derive", "ip_digits", "nema_rated", "large_frame"]

DERIVED: dict[str, tuple[str | None, str]] = {
    "motor.nema_rated": ("flag", "the motor is rated to NEMA MG 1 (design letter A–D, NEMA frame or service factor)"),
    "motor.large_frame": ("flag", "IEC frame ≥ 280 or NEMA frame ≥ 500 (bearing-current trigger)"),
    "motor.enclosure_solids": (None, "first IP digit of the motor enclosure (X → 0)"),
    "motor.enclosure_water": (None, "second IP digit of the motor enclosure (9K → 9, X → 0)"),
    "environment.ingress_minimum": (None, "IP code the site needs (given, or the default for the location)"),
    "environment.ingress_solids_min": (None, "first IP digit the site needs"),
    "environment.ingress_water_min": (None, "second IP digit the site needs (9K → 9)"),
    "motor.ex_temperature_class": (None, "temperature class number n of the Ex marking (Tn)"),
    "environment.hazardous_area.temperature_class_number": (None, "temperature class number the area needs"),
    "motor.efficiency_class_number": (None, "declared IE class as a number (IE3 → 3)"),
    "transmission.application_service_factor": (None, "AGMA-style SF_app from hours per day, shock and starts"),
    "transmission.efficiency_band_low": ("fraction", "lowest plausible efficiency for the kind and stages"),
    "transmission.efficiency_band_high": ("fraction", "highest plausible efficiency for the kind and stages"),
    "train.peak_duration": ("time", "how long the peak torque lasts (duty segment or acceleration time)"),
    "train.braking_energy": ("energy", "energy one ramped stop returns to the DC bus; needs load.deceleration_time"),
    "train.braking_power_peak": ("power", "largest power returned to the DC bus"),
    "train.braking_power_mean": ("power", "mean regenerated power over the cycle (E_cycle ÷ t_cycle)"),
    "train.regeneration_sustained": ("flag", "the load regenerates at steady speed (lowering, downhill, unwinding)"),
    "site.drive_derating_default_used": ("flag", "a common-practice default was used for the drive's site derating"),
}

# Default minimum IP code per kind of location (rulebook R28; the mapping is common practice).
LOCATION_MINIMUM_IP = {
    "indoor-clean": "IP23",
    "general-industrial": "IP54",
    "outdoor": "IP55",
    "washdown": "IP65",
    "immersion": "IPX7",
}

_IP = re.compile(r"^IP([0-6X])([0-9X]|9K)")
_EX_TCLASS = re.compile(r"\bT([1-6])\b")
# NEMA frame designations: 3-digit frames 143–449 with a T/TS/TC/U/... suffix, or 4-digit large frames (5008L).
_NEMA_FRAME = re.compile(r"^(\d{2,3})(T|TS|TC|TSC|TZ|U|UC|Y|Z|C|JM|JP)$|^(\d{4})[A-Z]{0,2}$")
_IEC_FRAME = re.compile(r"^(\d{2,3})(S|M|L|MA|MB|LA|LB|SA|SB)?$")
_GEAR_KINDS = {"helical", "bevel", "helical-bevel"}
# Plausible efficiency per stage, or per transmission, by kind (rulebook R33; bands are common practice).
_EFFICIENCY_BANDS = {
    "helical": ((0.97, 0.99), True),
    "bevel": ((0.97, 0.99), True),
    "helical-bevel": ((0.97, 0.99), True),
    "planetary": ((0.95, 0.98), True),
    "worm": ((0.30, 0.92), False),
    "belt": ((0.95, 0.98), False),
    "chain": ((0.95, 0.98), False),
    "coupling": ((0.98, 1.00), False),
}


def ip_digits(code: str) -> tuple[int, int] | None:
    """Return (solids digit, water digit) of an IP code, X read as 0 and 9K as 9; None if not an IP code."""
    match = _IP.match(code.strip().upper()) if isinstance(code, str) else None
    if not match:
        return None
    solids, water = match.groups()
    return (0 if solids == "X" else int(solids), 0 if water == "X" else int(water[0]))


def nema_rated(design: Any, frame: Any, service_factor: Any) -> bool:
    """Return whether nameplate data mark a NEMA MG 1 motor (design letter A–D, NEMA frame, SF above 1)."""
    if design in ("A", "B", "C", "D"):
        return True
    if isinstance(frame, str) and _NEMA_FRAME.match(frame.strip().upper()) and not _IEC_FRAME.match(
            frame.strip().upper()):
        return True
    return isinstance(service_factor, (int, float)) and service_factor > 1.0


def large_frame(frame: str) -> bool | None:
    """Return whether a frame is IEC ≥ 280 or NEMA ≥ 500 (4-digit 5000-series); None if not recognised."""
    text = frame.strip().upper()
    iec = _IEC_FRAME.match(text)
    if iec:
        return int(iec.group(1)) >= 280
    nema = _NEMA_FRAME.match(text)
    if nema:
        if nema.group(3):
            return int(nema.group(3)) >= 5000
        return False  # three-digit NEMA frames end at 449
    return None


def _d(m: Model, path: str, value: Any, method: str, inputs: tuple[str, ...], note: str) -> None:
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return
    m.derive(path, value, DERIVED.get(path, (None,))[0] if path in DERIVED else _kind(path), method, inputs, note)


def _kind(path: str) -> str | None:
    from rulecheck.derive import DERIVED as MAIN

    return MAIN.get(path, (None,))[0]


def derive(m: Model, data: dict[str, Any], base: Path | None) -> None:
    """Add this module's derived values to ``m`` (see :data:`DERIVED`)."""
    _site_drive(m)
    _motor_text(m)
    _environment_text(m)
    _continuous_torque(m)
    _motor_currents(m)
    _peak(m, data)
    _transmission(m)
    _braking(m, data)


def _site_drive(m: Model) -> None:
    """Recompute the default drive derating against the drive's own stated ambient maximum."""
    alt, amb = m.get("environment.altitude"), m.get("environment.ambient_max")
    outside = (alt is not None and alt > 1000.0) or (amb is not None and amb > 40.0)
    if m.has("drive.derating"):
        _d(m, "site.drive_derating_default_used", False, "given", ("drive.derating",), "manufacturer's factor")
        return
    _d(m, "site.drive_derating_default_used", bool(outside), "drive_derating_factor",
       ("environment.altitude", "environment.ambient_max"), "common-practice default used")
    limit = m.get("drive.ambient_max")
    if limit is not None:
        k = sp.drive_derating_factor(alt or 0.0, amb if amb is not None else 40.0, limit)
        m.derive("site.drive_derating", k, "fraction", "drive_derating_factor",
                 ("environment.altitude", "environment.ambient_max", "drive.ambient_max"),
                 "−1 %/100 m above 1000 m × −1 %/K above 40 °C, 0 above the drive's stated maximum (common practice)")


def _motor_text(m: Model) -> None:
    _d(m, "motor.nema_rated", nema_rated(m.get("motor.design"), m.get("motor.frame"), m.get("motor.service_factor")),
       "nema_rated", ("motor.design", "motor.frame", "motor.service_factor"), "design letter, frame or service factor")
    frame = m.get("motor.frame")
    if isinstance(frame, str):
        _d(m, "motor.large_frame", large_frame(frame), "large_frame", ("motor.frame",), "IEC ≥ 280 or NEMA ≥ 500")
    digits = ip_digits(m.get("motor.enclosure"))
    if digits:
        _d(m, "motor.enclosure_solids", digits[0], "ip_digits", ("motor.enclosure",), "IEC 60529 first numeral")
        _d(m, "motor.enclosure_water", digits[1], "ip_digits", ("motor.enclosure",), "IEC 60529 second numeral")
    marking = m.get("motor.ex_marking")
    if isinstance(marking, str):
        found = _EX_TCLASS.search(marking.upper())
        if found:
            _d(m, "motor.ex_temperature_class", int(found.group(1)), "ex_marking", ("motor.ex_marking",),
               "Tn in the marking")
    cls = m.get("motor.efficiency_class")
    if isinstance(cls, str) and cls.startswith("IE"):
        _d(m, "motor.efficiency_class_number", int(cls[2:]), "efficiency_class", ("motor.efficiency_class",),
           "IEn → n")


def _environment_text(m: Model) -> None:
    required = m.get("environment.ingress_required")
    location = m.get("environment.location")
    source = "environment.ingress_required"
    if not isinstance(required, str) and location in LOCATION_MINIMUM_IP:
        required, source = LOCATION_MINIMUM_IP[location], "environment.location"
    digits = ip_digits(required) if isinstance(required, str) else None
    if digits:
        note = "given" if source == "environment.ingress_required" else f"default for {location} (common practice)"
        _d(m, "environment.ingress_minimum", required, "ingress_minimum", (source,), note)
        _d(m, "environment.ingress_solids_min", digits[0], "ip_digits", (source,), note)
        _d(m, "environment.ingress_water_min", digits[1], "ip_digits", (source,), note)
    tclass = m.get("environment.hazardous_area.temperature_class")
    if isinstance(tclass, str):
        _d(m, "environment.hazardous_area.temperature_class_number", int(tclass[1:]), "temperature_class",
           ("environment.hazardous_area.temperature_class",), "Tn → n")


def _current_at(m: Model, torque: float) -> tuple[float, str, tuple[str, ...]] | None:
    """Return (motor current [A] at a torque, method, inputs), or None if the motor data do not allow it."""
    kind = m.get("motor.kind")
    tn = m.get("motor.rated_torque")
    if kind == "induction" and tn and m.has("motor.rated_current"):
        i = mc.induction_current_at_torque(abs(torque), tn, m.get("motor.rated_current"),
                                           m.get("motor.magnetising_current"))
        return i, "induction_current_at_torque", ("motor.rated_torque", "motor.rated_current",
                                                  "motor.magnetising_current")
    if kind == "pm-synchronous":
        kt_path = "motor.torque_constant" if m.has("motor.torque_constant") else "motor.torque_constant_from_emf"
        kt = m.get(kt_path)
        if kt:
            return abs(torque) / kt, "torque ÷ Kt", (kt_path,)
    if kind == "dc" and tn and m.has("motor.armature_current"):
        # k·Φ at rated field is T_N ÷ I_aN; above base speed the weakened field needs more current per N·m
        return abs(torque) / tn * m.get("motor.armature_current"), "dc_armature_current_for_torque", (
            "motor.rated_torque", "motor.armature_current")
    return None


def _continuous_torque(m: Model) -> None:
    """Restore train.continuous_torque_required when the main stage's site step has removed it."""
    if m.has("train.continuous_torque_required"):
        return
    if m.has("duty.rms_torque"):
        m.derive("train.continuous_torque_required", m.get("duty.rms_torque"), "torque", "duty", ("duty.rms_torque",),
                 "duty-cycle RMS torque")
    elif m.has("train.load_torque"):
        m.derive("train.continuous_torque_required", m.get("train.load_torque"), "torque", "load",
                 ("train.load_torque",), "running load torque")


def _motor_currents(m: Model) -> None:
    for torque_path, path, what in (("train.continuous_torque_required", "train.motor_current_required", "RMS"),
                                    ("train.peak_torque_required", "train.motor_current_peak", "peak")):
        torque = m.get(torque_path)
        if torque is None or m.has(path):
            continue
        found = _current_at(m, torque)
        if found:
            value, method, inputs = found
            m.derive(path, value, "current", method, (torque_path, *inputs), f"motor current at the {what} torque")


def _peak(m: Model, data: dict[str, Any]) -> None:
    segments = m.lists.get("duty.segments")
    if segments:
        worst = max(segments, key=lambda s: abs(s["torque"]))
        _d(m, "train.peak_duration", worst["duration"], "duty", ("load.duty",), "duration of the peak-torque segment")
    elif (m.get("train.acceleration_torque") or 0.0) > 0.0 and m.has("load.acceleration_time"):
        _d(m, "train.peak_duration", m.get("load.acceleration_time"), "acceleration", ("load.acceleration_time",),
           "the peak lasts the acceleration time")
    i, eff = m.get("transmission.ratio"), m.get("transmission.efficiency")
    peak = m.get("train.peak_torque_required")
    if peak is not None and i and eff and not m.has("train.gear_output_torque_peak"):
        m.derive("train.gear_output_torque_peak", abs(peak) * i * eff, "torque", "product",
                 ("train.peak_torque_required", "transmission.ratio", "transmission.efficiency"),
                 "peak motor torque × i × η")


def _transmission(m: Model) -> None:
    hours, shock = m.get("transmission.hours_per_day"), m.get("transmission.shock")
    if hours is not None and shock is not None:
        _d(m, "transmission.application_service_factor",
           tr.application_service_factor(hours, shock, m.get("load.starts_per_hour") or 0.0),
           "application_service_factor", ("transmission.hours_per_day", "transmission.shock", "load.starts_per_hour"),
           "AGMA-style table, uniform power source (rulebook R31, K32)")
    kind = m.get("transmission.kind")
    if kind in _EFFICIENCY_BANDS:
        (low, high), per_stage = _EFFICIENCY_BANDS[kind]
        stages = m.get("transmission.stages") or 1 if per_stage else 1
        _d(m, "transmission.efficiency_band_low", low**stages, "efficiency_band", ("transmission.kind",
                                                                                 "transmission.stages"),
           f"{low:g} per stage" if per_stage else f"{low:g} for {kind}")
        _d(m, "transmission.efficiency_band_high", high**stages, "efficiency_band", ("transmission.kind",
                                                                                   "transmission.stages"),
           f"{high:g} per stage" if per_stage else f"{high:g} for {kind}")


def _sustained(m: Model) -> bool:
    """Return whether the load regenerates at steady speed: hoist lowering, downhill belt, braked segment."""
    if m.get("load.model") == "hoist" or m.get("load.lowering_power") is not None:
        return True
    if m.get("load.model") == "conveyor" and (m.get("load.incline") or 0.0) < 0.0:
        return True
    for seg in m.lists.get("duty.segments") or []:
        steady = seg["speed_from"] == seg["speed_to"] and seg["speed_to"] != 0.0
        if steady and seg["torque"] * seg["speed_to"] < 0.0:
            return True
    return False


def _braking(m: Model, data: dict[str, Any]) -> None:
    if m.get("drive.kind") != "inverter":
        return
    _d(m, "train.regeneration_sustained", _sustained(m), "regeneration", ("load.model", "load.incline", "load.duty"),
       "hoist, downhill conveyor or a duty segment braking at steady speed")
    eta = (m.get("transmission.reverse_efficiency") or m.get("transmission.efficiency") or 1.0) * (
        m.get("motor.efficiency") or 1.0)
    eta_inputs = ("transmission.reverse_efficiency", "motor.efficiency")
    if m.has("duty.regenerative_energy", "duty.cycle_time"):
        e_cycle = m.get("duty.regenerative_energy") * eta
        _d(m, "train.braking_energy", e_cycle, "duty", ("duty.regenerative_energy", *eta_inputs),
           "regenerated energy per cycle × η_rev × η_mot (whole cycle, conservative per stop)")
        _d(m, "train.braking_power_peak", m.get("duty.peak_braking_power", 0.0) * eta, "duty",
           ("duty.peak_braking_power", *eta_inputs), "largest −T·ω of the cycle × η")
        _d(m, "train.braking_power_mean", e_cycle / m.get("duty.cycle_time"), "duty",
           ("duty.regenerative_energy", "duty.cycle_time"), "E_cycle ÷ t_cycle")
        return
    jt, w = m.get("train.inertia_total"), m.get("train.speed_max")
    e_mech = _stopping(m, jt, w, eta, eta_inputs) if jt is not None and w is not None else None
    lowering = m.get("load.lowering_power")
    if lowering is not None:
        peak = max(m.get("train.braking_power_peak", 0.0), lowering * eta)
        m.derive("train.braking_power_peak", peak, "power", "braking_power", ("load.lowering_power", *eta_inputs),
                 "largest of the stopping peak and steady lowering power × η_rev × η_mot")
        _d(m, "train.braking_power_mean", lowering * eta, "hoist_lowering_power", ("load.lowering_power", *eta_inputs),
           "continuous lowering × η_rev × η_mot (no duty cycle given: conservative)")
    elif e_mech is not None and m.get("load.starts_per_hour"):
        _d(m, "train.braking_power_mean", e_mech * eta * m.get("load.starts_per_hour") / 3600.0, "braking_energy",
           ("train.braking_energy", "load.starts_per_hour"), "E_stop × stops per hour ÷ 3600 s")


def _stopping(m: Model, jt: float, w: float, eta: float, eta_inputs: tuple[str, ...]) -> float | None:
    """Derive the energy and peak power that one ramped stop from top speed returns; return it before η [J].

    Without a deceleration time the drive may coast or ramp slowly: nothing is derived, and the braking
    rule reports what it would need.
    """
    if m.get("drive.stop") == "coast":
        # the inverter stops modulating and the load coasts: nothing flows back to the DC bus
        _d(m, "train.braking_energy", 0.0, "coast", ("drive.stop",), "coast to stop: no regeneration")
        _d(m, "train.braking_power_peak", 0.0, "coast", ("drive.stop",), "coast to stop: no regeneration")
        return 0.0
    t_dec = m.get("load.deceleration_time")
    if not t_dec:
        return None
    i = m.get("transmission.ratio") or 1.0
    eff = m.get("transmission.efficiency") or 1.0
    load_torque = m.functions.get("load_torque")
    # a linear ramp from ω to 0 in t_dec; the motor gives T_m = T_L(ω)/(i·η) − J·ω/t_dec and regenerates while T_m < 0
    steps = 200
    decel_torque = jt * w / t_dec
    energy = 0.0
    peak = 0.0
    dt = t_dec / steps
    for k in range(steps + 1):
        speed = w * (1.0 - k / steps)
        t_load = abs(float(load_torque(speed / i))) / (i * eff) if load_torque is not None else 0.0
        power = max(0.0, (decel_torque - t_load) * speed)
        peak = max(peak, power)
        energy += power * (dt if 0 < k < steps else dt / 2)
    _d(m, "train.braking_power_peak", peak * eta, "braking_power",
       ("train.inertia_total", "train.speed_max", "load.deceleration_time", "train.load_torque", *eta_inputs),
       "max over the ramp of (J·ω/t_dec − T_L(ω))·ω × η_rev × η_mot")
    _d(m, "train.braking_energy", energy * eta, "braking_energy",
       ("train.inertia_total", "train.speed_max", "load.deceleration_time", *eta_inputs),
       "∫ max(0, (J·ω/t_dec − T_L(ω))·ω) dt over a linear ramp to rest × η_rev × η_mot")
    return energy
