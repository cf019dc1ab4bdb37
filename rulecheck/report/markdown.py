"""The Markdown report: a compact pull-request comment (summary table, then failures and not-checked rules).

Every string from a spec or a rule file is escaped so that it can neither break
the table (``|``, newlines) nor inject markup (HTML tags, links, emphasis,
``@`` mentions). The comment stays under the size a code-review system accepts;
details beyond that are cut with a note pointing to the HTML report.
"""

from __future__ import annotations

import re
from collections.abc import Mapping
from typing import Any

from rulecheck.report import cautions, common
from rulecheck.report.common import plain

__all__ = ["MAX_LENGTH", "code", "escape", "render"]

MAX_LENGTH = 60_000  # review systems cap comments near 65 536 characters; keep room for a footer

# Characters that start emphasis, code, links, tables, strikethrough or autolinks mid-line. Text from a spec
# never starts a line here (it always follows our own prefix), so list and heading markers need no escape.
_PUNCT = re.compile(r"([\\`*_\[\]|~:])")
_WWW = re.compile(r"(www)(?=\.)", re.IGNORECASE)


def escape(text: Any, limit: int = 500) -> str:
    """Return ``text`` as inert Markdown on one line: entities for ``< > &``, inline markup backslash-escaped.

    An ``@`` is followed by a zero-width space so that a name in a spec cannot
    notify anyone on a code-review system, and so is the ``www`` of a bare address, which renderers would
    otherwise turn into a live link (showing one address, opening it).
    """
    s = plain(text, limit)
    s = s.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;")
    s = _PUNCT.sub(r"\\\1", s)
    s = _WWW.sub("\\1\u200b", s)
    return s.replace("@", "@\u200b")


def code(text: Any, limit: int = 200, *, in_table: bool = False) -> str:
    """Return ``text`` as an inline code span that cannot close early (nor split a table cell with ``in_table``)."""
    s = plain(text, limit).replace("`", "'")
    if in_table:
        s = s.replace("|", "\\|")
    return f"`{s}`" if s else "—"


def _counts_row(spec: Mapping[str, Any]) -> str:
    c = common.counts(spec)
    label = common.verdict_label(spec)
    safety = common.safety_errors(spec)
    errors = f"{c['error']} ({safety} safety)" if safety else str(c["error"])
    name = escape(common.spec_name(spec), 120)
    return (
        f"| **{escape(label.text)}** | {name} | {errors} | {c['warning']} | {c['info']} | {c['not-checked']} "
        f"| {c['waived']} | {code(spec.get('file'), 120, in_table=True)} |"
    )


def _values(outcome: Mapping[str, Any], units: str) -> str:
    parts = [f"{escape(name, 60)} {escape(value, 60)}" for name, value in common.value_items(outcome, units)]
    limit = common.display_limit(outcome, units)
    if limit:
        parts.append(f"limit {escape(limit, 60)}")
    return "; ".join(parts)


def _failure(o: Mapping[str, Any], units: str) -> str:
    label = common.outcome_label(o)
    flag = " ⚑ safety" if o.get("safety") is True else ""
    line = (f"- **{escape(label.text)}**{flag} {code(o.get('rule'), 80)}{escape(common.case_label(o))}: "
            f"{escape(o.get('message') or o.get('title'))}")
    extra = []
    values = _values(o, units)
    if values:
        extra.append(f"  - values: {values}")
    where = common.location_text(o)
    if where:
        extra.append(f"  - at {code(where)}")
    if o.get("fix"):
        extra.append(f"  - fix: {escape(o.get('fix'))}")
    return "\n".join([line, *extra])


def _not_checked(o: Mapping[str, Any]) -> str:
    missing = ", ".join(code(m, 120) for m in common.missing_items(o)) or "—"
    flag = " ⚑ safety" if o.get("safety") is True else ""
    level = escape(o.get("severity") or "—", 20)
    return (f"- **\\[?\\] NOT CHECKED** ({level}){flag} {code(o.get('rule'), 80)}{escape(common.case_label(o))}: "
            f"needs {missing}")


def _spec_details(spec: Mapping[str, Any], units: str) -> str:
    groups = common.group_outcomes(spec)
    if not groups.failures and not groups.not_checked:
        return ""
    lines = [f"#### {escape(common.verdict_label(spec).text)} {escape(common.spec_name(spec), 160)}", ""]
    if spec.get("cases"):
        lines += ["load cases: " + ", ".join(f"{escape(c.get('name'), 40)} {escape(c.get('verdict'), 20)}"
                                             for c in spec["cases"]), ""]
    lines += [_failure(o, units) for o in groups.failures]
    if groups.not_checked:
        if groups.failures:
            lines.append("")
        lines += [_not_checked(o) for o in groups.not_checked]
    return "\n".join(lines)


def render(result: dict, *, units: str = "si") -> str:
    """Return a compact Markdown comment for ``result`` (text), at most :data:`MAX_LENGTH` characters."""
    specs = common.sorted_specs(result.get("specs") or [])
    tool = result.get("tool") if isinstance(result.get("tool"), Mapping) else {}
    head = [
        f"### Drive-train rule check: {common.summary_line(result)}",
        "",
        common.ORDER_STATEMENT,
        "",
        "| Verdict | Drive train | Errors | Warnings | Info | Not checked | Waived | File |",
        "|---|---|---:|---:|---:|---:|---:|---|",
    ]
    budget_rows = MAX_LENGTH // 2  # the table may take half of the comment; details share the rest
    listed = 0
    for spec in specs:
        row = _counts_row(spec)
        if sum(len(h) + 1 for h in head) + len(row) > budget_rows:
            break
        head.append(row)
        listed += 1
    if listed < len(specs):
        head.append(f"\n_{len(specs) - listed} more drive trains not listed (the least severe); "
                    "see the HTML report._")
    hazards = cautions.select_hazards(specs)
    foot = [
        "",
        "> **Screening aid, not an approval.** Local codes and the authority having jurisdiction govern; "
        "safety-relevant designs need qualified (where required, licensed) review.",
    ]
    if hazards:
        foot.append("> Hazards touched: " + "; ".join(escape(h.hazard.title, 80) for h in hazards)
                    + ". See the cautions in the HTML report.")
    version = escape(f"{plain(tool.get('name'), 40) or 'rulecheck'} {plain(tool.get('version'), 40)}", 80)
    foot.append(f"\n<sub>{version}, rule set {code(tool.get('rules_digest'), 80)}</sub>")
    text = "\n".join(head)
    budget = MAX_LENGTH - len("\n".join(foot)) - 200
    cut = 0
    for spec in specs:
        details = _spec_details(spec, units)
        if not details:
            continue
        if len(text) + len(details) + 2 > budget:
            cut += 1
            continue
        text += "\n\n" + details
    if cut:
        text += f"\n\n_Details of {cut} more drive train{'s' if cut > 1 else ''} left out for length; " \
                "see the HTML report._"
    return text + "\n" + "\n".join(foot) + "\n"
