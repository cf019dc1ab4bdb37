"""The spec format's JSON Schema for editors: ``rulecheck/schemas/spec.schema.json``.

Generated from ``schemas/spec.schema.yaml`` (the one source of truth) and the unit kinds of
:mod:`rulecheck.units`: every quantity field (``x-dimension``) gets a ``pattern`` that accepts a number
followed by a unit of its kind only (``incline: 5 kW`` is refused by an editor as it is by rulecheck), a
``maxLength`` (the parser's limit), ``examples`` and a ``patternErrorMessage`` naming the units.

Each unit spelling in a pattern is one the parser itself accepts for that kind (checked here, as the
pattern is built), so an editor never asks for a spelling rulecheck would refuse. The patterns use only
ECMAScript-compatible syntax (editors evaluate them in JavaScript).

``python -m rulecheck.schema_export`` rewrites the file; ``--check`` exits 1 when it is stale
(``tests/foundation/test_schema_file.py`` does the same).
"""

from __future__ import annotations

import argparse
import copy
import json
import sys
from functools import cache
from importlib import resources
from pathlib import Path
from typing import Any

from rulecheck import units
from rulecheck.schema import spec_schema

__all__ = ["SHIPPED", "editor_schema", "main", "quantity_pattern", "render", "unit_spellings"]

SHIPPED = Path(__file__).resolve().parent / "schemas" / "spec.schema.json"

# the number ends where its digits end: a unit spelled with a leading digit ('1/min') never takes digits of the
# number's exponent ('1E401/min' is the number 1E401, which the parser refuses, not 1E40 per minute)
NUMBER = r"[+-]?(?:[0-9]+(?:\.[0-9]*)?|\.[0-9]+)(?:[eE][+-]?[0-9]{1,2})?(?![0-9])"
# SI prefixes tried on SI unit symbols (each spelling kept only if the parser accepts it for the kind)
_PREFIXES = ("G", "M", "k", "m", "µ", "u", "n")
_SI_SYMBOLS = ("W", "VA", "J", "Wh", "Hz", "V", "A", "ohm", "Ω", "H", "F", "N", "m", "g")
_FRACTION_UNITS = ("%", "percent", "pu", "p.u.")
_SYNTAX = set("\\^$.|?*+()[]{}")  # the characters ECMAScript's `u` mode lets (and needs) an escape for


def _accepted(spelling: str, kind_name: str) -> bool:
    try:
        units.parse_quantity(f"1 {spelling}".rstrip(), kind_name)
    except units.QuantityError:
        return False
    return True


def _candidates(kind_name: str) -> set[str]:
    fast = set(units.FAST_UNITS.get(kind_name, {}))
    found = set(fast) | set(units._ALIASES)
    found |= {p + s for s in fast if s in _SI_SYMBOLS for p in _PREFIXES}
    if kind_name == "temperature":
        found |= set(units._FAST_TEMPERATURE)
    if kind_name == "rotational_speed":
        found |= {form for form, target in units._SPEED_FORMS.items() if target}
    if kind_name == "fraction":
        found |= set(_FRACTION_UNITS)
    return found


@cache
def unit_spellings(kind_name: str) -> tuple[str, ...]:
    """The unit spellings a pattern of ``kind_name`` accepts: every candidate the parser accepts, sorted."""
    canonical = {s.replace("·", "*").replace("**", "^").replace("²", "^2").replace("³", "^3")
                 for s in _candidates(kind_name) if _accepted(s, kind_name)}
    return tuple(sorted(canonical, key=lambda s: (-len(s), s)))


def _escape(char: str) -> str:
    return "\\" + char if char in _SYNTAX else char


def _unit_regex(spelling: str) -> str:
    """One spelling as a regex: spaces allowed around `*` and `/`, `*` or `·`, `^` or `**`, and `²`, `³`."""
    out, i = [], 0
    while i < len(spelling):
        char = spelling[i]
        if spelling.startswith(("^2", "^3"), i) and not spelling[i + 2:i + 3].isdigit():
            sup = "²" if spelling[i + 1] == "2" else "³"
            out.append(f"(?:(?:\\^|\\*\\*){spelling[i + 1]}|{sup})")
            i += 2
            continue
        if char == "*":
            out.append(" *[*·] *")
        elif char == "/":
            out.append(" */ *")
        elif char == "^":
            out.append("(?:\\^|\\*\\*)")
        else:
            out.append(_escape(char))
        i += 1
    return "".join(out)


@cache
def quantity_pattern(kind_name: str) -> str:
    """An anchored ECMAScript/Python regex for a quantity string of ``kind_name``."""
    spellings = [s for s in unit_spellings(kind_name) if s]
    alternatives = "|".join(_unit_regex(s) for s in spellings)
    if kind_name == "fraction":  # a plain number is a fraction too ('0.12')
        return f"^ *{NUMBER}(?: *(?:{alternatives}))? *$"
    return f"^ *{NUMBER} *(?:{alternatives}) *$"


def _units_named(kind_name: str) -> str:
    kind = units.KINDS[kind_name]
    return kind.description


def _annotate(node: Any) -> None:
    if isinstance(node, list):
        for item in node:
            _annotate(item)
        return
    if not isinstance(node, dict):
        return
    kind_name = node.get("x-dimension")
    if isinstance(kind_name, str):
        kind = units.KINDS[kind_name]
        node.setdefault("pattern", quantity_pattern(kind_name))
        node.setdefault("maxLength", units.MAX_QUANTITY_LENGTH)
        node.setdefault("examples", [kind.example])
        node.setdefault("patternErrorMessage", f"a quantity: {_units_named(kind_name)}, e.g. '{kind.example}'")
    for value in node.values():
        _annotate(value)


def editor_schema() -> dict[str, Any]:
    """The spec schema with a unit pattern, a length limit and examples on every quantity field."""
    schema = copy.deepcopy(spec_schema())
    _annotate(schema)
    return {"$comment": "Generated from spec.schema.yaml and rulecheck/units.py by `python -m "
                        "rulecheck.schema_export`; do not edit.", **schema}


def render() -> str:
    """The text of the shipped file."""
    return json.dumps(editor_schema(), indent=2, ensure_ascii=False) + "\n"


def shipped_text() -> str:
    """The shipped file's text, as installed."""
    return resources.files("rulecheck").joinpath("schemas/spec.schema.json").read_text(encoding="utf-8")


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(prog="python -m rulecheck.schema_export", description=__doc__.split("\n")[0])
    parser.add_argument("--check", action="store_true", help="exit 1 if the shipped file is not up to date")
    args = parser.parse_args(argv)
    text = render()
    if args.check:
        current = SHIPPED.read_text(encoding="utf-8") if SHIPPED.is_file() else ""
        if current != text:
            print(f"{SHIPPED}: stale; run python -m rulecheck.schema_export", file=sys.stderr)
            return 1
        return 0
    SHIPPED.write_text(text, encoding="utf-8")
    print(f"wrote {SHIPPED}")
    return 0


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
