"""The JSON result: write it in its one layout, read it back, validate it against its schema.

One layout, whether the result is streamed spec by spec (:class:`StreamWriter`) or rendered at once
(:func:`render`, which streams into memory): the header and the summary indented by two, their objects
in the contract's key order (format_version first...) and every other object with sorted keys; then
each spec result on a line of its own, as the compact JSON that :func:`rulecheck.result.encode` made of
it once, in the worker that checked it (the check builds it in the contract's key order). The bytes
do not depend on which other reports the run writes: chart series are never part of the result.
"""

from __future__ import annotations

import json
import math
import re
from functools import lru_cache
from importlib import resources
from typing import Any

from jsonschema import Draft202012Validator
from jsonschema.exceptions import ValidationError, best_match

from rulecheck.result import RULE_FIELDS, encode

__all__ = ["StreamWriter", "load", "render", "schema"]

# Key order of the objects the contract defines; fields not named here follow, sorted.
_ORDER: dict[str, tuple[str, ...]] = {
    "result": ("format_version", "tool", "rules", "generated", "settings", "specs", "summary"),
    "tool": ("name", "version", "rules_digest", "rule_count"),
    "rule": RULE_FIELDS,
    "settings": ("fail_on", "units"),
    "spec": ("file", "tag", "title", "spec_status", "sha256", "status", "verdict", "counts",
             "outcomes", "derived", "errors"),
    "counts": ("error", "warning", "info", "not-checked", "waived", "pass", "not-applicable"),
    "outcome": ("rule", "title", "topic", "outcome", "severity", "safety", "message", "fix", "formula",
                "basis", "location", "values", "limit", "missing", "waiver"),
    "basis": ("source", "status"),
    "location": ("path", "line", "column"),
    "quantity": ("value", "unit", "kind", "from", "method", "source"),
    "waiver": ("reason", "approved_by", "expires"),
    "summary": ("specs", "checked", "invalid", "unreadable", "fail", "not-checked", "waived", "fail_on",
                "exit_code"),
    "fail": ("error", "warning", "info"),
}

# Which record type each key of a record holds: (parent type, key) -> child type.
# "map:" marks an object whose keys are names and whose values are records of that type.
_CHILD: dict[tuple[str, str], str] = {
    ("result", "tool"): "tool",
    ("result", "rules"): "rule",
    ("rule", "basis"): "basis",
    ("result", "settings"): "settings",
    ("result", "specs"): "spec",
    ("result", "summary"): "summary",
    ("spec", "counts"): "counts",
    ("spec", "outcomes"): "outcome",
    ("spec", "derived"): "map:quantity",
    ("outcome", "basis"): "basis",
    ("outcome", "location"): "location",
    ("outcome", "values"): "map:quantity",
    ("outcome", "limit"): "quantity",
    ("outcome", "waiver"): "waiver",
    ("summary", "fail"): "fail",
}

_SCHEMA_RESOURCE = ("schemas", "result.schema.json")


def _json_path(parts: list[str | int] | tuple[str | int, ...]) -> str:
    """Return a JSONPath-style location such as ``$.specs[0].outcomes[2].outcome``."""
    text = "$"
    for part in parts:
        if isinstance(part, int):
            text += f"[{part}]"
        elif re.fullmatch(r"[A-Za-z_][A-Za-z0-9_]*", part):
            text += f".{part}"
        else:
            text += "[" + json.dumps(part, ensure_ascii=False) + "]"
    return text


def _has_lone_surrogate(text: str) -> bool:
    """Return True when the text cannot be written as UTF-8 (a lone surrogate from a bad decode)."""
    try:
        text.encode("utf-8")
    except UnicodeEncodeError:
        return True
    return False


def _arrange(value: Any, record: str | None, path: list[str | int]) -> Any:
    """Return a copy of ``value`` with keys in the stable order; raise ValueError for what JSON cannot carry."""
    if isinstance(value, dict):
        if record is not None and record.startswith("map:"):
            child = record[4:]
            return {str(k): _arrange(value[k], child, [*path, str(k)]) for k in sorted(value, key=str)}
        known = _ORDER.get(record or "", ())
        keys = [k for k in known if k in value] + sorted((k for k in value if k not in known), key=str)
        out = {}
        for key in keys:
            if not isinstance(key, str):
                raise ValueError(f"result at {_json_path(path)}: key {key!r} is not a string")
            out[key] = _arrange(value[key], _CHILD.get((record or "", key)), [*path, key])
        return out
    if isinstance(value, list | tuple):
        return [_arrange(item, record, [*path, i]) for i, item in enumerate(value)]
    if isinstance(value, float) and not math.isfinite(value):
        raise ValueError(f"result at {_json_path(path)}: {value!r} cannot be written as JSON")
    if isinstance(value, str) and _has_lone_surrogate(value):
        raise ValueError(f"result at {_json_path(path)}: text holds an undecodable character")
    if value is None or isinstance(value, str | int | float | bool):
        return value
    raise ValueError(f"result at {_json_path(path)}: {type(value).__name__} is not a JSON value")


def _refuse_non_json(value: Any, path: list[str | int]) -> None:
    """Raise ValueError naming the JSON path of a value that JSON cannot carry (a non-finite number, a key that
    is not text, an object that is not a JSON value). Text with a lone surrogate (an undecodable file name) is
    written as its JSON escape, as :func:`rulecheck.result.encode` writes it."""
    if isinstance(value, dict):
        for key, item in value.items():
            if not isinstance(key, str):
                raise ValueError(f"result at {_json_path(path)}: key {key!r} is not a string")
            _refuse_non_json(item, [*path, key])
    elif isinstance(value, list | tuple):
        for i, item in enumerate(value):
            _refuse_non_json(item, [*path, i])
    elif isinstance(value, float) and not math.isfinite(value):
        raise ValueError(f"result at {_json_path(path)}: {value!r} cannot be written as JSON")
    elif not (value is None or isinstance(value, str | int | float | bool)):
        raise ValueError(f"result at {_json_path(path)}: {type(value).__name__} is not a JSON value")


def render(result: dict[str, Any]) -> str:
    """Return the result as JSON text in its one layout (see the module's description), final newline."""
    parts: list[bytes] = []
    writer = StreamWriter(parts.append)
    writer.begin({k: v for k, v in result.items() if k not in ("specs", "summary")})
    for spec in result.get("specs") or []:
        writer.spec(spec)
    writer.end(result.get("summary") or {})
    return b"".join(parts).decode("utf-8")


def _indented(value: Any, record: str, path: list[str | int]) -> str:
    return json.dumps(_arrange(value, record, path), indent=2, ensure_ascii=False, allow_nan=False)


class StreamWriter:
    """Writes a result document spec by spec, so a run's memory does not grow with the repository.

    The header and summary are indented, in the contract's key order; each spec is one compact line of
    the ``specs`` array: the bytes a worker or the cache encoded, copied as they are (``write`` takes
    UTF-8 bytes), or, for a result changed since (a baseline mark), encoded again the same way.
    """

    def __init__(self, write: Any) -> None:
        self.write = write
        self.count = 0

    def begin(self, header: dict[str, Any]) -> None:
        """Write the fields before the specs."""
        head = _indented({**header, "specs": []}, "result", [])
        self.write(head[: head.rindex('"specs": []') + len('"specs": [')].encode("utf-8"))

    def spec(self, spec: Any) -> None:
        """Write one spec result (ValueError, naming where, for a value JSON cannot carry)."""
        data = getattr(spec, "data", None)
        if data is None:
            _refuse_non_json(spec, ["specs", self.count])
            data = encode(spec)
        self.write(b",\n    " if self.count else b"\n    ")
        self.write(data)
        self.count += 1

    def end(self, summary: dict[str, Any]) -> None:
        """Write the summary and close the document."""
        tail = _indented(summary, "summary", ["summary"])
        self.write((("\n  " if self.count else "") + '],\n  "summary": ' + tail.replace("\n", "\n  ") + "\n}\n")
                   .encode("utf-8"))


@lru_cache(maxsize=1)
def _schema_text() -> str:
    """Return the shipped result schema as text."""
    return resources.files("rulecheck").joinpath(*_SCHEMA_RESOURCE).read_text(encoding="utf-8")


def schema() -> dict[str, Any]:
    """Return the JSON Schema (Draft 2020-12) of the result, a fresh dict on every call."""
    return json.loads(_schema_text())


@lru_cache(maxsize=1)
def _validator() -> Draft202012Validator:
    """Return a validator for the shipped schema (with date-time format checking)."""
    return Draft202012Validator(schema(), format_checker=Draft202012Validator.FORMAT_CHECKER)


def _reject_duplicates(pairs: list[tuple[str, Any]]) -> dict[str, Any]:
    """Return the object of ``pairs``; raise ValueError when a key repeats (the last one would win silently)."""
    out: dict[str, Any] = {}
    for key, value in pairs:
        if key in out:
            raise ValueError(f"duplicate key {key!r}")
        out[key] = value
    return out


def _reject_constant(name: str) -> Any:
    """Raise ValueError for NaN and Infinity, which are not JSON."""
    raise ValueError(f"{name} is not a JSON number")


def _describe(error: ValidationError) -> str:
    """Return one line naming the JSON path of a schema error and what is wrong there."""
    return f"{_json_path(list(error.absolute_path))}: {error.message}"


def load(text: str) -> dict[str, Any]:
    """Return the result dict read from JSON text; raise ValueError naming the JSON path where it breaks the schema."""
    try:
        document = json.loads(text, object_pairs_hook=_reject_duplicates, parse_constant=_reject_constant)
    except json.JSONDecodeError as exc:
        raise ValueError(f"result is not JSON: {exc.msg} at line {exc.lineno}, column {exc.colno}") from None
    except ValueError as exc:
        raise ValueError(f"result is not valid JSON: {exc}") from None
    except RecursionError:
        raise ValueError("result is nested too deeply to be a result document") from None
    errors = sorted(_validator().iter_errors(document), key=lambda e: (list(map(str, e.absolute_path)), e.message))
    if errors:
        first = best_match(errors)
        more = len(errors) - 1
        tail = f" (and {more} more problem{'s' if more != 1 else ''})" if more else ""
        raise ValueError(f"result does not match its schema at {_describe(first)}{tail}")
    return document
