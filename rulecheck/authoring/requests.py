"""What to give for a rule that could not be checked: the spec fields behind a missing derived value.

A rule that reads a derived value (``cable.voltage_drop``) is not checked when that value could not be
derived; the engineer must be told the *input* to give (``motor.power_factor``), not the derived value.
The links from derived values to the fields they are computed from are read from the derive stage's own
provenance, on a model built with every field of the drive train given its example value (as for a
template, :mod:`rulecheck.authoring.fields`), once per motor kind, starter and load model in a process.

Nothing here is imported by the derive stage or the engine: :mod:`rulecheck.check` asks it, and hands the
engine a function through :class:`rulecheck.engine.run.SpecNames`.
"""

from __future__ import annotations

from functools import lru_cache
from typing import Any

from rulecheck import units

__all__ = ["all_links", "component", "example", "inputs_of", "leaves", "unit_words", "words"]


@lru_cache(maxsize=32)
def _links(motor_kind: str, drive_kind: str, load_model: str) -> tuple[dict[str, tuple[str, ...]], frozenset[str]]:
    """Return (derived path → its inputs, the candidate spec fields) for one kind of drive train."""
    from rulecheck.authoring.examples import examples_for
    from rulecheck.authoring.fields import _model_links, in_scope, schema_fields

    facts = {"motor.kind": motor_kind, "drive.kind": drive_kind, "load.model": load_model}
    facts = {k: v for k, v in facts.items() if v}
    schema = schema_fields()
    examples = examples_for(schema, motor_kind or "induction", load_model or "")
    candidates = {p: n for p, n in schema.items()
                  if in_scope(p, n, facts) and p not in facts and not p.startswith(("margins", "waivers", "cases"))}
    plain, _values = _model_links(facts, candidates, examples, lists=False)
    with_lists, _values = _model_links(facts, candidates, examples, lists=True)
    return {**with_lists, **plain}, frozenset(candidates)


# the kinds of drive train whose provenance ``all_links`` joins: every motor kind, starter and load model
_MOTORS = ("induction", "pm-synchronous", "dc")
_DRIVES = ("inverter", "dc-converter", "soft-starter", "direct-on-line")
_LOADS = ("constant-torque", "quadratic", "constant-power", "conveyor", "hoist", "lead-screw")


@lru_cache(maxsize=1)
def all_links() -> dict[str, tuple[str, ...]]:
    """Return every derived path → the paths it is computed from in any kind of drive train (the union of the
    provenance links of each motor kind, starter and load model), for the strict rule lint."""
    joined: dict[str, set[str]] = {}
    for motor in _MOTORS:
        for drive in _DRIVES:
            for load in _LOADS:
                try:
                    links, _fields = _links(motor, drive, load)
                except Exception:  # noqa: BLE001 - a combination whose example train does not build adds nothing
                    continue
                for path, inputs in links.items():
                    joined.setdefault(path, set()).update(inputs)
    return {path: tuple(sorted(inputs)) for path, inputs in sorted(joined.items())}


def _follow(path: str, links: dict[str, tuple[str, ...]], fields: frozenset[str], known: Any,
            seen: set[str]) -> list[str]:
    """Return the absent spec fields ``path`` needs: its inputs followed through the derived values that
    are absent too (an input the spec gives or the model derived is not asked for)."""
    if path in seen:
        return []
    seen.add(path)
    if path in links:
        out: list[str] = []
        for source in links[path]:
            if source not in known:
                out += [p for p in _follow(source, links, fields, known, seen) if p not in out]
        return out
    return [path] if path in fields else []


def inputs_of(path: str, facts: dict[str, Any], known: Any) -> list[str]:
    """Return the spec fields that the derived value ``path`` needs and the spec does not give (followed
    through other derived values; ``known``: the paths that have a value). Empty when none is found: the
    value cannot be derived for another reason."""
    try:
        links, fields = _links(str(facts.get("motor.kind") or ""), str(facts.get("drive.kind") or ""),
                               str(facts.get("load.model") or ""))
    except Exception:  # noqa: BLE001 - an example drive train that does not build: no links, the path stays named
        return []
    return _follow(path, links, fields, known, set())


def component(path: str) -> str:
    """Return the component a field belongs to: its first key (``motor``, ``drive``, ``load``)."""
    return path.split(".", 1)[0].split("[", 1)[0]


def unit_words(path: str) -> str:
    """Return a field's unit (or kind of value) in a few words."""
    from rulecheck.authoring.fields import schema_fields

    node = schema_fields().get(path)
    if node is None:
        return ""
    dimension = node.get("x-dimension")
    if dimension:
        kind = units.KINDS.get(dimension)
        return kind.description if kind is not None else str(dimension)
    if "enum" in node:
        return "one of " + ", ".join(str(v) for v in node["enum"][:6]) + (", …" if len(node["enum"]) > 6 else "")
    return {"boolean": "true or false", "integer": "whole number", "number": "number"}.get(str(node.get("type")),
                                                                                         "text")


def example(path: str, motor_kind: str = "induction", load_model: str = "") -> str:
    """Return an example value of a field as a spec writes it."""
    from rulecheck.authoring.examples import examples_for
    from rulecheck.authoring.fields import schema_fields

    node = schema_fields().get(path)
    if node is None:
        return ""
    value = examples_for({path: node}, motor_kind or "induction", load_model).get(path)
    if isinstance(value, bool):
        return "true" if value else "false"
    return "" if value is None or isinstance(value, (list, dict)) else str(value)


def words(path: str, motor_kind: str = "induction", load_model: str = "") -> str:
    """Return an example of a field in a few words, with its unit (``e.g. 45 kW``); for a field without an
    example, its kind of value (``true or false``)."""
    shown = example(path, motor_kind, load_model)
    return f"e.g. {shown}" if shown else unit_words(path)


def leaves(path: str) -> list[str]:
    """Return the fields of a spec path: itself when it is a field, the fields of a section (``drive.overload``
    → its current, duration and period), or itself when the schema does not know it."""
    from rulecheck.authoring.fields import schema_fields

    schema = schema_fields()
    if path in schema:
        return [path]
    inner = [p for p in schema if p.startswith(path + ".")]
    return inner or [path]
