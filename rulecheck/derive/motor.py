"""Derive step: the motor's nameplate worked through (rated torque, poles and slip, base speed, powers,
back-EMF constants, DC back-EMF, efficiency class) and its text fields read piece by piece (frame, IP code,
Ex temperature class), because rule expressions have no string methods."""

from __future__ import annotations

import math
import re
from typing import Any

from rulecheck import units
from rulecheck.derive.record import Spec, default, put
from rulecheck.model import Model
from rulecheck.physics import machines as mc

__all__ = ["DEFAULT_BRUSH_DROP", "IEC_EFFICIENCY_BREAKPOINT", "IEC_EFFICIENCY_TOLERANCE", "IEC_POWER_FACTOR_TOLERANCE",
           "MAGNETISING_SHARE", "VOLTAGE_ZONE_A", "derive_motor", "ip_digits", "large_frame", "nameplate_band",
           "nema_rated"]

MAGNETISING_SHARE = 0.35  # no-load current of an induction motor ÷ rated current: common practice (0.25–0.45)
DEFAULT_BRUSH_DROP = 2.0  # V, brush drop of a DC machine: common practice
VOLTAGE_ZONE_A = 0.05  # IEC 60034-1 zone A (±5 % voltage, ±2 % frequency): rated torque without derating

# IEC 60034-1 schedule of tolerances (Table 20 in the 2010 edition; from memory, not verified against the text; older
# editions put the efficiency breakpoint at 50 kW): efficiency −15 % of (1 − η) up to 150 kW, −10 % of (1 − η)
# above; power factor of induction machines −(1 − cosφ)/6, at least 0.02 and at most 0.07 (absolute).
IEC_EFFICIENCY_TOLERANCE = (0.15, 0.10)  # share of (1 − η): up to and above the breakpoint
IEC_EFFICIENCY_BREAKPOINT = 150e3  # W
IEC_POWER_FACTOR_TOLERANCE = (1.0 / 6.0, 0.02, 0.07)  # share of (1 − cosφ), smallest, largest
_FIELD_WITHOUT_POWER = ("permanent-magnet", "series")  # no separate excitation input: 0 W beside V_a·I_a

_IP = re.compile(r"^IP([0-6X])([0-9X]|9K)")
_EX_TCLASS = re.compile(r"\bT([1-6])\b")
# NEMA frame designations: 3-digit frames 143–449 with a T/TS/TC/U/... suffix, or 4-digit large frames (5008L).
_NEMA_FRAME = re.compile(r"^(\d{2,3})(T|TS|TC|TSC|TZ|U|UC|Y|Z|C|JM|JP)$|^(\d{4})[A-Z]{0,2}$")
_IEC_FRAME = re.compile(r"^(\d{2,3})(S|M|L|MA|MB|LA|LB|SA|SB)?$")


def derive_motor(m: Model, spec: Spec) -> None:
    """Every motor value an engineer works out from the nameplate."""
    _rated_torque(m)
    _torque_ratios(m)
    _speeds(m)
    _base_speed(m)
    _powers(m)
    _field_power(m)
    _electrical_input(m)
    _nameplate_band(m, spec)
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


def _torque_ratios(m: Model) -> None:
    """Breakdown and peak torque given as a datasheet multiple of rated torque (2.9, '290 %'): resolved here, once."""
    tn = m.get("motor.rated_torque")
    for name in ("breakdown_torque", "peak_torque"):
        ratio = m.get(f"motor.{name}_ratio")
        if ratio is None or tn is None:
            continue
        if m.has(f"motor.{name}"):  # both given: the torque wins; a contradiction is said
            given = m.get(f"motor.{name}")
            if abs(given - ratio * tn) > 0.05 * given:
                m.notes.append(f"motor.{name} and motor.{name}_ratio disagree ({given:.4g} N·m against "
                               f"{ratio:g} × {tn:.4g} N·m): motor.{name} is used")
            continue
        put(m, f"motor.{name}", ratio * tn, "ratio_of_rated_torque", (f"motor.{name}_ratio", "motor.rated_torque"),
            f"{name.replace('_', ' ')} ratio × rated torque (datasheet multiple)")


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
            "P_N ÷ electrical input (√3·V·I·cosφ, V·I·cosφ or V_a·I_a + P_f)")
    p_arm = m.get("motor.armature_input")
    if p is not None and p_arm:
        put(m, "motor.armature_implied_efficiency", p / p_arm, "ratio", ("motor.rated_power", "motor.armature_input"),
            "P_N ÷ V_a·I_a (an upper bound: the field's power is all loss)")


def nameplate_band(implied: float, declared: float, rated_power: float, input_rounding: float,
                   efficiency_rounding: float, power_factor: float | None = None) -> float:
    """Return the largest |η_impl − η_decl| [1] a true nameplate can show, in efficiency points.

    Parameters
    ----------
    implied : η_impl, the efficiency the nameplate's V, I, cosφ imply [1]
    declared : η_decl, the declared efficiency [1]
    rated_power : P_N [W], for the IEC breakpoint
    input_rounding : relative rounding of the implied input from the printed digits of V, I, cosφ (and P_f) [1]
    efficiency_rounding : half the last printed digit of the declared η [1]
    power_factor : declared cosφ of an induction machine (None: no power-factor tolerance applies)

    Method: the worst case summed linearly, applied on both sides (the IEC tolerances allow the tested machine to
    fall short of the declared η and cosφ; a nameplate may print a tested current beside declared η and cosφ, or
    the reverse): η_impl·r_in + δη + k_η·(1 − η_decl) + η_impl·Δcosφ/cosφ, Δcosφ = (1 − cosφ)/6 within
    [0.02, 0.07], k_η = 0.15 up to 150 kW and 0.10 above.

    References
    ----------
    IEC 60034-1, schedule of tolerances (Table 20 in the 2010 edition; from memory: docs/references.md R03).
    """
    share = IEC_EFFICIENCY_TOLERANCE[0] if rated_power <= IEC_EFFICIENCY_BREAKPOINT else IEC_EFFICIENCY_TOLERANCE[1]
    band = implied * input_rounding + efficiency_rounding + share * (1.0 - declared)
    if power_factor:
        k, low, high = IEC_POWER_FACTOR_TOLERANCE
        band += implied * min(max(k * (1.0 - power_factor), low), high) / power_factor
    return band


def _rounding(spec: Spec, path: str, kind_name: str) -> float:
    """Half the last printed digit of a given value, relative to the value (0 for a derived or unreadable one)."""
    written, value = spec.quantities.written.get(path), spec.quantities.values.get(path)
    half = units.printed_resolution(written, kind_name) if written is not None else None
    return half / abs(value) if half and value else 0.0


def _nameplate_band(m: Model, spec: Spec) -> None:
    eff, p = m.get("motor.implied_efficiency", m.get("motor.armature_implied_efficiency")), m.get("motor.rated_power")
    if eff is None or p is None:
        return
    declared = m.get("motor.efficiency", eff)
    written = spec.quantities.written.get("motor.efficiency")
    d_eta = units.printed_resolution(written, "fraction") if written is not None else None
    if m.get("motor.kind") == "dc":
        va = "motor.armature_voltage" if m.has("motor.armature_voltage") else "motor.rated_voltage"
        ia = "motor.armature_current" if m.has("motor.armature_current") else "motor.rated_current"
        r_arm = _rounding(spec, va, "voltage") + _rounding(spec, ia, "current")
        p_arm, pf = m.get("motor.armature_input"), m.get("motor.field.power") or 0.0
        given = spec.quantity("motor.field.power") is not None
        field = _rounding(spec, "motor.field.power", "power") if given else (
            _rounding(spec, "motor.field.voltage", "voltage") + _rounding(spec, "motor.field.current", "current"))
        r_in = (r_arm * p_arm + field * pf) / (p_arm + pf)
        inputs: tuple[str, ...] = (va, ia, "motor.field.power", "motor.efficiency")
        cos_phi = None
    else:
        r_in = sum(_rounding(spec, path, k) for path, k in (("motor.rated_voltage", "voltage"),
                   ("motor.rated_current", "current"), ("motor.power_factor", "fraction")))
        inputs = ("motor.rated_voltage", "motor.rated_current", "motor.power_factor", "motor.efficiency")
        cos_phi = m.get("motor.power_factor") if m.get("motor.kind") == "induction" else None
    put(m, "motor.nameplate_band", nameplate_band(eff, declared, p, r_in, d_eta or 0.0, cos_phi), "nameplate_band",
        inputs,
        "printed resolution + IEC 60034-1 tolerances on η (and cosφ of an induction machine), from memory")


def _field_power(m: Model) -> None:
    """DC: the field's power, given or V_f·I_f; none for a permanent-magnet or series field (the series field is in
    the armature circuit, inside V_a·I_a)."""
    if m.get("motor.kind") != "dc":
        return
    field_kind = m.get("motor.field.kind")
    put(m, "motor.field_power_needed", field_kind not in _FIELD_WITHOUT_POWER, "field_kind", ("motor.field.kind",),
        "separately excited, shunt or compound field (or none stated): its power is part of the input")
    if field_kind in _FIELD_WITHOUT_POWER:
        put(m, "motor.field.power", 0.0, "field_kind", ("motor.field.kind",),
            f"{field_kind} field: no excitation input beside the armature")
        return
    vf, i_f = m.get("motor.field.voltage"), m.get("motor.field.current")
    if vf is not None and i_f is not None:
        put(m, "motor.field.power", vf * i_f, "product", ("motor.field.voltage", "motor.field.current"), "V_f·I_f")


def _input(m: Model) -> None:
    kind = m.get("motor.kind")
    if kind == "dc":
        va = m.get("motor.armature_voltage", m.get("motor.rated_voltage"))
        ia = m.get("motor.armature_current", m.get("motor.rated_current"))
        if va is None or ia is None:
            return
        put(m, "motor.armature_input", va * ia, "product", ("motor.armature_voltage", "motor.armature_current"),
            "V_a·I_a")
        pf = m.get("motor.field.power")
        if pf is not None:
            put(m, "motor.electrical_input", va * ia + pf, "sum",
                ("motor.armature_voltage", "motor.armature_current", "motor.field.power"), "V_a·I_a + P_f")
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
    """Return whether a frame is IEC ≥ 315 or NEMA ≥ 500 (4-digit 5000-series); None if not recognised."""
    text = frame.strip().upper()
    iec = _IEC_FRAME.match(text)
    if iec:
        return int(iec.group(1)) >= 315
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
        put(m, "motor.large_frame", large_frame(frame), "large_frame", ("motor.frame",), "IEC ≥ 315 or NEMA ≥ 500")
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
