"""Shared helpers for the human-readable reports: value display, ordering, labels.

Renderers only format the result dict (see the result contract); nothing here
computes engineering values. Everything that came from a spec or a rule file is
treated as untrusted text: the helpers return plain strings and leave escaping
to the renderer that knows its output language.
"""

from __future__ import annotations

import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

from rulecheck.result import SEVERITY_RANK
from rulecheck.units import KINDS, QuantityError, format_value, parse_quantity

__all__ = [
    "BASIS_STATUS",
    "ORDER_STATEMENT",
    "OUTCOME_LABELS",
    "VERDICT_LABELS",
    "Label",
    "OutcomeGroups",
    "basis_items",
    "counts",
    "derived_items",
    "derived_used",
    "display",
    "display_limit",
    "group_outcomes",
    "location_text",
    "missing_items",
    "outcome_label",
    "plain",
    "safety_errors",
    "sort_key",
    "sorted_specs",
    "spec_name",
    "summary_line",
    "value_items",
    "value_label",
    "verdict_label",
    "verdicts_line",
    "waiver_items",
]



# Severity must read without colour: every label is a word plus a short text marker.
@dataclass(frozen=True)
class Label:
    """A marker and a word for a verdict or an outcome, plus a CSS class name of our own."""

    marker: str
    word: str
    css: str

    @property
    def text(self) -> str:
        """Return marker and word together, e.g. ``[X] ERROR``."""
        return f"{self.marker} {self.word}"


OUTCOME_LABELS: dict[str, Label] = {
    "error": Label("[X]", "ERROR", "sev-error"),
    "warning": Label("[!]", "WARNING", "sev-warning"),
    "info": Label("[i]", "INFO", "sev-info"),
    "not-checked": Label("[?]", "NOT CHECKED", "sev-unchecked"),
    "waived": Label("[W]", "WAIVED", "sev-waived"),
    "pass": Label("[ok]", "PASS", "sev-pass"),
    "not-applicable": Label("[-]", "N/A", "sev-na"),
}

VERDICT_LABELS: dict[str, Label] = {
    "fail": Label("[X]", "FAIL", "sev-error"),
    "invalid": Label("[X]", "INVALID", "sev-error"),
    "unreadable": Label("[X]", "UNREADABLE", "sev-error"),
    "warning": Label("[!]", "WARNING", "sev-warning"),
    "pass": Label("[ok]", "PASS", "sev-pass"),
}

BASIS_STATUS: dict[str, str] = {
    "V": "verified against a published source",
    "V*": "verified numerically",
    "P": "physics derivation",
    "M": "from memory, not verified",
    "C": "common practice, no authoritative source",
}

ORDER_STATEMENT = (
    "Ordered worst first: failing and unloadable specs, then specs with warnings, then passing specs; "
    "within each group by safety-relevant errors, errors, warnings and not-checked rules (most first), "
    "then by tag."
)



def terminal_safe(text: Any) -> str:
    """Return text that may hold several lines, safe for a terminal: every character that is not printable
    (escape sequences that retitle a window, clear the screen or hide a link's address; bidirectional
    overrides; other controls) but a line break becomes U+FFFD."""
    s = "" if text is None else str(text)
    return "".join(ch if ch.isprintable() or ch == "\n" else "\ufffd" for ch in s)


def case_label(outcome: Mapping[str, Any]) -> str:
    """Return " [case NAME]" for a finding of one load case, "" for one that holds in every case (or a spec
    without cases)."""
    case = outcome.get("case")
    return f" [case {plain(case, 40)}]" if case else ""


def plain(text: Any, limit: int = 2000) -> str:
    """Return ``text`` as a single-line string without control characters, cut to ``limit`` characters."""
    if text is None:
        return ""
    s = text if type(text) is str else str(text)
    # the common case, checked in C: printable (so its only white space is U+0020) and already single-spaced
    if not (s.isprintable() and "  " not in s and s[:1] != " " and s[-1:] != " "):
        s = "".join(ch if ch.isprintable() else " " for ch in s)
        s = " ".join(s.split())
    if len(s) > limit:
        s = s[: limit - 1] + "…"
    return s


def _number(value: Any) -> float | None:
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return None
    value = float(value)
    return value if math.isfinite(value) else None


_MEMO_TYPES = (str, int, float, bool, type(None))


def display(value: Mapping[str, Any] | Any, system: str = "si", *, ratio: bool = False) -> str:
    """Return a value dict ``{"value", "unit", "kind"}`` as text for people, e.g. ``1455 r/min`` (see
    :func:`_display`; the same value, unit and kind repeat across the specs of a run: their text is kept in a
    bounded memo)."""
    if type(value) is dict or isinstance(value, Mapping):
        raw, unit, kind = value.get("value"), value.get("unit"), value.get("kind")
        if type(raw) in _MEMO_TYPES and type(unit) in _MEMO_TYPES and type(kind) in _MEMO_TYPES:
            return _display_memo(raw, unit, kind, system, ratio)
    return _display(value, system, ratio=ratio)


@lru_cache(maxsize=8192, typed=True)  # typed: 1, 1.0 and True are different values
def _display_memo(raw: Any, unit: Any, kind: Any, system: str, ratio: bool) -> str:
    return _display({"value": raw, "unit": unit, "kind": kind}, system, ratio=ratio)


def _display(value: Mapping[str, Any] | Any, system: str = "si", *, ratio: bool = False) -> str:
    """Return a value dict ``{"value", "unit", "kind"}`` as text for people, e.g. ``1455 r/min``.

    The dict carries machine units (shaft speed in r/min, the rest SI); it is
    converted back to the internal SI value for :func:`rulecheck.units.format_value`.
    A value is shown by its kind: a ``fraction`` as a percentage (``ratio`` asks for a plain number),
    a ``ratio`` or ``count`` (or no kind) as a plain number. Values that are not numbers are shown as text.
    """
    if not isinstance(value, Mapping):
        return plain(value, 200) if value is not None else "—"
    raw = value.get("value")
    unit = plain(value.get("unit") or "", 40)
    kind_name = value.get("kind")
    number = _number(raw)
    if number is None:
        text = "—" if raw is None else plain(raw, 200)
        return f"{text} {unit}".strip() if raw is not None and unit not in ("", "1") else text
    if kind_name not in KINDS:
        return f"{format_value(number, None)} {unit}".strip() if unit != "1" else format_value(number, None)
    if kind_name == "fraction":
        if ratio:
            return format_value(number, None)
        return format_value(number, "fraction", system)
    k = KINDS[kind_name]
    if unit in ("", k.json_unit):
        si = number * 2.0 * math.pi / 60.0 if kind_name == "rotational_speed" else number
    else:
        try:
            si = parse_quantity(f"{number!r} {unit}", kind_name)
        except QuantityError:
            return f"{format_value(number, None)} {unit}"
    return format_value(si, kind_name, system)


# A rule's value name is either words ("worst_speed") or a symbol with subscripts ("t2_nom", "e_bus"). A symbol
# is shown as the trade writes it, after the name of its declared kind: "torque T₂,nom", "energy E_bus".
_SYMBOL_HEADS = {"t": "T", "i": "I", "p": "P", "e": "E", "u": "U", "v": "V", "r": "R", "j": "J", "c": "C",
                 "l": "l", "n": "n", "k": "k", "f": "f", "sf": "SF", "eta": "η", "dv": "ΔU", "df": "Δf"}
_SHORT_WORDS = {"max", "min", "rms", "cdf", "top", "end", "low", "high", "bus", "net", "new", "old", "gap", "ie",
                "dc", "ac", "fw", "pm", "ip"}
_KIND_WORDS = {"rotational_speed": "speed", "back_emf_constant": "back-EMF constant",
               "torque_constant": "torque constant", "resistance_per_length": "resistance per length",
               "temperature_difference": "temperature rise", "apparent_power": "apparent power"}
_SUBSCRIPT_DIGITS = str.maketrans("0123456789", "₀₁₂₃₄₅₆₇₈₉")


def _is_words(tokens: list[str]) -> bool:
    head = tokens[0]
    return head.isalpha() and head not in _SYMBOL_HEADS and (len(head) >= 3 or head in _SHORT_WORDS)


def value_label(name: Any, kind: Any = None) -> str:
    """Return a value's name for people: words as words ("worst speed"), a symbol in the trade's notation after
    the name of its declared kind ("torque T₂,nom", "energy E_bus", "service factor SF_app", "time t_ol")."""
    if type(name) is str and type(kind) in _MEMO_TYPES:
        return _value_label_memo(name, kind)  # a rule's few value names repeat in every spec
    return _value_label(name, kind)


@lru_cache(maxsize=2048, typed=True)
def _value_label_memo(name: str, kind: Any) -> str:
    return _value_label(name, kind)


def _value_label(name: Any, kind: Any = None) -> str:
    text = plain(name, 80)
    tokens = [t for t in text.lower().split("_") if t]
    if not tokens or _is_words(tokens):
        return text.replace("_", " ")
    head = tokens[0]
    letters = head.rstrip("0123456789")
    digits = head[len(letters):].translate(_SUBSCRIPT_DIGITS)
    letter = _SYMBOL_HEADS.get(letters, letters)
    if letters == "t" and kind != "torque":
        letter = "t"  # t is a time (or a temperature); T a torque
    symbol = letter + digits
    subs = tokens[1:]
    if subs:
        symbol += ("," if digits else "_") + ",".join(subs)
    named = {"sf": "service factor", "eta": "efficiency", "k": "factor"}
    if letters in named:
        word = named[letters]
    elif kind in KINDS and kind != "fraction":
        word = _KIND_WORDS.get(str(kind), str(kind).replace("_", " "))
    else:
        word = ""
    return f"{word} {symbol}".strip()


def value_items(outcome: Mapping[str, Any], system: str = "si") -> list[tuple[str, str]]:
    """Return the outcome's computed values as ``(name, display text)`` pairs in their given order; each value is
    shown by the kind the rule declares for it (a ratio as a plain number, a fraction as a percentage) and named
    by :func:`value_label`."""
    values = outcome.get("values") or {}
    if not isinstance(values, Mapping):
        return []
    items = []
    for name, value in values.items():
        kind = value.get("kind") if isinstance(value, Mapping) else None
        items.append((value_label(name, kind), display(value, system)))
    return items


def display_limit(outcome: Mapping[str, Any], system: str = "si") -> str:
    """Return the outcome's limit as text ("" when it has none, or when a computed value shown beside it already
    says the same, so a limit is never listed twice), shown by its kind."""
    limit = outcome.get("limit")
    if limit is None:
        return ""
    text = display(limit, system)
    shown = {v for _, v in value_items(outcome, system)}
    return "" if text in shown else text


def outcome_label(outcome: Mapping[str, Any]) -> Label:
    """Return the label of an outcome: its severity for a fail, else the outcome itself."""
    kind = outcome.get("outcome")
    if kind == "fail":
        return OUTCOME_LABELS.get(outcome.get("severity"), OUTCOME_LABELS["error"])
    return OUTCOME_LABELS.get(kind, Label("[?]", plain(kind, 20).upper() or "UNKNOWN", "sev-unchecked"))


def verdict_label(spec: Mapping[str, Any]) -> Label:
    """Return the label of a spec's verdict; an unreadable spec is labelled so whatever its verdict says."""
    if spec.get("status") in ("invalid", "unreadable"):
        return VERDICT_LABELS[spec["status"]]
    return VERDICT_LABELS.get(spec.get("verdict"), Label("[?]", plain(spec.get("verdict"), 20).upper(), "sev-na"))


def counts(spec: Mapping[str, Any]) -> dict[str, int]:
    """Return the spec's outcome counts with every key present (missing counts are 0)."""
    raw = spec.get("counts") or {}
    keys = ("error", "warning", "info", "not-checked", "waived", "pass", "not-applicable")
    out = {}
    for key in keys:
        n = raw.get(key, 0) if isinstance(raw, Mapping) else 0
        out[key] = n if isinstance(n, int) and not isinstance(n, bool) else 0
    return out


def safety_errors(spec: Mapping[str, Any]) -> int:
    """Return how many error-level fails of safety-relevant rules the spec has."""
    return sum(
        1
        for o in _outcomes(spec)
        if o.get("outcome") == "fail" and o.get("severity") == "error" and o.get("safety") is True
    )


def _outcomes(spec: Mapping[str, Any]) -> list[Mapping[str, Any]]:
    outcomes = spec.get("outcomes") or []
    return [o for o in outcomes if isinstance(o, Mapping)] if isinstance(outcomes, list) else []


def _tier(spec: Mapping[str, Any]) -> int:
    if spec.get("verdict") in ("fail", "invalid") or spec.get("status") in ("invalid", "unreadable"):
        return 0
    if spec.get("verdict") == "warning":
        return 1
    return 2


def sort_key(spec: Mapping[str, Any]) -> tuple:
    """Return a spec's place in the report's order (worst first, :data:`ORDER_STATEMENT`); equal keys keep the
    order the specs came in."""
    c = counts(spec)
    return (
        _tier(spec),
        -safety_errors(spec),
        -c["error"],
        -c["warning"],
        -c["not-checked"],
        plain(spec.get("tag")),
        plain(spec.get("file")),
    )


def sorted_specs(specs: Iterable[Mapping[str, Any]]) -> list[Mapping[str, Any]]:
    """Return the specs worst first, in the order :data:`ORDER_STATEMENT` describes."""
    return sorted((s for s in specs if isinstance(s, Mapping)), key=sort_key)


@dataclass
class OutcomeGroups:
    """A spec's outcomes sorted into the report's sections."""

    failures: list[Mapping[str, Any]]
    not_checked: list[Mapping[str, Any]]
    waived: list[Mapping[str, Any]]
    passed: list[Mapping[str, Any]]
    not_applicable: list[Mapping[str, Any]]


def group_outcomes(spec: Mapping[str, Any]) -> OutcomeGroups:
    """Return the spec's outcomes grouped by kind; failures by severity, safety-relevant first, then rule id."""

    def sev_key(o: Mapping[str, Any]) -> tuple:
        return (-SEVERITY_RANK.get(o.get("severity"), 0), o.get("safety") is not True, plain(o.get("rule")))

    groups = OutcomeGroups([], [], [], [], [])
    for o in _outcomes(spec):
        kind = o.get("outcome")
        if kind == "fail":
            groups.failures.append(o)
        elif kind == "not-checked":
            groups.not_checked.append(o)
        elif kind == "waived":
            groups.waived.append(o)
        elif kind == "pass":
            groups.passed.append(o)
        else:
            groups.not_applicable.append(o)
    groups.failures.sort(key=sev_key)
    groups.not_checked.sort(key=sev_key)
    for group in (groups.waived, groups.passed, groups.not_applicable):
        group.sort(key=lambda o: plain(o.get("rule")))
    return groups


def basis_items(outcome: Mapping[str, Any]) -> list[tuple[str, str, str]]:
    """Return the outcome's basis as ``(source, status tag, status in words)`` triples."""
    basis = outcome.get("basis") or []
    if not isinstance(basis, list):
        return []
    out = []
    for item in basis:
        if isinstance(item, Mapping):
            tag = plain(item.get("status"), 4)
            out.append((plain(item.get("source"), 300), tag, BASIS_STATUS.get(tag, "status not stated")))
        else:
            out.append((plain(item, 300), "", "status not stated"))
    return out


def location_text(outcome: Mapping[str, Any]) -> str:
    """Return ``path (line L, column C)`` for the outcome's location, or "" when it has none."""
    loc = outcome.get("location") or {}
    if not isinstance(loc, Mapping):
        return ""
    path = plain(loc.get("path"), 200)
    where = []
    if isinstance(loc.get("line"), int):
        where.append(f"line {loc['line']}")
    if isinstance(loc.get("column"), int):
        where.append(f"column {loc['column']}")
    if path and where:
        return f"{path} ({', '.join(where)})"
    return path or ", ".join(where)


def missing_items(outcome: Mapping[str, Any]) -> list[str]:
    """Return the spec paths whose values would let a not-checked rule run."""
    missing = outcome.get("missing") or []
    return [plain(m, 200) for m in missing] if isinstance(missing, list) else [plain(missing, 200)]


def waiver_items(outcome: Mapping[str, Any]) -> dict[str, str]:
    """Return the waiver's reason, approver and expiry as text ("" where absent)."""
    w = outcome.get("waiver") or {}
    if not isinstance(w, Mapping):
        return {"reason": plain(w, 500), "approved_by": "", "expires": ""}
    return {k: plain(w.get(k), 500) for k in ("reason", "approved_by", "expires")}


def derived_items(spec: Mapping[str, Any], system: str = "si") -> list[dict[str, str]]:
    """Return the spec's derived quantities (path, value, from, method, source), sorted by path."""
    derived = spec.get("derived") or {}
    if not isinstance(derived, Mapping):
        return []
    rows = []
    for path in sorted(derived, key=str):
        d = derived[path]
        d = d if isinstance(d, Mapping) else {"value": d}
        rows.append(
            {
                "path": plain(path, 200),
                "value": display(d, system),
                "from": plain(d.get("from"), 300),
                "method": plain(d.get("method"), 100),
                "source": plain(d.get("source"), 100),
            }
        )
    return rows


def derived_used(spec: Mapping[str, Any], outcomes: Iterable[Mapping[str, Any]]) -> set[str]:
    """Return the paths of the spec's derived values that the given outcomes show: a derived value is "used" by a
    finding when the finding reports the same number in the same unit (its values carry no path, only the number
    the rule read)."""
    derived = spec.get("derived") or {}
    if not isinstance(derived, Mapping):
        return set()
    shown: dict[str, list[float]] = {}  # by unit
    for o in outcomes:
        values = o.get("values") if isinstance(o.get("values"), Mapping) else {}
        for v in values.values():
            number = _number(v.get("value")) if isinstance(v, Mapping) else None
            if number:
                shown.setdefault(str(v.get("unit")), []).append(number)
    used = set()
    if not shown:
        return used
    for path, d in derived.items():
        number = _number(d.get("value")) if isinstance(d, Mapping) else None
        if number and any(math.isclose(number, n, rel_tol=1e-6) for n in shown.get(str(d.get("unit")), ())):
            used.add(str(path))
    return used


def summary_line(result: Mapping[str, Any]) -> str:
    """Return a one-line summary of the whole result, e.g. ``3 drive trains: 1 fail, 1 warning, 1 pass``."""
    specs = [s for s in (result.get("specs") or []) if isinstance(s, Mapping)]
    return verdicts_line(verdict_label(s).word.lower() for s in specs)


def verdicts_line(words: Iterable[str]) -> str:
    """Return the one-line summary of the verdicts (each a :func:`verdict_label` word in lower case) of a run."""
    tally: dict[str, int] = {}
    n = 0
    for word in words:
        tally[word] = tally.get(word, 0) + 1
        n += 1
    order = ["fail", "invalid", "unreadable", "warning", "pass"]
    parts = [f"{tally[w]} {w}" for w in order if tally.get(w)]
    parts += [f"{k} {w}" for w, k in sorted(tally.items()) if w not in order]
    noun = "drive train" if n == 1 else "drive trains"
    return f"{n} {noun}: " + (", ".join(parts) if parts else "nothing checked")


def spec_name(spec: Mapping[str, Any]) -> str:
    """Return ``TAG — title`` (or the file name when the spec has no tag) as plain text."""
    tag = plain(spec.get("tag"), 80)
    title = plain(spec.get("title"), 200)
    if tag and title:
        return f"{tag} — {title}"
    return tag or title or plain(spec.get("file"), 200) or "(unnamed spec)"
