"""Derive step: the motor's nameplate worked through (rated torque, poles and slip, base speed, powers,
back-EMF constants, DC back-EMF, efficiency class) and its text fields read piece by piece (frame, IP code,
Ex temperature class), because rule expressions have no string methods."""

from __future__ import annotations

import math
import re
from typing import Any

from rulecheck.derive.record import Spec, default, put
from rulecheck.model import Model
from rulecheck.physics import machines as mc

__all__ = ["DEFAULT_BRUSH_DROP", "MAGNETISING_SHARE", "VOLTAGE_ZONE_A", "derive_motor", "ip_digits", "large_frame",
           "nema_rated"]

MAGNETISING_SHARE = 0.35  # no-load current of an induction motor ÷ rated current: common practice (0.25–0.45)
DEFAULT_BRUSH_DROP = 2.0  # V, brush drop of a DC machine: common practice
VOLTAGE_ZONE_A = 0.05  # IEC 60034-1 zone A (±5 % voltage, ±2 % frequency): rated torque without derating

_IP = re.compile(r"^IP([0-6X])([0-9X]|9K)")
_EX_TCLASS = re.compile(r"\bT([1-6])\b")
# NEMA frame designations: 3-digit frames 143–449 with a T/TS/TC/U/... suffix, or 4-digit large frames (5008L).
_NEMA_FRAME = re.compile(r"^(\d{2,3})(T|TS|TC|TSC|TZ|U|UC|Y|Z|C|JM|JP)$|^(\d{4})[A-Z]{0,2}$")
_IEC_FRAME = re.compile(r"^(\d{2,3})(S|M|L|MA|MB|LA|LB|SA|SB)?$")


def derive_motor(m: Model, spec: Spec) -> None:
    """Every motor value an engineer works out from the nameplate."""
    _rated_torque(m)
    _speeds(m)
    _base_speed(m)
    _powers(m)
    _electrical_input(m)
    _dc(m)
    _pm(m)
    _efficiency_class(m)
    _text(m)


def _rated_torque(m: Model) -> None:
    p, n = m.get("motor.rated_power"), m.get("motor.rated_speed")
    if p is not None and n is not None and n > 0:
        torque = mc.torque_from_power(p, n)
        put(m, "motor.rated_torque_from_nameplate", torque, "torque_from_power",
            ("motor.rated_power", "motor.rated_speed"), "rated power ÷ rated speed")
        put(m, "motor.rated_torque", torque, "torque_from_power", ("motor.rated_power", "motor.rated_speed"),
            "rated power ÷ rated speed")
    if m.has("motor.rated_torque"):
        given = m.provenance["motor.rated_torque"].source == "given"
        put(m, "motor.rated_torque_given", given, "provenance", ("motor.rated_torque",),
            "rated torque given in the spec" if given else "rated torque derived from power and speed")


def _speeds(m: Model) -> None:
    kind, n = m.get("motor.kind"), m.get("motor.rated_speed")
    poles, f = m.get("motor.poles"), m.get("motor.rated_frequency")
    if isinstance(poles, int) and poles > 0:
        put(m, "motor.pole_pairs", poles // 2 if poles % 2 == 0 else poles / 2, "poles", ("motor.poles",),
            "poles ÷ 2")
    if kind not in ("induction", "pm-synchronous") or f is None:
        return
    if isinstance(poles, int) and poles > 0:
        ns = mc.synchronous_speed(f, poles)
        put(m, "motor.synchronous_speed", ns, "synchronous_speed", ("motor.rated_frequency", "motor.poles"),
            "120·f/p")
        if kind == "induction" and n is not None:
            put(m, "motor.slip", (ns - n) / ns, "slip", ("motor.synchronous_speed", "motor.rated_speed"),
                "(n_s − n_N)/n_s")
    if n is not None and n > 0:
        put(m, "motor.poles_inferred", mc.poles_from_rated_speed(n, f), "poles_from_rated_speed",
            ("motor.rated_speed", "motor.rated_frequency"), "2·floor(60·f/n_N)")


def _base_speed(m: Model) -> None:
    n = m.get("motor.rated_speed")
    if n is None:
        return
    vn, vout = m.get("motor.rated_voltage"), m.get("drive.output_voltage_max")
    if m.get("motor.kind") == "induction" and vn and vout and vout < vn * (1 - VOLTAGE_ZONE_A):
        put(m, "motor.base_speed", n * vout / vn, "voltage_limit",
            ("motor.rated_speed", "drive.output_voltage_max", "motor.rated_voltage"),
            "rated speed × V_out,max ÷ V_N (the drive falls short of rated voltage by more than zone A, ±5 %)")
    else:
        # within IEC 60034-1 zone A the motor delivers rated torque at rated speed: no field weakening below it
        put(m, "motor.base_speed", n, "rated_speed", ("motor.rated_speed",), "rated speed")


def _single_phase(m: Model) -> bool:
    """A single-phase motor: a single-phase supply fed direct (on a drive the motor side is three-phase)."""
    return m.get("supply.phases") == 1 and m.get("drive.kind") in ("direct-on-line", "soft-starter")


def _powers(m: Model) -> None:
    kind, i_n = m.get("motor.kind"), m.get("motor.rated_current")
    if kind == "induction" and i_n is not None:
        default(m, "motor.magnetising_current", MAGNETISING_SHARE * i_n, "35 % of rated current (common practice)")
    v, pf, eff, p = (m.get(k) for k in ("motor.rated_voltage", "motor.power_factor", "motor.efficiency",
                                        "motor.rated_power"))
    if kind not in ("induction", "pm-synchronous") or None in (v, i_n, pf, eff):
        return
    three = not _single_phase(m)
    out = (mc.three_phase_output_power(v, i_n, pf, eff) if three else mc.single_phase_output_power(v, i_n, pf, eff))
    put(m, "motor.electrical_output", out, "three_phase_output_power",
        ("motor.rated_voltage", "motor.rated_current", "motor.power_factor", "motor.efficiency"),
        "√3·V·I·cosφ·η" if three else "V·I·cosφ·η")


def _electrical_input(m: Model) -> None:
    """The rated electrical input the nameplate implies, and the efficiency it implies (nameplate power check)."""
    _input(m)
    p, p_in = m.get("motor.rated_power"), m.get("motor.electrical_input")
    if p is not None and p_in:
        put(m, "motor.implied_efficiency", p / p_in, "ratio", ("motor.rated_power", "motor.electrical_input"),
            "P_N ÷ electrical input (√3·V·I·cosφ, V·I·cosφ or V_a·I_a)")


def _input(m: Model) -> None:
    kind = m.get("motor.kind")
    if kind == "dc":
        va = m.get("motor.armature_voltage", m.get("motor.rated_voltage"))
        ia = m.get("motor.armature_current", m.get("motor.rated_current"))
        if va is not None and ia is not None:
            put(m, "motor.electrical_input", va * ia, "product",
                ("motor.armature_voltage", "motor.armature_current"), "V_a·I_a (armature; field power excluded)")
        return
    v, i_n, pf = m.get("motor.rated_voltage"), m.get("motor.rated_current"), m.get("motor.power_factor")
    if kind not in ("induction", "pm-synchronous") or None in (v, i_n, pf):
        return
    if _single_phase(m):
        put(m, "motor.electrical_input", v * i_n * pf, "single_phase_input",
            ("motor.rated_voltage", "motor.rated_current", "motor.power_factor", "supply.phases"), "V·I·cosφ")
    else:
        put(m, "motor.electrical_input", math.sqrt(3.0) * v * i_n * pf, "three_phase_input",
            ("motor.rated_voltage", "motor.rated_current", "motor.power_factor"), "√3·V·I·cosφ")


def _dc(m: Model) -> None:
    if m.get("motor.kind") != "dc":
        return
    va, ia, ra = m.get("motor.armature_voltage"), m.get("motor.armature_current"), m.get("motor.armature_resistance")
    default(m, "motor.brush_drop", DEFAULT_BRUSH_DROP, "2 V (common practice)")
    if va is None:
        va = m.get("motor.rated_voltage")
    if None not in (va, ia, ra):
        put(m, "motor.rated_back_emf", mc.dc_back_emf_from_terminal(va, ia, ra, m.get("motor.brush_drop")),
            "dc_back_emf_from_terminal", ("motor.armature_voltage", "motor.armature_current",
                                           "motor.armature_resistance", "motor.brush_drop"),
            "V_aN − I_aN·R_a − V_br")


def _pm(m: Model) -> None:
    ke = m.get("motor.back_emf_constant")
    if m.get("motor.kind") != "pm-synchronous" or ke is None:
        return
    convention = m.get("motor.back_emf_convention")
    if convention is None:
        m.notes.append("motor.back_emf_convention not given: line-to-line RMS assumed")
        convention = "line-to-line-rms"
    ke_ll = mc.back_emf_constant_line_rms(ke, convention)
    given = ")" if m.get("motor.back_emf_convention") else ", assumed)"
    put(m, "motor.back_emf_constant_ll_rms", ke_ll, "back_emf_constant_line_rms",
        ("motor.back_emf_constant", "motor.back_emf_convention"), f"Ke as line-to-line RMS ({convention} given{given}")
    put(m, "motor.torque_constant_from_emf", mc.torque_constant_from_back_emf(ke_ll),
        "torque_constant_from_back_emf", ("motor.back_emf_constant_ll_rms",), "Kt = √3·Ke (sinusoidal)")


def _efficiency_class(m: Model) -> None:
    cls, p, poles = m.get("motor.efficiency_class"), m.get("motor.rated_power"), m.get("motor.poles")
    if cls and p is not None and isinstance(poles, int):
        limit = mc.efficiency_class_limit(cls, p, poles, m.get("motor.rated_frequency") or 50.0)
        put(m, "motor.efficiency_class_limit", limit, "efficiency_class_limit",
            ("motor.efficiency_class", "motor.rated_power", "motor.poles", "motor.rated_frequency"),
            "IEC 60034-30-1 limit for the declared class")
    if isinstance(cls, str) and cls.startswith("IE"):
        put(m, "motor.efficiency_class_number", int(cls[2:]), "efficiency_class", ("motor.efficiency_class",),
            "IEn → n")


# --- text fields -----------------------------------------------------------------------------


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


def _text(m: Model) -> None:
    put(m, "motor.nema_rated", nema_rated(m.get("motor.design"), m.get("motor.frame"), m.get("motor.service_factor")),
        "nema_rated", ("motor.design", "motor.frame", "motor.service_factor"), "design letter, frame or service factor")
    frame = m.get("motor.frame")
    if isinstance(frame, str):
        put(m, "motor.large_frame", large_frame(frame), "large_frame", ("motor.frame",), "IEC ≥ 280 or NEMA ≥ 500")
    digits = ip_digits(m.get("motor.enclosure"))
    if digits:
        put(m, "motor.enclosure_solids", digits[0], "ip_digits", ("motor.enclosure",), "IEC 60529 first numeral")
        put(m, "motor.enclosure_water", digits[1], "ip_digits", ("motor.enclosure",), "IEC 60529 second numeral")
    marking = m.get("motor.ex_marking")
    if isinstance(marking, str):
        found = _EX_TCLASS.search(marking.upper())
        if found:
            put(m, "motor.ex_temperature_class", int(found.group(1)), "ex_marking", ("motor.ex_marking",),
                "Tn in the marking")
