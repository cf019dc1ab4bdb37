"""The spec schema: structure validation with positions, and quantity parsing.

The JSON Schema in ``schemas/spec.schema.yaml`` is the one source of truth.
jsonschema checks the structure; :func:`read_quantities` then walks the same
schema beside the document and parses every field that declares
``x-dimension`` into an SI float, so units are read once, where data enters.
"""

from __future__ import annotations

import difflib
import json
from dataclasses import dataclass, field, replace
from functools import lru_cache
from importlib import resources
from typing import Any

import yaml

from rulecheck import units
from rulecheck.load import ODD_NUMBER, Document, is_odd_number, path_text

__all__ = ["Problem", "Quantities", "check_structure", "read_quantities", "spec_schema", "walk_fields"]


@dataclass(frozen=True)
class Problem:
    """One thing wrong with a spec's structure or units, at a key path."""

    rule: str  # spec-schema | units-and-dimensions
    path: str
    message: str
    hint: str = ""
    severity: str = "error"
    at_key: bool = False  # position of the key rather than of its value
    parts: tuple[Any, ...] | None = None  # key path of a value that cannot be used (left out of the model)


@dataclass
class Quantities:
    """Every quantity of a spec in SI floats, by key path, with its kind and how it was written."""

    values: dict[str, float] = field(default_factory=dict)
    kinds: dict[str, str] = field(default_factory=dict)
    written: dict[str, str] = field(default_factory=dict)


@lru_cache(maxsize=1)
def spec_schema() -> dict[str, Any]:
    """Return the spec-format JSON Schema (Draft 2020-12) as a dict."""
    text = resources.files("rulecheck").joinpath("schemas/spec.schema.yaml").read_text(encoding="utf-8")
    schema = yaml.load(text, Loader=getattr(yaml, "CSafeLoader", yaml.SafeLoader))  # the C parser: faster start
    defs = schema["$defs"]
    # a load case's overrides: every load field but the model, none required (one definition of each field)
    load = defs["load"]
    defs["load_override"] = {**{k: v for k, v in load.items() if k != "required"},
                             "description": "Load fields a case gives instead of the spec's own.",
                             "x-fields-of": "load",
                             "properties": {k: v for k, v in load["properties"].items() if k != "model"}}
    return schema


def schema_json() -> str:
    """Return the spec-format schema as JSON text, for editors."""
    return json.dumps(spec_schema(), indent=2, ensure_ascii=False) + "\n"


@lru_cache(maxsize=1)
def _validator() -> Any:
    from jsonschema import Draft202012Validator

    # the schema itself is checked against the 2020-12 metaschema by the tests, not on every start
    return Draft202012Validator(spec_schema())


_RESOLVED: dict[int, dict[str, Any]] = {}


def _resolve(node: dict[str, Any]) -> dict[str, Any]:
    """Follow local ``$ref``s, merging sibling keywords (description) over the target; memoised, the schema is fixed."""
    if "$ref" not in node:
        return node
    key = id(node)
    found = _RESOLVED.get(key)
    if found is None:
        found = _RESOLVED[key] = _resolve_uncached(node)
    return found


def _resolve_uncached(node: dict[str, Any]) -> dict[str, Any]:
    seen = 0
    while "$ref" in node and seen < 10:
        ref = node["$ref"]
        target: Any = spec_schema()
        for part in ref.lstrip("#/").split("/"):
            target = target[part]
        node = {**target, **{k: v for k, v in node.items() if k != "$ref"}}
        seen += 1
    return node


def _subschema(parts: list[Any]) -> dict[str, Any] | None:
    node = _resolve(spec_schema())
    for part in parts:
        if isinstance(part, int):
            node = _resolve(node.get("items", {}))
        else:
            props = node.get("properties", {})
            if part in props:
                node = _resolve(props[part])
            elif _named_entries(node):
                node = _resolve(node["additionalProperties"])
            else:
                return None
    return node


def _named_entries(node: dict[str, Any]) -> bool:
    """Return whether a mapping's keys are free names whose values share one section (the load cases)."""
    extra = node.get("additionalProperties")
    return isinstance(extra, dict) and "$ref" in extra


_TYPE_WORDS = {
    "string": "a quoted text or quantity",
    "number": "a number",
    "integer": "a whole number",
    "boolean": "true or false",
    "object": "a mapping of keys",
    "array": "a list",
}


def _describe_type(expected: Any) -> str:
    if isinstance(expected, list):
        return " or ".join(_TYPE_WORDS.get(t, t) for t in expected)
    return _TYPE_WORDS.get(expected, str(expected))


def _base60(text: str) -> str:
    """Return what YAML 1.1 makes of a base-60 text ('3:1' → 181), as text."""
    total = 0.0
    for part in text.replace("_", "").lstrip("+-").split(":"):
        try:
            total = total * 60 + float(part)
        except ValueError:
            return "a number"
    total = -total if text.startswith("-") else total
    return f"{total:g}"


def _yaml11_hint(doc: Document, path: str, value: Any) -> str:
    raw = doc.raw.get(path)
    if raw is None:
        return ""
    text, tag = raw
    if tag.endswith(":bool") and isinstance(value, bool):
        return f"YAML read the unquoted word '{text}' as {str(value).lower()}; put it in quotes"
    if tag.endswith((":int", ":float")) and ":" in text:
        return (f"'{text}' is a base-60 number in YAML 1.1 (read by some tools as {_base60(text)}), not a ratio or "
                "a time; write the number itself (a ratio as 3, not 3:1), or a quantity with its unit in quotes")
    if tag.endswith(":int") and text.startswith("0") and len(text) > 1 and text.isdigit():
        return f"YAML read '{text}' as the octal number {value}; put it in quotes"
    if tag.endswith((":int", ":float")):
        return "YAML read a bare number; quantities need their unit in quotes"
    if tag.endswith(":null"):
        return f"YAML read '{text or '(nothing)'}' as an empty value"
    return ""


_FAST = {"enabled": False}


def use_fast_validator(enabled: bool = True) -> None:
    """Let large runs first ask a compiled validator whether a spec is valid (jsonschema explains the invalid ones)."""
    _FAST["enabled"] = enabled


_DRAFT_7 = "http://json-schema.org/draft-07/schema#"


@lru_cache(maxsize=1)
def _sections() -> dict[str, dict[str, Any]]:
    """Return the top-level properties that are sections (a ``$ref`` to one of the schema's ``$defs``)."""
    return {k: v for k, v in spec_schema()["properties"].items() if "$ref" in v}


def _open_sections(schema: dict[str, Any]) -> dict[str, Any]:
    """Return ``schema`` with every section left open (``{}``): its top-level keywords and small properties."""
    sections = _sections()
    return {**schema, "properties": {k: ({} if k in sections else v) for k, v in schema["properties"].items()}}


@lru_cache(maxsize=1)
def _fast_validators() -> tuple[Any, dict[str, Any]]:
    """Return the spec schema compiled to Python by fastjsonschema (about 20 times faster than jsonschema):
    the top level with its sections left open, and each section on its own.

    They only decide "valid"; the part of an invalid spec that they refuse is validated again by jsonschema,
    whose errors carry the paths the findings need. fastjsonschema implements draft 7; the spec schema uses
    nothing that draft 2020-12 reads differently (``$ref`` siblings here are descriptions only), and a test
    checks that both validators agree on the demo, generated and bad-input specs.
    """
    import copy

    import fastjsonschema

    schema = copy.deepcopy(spec_schema())
    schema["$schema"] = _DRAFT_7
    top = fastjsonschema.compile(_open_sections(schema))
    sections = {k: fastjsonschema.compile({"$schema": _DRAFT_7, "$defs": schema["$defs"], **v})
                for k, v in _sections().items()}
    return top, sections


def _fast_refused(data: Any) -> set[str] | None:
    """Return None for a spec the compiled validators accept, else the parts jsonschema must explain: the
    sections refused, and "" for the top level with its small properties; ``{"*"}`` (all of it) for data
    that is not a mapping."""
    if not isinstance(data, dict):
        return {"*"}
    top, sections = _fast_validators()
    refused = set()
    try:
        top(data)
    except Exception:  # invalid, or anything the compiled validator cannot handle: jsonschema decides
        refused.add("")
    for key, validate_section in sections.items():
        if key in data:
            try:
                validate_section(data[key])
            except Exception:
                refused.add(key)
    return refused or None


@lru_cache(maxsize=1)
def _top_validator() -> Any:
    from jsonschema import Draft202012Validator

    return Draft202012Validator(_open_sections(spec_schema()))


def _errors(data: Any, refused: set[str]) -> list[Any]:
    """Return jsonschema's errors for ``data``, in its order, validating only the ``refused`` parts.

    The whole pass yields the top level's own errors (type, required, unknown keys), then each property's in
    the schema's order; a section the compiled validator accepted has none. ``*``: the whole pass."""
    if "*" in refused:
        return list(_validator().iter_errors(data))
    top = list(_top_validator().iter_errors(data)) if "" in refused else []
    errors = [e for e in top if not e.path]
    validator = _validator()
    sections = _sections()
    for key, sub in spec_schema()["properties"].items():
        if key not in data:
            continue
        if key in sections:
            if key in refused:
                for error in validator.descend(data[key], sub, path=key, schema_path=key):
                    error.schema_path.appendleft("properties")  # as the whole pass's 'properties' keyword does
                    errors.append(error)
        else:
            errors.extend(e for e in top if e.path and e.path[0] == key)
    return errors


def check_structure(doc: Document) -> list[Problem]:
    """Return structure problems of ``doc`` against the spec schema, in plain words."""
    from jsonschema.exceptions import best_match

    problems: list[Problem] = []
    refused = _fast_refused(doc.data) if _FAST["enabled"] else {"*"}
    errors = [] if refused is None else _errors(doc.data, refused)
    # group by instance path and report the best-matching error of each group
    by_path: dict[tuple[Any, ...], list[Any]] = {}
    for error in errors:
        by_path.setdefault(tuple(error.absolute_path), []).append(error)
    for parts, group in by_path.items():
        additional = [e for e in group if e.validator == "additionalProperties"]
        for error in additional:
            problems.extend(_unknown_keys(doc, list(parts), error))
        rest = [e for e in group if e.validator != "additionalProperties"]
        if rest:
            problem = _plain(doc, list(parts), best_match(rest))
            if all(e.validator != "required" for e in rest) and parts:
                problem = replace(problem, parts=parts)
            problems.append(problem)
    reported = {p.path for p in problems}
    problems.extend(p for p in _number_problems(doc, doc.data, ()) if p.path not in reported
                    and not (_subschema(list(p.parts or ())) or {}).get("x-dimension"))  # quantities: read_quantities
    return problems


def _number_problems(doc: Document, data: Any, parts: tuple[Any, ...]) -> list[Problem]:
    """Return a problem for every non-finite or absurdly large plain number (JSON Schema's bounds let NaN pass)."""
    if not parts and doc.odd_numbers is False:
        return []  # the loader saw none: no walk
    if isinstance(data, dict):
        return [p for k, v in data.items() if not str(k).startswith("x-")
                for p in _number_problems(doc, v, (*parts, k))]
    if isinstance(data, list):
        return [p for i, v in enumerate(data) for p in _number_problems(doc, v, (*parts, i))]
    if not is_odd_number(data):
        return []
    path = path_text(parts)
    written = doc.raw.get(path, (_show(data), ""))[0]
    shown = written if len(written) <= 24 else written[:21] + "..."
    what = "not a finite number" if isinstance(data, float) else f"larger than {ODD_NUMBER:g}"
    return [Problem("spec-schema", path, f"{path or 'the top level'}: {shown} is {what}",
                    "give the physical value; leave the key out if it is not known", parts=parts)]


def _unknown_keys(doc: Document, parts: list[Any], error: Any) -> list[Problem]:
    instance = error.instance if isinstance(error.instance, dict) else {}
    sub = _subschema(parts) or {}
    known = list(sub.get("properties", {}))
    out = []
    for key in instance:
        if key in known or (isinstance(key, str) and key.startswith("x-")):
            continue
        close = difflib.get_close_matches(str(key), known, n=1, cutoff=0.6)
        where = path_text(parts) or "the top level"
        hint = f"did you mean '{close[0]}'?" if close else f"known keys here: {', '.join(known)}"
        hint += " (keys starting with 'x-' are free for your own notes)"
        out.append(Problem("spec-schema", path_text([*parts, key]), f"unknown key '{key}' in {where}", hint,
                           at_key=True, parts=(*parts, key)))
    return out


def _plain(doc: Document, parts: list[Any], error: Any) -> Problem:
    path = path_text(parts)
    where = path or "the top level"
    value = error.instance
    validator = error.validator
    if validator == "required":
        missing = error.message.split("'")[1] if "'" in error.message else error.message
        sub = _subschema([*parts, missing]) or {}
        desc = sub.get("description", "")
        return Problem("spec-schema", path, f"{where} needs '{missing}'", desc)
    if validator == "type":
        hint = _yaml11_hint(doc, path, value)
        sub = _subschema(parts) or {}
        if sub.get("x-dimension"):
            kind = units.KINDS[sub["x-dimension"]]
            rule = "units-and-dimensions"
            message = f"{where}: expected a quantity ({kind.description}), got {_show(value)}"
            example = f"write it with its unit in quotes, e.g. '{kind.example}'"
            return Problem(rule, path, message, f"{hint}; {example}" if hint else example)
        expected = _describe_type(error.validator_value)
        return Problem("spec-schema", path, f"{where}: expected {expected}, got {_show(value)}", hint)
    if validator in ("enum", "const"):
        options = error.validator_value if validator == "enum" else [error.validator_value]
        close = difflib.get_close_matches(str(value), [str(o) for o in options], n=1, cutoff=0.5)
        hint = f"did you mean '{close[0]}'? " if close else ""
        hint += "expected one of: " + ", ".join(str(o) for o in options)
        yaml_hint = _yaml11_hint(doc, path, value)
        if yaml_hint and isinstance(value, bool):
            hint = yaml_hint + "; " + hint
        return Problem("spec-schema", path, f"{where}: {_show(value)} is not a known value", hint)
    if validator == "pattern" and "propertyNames" in error.schema_path and _named_entries(_subschema(parts) or {}):
        named = _resolve((_subschema(parts) or {})["additionalProperties"])
        return Problem("spec-schema", path_text([*parts, value]), f"{where}: the name {_show(value)} does not have "
                       "the expected form", named.get("description", ""), at_key=True)
    if validator == "pattern":
        return Problem("spec-schema", path, f"{where}: {_show(value)} does not have the expected form",
                       (_subschema(parts) or {}).get("description", ""))
    if validator == "maxProperties" and isinstance(value, dict):
        return Problem("spec-schema", path, f"{where}: {len(value)} entries; at most {error.validator_value} are "
                       "allowed", (_subschema(parts) or {}).get("description", ""))
    if validator in ("minimum", "maximum", "exclusiveMinimum", "exclusiveMaximum"):
        words = {"minimum": "at least", "maximum": "at most", "exclusiveMinimum": "more than",
                 "exclusiveMaximum": "less than"}[validator]
        return Problem("spec-schema", path, f"{where}: {_show(value)} must be {words} {error.validator_value}",
                       (_subschema(parts) or {}).get("description", ""))
    if validator in ("minLength", "maxLength") and isinstance(value, str):
        words = "shorter" if validator == "minLength" else "longer"
        return Problem("spec-schema", path, f"{where}: {_show(value)} ({len(value)} characters) is {words} than "
                       f"allowed ({error.validator_value})")
    if validator in ("minItems", "maxItems") and isinstance(value, list):
        words = "at least" if validator == "minItems" else "at most"
        return Problem("spec-schema", path, f"{where}: the list has {len(value)} items; it needs {words} "
                       f"{error.validator_value}")
    # jsonschema's own messages quote the whole value, which may be megabytes long
    message = error.message if len(error.message) <= 200 else error.message[:197] + "..."
    return Problem("spec-schema", path, f"{where}: {message}")


def _show(value: Any) -> str:
    if isinstance(value, bool):
        return str(value).lower()
    if value is None:
        return "an empty value"
    if isinstance(value, (dict, list)):
        return "a mapping" if isinstance(value, dict) else "a list"
    if isinstance(value, int) and abs(value) > 10**60:
        return f"a number of about {int(value.bit_length() * 0.30103)} digits"  # str() of a huge int is slow or refused
    text = repr(value) if isinstance(value, str) else str(value)
    return text if len(text) <= 60 else text[:57] + "..."


_FIELDS: dict[int, tuple[Any, list[Any]]] = {}


def fields(data: Any) -> list[Any]:
    """Return :func:`walk_fields` of a spec's data as a list, computed once per data object."""
    key = id(data)
    found = _FIELDS.get(key)
    if found is not None and found[0] is data:
        return found[1]
    items = walk_fields(data)
    if len(_FIELDS) > 8:
        _FIELDS.clear()  # only the spec being checked matters
    _FIELDS[key] = (data, items)
    return items


def walk_fields(data: Any) -> list[tuple[tuple[Any, ...], Any, dict[str, Any], str]]:
    """Return (path parts, value, resolved subschema, dotted path) for every value of ``data`` the schema
    describes, parents before their children, in the order of the file."""
    out: list[tuple[tuple[Any, ...], Any, dict[str, Any], str]] = []
    _walk(data, spec_schema(), (), "", out.append)
    return out


def _walk(value: Any, node: dict[str, Any], parts: tuple[Any, ...], path: str, append: Any) -> None:
    # a module function, not a closure: a recursive closure is a reference cycle, which would keep each
    # spec's list alive until the garbage collector's next pass
    if "$ref" in node:
        node = _resolve(node)
    append((parts, value, node, path))
    if isinstance(value, dict):
        props = node.get("properties")
        if props:
            for k, v in value.items():
                sub = props.get(k) if type(k) is str else None
                if sub is not None:
                    _walk(v, sub, (*parts, k), f"{path}.{k}" if path else k, append)
        elif _named_entries(node):
            for k, v in value.items():
                if type(k) is str:
                    _walk(v, node["additionalProperties"], (*parts, k), f"{path}.{k}" if path else k, append)
    elif isinstance(value, list) and "items" in node:
        items = node["items"]
        for i, v in enumerate(value):
            _walk(v, items, (*parts, i), f"{path}[{i}]", append)


# Kinds whose values are magnitudes of physical things and so must be above zero.
_POSITIVE_KINDS = {
    "power", "voltage", "current", "resistance", "inductance", "capacitance", "inertia", "mass", "length", "area",
    "frequency", "time", "back_emf_constant", "torque_constant", "density", "resistance_per_length",
}
# Fractions that cannot exceed one (an efficiency of 92 is a percentage written without '%').
_AT_MOST_ONE = {
    "efficiency", "power_factor", "reverse_efficiency", "screw_efficiency", "derating", "motor_derating",
    "duty_cdf", "voltage_tolerance", "frequency_tolerance", "voltage_drop_limit",
}


# Speeds and torques that are ratings or limits of a machine (not operating points, which may be zero or, for a
# load that drives, negative): a rating of zero is a typing slip, and every ratio a rule forms with it divides by it.
_POSITIVE_RATINGS = {
    "rated_speed", "max_speed", "weakening_speed_max", "input_speed_max", "speed_max", "speed_limit", "runaway_speed",
    "rated_torque", "breakdown_torque", "locked_rotor_torque", "peak_torque", "stall_torque", "static_torque",
    "rated_output_torque", "max_output_torque", "line_speed",
}


def _range_problem(path: str, parts: tuple[Any, ...], si: float, kind_name: str, value: Any) -> Problem | None:
    if si > 0 and kind_name != "fraction":
        return None  # only a fraction has an upper bound; every other kind's bound is at zero
    name = str(parts[-1]) if parts else ""
    section = str(parts[2] if parts[:1] == ("cases",) and len(parts) > 2 else parts[0]) if parts else ""
    rating = kind_name in ("rotational_speed", "torque", "velocity") and name in _POSITIVE_RATINGS and (
        section != "load" or name in ("speed_max", "speed_limit", "runaway_speed", "line_speed"))
    if (kind_name in _POSITIVE_KINDS or rating) and si <= 0 and name not in ("altitude",):
        return Problem("spec-schema", path, f"{path}: {value!r} must be greater than zero",
                       "give the physical value; leave the key out if it is not known")
    if kind_name == "rotational_speed" and si < 0 and name != "speed_to":
        return Problem("spec-schema", path, f"{path}: {value!r} must not be negative")
    if kind_name == "fraction":
        if name in _AT_MOST_ONE and si > 1.0:
            shown = f"{value}" if isinstance(value, str) else f"{value} (a plain number is a fraction of one)"
            return Problem("spec-schema", path, f"{path}: {shown} is above 100 %",
                           f"write '{value} %' or the fraction {value / 100:g}"
                           if not isinstance(value, str) else "an efficiency or factor cannot exceed 100 %")
        if si < 0:
            return Problem("spec-schema", path, f"{path}: {value!r} must not be negative")
        if name in ("efficiency", "power_factor") and si == 0:
            return Problem("spec-schema", path, f"{path}: {value!r} must be greater than zero")
    return None


def read_quantities(doc: Document) -> tuple[Quantities, list[Problem]]:
    """Return every ``x-dimension`` field of ``doc`` parsed to SI, and the unit problems found."""
    q = Quantities()
    problems: list[Problem] = []
    for parts, value, node, path in fields(doc.data):
        kind_name = node.get("x-dimension")
        if not kind_name or isinstance(value, (dict, list)):
            continue
        if value is None or isinstance(value, bool) or (kind_name != "fraction" and not isinstance(value, str)):
            continue  # the structure check reports the wrong type, with the YAML 1.1 hint
        try:
            si = units.parse_quantity(value, kind_name)
        except units.QuantityError as exc:
            base60 = isinstance(value, str) and ":" in value and _yaml11_hint(doc, path, value)
            message = f"{path}: '{value}' is not a quantity" if base60 else f"{path}: {exc.message}"
            problems.append(Problem("units-and-dimensions", path, message, base60 or exc.hint, parts=parts))
            continue
        problem = _range_problem(path, parts, si, kind_name, value)
        if problem:
            problems.append(replace(problem, parts=parts))
            continue
        q.values[path] = si
        q.kinds[path] = kind_name
        q.written[path] = str(value)
        for note in units.ambiguity_notes(value, kind_name):
            problems.append(Problem("units-and-dimensions", path, f"{path}: {note}", severity="info"))
    return q, problems
