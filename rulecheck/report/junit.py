"""JUnit XML of a result, for CI test-report views.

One ``<testsuite>`` per spec and one ``<testcase>`` per outcome: a fail is a ``<failure>``
(type = severity, the values in the body); not-checked, not-applicable and waived outcomes
are ``<skipped>``; the load problems of a spec that did not load are ``<error>``s, because the
rules could not be applied at all. The tree is built with ElementTree, which escapes markup;
characters that XML 1.0 cannot carry at all (most control characters) are removed first.
"""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET
from collections import Counter
from typing import Any

__all__ = ["LOAD_RULES", "render", "xml_text"]

# Rule ids under which the pipeline reports a spec that could not be loaded.
LOAD_RULES = frozenset({"yaml-syntax", "spec-schema", "units-and-dimensions"})

_SKIPPED = ("not-checked", "not-applicable", "waived")

# Everything outside XML 1.0's Char production (W3C XML 1.0, 5th ed., section 2.2).
_NOT_XML = re.compile("[^\t\n\r\u0020-\ud7ff\ue000-\ufffd\U00010000-\U0010ffff]")

_COMMAND_LINE = re.compile(r"(?m)^([ \t]*)::")

_SAFETY_NOTE = ("Safety-relevant: a fault here can hurt people. Have the design reviewed by a competent person "
                "under the local codes before it is built or changed.")


def xml_text(value: Any) -> str:
    """Return a value as text that XML 1.0 can carry ('' for None; disallowed characters removed)."""
    return _NOT_XML.sub("", "" if value is None else str(value))


def _quantity(quantity: Any) -> str:
    """Return 'value unit' for a quantity dict."""
    if not isinstance(quantity, dict):
        return str(quantity)
    unit = quantity.get("unit")
    return f"{quantity.get('value')}" + (f" {unit}" if unit and unit != "1" else "")


def _body(outcome: dict[str, Any]) -> str:
    """Return the body of a failure or skip: message, values, limit, formula, location, fix, basis, waiver."""
    lines = [str(outcome.get("message") or "")]
    for name, quantity in (outcome.get("values") or {}).items():
        lines.append(f"{name}: {_quantity(quantity)}")
    if outcome.get("limit") is not None:
        lines.append(f"limit: {_quantity(outcome['limit'])}")
    if outcome.get("formula"):
        lines.append(f"formula: {outcome['formula']}")
    where = outcome.get("location") if isinstance(outcome.get("location"), dict) else {}
    if where.get("path") or where.get("line"):
        at = str(where.get("path") or "")
        if where.get("line"):
            at += f" (line {where['line']}" + (f", column {where['column']})" if where.get("column") else ")")
        lines.append(f"at: {at.strip()}")
    if outcome.get("missing"):
        lines.append("missing: " + ", ".join(str(m) for m in outcome["missing"]))
    if outcome.get("fix"):
        lines.append(f"fix: {outcome['fix']}")
    for entry in outcome.get("basis") or []:
        if isinstance(entry, dict):
            status = entry.get("status")
            lines.append(f"basis: {entry.get('source')}" + (f" ({status})" if status else ""))
    waiver = outcome.get("waiver")
    if isinstance(waiver, dict):
        lines.append(f"waiver: {waiver.get('reason')}; approved by {waiver.get('approved_by')}; "
                     f"expires {waiver.get('expires')}")
    if outcome.get("safety"):
        lines.append(_SAFETY_NOTE)
    # an XML reader turns CR LF and lone CR in element text into LF, so write LF to read back what was written
    text = "\n".join(line for line in lines if line).replace("\r\n", "\n").replace("\r", "\n")
    return xml_text(text)


def _skip_message(outcome: dict[str, Any]) -> str:
    """Return the one-line reason an outcome is skipped."""
    kind = outcome.get("outcome")
    if kind == "not-checked":
        missing = ", ".join(str(m) for m in outcome.get("missing") or [])
        text = "not checked" + (f": missing {missing}" if missing else "")
        return text + (" (safety-relevant rule)" if outcome.get("safety") else "")
    if kind == "waived":
        waiver = outcome.get("waiver") if isinstance(outcome.get("waiver"), dict) else {}
        return f"waived: {waiver.get('reason') or 'no reason given'}"
    return "not applicable" + (f": {outcome['message']}" if outcome.get("message") else "")


def _case_names(outcomes: list[dict[str, Any]]) -> list[str]:
    """Return a test-case name per outcome: the rule id, with the key path added where a rule repeats."""
    rules = [str(o.get("rule") or "") for o in outcomes]
    repeats = Counter(rules)
    names = []
    for rule, outcome in zip(rules, outcomes, strict=True):
        where = outcome.get("location") if isinstance(outcome.get("location"), dict) else {}
        if repeats[rule] > 1 and where.get("path"):
            names.append(f"{rule} [{where['path']}]")
        else:
            names.append(rule)
    return names


def _suite(spec: dict[str, Any], timestamp: str) -> tuple[ET.Element, dict[str, int]]:
    """Return the <testsuite> of one spec and its counts."""
    file = xml_text(spec.get("file"))
    tag = xml_text(spec.get("tag"))
    suite = ET.Element("testsuite", name=tag or file)
    counts = {"tests": 0, "failures": 0, "errors": 0, "skipped": 0}
    properties = ET.SubElement(suite, "properties")
    for name in ("file", "tag", "title", "status", "verdict", "sha256"):
        if spec.get(name) is not None:
            ET.SubElement(properties, "property", name=name, value=xml_text(spec[name]))
    outcomes = [o for o in spec.get("outcomes") or [] if isinstance(o, dict)]
    for outcome, name in zip(outcomes, _case_names(outcomes), strict=True):
        case = ET.SubElement(suite, "testcase", classname=tag or file, name=xml_text(name), file=file)
        where = outcome.get("location") if isinstance(outcome.get("location"), dict) else {}
        if isinstance(where.get("line"), int):
            case.set("line", str(where["line"]))
        case.set("time", "0")
        counts["tests"] += 1
        kind = outcome.get("outcome")
        message = xml_text(outcome.get("message"))
        if kind == "fail" and outcome.get("rule") in LOAD_RULES:
            problem = ET.SubElement(case, "error", type=xml_text(outcome.get("rule")), message=message)
            problem.text = _body(outcome)
            counts["errors"] += 1
        elif kind == "fail":
            problem = ET.SubElement(case, "failure", type=xml_text(outcome.get("severity")), message=message)
            problem.text = _body(outcome)
            counts["failures"] += 1
        elif kind in _SKIPPED:
            skipped = ET.SubElement(case, "skipped", message=xml_text(_skip_message(outcome)))
            if kind != "not-applicable":
                skipped.text = _body(outcome)
            counts["skipped"] += 1
    for key, value in counts.items():
        suite.set(key, str(value))
    suite.set("time", "0")
    if timestamp:
        suite.set("timestamp", timestamp)
    return suite, counts


def render(result: dict[str, Any]) -> str:
    """Return the JUnit XML document of a result (UTF-8 declared, indented, final newline)."""
    tool = result.get("tool") if isinstance(result.get("tool"), dict) else {}
    root = ET.Element("testsuites", name=xml_text(tool.get("name") or "rulecheck"))
    totals = {"tests": 0, "failures": 0, "errors": 0, "skipped": 0}
    timestamp = xml_text(result.get("generated")).removesuffix("Z")
    for spec in result.get("specs") or []:
        suite, counts = _suite(spec, timestamp)
        root.append(suite)
        for key, value in counts.items():
            totals[key] += value
    for key, value in totals.items():
        root.set(key, str(value))
    root.set("time", "0")
    ET.indent(root)
    # A text line starting with '::' is a workflow command when the report is printed to a CI log; a character
    # reference keeps the text the same for XML readers. Attribute values never span lines (ElementTree writes &#10;).
    body = _COMMAND_LINE.sub(r"\1&#58;:", ET.tostring(root, encoding="unicode"))
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + body + "\n"
