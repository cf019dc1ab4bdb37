"""The spec-format reference in Markdown, generated from the schema (one source of truth)."""

from __future__ import annotations

from typing import Any

from rulecheck import units
from rulecheck.schema import _resolve, spec_schema

__all__ = ["spec_format_markdown"]


def _type_text(node: dict[str, Any]) -> str:
    if "x-dimension" in node:
        kind = units.KINDS[node["x-dimension"]]
        return f"quantity: {kind.description} — e.g. `{kind.example}`"
    if "enum" in node:
        return "one of " + ", ".join(f"`{v}`" for v in node["enum"])
    if "const" in node:
        return f"`{node['const']}`"
    typ = node.get("type")
    if typ == "array":
        return "list"
    if typ == "object":
        return "mapping"
    if isinstance(typ, list):
        return " or ".join(typ)
    return str(typ or "")


def _rows(node: dict[str, Any], prefix: str, required: set[str], out: list[str], depth: int = 0) -> None:
    for key, sub in node.get("properties", {}).items():
        sub = _resolve(sub)
        path = f"{prefix}.{key}" if prefix else key
        desc = " ".join(str(sub.get("description", "")).split())
        derived = f" Derived when absent: {sub['x-derived']}." if "x-derived" in sub else ""
        need = "required" if key in required else ""
        cell = f"{desc}{derived}".replace("|", "\\|")
        out.append(f"| `{path}` | {_type_text(sub)} | {need} | {cell} |")
        if "x-fields-of" in sub:
            continue  # the fields of another section (a load case's load): listed there
        named = sub.get("additionalProperties")
        if isinstance(named, dict) and "$ref" in named and depth < 3:  # free names, each one section (load cases)
            _rows({"properties": {"NAME": named}}, path, set(), out, depth + 1)
        if sub.get("type") == "object" and depth < 3:
            _rows(sub, path, set(sub.get("required", [])), out, depth + 1)
        items = _resolve(sub.get("items", {})) if sub.get("type") == "array" else {}
        if items.get("type") == "object":
            _rows(items, path + "[]", set(items.get("required", [])), out, depth + 1)


def spec_format_markdown() -> str:
    """Return the field-by-field reference of the spec format, generated from its JSON Schema."""
    schema = spec_schema()
    out = [
        "# The drive specification format, version 1",
        "",
        "Generated from `rulecheck/schemas/spec.schema.yaml` by `rulecheck schema --markdown`; "
        "a test keeps this file in step with the schema. Edit the schema, then regenerate.",
        "",
        " ".join(schema.get("description", "").split()),
        "",
        "Keys starting with `x-` are free for your own notes; any other unknown key is an error, so a typo "
        "cannot silently switch a check off. Quantities are strings with units; shaft speeds in `r/min`, "
        "`rpm`, `min^-1`, `1/min` or `rev/s` all mean revolutions. A bare number where a unit is required is "
        "an error.",
        "",
        "| key | value | | meaning |",
        "|---|---|---|---|",
    ]
    top = _resolve(schema)
    _rows(top, "", set(top.get("required", [])), out)
    out.append("")
    return "\n".join(out)
