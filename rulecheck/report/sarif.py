"""SARIF 2.1.0 log of a result, for code-scanning views in CI.

One run; the driver lists every rule: from the result's ``rules`` block (the metadata of every rule
the run applied), then any rule only an outcome names (with what the outcome carries). Results are
written for fails (level from severity), not-checked outcomes (at the level at which they count toward
failure, :func:`rulecheck.result.level_of`: an error when the rule could not run, a warning when the
rule is safety-relevant — an unchecked safety rule is a gap a reviewer must see —, else a note) and
waived fails (with an external suppression, so the finding stays visible as accepted). Passes and
not-applicable outcomes give no result.
"""

from __future__ import annotations

import hashlib
import json
import re
from typing import Any
from urllib.parse import quote

from rulecheck.result import level_of

__all__ = ["SARIF_SCHEMA_URI", "SARIF_VERSION", "render"]

SARIF_VERSION = "2.1.0"
# The schema's identifier as published with the OASIS standard (an id, not fetched).
SARIF_SCHEMA_URI = "https://docs.oasis-open.org/sarif/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json"

SRCROOT = "%SRCROOT%"
FINGERPRINT_KEY = "rulecheckFinding/v1"

_LEVEL = {"error": "error", "warning": "warning", "info": "note"}

_SAFETY_NOTE = ("Safety-relevant: a fault here can hurt people. Have the design reviewed by a competent person "
                "under the local codes before it is built or changed.")

_MARKDOWN_SPECIAL = re.compile(r"([\\`*_{}\[\]()#+\-.!|<>~&=])")


def _md(text: str) -> str:
    """Return text with every Markdown-active character backslash-escaped, so rule text renders as written."""
    return _MARKDOWN_SPECIAL.sub(r"\\\1", text)


def _text(value: Any) -> str:
    """Return a value as text for a message ('' for None)."""
    return "" if value is None else str(value)


def _rule_name(rule_id: str) -> str:
    """Return the SARIF rule name: the id in PascalCase (``torque-margin`` -> ``TorqueMargin``)."""
    parts = re.split(r"[^0-9A-Za-z]+", rule_id)
    name = "".join(p[:1].upper() + p[1:] for p in parts if p)
    return name or "Rule"


def _quote(path: str) -> str:
    """Return a path percent-encoded for a URI; bytes of an undecodable file name keep their value."""
    try:
        return quote(path, safe="/", errors="surrogateescape")
    except UnicodeEncodeError:
        return quote(path, safe="/", errors="replace")


def artifact_uri(path: str) -> tuple[str, str | None]:
    """Return (uri, uriBaseId) for a spec file path: relative to %SRCROOT%, or a file URI when absolute."""
    forward = path.replace("\\", "/")
    while forward.startswith("./"):
        forward = forward[2:]
    if re.match(r"^[A-Za-z]:/", forward):
        return "file:///" + forward[:2] + _quote(forward[2:]), None
    if forward.startswith("/"):
        return "file://" + _quote(forward), None
    return _quote(forward), SRCROOT


def fingerprint(rule: str, file: str, spec_path: str, case: str | None = None) -> str:
    """Return the finding's identity hash (hex SHA-256 of rule, file, spec path and, for a finding of one load
    case, the case's name; line numbers left out). Without a case the hash is what it was before load cases."""
    digest = hashlib.sha256()
    for part in (rule, file.replace("\\", "/"), spec_path, *((case,) if case else ())):
        data = part.encode("utf-8", "surrogatepass")
        digest.update(len(data).to_bytes(8, "big") + data)
    return digest.hexdigest()


def _basis_text(basis: Any) -> list[str]:
    """Return the basis entries as 'source (status)' lines."""
    lines = []
    for entry in basis or []:
        if isinstance(entry, dict):
            status = entry.get("status")
            lines.append(_text(entry.get("source")) + (f" ({status})" if status else ""))
    return lines


def _descriptor(meta: dict[str, Any]) -> dict[str, Any]:
    """Return a SARIF reportingDescriptor for one rule's metadata."""
    rule_id = _text(meta.get("id"))
    title = _text(meta.get("title")) or rule_id
    description = _text(meta.get("description")) or title
    fix = _text(meta.get("fix"))
    basis = _basis_text(meta.get("basis"))
    safety = bool(meta.get("safety"))
    text_parts = [description]
    md_parts = [_md(description)]
    if fix:
        text_parts.append(f"Fix: {fix}")
        md_parts.append(f"**Fix:** {_md(fix)}")
    if basis:
        text_parts.append("Basis: " + "; ".join(basis))
        md_parts.append("**Basis:**\n\n" + "\n".join(f"- {_md(b)}" for b in basis))
    if safety:
        text_parts.append(_SAFETY_NOTE)
        md_parts.append(f"**{_md(_SAFETY_NOTE)}**")
    topic = _text(meta.get("topic"))
    tags = [t for t in (topic, "safety" if safety else "") if t]
    return {
        "id": rule_id,
        "name": _rule_name(rule_id),
        "shortDescription": {"text": title},
        "fullDescription": {"text": description},
        "help": {"text": "\n\n".join(text_parts), "markdown": "\n\n".join(md_parts)},
        "defaultConfiguration": {"level": _LEVEL.get(_text(meta.get("severity")), "warning")},
        "properties": {
            "topic": topic,
            "safety": safety,
            "basis": [dict(b) for b in meta.get("basis") or [] if isinstance(b, dict)],
            "tags": tags,
        },
    }


def _metadata_from_outcomes(result: dict[str, Any]) -> list[dict[str, Any]]:
    """Return minimal rule metadata taken from the first outcome of each rule in the result."""
    seen: dict[str, dict[str, Any]] = {}
    for spec in result.get("specs") or []:
        for outcome in spec.get("outcomes") or []:
            rule_id = _text(outcome.get("rule"))
            if rule_id and rule_id not in seen:
                seen[rule_id] = {
                    "id": rule_id,
                    "title": outcome.get("title"),
                    "topic": outcome.get("topic"),
                    "severity": outcome.get("severity"),
                    "safety": outcome.get("safety"),
                    "description": outcome.get("title"),
                    "basis": outcome.get("basis"),
                    "fix": None,
                }
    return [seen[k] for k in sorted(seen)]


def _driver_rules(result: dict[str, Any], rules: list[dict[str, Any]] | None) -> list[dict[str, Any]]:
    """Return rule metadata in driver order: the given rules (by default the result's ``rules`` block) first,
    then rules only the result's outcomes name."""
    if rules is None:
        rules = result.get("rules") if isinstance(result.get("rules"), list) else []
    given = [r for r in rules or [] if isinstance(r, dict) and _text(r.get("id"))]
    ordered: dict[str, dict[str, Any]] = {}
    for meta in given:
        ordered.setdefault(_text(meta["id"]), meta)
    for meta in _metadata_from_outcomes(result):
        ordered.setdefault(meta["id"], meta)
    return list(ordered.values())


def _values_text(outcome: dict[str, Any]) -> str:
    """Return the outcome's values as 'name = value unit' items for the message."""
    items = []
    for name, quantity in (outcome.get("values") or {}).items():
        if isinstance(quantity, dict):
            unit = _text(quantity.get("unit"))
            items.append(f"{name} = {_text(quantity.get('value'))}" + (f" {unit}" if unit and unit != "1" else ""))
    return ", ".join(items)


def _message(outcome: dict[str, Any], tag: str) -> str:
    """Return the result message: what was found (or what is missing), the fix, and the safety note."""
    kind = outcome.get("outcome")
    title = _text(outcome.get("title")) or _text(outcome.get("rule"))
    head = f"{tag}: {title}" if tag else title
    if outcome.get("case"):
        head += f" [case {_text(outcome.get('case'))}]"
    if kind == "not-checked":
        missing = [m for m in outcome.get("missing") or [] if isinstance(m, str)]
        body = "not checked"
        body += ": missing " + ", ".join(missing) if missing else ": the values it needs are not in the spec"
        note = _text(outcome.get("message"))
        parts = [f"{head}: {body}."] + ([note] if note else [])
    else:
        parts = [f"{head}: {_text(outcome.get('message'))}"]
        values = _values_text(outcome)
        if values:
            parts.append(f"Values: {values}.")
        if outcome.get("fix"):
            parts.append(f"Fix: {_text(outcome.get('fix'))}")
    if kind == "waived":
        parts.insert(0, "[waived]")
    if outcome.get("safety"):
        parts.append(_SAFETY_NOTE)
    return " ".join(parts)


def _level(outcome: dict[str, Any]) -> str:
    """Return the SARIF level of an outcome that is reported."""
    if outcome.get("outcome") == "not-checked":
        level = level_of("not-checked", _text(outcome.get("severity")), bool(outcome.get("safety")))
        return _LEVEL.get(level or "info", "note")
    return _LEVEL.get(_text(outcome.get("severity")), "warning")


def _suppression(waiver: Any) -> dict[str, Any]:
    """Return the SARIF suppression of a waiver (external, accepted; justification with approver and expiry)."""
    waiver = waiver if isinstance(waiver, dict) else {}
    justification = _text(waiver.get("reason")) or "waived"
    if waiver.get("approved_by"):
        justification += f"; approved by {_text(waiver['approved_by'])}"
    if waiver.get("expires"):
        justification += f"; expires {_text(waiver['expires'])}"
    return {"kind": "external", "status": "accepted", "justification": justification}


def _location(spec: dict[str, Any], outcome: dict[str, Any], artifact_index: int) -> dict[str, Any]:
    """Return the SARIF location of an outcome: the spec file (with line and column when known) and key path."""
    uri, base = artifact_uri(_text(spec.get("file")))
    artifact: dict[str, Any] = {"uri": uri, "index": artifact_index}
    if base:
        artifact["uriBaseId"] = base
    physical: dict[str, Any] = {"artifactLocation": artifact}
    where = outcome.get("location") if isinstance(outcome.get("location"), dict) else {}
    line, column = where.get("line"), where.get("column")
    if isinstance(line, int) and not isinstance(line, bool) and line >= 1:
        region: dict[str, Any] = {"startLine": line}
        if isinstance(column, int) and not isinstance(column, bool) and column >= 1:
            region["startColumn"] = column
        physical["region"] = region
    location: dict[str, Any] = {"physicalLocation": physical}
    path = _text(where.get("path"))
    if path:
        location["logicalLocations"] = [{"name": path.rsplit(".", 1)[-1], "fullyQualifiedName": path,
                                         "kind": "property"}]
    return location


def _result(spec: dict[str, Any], outcome: dict[str, Any], rule_index: dict[str, int],
            artifact_index: int, baselined: bool = False) -> dict[str, Any]:
    """Return one SARIF result for a reported outcome."""
    rule_id = _text(outcome.get("rule"))
    where = outcome.get("location") if isinstance(outcome.get("location"), dict) else {}
    tag = _text(spec.get("tag"))
    entry: dict[str, Any] = {
        "ruleId": rule_id,
        "ruleIndex": rule_index[rule_id],
        "level": _level(outcome),
        "message": {"text": _message(outcome, tag)},
        "locations": [_location(spec, outcome, artifact_index)],
        "partialFingerprints": {FINGERPRINT_KEY: fingerprint(rule_id, _text(spec.get("file")),
                                                            _text(where.get("path")),
                                                            _text(outcome.get("case")) or None)},
        "properties": {"outcome": _text(outcome.get("outcome")), "severity": _text(outcome.get("severity")),
                       "safety": bool(outcome.get("safety")), "tag": tag},
    }
    if outcome.get("case"):
        entry["properties"]["case"] = _text(outcome.get("case"))
    if outcome.get("outcome") == "waived":
        entry["suppressions"] = [_suppression(outcome.get("waiver"))]
    if baselined:  # the run compared against a baseline: a known finding is unchanged, any other one new
        entry["baselineState"] = "unchanged" if outcome.get("baseline") else "new"
    return entry


def _artifact(spec: dict[str, Any]) -> dict[str, Any]:
    """Return the SARIF artifact of a spec file (location and, when known, its SHA-256)."""
    uri, base = artifact_uri(_text(spec.get("file")))
    location: dict[str, Any] = {"uri": uri}
    if base:
        location["uriBaseId"] = base
    artifact: dict[str, Any] = {"location": location, "roles": ["analysisTarget"]}
    digest = spec.get("sha256")
    if isinstance(digest, str) and re.fullmatch(r"[0-9a-f]{64}", digest):
        artifact["hashes"] = {"sha-256": digest}
    return artifact


_REPORTED = ("fail", "not-checked", "waived")


def _driver(result: dict[str, Any], metadata: list[dict[str, Any]]) -> dict[str, Any]:
    """Return the SARIF driver: the tool and its rules."""
    tool = result.get("tool") if isinstance(result.get("tool"), dict) else {}
    driver: dict[str, Any] = {"name": _text(tool.get("name")) or "rulecheck"}
    if tool.get("version"):
        driver["version"] = _text(tool["version"])
        driver["semanticVersion"] = _text(tool["version"])
    driver["rules"] = [_descriptor(meta) for meta in metadata]
    return driver


def _invocation(result: dict[str, Any]) -> dict[str, Any]:
    """Return the SARIF invocation: success, the exit code and the time the result was made."""
    invocation: dict[str, Any] = {"executionSuccessful": True}
    summary = result.get("summary") if isinstance(result.get("summary"), dict) else {}
    if isinstance(summary.get("exit_code"), int):
        invocation["exitCode"] = summary["exit_code"]
    if result.get("generated"):
        invocation["endTimeUtc"] = _text(result["generated"])
    return invocation


def build(result: dict[str, Any], *, rules: list[dict[str, Any]] | None = None) -> dict[str, Any]:
    """Return the SARIF 2.1.0 log of a result as a dict (``rules``: rule metadata instead of the result's own
    ``rules`` block)."""
    metadata = _driver_rules(result, rules)
    rule_index = {_text(meta["id"]): i for i, meta in enumerate(metadata)}
    driver = _driver(result, metadata)
    tool = result.get("tool") if isinstance(result.get("tool"), dict) else {}

    artifacts: list[dict[str, Any]] = []
    artifact_of: dict[str, int] = {}
    results: list[dict[str, Any]] = []
    summary = result.get("summary") if isinstance(result.get("summary"), dict) else {}
    baselined = isinstance(summary.get("baseline"), dict)
    for spec in result.get("specs") or []:
        file = _text(spec.get("file"))
        if file not in artifact_of:
            artifact_of[file] = len(artifacts)
            artifacts.append(_artifact(spec))
        for outcome in spec.get("outcomes") or []:
            if outcome.get("outcome") in _REPORTED:
                results.append(_result(spec, outcome, rule_index, artifact_of[file], baselined))

    invocation = _invocation(result)
    run: dict[str, Any] = {
        "tool": {"driver": driver},
        "originalUriBaseIds": {SRCROOT: {"description": {"text": "The directory the specification paths are "
                                                                  "relative to (the repository root)."}}},
        "invocations": [invocation],
        "artifacts": artifacts,
        "columnKind": "unicodeCodePoints",
        "results": results,
    }
    if tool.get("rules_digest"):
        run["properties"] = {"rules_digest": _text(tool["rules_digest"])}
    return {"$schema": SARIF_SCHEMA_URI, "version": SARIF_VERSION, "runs": [run]}


def render(result: dict[str, Any], *, rules: list[dict[str, Any]] | None = None) -> str:
    """Return the SARIF 2.1.0 log of a result as JSON text (indent 2, final newline)."""
    text = json.dumps(build(result, rules=rules), indent=2, ensure_ascii=False, allow_nan=False)
    # a lone surrogate (from an undecodable file name) cannot be written as UTF-8: show it as '?'
    return text.encode("utf-8", "replace").decode("utf-8") + "\n"
