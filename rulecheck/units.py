"""Physical quantities: one unit registry, a strict quantity-string parser, display.

Every physical value in a spec is a string such as ``7.5 kW`` or ``1455 r/min``.
:func:`parse_quantity` reads one against the *kind* its field declares in the
schema (``x-dimension``) and returns its magnitude in the kind's internal SI unit
(a plain ``float``). The rest of the program computes on those floats; pint is
used where data enters (here), for the dimensional check of rule expressions,
and in tests.

Why a strict pattern before pint sees the text: pint's parser evaluates
arithmetic, so ``9**9**9 kW`` would hang the process. We accept a number, then a
unit expression made of known unit names, ``*``, ``·``, ``/``, parentheses (two
levels) and small integer exponents, and nothing else.

Why shaft speed is special: pint treats the radian as dimensionless, so
``1/min`` converts to rad/s without the factor 2π and ``Hz`` converts to rad/s
one to one. In rotational-speed fields we accept only revolution- or
radian-based units, and read ``1/min`` and ``min^-1`` as revolutions per minute,
as nameplates mean them (IEC 60034-1 writes rated speed in min⁻¹).
"""

from __future__ import annotations

import math
import re
import traceback
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

__all__ = [
    "KINDS",
    "REL_TOL",
    "Kind",
    "QuantityError",
    "at_least",
    "at_most",
    "close",
    "format_value",
    "kind",
    "parse_quantity",
    "printed_resolution",
    "registry",
]

MAX_QUANTITY_LENGTH = 80

# Two numbers within this relative distance of each other compare as equal: 690 V x 1.1 = 759.0000000000001 is
# 759 V. Spec data carry at most about 6 significant figures and a double's rounding is ~1e-16 per operation, so
# 1e-9 absorbs the arithmetic of any expression and lies far below any printed resolution. The one definition:
# the rule engine's comparisons and the physics' limit tests (supply zones) both use it.
REL_TOL = 1e-9


def close(left: float, right: float) -> bool:
    """Return whether two numbers are equal at the data's precision (relative :data:`REL_TOL`)."""
    return abs(left - right) <= REL_TOL * max(abs(left), abs(right))


def at_most(value: float, limit: float) -> bool:
    """Return ``value <= limit`` at the data's precision: 759.0000000000001 is at most 759."""
    return value <= limit or close(value, limit)


def at_least(value: float, limit: float) -> bool:
    """Return ``value >= limit`` at the data's precision."""
    return value >= limit or close(value, limit)


class QuantityError(ValueError):
    """A quantity string that cannot be read for its field; ``hint`` says what to write."""

    def __init__(self, message: str, hint: str = "") -> None:
        super().__init__(message)
        self.message = message
        self.hint = hint


@dataclass(frozen=True)
class Kind:
    """A physical kind of quantity, as a schema field declares it."""

    name: str
    si_unit: str  # internal unit: every float in the model is in this unit
    json_unit: str  # unit written to machine outputs (JSON, SARIF values)
    example: str  # a correct value, shown in error messages
    description: str = ""


KINDS: dict[str, Kind] = {
    k.name: k
    for k in [
        Kind("power", "W", "W", "7.5 kW", "power (W, kW, hp)"),
        Kind("apparent_power", "V*A", "V*A", "10 MVA", "apparent power (VA, kVA, MVA)"),
        Kind("torque", "N*m", "N*m", "49.2 N*m", "torque (N*m, kN*m, lbf*ft, lbf*in)"),
        Kind("energy", "J", "J", "24.7 kJ", "energy (J, kJ, kWh)"),
        Kind("rotational_speed", "rad/s", "r/min", "1455 r/min",
             "shaft speed (r/min, rpm, min^-1, 1/min, rev/s, rad/s); revolutions are meant"),
        Kind("frequency", "Hz", "Hz", "50 Hz", "electrical frequency (Hz)"),
        Kind("voltage", "V", "V", "400 V", "voltage (V, kV)"),
        Kind("current", "A", "A", "14.8 A", "current (A)"),
        Kind("resistance", "ohm", "ohm", "0.4 ohm", "resistance (ohm, mohm)"),
        Kind("inductance", "H", "H", "12 mH", "inductance (H, mH)"),
        Kind("capacitance", "F", "F", "2 mF", "capacitance (F, mF, uF)"),
        Kind("inertia", "kg*m^2", "kg*m^2", "0.029 kg*m^2", "moment of inertia (kg*m^2, lb*ft^2)"),
        Kind("mass", "kg", "kg", "2500 kg", "mass (kg, t, lb)"),
        Kind("length", "m", "m", "0.5 m", "length (m, mm, in, ft)"),
        Kind("area", "m^2", "m^2", "4 mm^2", "cross-section area (mm^2)"),
        Kind("velocity", "m/s", "m/s", "1.6 m/s", "linear speed (m/s, m/min, ft/min)"),
        Kind("acceleration", "m/s^2", "m/s^2", "0.5 m/s^2", "linear acceleration (m/s^2)"),
        Kind("force", "N", "N", "12 kN", "force (N, kN, lbf)"),
        Kind("time", "s", "s", "60 s", "time (s, min, h)"),
        Kind("temperature", "degC", "degC", "45 degC", "temperature (degC, degF, K)"),
        Kind("temperature_difference", "K", "K", "80 K", "temperature difference (K, delta_degC, delta_degF)"),
        Kind("angle", "rad", "rad", "8 deg", "angle (deg, rad)"),
        Kind("back_emf_constant", "V*s/rad", "V*s/rad", "98 V/krpm", "back-EMF constant (V/krpm, V/rpm, V*s/rad)"),
        Kind("torque_constant", "N*m/A", "N*m/A", "1.6 N*m/A", "torque constant (N*m/A)"),
        Kind("resistance_per_length", "ohm/m", "ohm/m", "0.08 mohm/m", "impedance per length (mohm/m)"),
        Kind("density", "kg/m^3", "kg/m^3", "920 kg/m^3", "density (kg/m^3)"),
        Kind("fraction", "1", "1", "89.6 %", "a fraction: a percentage ('12 %') or a plain number (0.12)"),
    ]
}


def kind(name: str) -> Kind:
    """Return the :class:`Kind` named ``name``; ``KeyError`` for an unknown kind."""
    return KINDS[name]


@lru_cache(maxsize=1)
def registry() -> Any:
    """Return the program's one pint ``UnitRegistry`` (built on first use)."""
    import pint

    ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    ureg.define("krpm = 1000 * revolution / minute")
    ureg.define("hp_mech = 550 * foot * force_pound / second")  # NIST SP 811 B.8
    ureg.define("hp_metric = 75 * force_kilogram * meter / second")
    ureg.define("hp_elec = 746 * watt")
    ureg.define("HP = hp_mech")  # a nameplate's capital HP is the same mechanical horsepower
    return ureg


# --- strict pattern ----------------------------------------------------------

_DECIMAL_COMMA = re.compile(r"[+-]?\d+,\d+")
# SI digit grouping (SI Brochure, 9th edition 2019, 5.4.4): groups of three digits on either side of the decimal
# marker, separated by a space (also a thin, no-break or narrow no-break space), never by a dot or a comma; the last
# group after the decimal marker may be shorter. "12 100 kg" is one number, 12100 kg.
_GROUP_SEPARATOR = "[ \u2009\u00a0\u202f]"
_GROUPED_NUMBER = re.compile(
    rf"\s*([+-]?\d{{1,3}}(?:{_GROUP_SEPARATOR}\d{{3}})+"
    rf"(?:\.(?:\d{{3}}(?:{_GROUP_SEPARATOR}\d{{3}})*{_GROUP_SEPARATOR}\d{{1,3}}|\d+))?"
    rf"(?:[eE][+-]?\d{{1,3}})?)(?![\d.,])\s*"
)
_NUMBER = re.compile(r"\s*([+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d{1,3})?)\s*")
_TOKEN = re.compile(
    r"\s*(?:(?P<name>[A-Za-z_°µΩ][A-Za-z_°µΩ0-9]*)|(?P<op>\*\*|[*·/^()])|(?P<int>-?\d{1,4})|(?P<pct>%))"
)

# Words that a spec writer uses and pint spells differently.
_ALIASES = {
    "Ω": "ohm",
    "mΩ": "milliohm",
    "kΩ": "kiloohm",
    "°C": "degC",
    "°F": "degF",
    "µF": "microfarad",
    "uF": "microfarad",
    "µs": "microsecond",
    "us": "microsecond",
    "°": "degree",
    "mohm": "milliohm",
    "kohm": "kiloohm",
    "Ohm": "ohm",
    "ohms": "ohm",
    "Nm": "N*m",
    "kNm": "kN*m",
    "lbft": "lbf*ft",
    "lbin": "lbf*in",
    "t": "metric_ton",
}

# Metric horsepower (75 kgf·m/s = 735.498 75 W, NIST SP 811 B.8) as nameplates write it: PS (Pferdestärke),
# CV (cheval-vapeur, caballo de vapor). In a power field only: elsewhere 'PS' is pint's petasiemens.
_POWER_ALIASES = {"PS": "hp_metric", "CV": "hp_metric"}

_SPEED_NAMES = {"rpm", "krpm", "rps", "rev", "revolution", "r", "rad", "radian", "turn", "min", "s", "minute", "second"}


def _tokenize(unit_text: str) -> list[tuple[str, str]]:
    tokens: list[tuple[str, str]] = []
    pos = 0
    text = unit_text.rstrip()
    while pos < len(text):
        m = _TOKEN.match(text, pos)
        if not m or m.end() == pos:
            raise QuantityError(f"unexpected character {text[pos]!r} in unit {unit_text!r}")
        for group in ("name", "op", "int", "pct"):
            if m.group(group) is not None:
                tokens.append((group, m.group(group)))
                break
        pos = m.end()
    return tokens


def _check_grammar(tokens: list[tuple[str, str]], unit_text: str) -> None:
    """Accept products/quotients of names with small integer exponents, depth ≤ 2."""
    depth = 0
    prev = "start"  # what the previous token was: start, operand, op, pow, exponent, open, close
    for i, (typ, val) in enumerate(tokens):
        if typ == "name" or typ == "pct":
            if prev == "pow":
                raise QuantityError(f"exponent must be a small whole number in unit {unit_text!r}")
            prev = "operand"
        elif typ == "int":
            prev = _grammar_number(val, prev, tokens[i + 1][1] if i + 1 < len(tokens) else "", unit_text)
        elif val in ("(", ")"):
            depth += 1 if val == "(" else -1
            prev = _grammar_parenthesis(val, prev, depth, unit_text)
        else:
            prev = _grammar_operator(val, prev, unit_text)
    if depth != 0:
        raise QuantityError(f"unbalanced parentheses in unit {unit_text!r}")
    if prev in ("op", "pow", "open"):
        raise QuantityError(f"unit {unit_text!r} is incomplete")


def _grammar_number(val: str, prev: str, following: str, unit_text: str) -> str:
    """Check a number token: an exponent after '^'/'**', else the numerator of '1/…'; return what it was.

    A numeric scale factor inside a unit ('100 kg', 'V/(1000 rpm)') is refused: '12 100 kg' would otherwise
    read as 12 × 100 kg, and a mistyped digit group would silently scale the value.
    """
    if prev == "pow":
        if abs(int(val)) > 4:
            raise QuantityError(f"exponent {val} is too large in unit {unit_text!r}")
        return "exponent"
    if val != "1" or following != "/" or prev not in ("start", "open"):
        raise QuantityError(
            f"unexpected number {val} in unit {unit_text!r}: a unit may not carry a numeric scale factor",
            "write the whole number before the unit (digits may be grouped in threes: '12 100 kg'), and a "
            "prefixed unit instead of a factor ('V/krpm', not 'V/(1000 rpm)')",
        )
    return "operand"


def _grammar_parenthesis(val: str, prev: str, depth: int, unit_text: str) -> str:
    """Check a parenthesis at nesting ``depth`` (counted after it); return "open" or "close"."""
    if val == "(":
        if depth > 2:
            raise QuantityError(f"too many nested parentheses in unit {unit_text!r}")
        return "open"
    if depth < 0 or prev in ("op", "open", "pow"):
        raise QuantityError(f"unbalanced parentheses in unit {unit_text!r}")
    return "close"


def _grammar_operator(val: str, prev: str, unit_text: str) -> str:
    """Check an exponent sign or a * · / operator after ``prev``; return "pow" or "op"."""
    if val in ("**", "^"):
        if prev not in ("operand", "close"):
            raise QuantityError(f"misplaced exponent in unit {unit_text!r}")
        return "pow"
    if prev in ("op", "pow", "start", "open") and not (val == "/" and prev == "start"):
        raise QuantityError(f"misplaced {val!r} in unit {unit_text!r}")
    return "op"


_SPEED_FORMS = {
    # what a nameplate writes → what it means
    "r/min": "rpm",
    "rev/min": "rpm",
    "rpm": "rpm",
    "min^-1": "rpm",
    "min**-1": "rpm",
    "min-1": "rpm",
    "1/min": "rpm",
    "/min": "rpm",
    "krpm": "krpm",
    "rev/s": "rps",
    "r/s": "rps",
    "rps": "rps",
    "1/s": None,  # ambiguous: rev/s or rad/s
    "rad/s": "rad/s",
    "deg/s": "deg/s",
}


def _normalise_speed_text(unit: str) -> str:
    """Rewrite revolution-per-time spellings inside a unit to pint names."""
    u = unit.replace(" ", "")
    for form in sorted(_SPEED_FORMS, key=len, reverse=True):
        target = _SPEED_FORMS[form]
        if target and form in ("1/min", "/min", "min^-1", "min**-1", "min-1"):
            continue
        if target:
            u = u.replace(form, f"({target})") if form != target else u
    u = re.sub(r"(?<![A-Za-z0-9_])1/min\b", "(rpm)", u)
    u = re.sub(r"\bmin(\^|\*\*)-1\b", "(rpm)", u)
    u = re.sub(r"\bmin-1\b", "(rpm)", u)
    return u


_PI = math.pi
_LB = 0.45359237  # kg, exact (NIST SP 811 B.9)
_FT = 0.3048  # m, exact
_IN = 0.0254  # m, exact
_LBF = _LB * 9.80665  # N, exact from the standard gravity

# Common unit spellings by kind, converted without building the pint registry (start-up costs ~0.3 s).
# Every entry is checked against pint's definitions in tests/foundation/test_units.py.
FAST_UNITS: dict[str, dict[str, float]] = {
    "power": {"W": 1.0, "kW": 1e3, "MW": 1e6, "hp": 550 * _FT * _LBF, "HP": 550 * _FT * _LBF,
              "hp_mech": 550 * _FT * _LBF, "hp_metric": 75 * 9.80665, "PS": 75 * 9.80665, "CV": 75 * 9.80665,
              "hp_elec": 746.0},
    "apparent_power": {"VA": 1.0, "kVA": 1e3, "MVA": 1e6},
    "torque": {"N*m": 1.0, "N·m": 1.0, "Nm": 1.0, "kN*m": 1e3, "kN·m": 1e3, "kNm": 1e3, "lbf*ft": _LBF * _FT,
               "lbf*in": _LBF * _IN, "ft*lbf": _LBF * _FT},
    "energy": {"J": 1.0, "kJ": 1e3, "MJ": 1e6, "Wh": 3600.0, "kWh": 3.6e6},
    "rotational_speed": {"rpm": 2 * _PI / 60, "krpm": 2 * _PI / 60 * 1000, "rps": 2 * _PI, "rad/s": 1.0,
                         "deg/s": _PI / 180},
    "frequency": {"Hz": 1.0, "kHz": 1e3, "MHz": 1e6},
    "voltage": {"V": 1.0, "kV": 1e3, "mV": 1e-3},
    "current": {"A": 1.0, "kA": 1e3, "mA": 1e-3},
    "resistance": {"ohm": 1.0, "Ω": 1.0, "mohm": 1e-3, "mΩ": 1e-3, "kohm": 1e3, "kΩ": 1e3},
    "inductance": {"H": 1.0, "mH": 1e-3, "uH": 1e-6, "µH": 1e-6},
    "capacitance": {"F": 1.0, "mF": 1e-3, "uF": 1e-6, "µF": 1e-6},
    "inertia": {"kg*m^2": 1.0, "kg·m^2": 1.0, "kg*m**2": 1.0, "kg*cm^2": 1e-4, "kg·cm^2": 1e-4,
                "lb*ft^2": _LB * _FT**2, "lb*in^2": _LB * _IN**2},
    "mass": {"kg": 1.0, "g": 1e-3, "t": 1e3, "lb": _LB},
    "length": {"m": 1.0, "mm": 1e-3, "cm": 1e-2, "km": 1e3, "in": _IN, "ft": _FT},
    "area": {"mm^2": 1e-6, "m^2": 1.0, "cm^2": 1e-4, "in^2": _IN**2},
    "velocity": {"m/s": 1.0, "m/min": 1 / 60, "km/h": 1 / 3.6, "ft/min": _FT / 60, "ft/s": _FT},
    "acceleration": {"m/s^2": 1.0, "ft/s^2": _FT},
    "force": {"N": 1.0, "kN": 1e3, "MN": 1e6, "lbf": _LBF},
    "time": {"s": 1.0, "ms": 1e-3, "min": 60.0, "h": 3600.0, "us": 1e-6, "µs": 1e-6},
    "temperature_difference": {"K": 1.0, "delta_degC": 1.0, "delta_degF": 5 / 9},
    "angle": {"rad": 1.0, "deg": _PI / 180, "°": _PI / 180},
    "back_emf_constant": {"V/krpm": 60 / (2 * _PI * 1000), "V/rpm": 60 / (2 * _PI), "mV/rpm": 60e-3 / (2 * _PI),
                          "V*s/rad": 1.0, "V·s/rad": 1.0, "V/(rad/s)": 1.0},
    "torque_constant": {"N*m/A": 1.0, "N·m/A": 1.0, "Nm/A": 1.0, "lbf*in/A": _LBF * _IN},
    "resistance_per_length": {"ohm/m": 1.0, "mohm/m": 1e-3, "ohm/km": 1e-3, "mΩ/m": 1e-3, "Ω/km": 1e-3},
    "density": {"kg/m^3": 1.0, "t/m^3": 1e3, "g/cm^3": 1e3},
}
_FAST_TEMPERATURE = {"degC": (1.0, 0.0), "°C": (1.0, 0.0), "K": (1.0, -273.15), "degF": (5 / 9, -32 * 5 / 9),
                     "°F": (5 / 9, -32 * 5 / 9)}


@lru_cache(maxsize=4096)
def _conversion(unit_text: str, kind_name: str) -> tuple[float, float]:
    """Return (scale, offset) so that SI = value*scale + offset; raise QuantityError."""
    unit_text = unit_text.replace("²", "^2").replace("³", "^3")
    if kind_name == "temperature" and unit_text in _FAST_TEMPERATURE:
        return _FAST_TEMPERATURE[unit_text]
    if kind_name == "torque" and _TORQUE_MULTIPLE.search(unit_text):
        raise QuantityError(
            f"{unit_text!r} is a multiple of rated torque, not a torque",
            "a datasheet's multiple goes in breakdown_torque_ratio or peak_torque_ratio, as a plain number (2.9) or "
            "a percentage ('290 %'); here write the torque itself, e.g. '142 N*m'",
        )
    if kind_name == "power" and _APPARENT_POWER.search(unit_text):
        raise QuantityError(
            f"{unit_text!r} is an apparent (or reactive) power, not a real power in watts such as a motor's shaft "
            "power: volt-amperes include the reactive part and say nothing about the torque on the shaft",
            "write the shaft (output) power from the nameplate in kW or hp; a drive or transformer rating "
            "in kVA belongs in an apparent-power field",
        )
    table = FAST_UNITS.get(kind_name)
    if table is not None:
        key = _SPEED_FORMS.get(unit_text.replace(" ", ""), "") if kind_name == "rotational_speed" else unit_text
        if key in table:
            return table[key], 0.0
    return _pint_conversion(unit_text, kind_name)


# '290 %', '2.9 × rated', '2.9 x T_N': a multiple of rated torque written in a torque field.
_TORQUE_MULTIPLE = re.compile(r"%|×|(?<![A-Za-z_])(?:x\s*)?(?:rated|T_?N|Tn)(?![A-Za-z_])")

# VA, kVA, MVA (and var): pint reads a volt-ampere as a watt; a shaft power never is one.
_APPARENT_POWER = re.compile(r"(?<![A-Za-z_])[kMm]?(VA|var)(?![A-Za-z_])")


def _pint_conversion(unit_text: str, kind_name: str) -> tuple[float, float]:
    """Return (scale, offset) for a unit spelling outside the fast table, through pint."""
    text = unit_text.strip()
    if text in ("%", "percent") or kind_name == "fraction":
        return _fraction_scale(text, kind_name), 0.0
    if text == "":
        raise QuantityError("a unit is required")
    text = _ALIASES.get(text, text)
    if kind_name == "power":
        text = _POWER_ALIASES.get(text, text)
    pint_unit = _speed_pint_unit(text) if kind_name == "rotational_speed" else _pint_unit_text(text, kind_name)
    return _pint_scale(text, pint_unit, kind_name)


def _fraction_scale(text: str, kind_name: str) -> float:
    """Return the scale of a percentage or a per-unit spelling; refuse '%' outside a fraction field."""
    if text in ("%", "percent"):
        if kind_name == "fraction":
            return 0.01
        raise QuantityError(f"'%' is not a {KINDS[kind_name].description.split(' (')[0]}")
    if text in ("", "1", "pu", "p.u."):
        return 1.0
    raise QuantityError(f"unit {text!r} is not a fraction")


def _speed_pint_unit(text: str) -> str:
    """Return pint's name for a shaft-speed spelling; 'Hz' and '1/s' are refused as ambiguous."""
    compact = text.replace(" ", "")
    if compact in ("Hz", "1/s", "s^-1", "/s"):
        raise QuantityError(
            f"{text!r} is not a shaft speed: 'Hz' and '1/s' are ambiguous between revolutions and radians",
            "write the speed in r/min or rev/s; supply frequency belongs in a frequency field",
        )
    if compact not in _SPEED_FORMS or _SPEED_FORMS[compact] is None:
        raise QuantityError(f"{text!r} is not a shaft-speed unit")
    return _SPEED_FORMS[compact]


def _refuse_wrong_kind(text: str, tokens: list[tuple[str, str]], kind_name: str) -> None:
    """Refuse unit names that belong to another kind than the field's (Hz in Ke, r/min in f, J in torque)."""
    if kind_name == "back_emf_constant" and any(v == "Hz" for _, v in tokens):
        raise QuantityError(
            f"{text!r}: per-hertz constants mix electrical and mechanical speed",
            "write the back-EMF constant in V/krpm (with its convention) or V*s/rad",
        )
    if kind_name == "frequency" and any(v in _SPEED_NAMES - {"s", "second", "min", "minute"} for _, v in tokens):
        raise QuantityError(
            f"{text!r} is a shaft speed, not an electrical frequency",
            "write the frequency in Hz; shaft speed belongs in a speed field (f = pole pairs × n / 60)",
        )
    if kind_name == "torque" and any(v in ("J", "kJ", "joule", "Wh", "kWh", "cal") for _, v in tokens):
        raise QuantityError(f"{text!r} is an energy unit, not a torque unit", "write torque in N*m or lbf*ft")
    # N*m is the same dimension as J; written in an energy field it is accepted as J


def _pint_unit_text(text: str, kind_name: str) -> str:
    """Return the unit expression ``text`` in pint's spelling, after the grammar and kind checks."""
    tokens = _tokenize(text)
    _check_grammar(tokens, text)
    _refuse_wrong_kind(text, tokens, kind_name)
    parts = []
    for typ, val in tokens:
        if typ == "name":
            val = _ALIASES.get(val, val)
            if kind_name == "back_emf_constant" and val in ("rpm", "krpm", "r", "rev"):
                val = {"r": "revolution", "rev": "revolution"}.get(val, val)
        parts.append(val)
    pint_unit = " ".join(parts).replace("·", "*").replace("^", "**")
    pint_unit = re.sub(r"\s*\*\*\s*", "**", pint_unit)
    pint_unit = re.sub(r"\s*([*/()])\s*", r"\1", pint_unit)
    if kind_name == "back_emf_constant":
        pint_unit = _normalise_speed_text(pint_unit)
    return pint_unit


def _pint_scale(text: str, pint_unit: str, kind_name: str) -> tuple[float, float]:
    """Return (scale, offset) from ``pint_unit`` to the kind's SI unit; ``text`` is what the spec wrote."""
    k = KINDS[kind_name]
    ureg = registry()
    try:
        units = ureg.parse_units(pint_unit) if not any(c in pint_unit for c in "0123456789") else None
        q = ureg.Quantity(1.0, units) if units is not None else ureg.Quantity(pint_unit)
    except Exception as exc:  # pint raises several error types for unknown names
        traceback.clear_frames(exc.__traceback__)  # as below: no cycle left behind
        raise QuantityError(f"unknown unit {text!r}", f"write a {k.description}") from exc
    target = ureg.parse_units(k.si_unit.replace("^", "**"))
    try:
        if kind_name == "temperature":
            zero = ureg.Quantity(0.0, q.units).to(target).magnitude
            one = ureg.Quantity(1.0, q.units).to(target).magnitude
            return one - zero, zero
        if kind_name == "temperature_difference" and str(q.units) in ("degree_Celsius", "degree_Fahrenheit"):
            raise QuantityError(
                f"{text!r} is a temperature, not a temperature difference", "write the rise in K or delta_degC"
            )
        scale = q.to(target).magnitude
    except QuantityError:
        raise
    except Exception as exc:
        # pint's frames hold its error in a reference cycle, with every caller's frame behind them (the spec
        # being checked): cleared here, they are freed with the error instead of at the collector's next pass
        traceback.clear_frames(exc.__traceback__)
        raise QuantityError(
            f"{text!r} is not a {k.description.split(' (')[0]}",
            f"write a {k.description}, for example '{k.example}'",
        ) from exc
    return float(scale), 0.0


def parse_quantity(value: Any, kind_name: str) -> float:
    """Return the magnitude of ``value`` in the internal SI unit of ``kind_name`` (see :func:`_parse_quantity`)."""
    if isinstance(value, str):
        return _parse_text(value, kind_name)  # spec repositories repeat the same few hundred strings
    return _parse_quantity(value, kind_name)


@lru_cache(maxsize=8192)  # repeated spellings ("400 V") hit; a bound keeps memory flat on large runs
def _parse_text(value: str, kind_name: str) -> float:
    return _parse_quantity(value, kind_name)


def _parse_quantity(value: Any, kind_name: str) -> float:
    """Return the magnitude of ``value`` in the internal SI unit of ``kind_name``.

    ``value`` is a spec string such as ``"7.5 kW"``; for the ``fraction`` kind a
    plain number is accepted too. Raises :class:`QuantityError` with a message
    and a hint when the text is not a finite quantity of that kind.
    """
    k = KINDS[kind_name]
    if isinstance(value, bool):
        raise QuantityError(
            f"{value!r} is a boolean; YAML read an unquoted word as true/false",
            f"write a quoted quantity, for example '{k.example}'",
        )
    if isinstance(value, (int, float)):
        if kind_name == "fraction":
            if not math.isfinite(value):
                raise QuantityError(f"{value!r} is not a finite number")
            return float(value)
        raise QuantityError(
            f"the bare number {value!r} has no unit",
            f"write it with its unit, for example '{k.example}'",
        )
    if not isinstance(value, str):
        raise QuantityError(f"expected a quantity string, got {type(value).__name__}", f"for example '{k.example}'")
    text = value.strip()
    if len(text) > MAX_QUANTITY_LENGTH:
        raise QuantityError(f"quantity text is longer than {MAX_QUANTITY_LENGTH} characters")
    if _DECIMAL_COMMA.match(text):
        raise QuantityError(f"{value!r} uses a decimal comma", "write the decimal point: '0.75 kW'")
    number_text, unit_text = _split_number(text, value, k)
    if unit_text.startswith(("*", "^", "e", "E")) and unit_text[:1] in "*^" :
        raise QuantityError(f"{value!r}: arithmetic is not allowed in a quantity", f"for example '{k.example}'")
    magnitude = float(number_text)
    if not math.isfinite(magnitude):
        raise QuantityError(f"{value!r} is not a finite number", f"for example '{k.example}'")
    if unit_text.strip() == "" and kind_name != "fraction":
        raise QuantityError(f"{value!r} has no unit", f"write it with its unit, for example '{k.example}'")
    scale, offset = _conversion(unit_text.strip(), kind_name)
    result = magnitude * scale + offset
    if not math.isfinite(result):
        raise QuantityError(f"{value!r} is too large to be a physical value")
    return result


def _split_number(text: str, value: Any, k: Kind) -> tuple[str, str]:
    """Return (the number without its digit-group separators, the unit text) of a quantity string.

    A number followed by more digits is either SI digit grouping ('12 100 kg', '1 100 kW', thin or no-break
    spaces too: one number) or refused; only the unit '1/min' (and '1/s') may start with a digit.
    """
    m = _NUMBER.match(text)
    if not m:
        raise QuantityError(f"{value!r} does not start with a number", f"for example '{k.example}'")
    rest = text[m.end() :]
    if not rest[:1].isdigit():
        return m.group(1), rest
    grouped = _GROUPED_NUMBER.match(text)
    if grouped:
        return re.sub(_GROUP_SEPARATOR, "", grouped.group(1)), text[grouped.end() :]
    if re.match(r"1\s*/", rest):
        return m.group(1), rest  # '1455 1/min'
    raise QuantityError(
        f"{value!r}: digits after the number {m.group(1)!r} are neither SI digit groups nor a unit",
        "group digits in threes with a space ('12 100 kg' is 12100 kg) or write the number without spaces "
        f"('12100 kg'); for example '{k.example}'",
    )


def printed_resolution(text: Any, kind_name: str) -> float | None:
    """Return half a unit of the last printed digit of a quantity, in the kind's SI unit; None if not a number.

    '14.6 A' → 0.05 A, '400 V' → 0.5 V, '90.4 %' → 0.0005, 0.82 → 0.005, '7.5 kW' → 50 W: the rounding a
    printed value may carry. Integers are read as exact to their last digit ('1400 A' → 0.5 A, the tighter
    reading). Used for nameplate consistency bands.
    """
    if isinstance(text, bool):
        return None
    if isinstance(text, (int, float)):
        number, unit_text = repr(text), ""
    elif isinstance(text, str):
        try:
            number, unit_text = _split_number(text.strip(), text, KINDS[kind_name])
        except QuantityError:
            return None
        number = re.sub(_GROUP_SEPARATOR, "", number)
    else:
        return None
    mantissa, _, exponent = number.lower().partition("e")
    decimals = len(mantissa.partition(".")[2])
    step = 10.0 ** (int(exponent or 0) - decimals)
    try:
        scale, _offset = _conversion(unit_text.strip(), kind_name) if unit_text.strip() else (1.0, 0.0)
    except QuantityError:
        return None
    return 0.5 * step * scale


def ambiguity_notes(value: Any, kind_name: str) -> list[str]:
    """Return advisory notes for a parsable but ambiguous quantity (docs/references.md R01)."""
    if kind_name != "power" or not isinstance(value, str) or ("hp" not in value and "HP" not in value):
        return []  # the one ambiguity noted is a bare 'hp' power
    unit = value.strip()
    m = _NUMBER.match(unit)
    unit = unit[m.end() :].strip() if m else unit
    notes = []
    if kind_name == "power" and re.search(r"(?<![A-Za-z_])(hp|HP)(?![A-Za-z_])", unit):
        # A nameplate's hp is mechanical horsepower (NEC and NEMA MG 1 tables treat 745.7 W and 746 W alike):
        # an info note only, never a warning.
        notes.append(
            "'hp' read as mechanical horsepower (745.7 W, NIST SP 811); write hp_metric (735.5 W) for metric "
            "horsepower (PS, CV)"
        )
    return notes


# --- display -----------------------------------------------------------------

_DISPLAY_SI = {
    "power": [("MW", 1e6, 1e6), ("kW", 1e3, 1e3), ("W", 1.0, 0.0)],
    "apparent_power": [("MVA", 1e6, 1e6), ("kVA", 1e3, 1e3), ("VA", 1.0, 0.0)],
    "torque": [("kN·m", 1e3, 1e4), ("N·m", 1.0, 0.0)],
    "energy": [("kJ", 1e3, 1e3), ("J", 1.0, 0.0)],
    "voltage": [("kV", 1e3, 1e4), ("V", 1.0, 0.0)],
    "capacitance": [("mF", 1e-3, 1e-4), ("µF", 1e-6, 0.0)],
    "inductance": [("mH", 1e-3, 0.0)],
    "area": [("mm²", 1e-6, 0.0)],
    "resistance_per_length": [("mΩ/m", 1e-3, 0.0)],
    "force": [("kN", 1e3, 1e4), ("N", 1.0, 0.0)],
}

_PRETTY = {
    "W": "W",
    "N*m": "N·m",
    "J": "J",
    "Hz": "Hz",
    "V": "V",
    "A": "A",
    "ohm": "Ω",
    "H": "H",
    "F": "F",
    "kg*m^2": "kg·m²",
    "kg": "kg",
    "m": "m",
    "m^2": "m²",
    "m/s": "m/s",
    "m/s^2": "m/s²",
    "N": "N",
    "s": "s",
    "degC": "°C",
    "K": "K",
    "rad": "rad",
    "V*s/rad": "V·s/rad",
    "V*A": "VA",
    "N*m/A": "N·m/A",
    "ohm/m": "Ω/m",
    "kg/m^3": "kg/m³",
    "1": "",
}

# display unit and factor (SI value × factor) per kind, from the same exact definitions as FAST_UNITS
_CUSTOMARY = {
    "power": ("hp", 1 / FAST_UNITS["power"]["hp"]),
    "torque": ("lbf·ft", 1 / FAST_UNITS["torque"]["lbf*ft"]),
    "energy": ("ft·lbf", 1 / FAST_UNITS["torque"]["lbf*ft"]),
    "inertia": ("lb·ft²", 1 / FAST_UNITS["inertia"]["lb*ft^2"]),
    "mass": ("lb", 1 / _LB),
    "length": ("in", 1 / _IN),
    "area": ("in²", 1 / _IN**2),
    "velocity": ("ft/min", 60 / _FT),
    "acceleration": ("ft/s²", 1 / _FT),
    "force": ("lbf", 1 / _LBF),
    "torque_constant": ("lbf·in/A", 1 / FAST_UNITS["torque_constant"]["lbf*in/A"]),
    "density": ("lb/ft³", _FT**3 / _LB),
}


RPM_PER_RAD_S = 60.0 / (2.0 * math.pi)  # shaft speeds are r/min in machine outputs and displays


def _sig(value: float, digits: int = 4) -> str:
    if value == 0 or not math.isfinite(value):
        return f"{value:g}"
    mag = math.floor(math.log10(abs(value)))
    decimals = max(0, digits - 1 - mag)
    text = f"{value:.{decimals}f}"
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    return text


def format_value(value_si: float | None, kind_name: str | None, system: str = "si", digits: int = 4) -> str:
    """Return a value for people: ``49.22 N·m``, ``1455 r/min``, ``12 %``; customary on request."""
    if value_si is None:
        return "—"
    if kind_name is None:
        return _sig(value_si, digits)
    if kind_name == "fraction":
        return f"{_sig(value_si * 100.0, digits)} %"
    if kind_name == "rotational_speed":
        return f"{_sig(value_si * 60.0 / (2.0 * math.pi), digits)} r/min"
    if kind_name == "angle":
        return f"{_sig(math.degrees(value_si), digits)}°"
    if kind_name == "temperature":
        if system == "customary":
            return f"{_sig(value_si * 9 / 5 + 32, digits)} °F"
        return f"{_sig(value_si, digits)} °C"
    if system == "customary" and kind_name in _CUSTOMARY:
        unit, factor = _CUSTOMARY[kind_name]
        return f"{_sig(value_si * factor, digits)} {unit}"
    for unit, factor, threshold in _DISPLAY_SI.get(kind_name, []):
        if abs(value_si) >= threshold:
            return f"{_sig(value_si / factor, digits)} {unit}"
    k = KINDS.get(kind_name)
    unit = _PRETTY.get(k.si_unit, k.si_unit) if k else ""
    return f"{_sig(value_si, digits)} {unit}".rstrip()
