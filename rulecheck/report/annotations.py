"""CI workflow-command annotations of a result: one ``::level file=…,line=…::message`` line per finding.

The runner reads each output line that starts with ``::`` as a command, so everything that came
from a spec or a rule file is escaped by the runner's own rules: in the message ``%``, CR and LF;
in the properties also ``:`` and ``,``. A newline or ``::`` in a spec title can therefore never end
the line early or start a second command. Other line-breaking or control characters, which the
runner would not decode, are shown as U+FFFD.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from typing import Any

from rulecheck.result import SEVERITY_RANK, level_of

__all__ = ["RUNNERS", "detect_ci_annotations", "escape_message", "escape_property", "render"]

# Environment variables that identify a runner reading these annotations, with the value it sets.
# Add a row for another runner that reads the same line format.
RUNNERS: tuple[tuple[str, str], ...] = (
    ("GITHUB_ACTIONS", "true"),
)

_COMMAND = {"info": "notice", "warning": "warning", "error": "error"}

# C0 and C1 controls except TAB/LF/CR, and the characters other tools treat as line breaks.
_UNSAFE = re.compile("[\x00-\x08\x0b\x0c\x0e-\x1f\x7f-\x9f\u2028\u2029]")


def _clean(text: str) -> str:
    """Return text with control characters the runner cannot decode shown as U+FFFD (lone surrogates as ?)."""
    text = _UNSAFE.sub("\ufffd", text)
    return text.encode("utf-8", "replace").decode("utf-8")


def escape_message(text: str) -> str:
    """Return message text escaped for a workflow command (``%``, CR, LF)."""
    return _clean(text).replace("%", "%25").replace("\r", "%0D").replace("\n", "%0A")


def escape_property(text: str) -> str:
    """Return a property value escaped for a workflow command (as a message, plus ``:`` and ``,``)."""
    return escape_message(text).replace(":", "%3A").replace(",", "%2C")


def detect_ci_annotations(environ: Mapping[str, str]) -> bool:
    """Return True when the environment is a CI runner that reads annotation lines."""
    return any(environ.get(name, "").strip().lower() == value for name, value in RUNNERS)


def _text(value: Any) -> str:
    """Return a value as text ('' for None)."""
    return "" if value is None else str(value)


def _finding(outcome: dict[str, Any]) -> tuple[str, str] | None:
    """Return (level, message body) of an outcome worth an annotation, or None.

    A finding is annotated at the level at which it counts toward failure (:func:`rulecheck.result.level_of`);
    any other rule that could not be evaluated, and a finding a baseline knows, is a notice.
    """
    kind = _text(outcome.get("outcome"))
    if kind not in ("fail", "not-checked"):
        return None
    level = level_of(kind, _text(outcome.get("severity")), bool(outcome.get("safety")))
    level = level if level in _COMMAND else ("warning" if kind == "fail" else "info")
    if outcome.get("baseline"):  # known to the baseline: a notice, never a failure
        finding = _finding({**outcome, "baseline": False})
        return ("info", "known (in baseline): " + finding[1]) if finding is not None else None
    if kind == "fail":
        body = _text(outcome.get("message"))
        if outcome.get("fix"):
            body += f"\nFix: {_text(outcome['fix'])}"
        return level, body
    missing = ", ".join(_text(m) for m in outcome.get("missing") or [])
    return level, "not checked" + (f": missing {missing}" if missing else ": the values it needs are not in the spec")


def _line(spec: dict[str, Any], outcome: dict[str, Any], severity: str, body: str) -> str:
    """Return one annotation line."""
    where = outcome.get("location") if isinstance(outcome.get("location"), dict) else {}
    props = [f"file={escape_property(_text(spec.get('file')).replace(chr(92), '/'))}"]
    line, column = where.get("line"), where.get("column")
    if isinstance(line, int) and not isinstance(line, bool) and line >= 1:
        props.append(f"line={line}")
        if isinstance(column, int) and not isinstance(column, bool) and column >= 1:
            props.append(f"col={column}")
    tag = _text(spec.get("tag"))
    title = _text(outcome.get("title")) or _text(outcome.get("rule"))
    case = f" [case {_text(outcome.get('case'))}]" if outcome.get("case") else ""
    props.append("title=" + escape_property(f"{tag} {outcome.get('rule')}{case}: {title}".strip()))
    if outcome.get("safety"):
        body += "\nSafety-relevant: have the design reviewed by a competent person under the local codes."
    path = _text(where.get("path"))
    if path and not body.startswith(path):
        body = f"{path}: {body}"
    return f"::{_COMMAND[severity]} {','.join(props)}::{escape_message(body)}"


def render(result: dict[str, Any], *, min_severity: str = "warning") -> str:
    """Return the annotation lines of a result's findings at or above ``min_severity`` (error, warning, info)."""
    if min_severity not in SEVERITY_RANK:
        raise ValueError(f"min_severity must be one of error, warning, info, not {min_severity!r}")
    floor = SEVERITY_RANK[min_severity]
    lines = []
    for spec in result.get("specs") or []:
        for outcome in spec.get("outcomes") or []:
            finding = _finding(outcome) if isinstance(outcome, dict) else None
            if finding is not None and SEVERITY_RANK[finding[0]] >= floor:
                lines.append(_line(spec, outcome, *finding))
    return "".join(line + "\n" for line in lines)
