"""``rulecheck new``: a commented spec template for one motor kind, starter and load.

The template lists the fields the rules read for that drive train (:mod:`fields`), in the schema's
order and words, each with its unit and an example value written as a *placeholder*:

    rated_power: "<45 kW> replace this example value"

A placeholder is refused by validation (the unit parser does not read it; a number, choice or flag
field does not accept text), so a template that was not filled in never passes. Fields that only some
rules read when an optional input is given are written as comment lines below the rest, to be filled
in when they apply.
"""

from __future__ import annotations

import json
import re
import textwrap
from dataclasses import dataclass, field
from typing import Any

from rulecheck import units
from rulecheck.authoring.examples import examples_for
from rulecheck.authoring.fields import LOADS, MOTORS, STARTERS, Choice, FieldSet, fields_for, nest, schema_fields

__all__ = ["PLACEHOLDER", "Template", "fill_examples", "placeholder", "write_template"]

MARK = "replace this example value"
PLACEHOLDER = re.compile(r"^<(.*)> " + MARK + "$", re.S)
_QUOTED = re.compile(r'"<((?:[^"\\]|\\.)*)> ' + MARK + '"')
WIDTH = 100

_WORDS = {"induction": "induction motor", "pm-synchronous": "permanent-magnet synchronous motor", "dc": "DC motor",
          "inverter": "an inverter", "direct-on-line": "direct on line", "soft-starter": "a soft starter",
          "dc-converter": "a DC converter"}


@dataclass
class Template:
    """A written template: its text, the example of each placeholder (by key path), and the field analysis."""

    choice: Choice
    text: str
    placeholders: dict[str, Any] = field(default_factory=dict)
    optional: dict[str, Any] = field(default_factory=dict)
    fields: FieldSet | None = None


def placeholder(example: Any) -> str:
    """Return the placeholder text for an example value."""
    return f"<{_scalar(example)}> {MARK}"


def _scalar(value: Any) -> str:
    if isinstance(value, bool):
        return "true" if value else "false"
    return str(value)


def fill_examples(text: str) -> str:
    """Return a template's text with every placeholder replaced by its example (for tests and tutorials)."""
    return _QUOTED.sub(lambda m: json.loads('"' + m.group(1) + '"'), text)


def _can_hold_placeholder(node: dict[str, Any]) -> bool:
    """Return whether validation refuses a placeholder in this field (a free text field would accept it)."""
    if "x-dimension" in node:
        return True  # the unit parser reads no '<'
    from jsonschema import Draft202012Validator

    return not Draft202012Validator(node).is_valid(placeholder("x" * 8))


def _kind_words(node: dict[str, Any]) -> str:
    if "x-dimension" in node:
        return f"Unit: {units.KINDS[node['x-dimension']].description}."
    if "enum" in node:
        return "One of: " + ", ".join(_scalar(v) for v in node["enum"]) + "."
    kind = node.get("type")
    if kind == "boolean":
        return "true or false."
    if kind in ("integer", "number"):
        word = "A whole number" if kind == "integer" else "A number"
        low, high = node.get("minimum", node.get("exclusiveMinimum")), node.get("maximum")
        if low is not None and high is not None:
            return f"{word}, {low} to {high}."
        return f"{word}{f', above {low}' if low is not None else ''}."
    return ""


def _comment(text: str, indent: str) -> list[str]:
    return textwrap.wrap(text, WIDTH - len(indent) - 2, initial_indent=indent + "# ", subsequent_indent=indent + "# ",
                         break_on_hyphens=False)


class _Writer:
    def __init__(self, examples: dict[str, Any], facts: dict[str, Any]) -> None:
        self.examples = examples
        self.facts = facts
        self.lines: list[str] = []
        self.placeholders: dict[str, Any] = {}
        self.optional: dict[str, Any] = {}

    def leaf(self, key: str, path: str, node: dict[str, Any], indent: str, commented: bool, note: str = "") -> None:
        prefix = indent + "# " if commented else indent
        if path in self.facts:
            self.lines += _comment(str(node.get("description", "")), indent)
            self.lines.append(f"{prefix}{key}: {_scalar(self.facts[path])}")
            return
        example = self.examples[path]
        words = " ".join(w for w in (note, str(node.get("description", "")).strip(), _kind_words(node)) if w)
        self.lines += _comment(words, indent)
        target = self.optional if commented else self.placeholders
        if isinstance(example, list):
            self.lines.append(f"{prefix}{key}:")
            item = node.get("items", {})
            for i, entry in enumerate(example):
                if isinstance(entry, dict):
                    first = True
                    for sub, value in entry.items():
                        lead = "- " if first else "  "
                        first = False
                        sub_node = item.get("properties", {}).get(sub, {})
                        if not _can_hold_placeholder(sub_node):
                            continue
                        self.lines.append(f"{prefix}  {lead}{sub}: {json.dumps(placeholder(value))}")
                        target[f"{path}[{i}].{sub}"] = value
                else:
                    self.lines.append(f"{prefix}  - {json.dumps(placeholder(entry))}")
                    target[f"{path}[{i}]"] = entry
            return
        self.lines.append(f"{prefix}{key}: {json.dumps(placeholder(example), ensure_ascii=False)}")
        target[path] = example


def _tree(paths: list[str]) -> dict[str, Any]:
    """Return the paths nested by their dotted parts, each leaf holding its own path."""
    return nest({path: path for path in paths})


def _leaves(tree: dict[str, Any]) -> list[str]:
    out = []
    for child in tree.values():
        out += _leaves(child) if isinstance(child, dict) else [child]
    return out


def _section_description(parts: list[str]) -> str:
    from rulecheck.authoring.fields import _resolve
    from rulecheck.schema import spec_schema

    node: dict[str, Any] = _resolve(spec_schema())
    for part in parts:
        node = _resolve(node.get("properties", {}).get(part, {}))
    return str(node.get("description", "")).strip()


def _emit(writer: _Writer, tree: dict[str, Any], status: dict[str, str], parts: list[str], indent: str,
          commented: bool) -> None:
    schema = schema_fields()
    core = [(k, v) for k, v in tree.items() if any(status[p] in ("core", "fact") for p in _leaves({k: v}))]
    optional = [(k, v) for k, v in tree.items() if (k, v) not in core]
    first_optional = True
    for key, child in core + optional:
        is_optional = commented or (key, child) in optional
        if (key, child) in optional and not commented and first_optional:
            writer.lines.append(f"{indent}# --- optional: fill in and uncomment when it applies ---")
            first_optional = False
        if isinstance(child, dict):
            if not parts:
                writer.lines.append("")
            writer.lines += _comment(_section_description([*parts, key]), indent)
            writer.lines.append(f"{indent}{'# ' if is_optional else ''}{key}:")
            _emit(writer, child, status, [*parts, key], indent + "  ", is_optional)
        else:
            note = "Optional:" if is_optional and child not in writer.facts else ""
            if status[child] == "derived":
                note = f"Derived when left out ({_derived_words(child)}); give the datasheet value to override."
            writer.leaf(key, child, schema[child], indent, is_optional, note)


def _derived_words(path: str) -> str:
    from rulecheck.derive import DERIVED

    return DERIVED.get(path, (None, "by rulecheck"))[1]


def write_template(motor: str, starter: str, load: str, rules_folder: str | None = None) -> Template:
    """Return the template for a motor kind, starter and load (the command's words: see MOTORS, STARTERS, LOADS)."""
    choice = Choice(motor, starter, load)
    facts = choice.facts
    schema = schema_fields()
    examples = examples_for(schema, facts["motor.kind"], facts["load.model"])
    found = fields_for(choice, examples, rules_folder)
    status: dict[str, str] = {"format": "fact", "tag": "core", **{p: "fact" for p in facts}}
    for path in found.core:
        status[path] = "core" if _can_hold_placeholder(schema[path]) else "optional"
    for path in found.optional:
        status.setdefault(path, "optional")
    for path in found.derived:
        status.setdefault(path, "derived")
    order = [p for p in schema if p in status]
    writer = _Writer(examples, {"format": 1, **facts})
    _header(writer, choice, found)
    _emit(writer, _tree(order), status, [], "", False)
    text = "\n".join(writer.lines) + "\n"
    return Template(choice, text, writer.placeholders, writer.optional, found)


def _header(writer: _Writer, choice: Choice, found: FieldSet) -> None:
    facts = choice.facts
    words = f"{_WORDS[facts['motor.kind']]} on {_WORDS[facts['drive.kind']]}, {LOADS[choice.load][2]}"
    if facts["drive.kind"] == "direct-on-line":
        words = f"{_WORDS[facts['motor.kind']]} direct on line, {LOADS[choice.load][2]}"
    lines = [
        f"Drive specification: {words}.",
        f"Written by 'rulecheck new --motor {choice.motor} --starter {choice.starter} --load {choice.load}'.",
        "",
        f"Every \"<...> {MARK}\" holds an example: replace the whole quoted text with your drive's value "
        "and its unit (e.g. 45 kW). Validation refuses a placeholder, so a spec still holding one never passes.",
        f"The fields below are those the rules read for this drive train ({len(found.rules_core)} rules apply to "
        f"it: {', '.join(found.rules_core)}). A value you cannot give: delete its line; the check then names "
        "the rule it could not do.",
        "Lines below '--- optional ---' feed rules that apply only when that input is given "
        f"({', '.join(found.rules_optional) or 'none'}): uncomment and fill them in when they apply.",
        "Load values are at the load shaft, motor values at the motor shaft.",
    ]
    for line in lines:
        writer.lines += _comment(line, "") if line else ["#"]


def choices_text() -> str:
    """Return the accepted words of the command, for help texts."""
    return (f"motor: {', '.join(MOTORS)}; starter: {', '.join(STARTERS)}; load: {', '.join(LOADS)}")
