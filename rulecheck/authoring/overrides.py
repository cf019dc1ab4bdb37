"""What-if values: ``rulecheck check --set PATH=VALUE`` gives a field another value for one run, without
editing the spec. Each value is read as a motor list's cell is (:mod:`rulecheck.authoring.importer`: a
quantity with its unit, one of a field's choices, yes/no, a number) and then validated against the field's
schema, so a value the file would refuse is refused here, before anything is checked."""

from __future__ import annotations

import difflib
from typing import Any

from rulecheck import units

__all__ = ["OverrideError", "parse_overrides"]


class OverrideError(ValueError):
    """A ``--set`` that names no field or gives a value the field refuses (a usage error)."""


def _field(path: str) -> dict[str, Any]:
    from rulecheck.authoring.fields import schema_fields

    fields = schema_fields()
    node = fields.get(path)
    if node is None or path in ("format",) or path.startswith(("waivers", "margins", "cases")) or \
            node.get("type") in ("array", "object"):
        close = difflib.get_close_matches(path, [p for p, n in fields.items() if n.get("type") not in
                                                 ("array", "object")], n=1)
        hint = f"; did you mean {close[0]}?" if close else "; 'rulecheck schema --markdown' lists the fields"
        raise OverrideError(f"--set {path}=...: {path} is not a field of a spec that takes one value{hint}")
    return node


def parse_override(text: str) -> tuple[str, Any]:
    """Return (field path, spec value) of one ``PATH=VALUE``; raise :class:`OverrideError` naming it."""
    from jsonschema import Draft202012Validator

    from rulecheck.authoring.importer import ColumnMap, _Bad, _cell_value

    path, sep, value = text.partition("=")
    path, value = path.strip(), value.strip()
    if not sep or not path:
        raise OverrideError(f"--set {text!r}: write PATH=VALUE, e.g. --set motor.rated_power='55 kW'")
    node = _field(path)
    if not value:
        raise OverrideError(f"--set {path}=: give a value, e.g. {_example(node)}")
    try:
        parsed = _cell_value(value, ColumnMap(heading=path, field=path), decimal_comma=False)
    except _Bad as exc:
        reason = str(exc)
        if "has no unit" in reason:
            reason = f"the number {value} has no unit: give it with its unit, e.g. {_example(node)}"
        raise OverrideError(f"--set {path}={value}: {reason}") from None
    if "x-dimension" not in node:
        errors = sorted(Draft202012Validator(node).iter_errors(parsed), key=lambda e: e.message)
        if errors:
            raise OverrideError(f"--set {path}={value}: {errors[0].message}")
    problem = _as_in_a_file(path, parsed)
    if problem:
        raise OverrideError(f"--set {path}={value}: {problem}")
    return path, parsed


def _as_in_a_file(path: str, value: Any) -> str | None:
    """Return what the spec's validation says of ``value`` at ``path`` (its range, its kind), or None."""
    import yaml

    from rulecheck.authoring.fields import nest
    from rulecheck.load import load_text
    from rulecheck.schema import check_structure, read_quantities

    doc = load_text(yaml.safe_dump(nest({"format": 1, path: value}), allow_unicode=True), "--set")
    problems = check_structure(doc) + read_quantities(doc)[1]
    mine = [p for p in problems if p.severity == "error" and p.path == path]
    return mine[0].message.removeprefix(f"{path}: ") if mine else None


def _example(node: dict[str, Any]) -> str:
    if "x-dimension" in node:
        return units.KINDS[node["x-dimension"]].example
    if "enum" in node:
        return str(node["enum"][0])
    return "true" if node.get("type") == "boolean" else "1"


def parse_overrides(texts: list[str]) -> dict[str, Any]:
    """Return the field values of every ``--set`` (the last one wins for a field given twice)."""
    out: dict[str, Any] = {}
    for text in texts:
        path, value = parse_override(text)
        out[path] = value
    return out
