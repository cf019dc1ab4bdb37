"""JUnit XML of a result, for CI test-report views: one test case per drive train (spec file).

A spec's test case fails when the spec has findings that fail the run at the result's ``--fail-on`` level
(:func:`rulecheck.result.counts_toward_failure`, the same rule as the exit code): one ``<failure>`` whose
type is the most severe of them and whose text lists every one (message, values, limit, location, fix,
basis). A spec that did not load is an ``<error>`` (its rules could not be applied at all). Findings that do
not fail the run (below the fail level, known to a baseline) are listed in the case's ``<system-out>``
as the terminal shows them — an info finding never fails under the default level, and a safety rule
that could not be evaluated is a "warning (not checked)", never a skip. The tree is built with
ElementTree, which escapes markup; characters that XML 1.0 cannot carry at all (most control characters)
are removed first.
"""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET
from typing import Any

from rulecheck.result import SEVERITY_RANK, counts_toward_failure, failure_level

__all__ = ["LOAD_RULES", "render", "xml_text"]

# Rule ids under which the pipeline reports a spec that could not be loaded.
LOAD_RULES = frozenset({"yaml-syntax", "spec-schema", "units-and-dimensions"})

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


def _heading(outcome: dict[str, Any]) -> str:
    """Return a finding's first line as the terminal shows it: level, (not checked), (in baseline), rule."""
    level = failure_level(outcome) or str(outcome.get("severity") or "")
    label = level + (" (not checked)" if outcome.get("outcome") == "not-checked" else "")
    label += " (in baseline)" if outcome.get("baseline") else ""
    case = f" [case {outcome.get('case')}]" if outcome.get("case") else ""
    return f"{label} {outcome.get('rule')}{case}"


def _block(outcome: dict[str, Any]) -> str:
    """Return one finding as text: its heading, then its body indented."""
    body = _body(outcome)
    if outcome.get("outcome") == "not-checked" and not outcome.get("message"):
        body = "not checked: the values it needs are not in the spec\n" + body
    return _heading(outcome) + ":\n" + "\n".join("  " + line for line in body.splitlines() if line)


def _failing(spec: dict[str, Any], fail_on: str) -> list[dict[str, Any]]:
    """Return the findings of a spec that fail the run at ``fail_on``."""
    return [o for o in spec.get("outcomes") or [] if isinstance(o, dict) and counts_toward_failure(o, fail_on)]


def _case(spec: dict[str, Any], fail_on: str) -> tuple[ET.Element, str | None]:
    """Return the <testcase> of one spec and what it is: 'failure', 'error' or None (it passes)."""
    file = xml_text(spec.get("file"))
    tag = xml_text(spec.get("tag"))
    title = xml_text(spec.get("title"))
    case = ET.Element("testcase", classname=file, name=(f"{tag}: {title}" if tag and title else tag or file),
                      file=file, time="0")
    outcomes = [o for o in spec.get("outcomes") or [] if isinstance(o, dict)]
    failing = _failing(spec, fail_on)
    failing_ids = {id(o) for o in failing}
    others = [o for o in outcomes if failure_level(o) is not None and id(o) not in failing_ids]
    kind = None
    if spec.get("status") not in (None, "checked") and failing:
        kind = "error"
        problem = ET.SubElement(case, "error", type=xml_text(spec.get("status")),
                                message=xml_text(f"the spec did not load ({spec.get('status')}): "
                                                 + "; ".join(str(o.get("message") or "") for o in failing)))
        problem.text = xml_text("\n\n".join(_block(o) for o in failing))
    elif failing:
        kind = "failure"
        worst = max((failure_level(o) or "info" for o in failing), key=lambda lvl: SEVERITY_RANK.get(lvl, 0))
        rules = ", ".join(dict.fromkeys(str(o.get("rule")) for o in failing))
        count = f"{len(failing)} finding{'s' if len(failing) != 1 else ''}"
        problem = ET.SubElement(case, "failure", type=xml_text(worst),
                                message=xml_text(f"{count} at --fail-on {fail_on}: {rules}"))
        problem.text = xml_text("\n\n".join(_block(o) for o in failing))
    first = failing[0] if failing else None
    where = first.get("location") if first is not None and isinstance(first.get("location"), dict) else {}
    if isinstance(where.get("line"), int):
        case.set("line", str(where["line"]))
    if others:
        out = ET.SubElement(case, "system-out")
        out.text = xml_text("\n\n".join(_block(o) for o in others))
    return case, kind


def render(result: dict[str, Any]) -> str:
    """Return the JUnit XML document of a result (UTF-8 declared, indented, final newline): one test suite,
    one test case per spec, failing as the run fails at the result's ``settings.fail_on``."""
    tool = result.get("tool") if isinstance(result.get("tool"), dict) else {}
    settings = result.get("settings") if isinstance(result.get("settings"), dict) else {}
    fail_on = settings.get("fail_on") if settings.get("fail_on") in SEVERITY_RANK else "error"
    name = xml_text(tool.get("name") or "rulecheck")
    root = ET.Element("testsuites", name=name)
    suite = ET.SubElement(root, "testsuite", name=name)
    properties = ET.SubElement(suite, "properties")
    ET.SubElement(properties, "property", name="fail_on", value=fail_on)
    if tool.get("version"):
        ET.SubElement(properties, "property", name="version", value=xml_text(tool["version"]))
    counts = {"tests": 0, "failures": 0, "errors": 0, "skipped": 0}
    for spec in result.get("specs") or []:
        case, kind = _case(spec, fail_on)
        suite.append(case)
        counts["tests"] += 1
        if kind is not None:
            counts[kind + "s"] += 1
    timestamp = xml_text(result.get("generated")).removesuffix("Z")
    for element in (root, suite):
        for key, value in counts.items():
            element.set(key, str(value))
        element.set("time", "0")
    if timestamp:
        suite.set("timestamp", timestamp)
    ET.indent(root)
    # A text line starting with '::' is a workflow command when the report is printed to a CI log; a character
    # reference keeps the text the same for XML readers. Attribute values never span lines (ElementTree writes &#10;).
    body = _COMMAND_LINE.sub(r"\1&#58;:", ET.tostring(root, encoding="unicode"))
    return '<?xml version="1.0" encoding="UTF-8"?>\n' + body + "\n"
