"""Terminal output: one line per finding as ``file:line:col: severity rule-id: message``.

Colour only when writing to a terminal and ``NO_COLOR`` is unset. Every value
comes from the result dict; nothing is computed here.
"""

from __future__ import annotations

from typing import Any

from rulecheck.report.cautions import select_hazards
from rulecheck.report.common import case_label
from rulecheck.result import failure_level

__all__ = ["TextReport", "render", "requirement_lines"]

_COLOURS = {"error": "\033[31;1m", "warning": "\033[33;1m", "info": "\033[36m", "not-checked": "\033[35m",
            "waived": "\033[2m", "pass": "\033[32m"}
_RESET = "\033[0m"


def _clean(text: Any) -> str:
    """Return text safe for one terminal line: control characters and escapes removed."""
    s = "" if text is None else str(text)
    return "".join(ch if ch.isprintable() else " " for ch in s)


def _where(spec: dict[str, Any], o: dict[str, Any]) -> str:
    loc = o.get("location") or {}
    line, col = loc.get("line"), loc.get("column")
    where = _clean(spec["file"])
    if line:
        where += f":{line}:{col or 1}"
    return where


def _scalar(value: Any) -> str:
    return ("true" if value else "false") if isinstance(value, bool) else str(value)


def _to_give_text(to_give: dict[str, Any]) -> str:
    """Return the request of a spec's ``to_give`` block: "to check 6 more rules, give motor: inertia,
    power_factor; drive: overload.current" (fields grouped by component, in the block's order)."""
    groups: dict[str, list[str]] = {}
    for entry in to_give.get("inputs", []):
        component = _clean(entry.get("component"))
        path = _clean(entry.get("path"))
        groups.setdefault(component, []).append(path[len(component) + 1:] if path.startswith(component + ".")
                                                else path)
    n = to_give.get("rules", 0)
    asked = "; ".join(f"{c}: {', '.join(fields)}" for c, fields in groups.items())
    return f"to check {n} more rule{'s' if n != 1 else ''}, give {asked}"


def _derived_lines(spec: dict[str, Any], units: str) -> list[str]:
    """Return a spec's derived values (``--show-derived``): those every load case shares, then each case's own."""
    from rulecheck.report.common import display

    out = []
    tables = [("", spec.get("derived") or {})]
    tables += [(f" in case {_clean(c.get('name'))}", c.get("derived") or {}) for c in spec.get("cases") or []]
    for where, table in tables:
        if table:
            out.append(f"{_clean(spec['file'])}: derived values of {_clean(spec.get('tag') or '?')}{where}:")
            out += [f"    {path} = {display(value, units)}  ({_clean(value.get('from'))})" for path, value in
                    table.items()]
    return out


def _spec_lines(spec: dict[str, Any], head: str) -> list[str]:
    """Return the lines about a whole spec: the run's overrides, its load cases' verdicts, what to give."""
    out = []
    if spec.get("overrides"):
        shown = [f"{_clean(o.get('path'))} = {_clean(_scalar(o.get('value')))}"
                 + (f" (was {_clean(_scalar(o['was']))})" if o.get("was") is not None else " (not in the spec)")
                 for o in spec["overrides"]]
        out.append(f"{head}: overridden for this run: {'; '.join(shown)}")
    if spec.get("cases"):
        out.append(f"{head}: load cases (the worst decides): "
                   + ", ".join(f"{_clean(c.get('name'))} {_clean(c.get('verdict'))}" for c in spec["cases"]))
    if spec.get("to_give"):
        out.append(f"{head}: {_to_give_text(spec['to_give'])}")
    return out


class TextReport:
    """The terminal report, written spec by spec."""

    def __init__(self, *, colour: bool = False, verbose: bool = False, show_derived: bool = False,
                 units: str = "si", requirements: bool = False) -> None:
        self.colour = colour
        self.requirements = requirements
        self.verbose = verbose
        self.show_derived = show_derived
        self.units = units
        self.verdicts: dict[str, int] = {}
        self.hazards: dict[str, Any] = {}

    def _paint(self, key: str, text: str) -> str:
        return f"{_COLOURS[key]}{text}{_RESET}" if self.colour and key in _COLOURS else text

    def spec(self, spec: dict[str, Any]) -> str:
        """Return the lines of one spec (empty when it has nothing to report)."""
        out: list[str] = []
        for o in spec["outcomes"]:
            kind = o["outcome"]
            level = failure_level(o)
            if level is not None:
                label = self._paint(level, level) + (" (not checked)" if kind == "not-checked" else "")
                known = " (in baseline)" if o.get("baseline") else ""
                line = f"{_where(spec, o)}: {label}{known} {o['rule']}{case_label(o)}: {_clean(o['message'])}"
                if o.get("fix") and (self.verbose or kind == "fail"):
                    line += f"\n    fix: {_clean(o['fix'])}"
                if o.get("safety") and kind == "fail" and level != "info":
                    line += "\n    safety-relevant: review by a qualified engineer before purchase"
                out.append(line)
            elif self.verbose and kind in ("not-checked", "waived", "pass"):
                detail = _clean(o["message"])
                if kind == "waived" and o.get("waiver"):
                    w = o["waiver"]
                    detail = (f"waived by {_clean(w.get('approved_by'))} until {w.get('expires')}: "
                              f"{_clean(w.get('reason'))} — {detail}")
                out.append(f"{_where(spec, o)}: {self._paint(kind, kind)} {o['rule']}{case_label(o)}: {detail}")
        if self.show_derived:
            out += _derived_lines(spec, self.units)
        head = _clean(spec["file"]) + (f":{spec['row']}" if spec.get("row") else "")
        out += _spec_lines(spec, head)
        if self.requirements and spec.get("requirements"):
            out += requirement_lines(spec, self.units)
        for note in spec.get("notes", []):
            out.append(f"{head}: note: {_clean(note)}")
        self.verdicts[spec["verdict"]] = self.verdicts.get(spec["verdict"], 0) + 1
        if spec["verdict"] != "pass":
            for h in select_hazards([spec]):
                self.hazards.setdefault(h.hazard.key, h.hazard)
        return "".join(line + "\n" for line in out)

    def footer(self, summary: dict[str, Any]) -> str:
        """Return the closing summary lines."""
        from rulecheck.report.cautions import HAZARDS

        fails = summary["fail"]
        parts = [f"{summary['specs']} spec{'s' if summary['specs'] != 1 else ''} checked"]
        parts += [f"{n} {v}" for v, n in sorted(self.verdicts.items())]
        out = ["", ", ".join(parts) + f"; findings: {fails['error']} error, {fails['warning']} warning, "
               f"{fails['info']} info; {summary['not-checked']} not checked, {summary['waived']} waived "
               f"(failing at {summary['fail_on']} and above)"]
        if "baseline" in summary:
            b = summary["baseline"]
            out.append(f"baseline {b['file']}: {b['matched']} known, {b['new']} new, {len(b['fixed'])} fixed")
        titles = [h.title for h in HAZARDS if h.key in self.hazards]
        if titles:
            out.append("Cautions: " + "; ".join(titles) + ".")
        out.append("Screening aid only: local codes and the authority having jurisdiction govern; "
                   "safety-relevant designs need licensed review.")
        return "\n".join(out) + "\n"


def requirement_lines(spec: dict[str, Any], units: str = "si") -> list[str]:
    """Return a spec's requirements table as aligned text lines: what is needed, the rating or limit beside it,
    the margin and the rule's outcome (the values the rules computed)."""
    from rulecheck.report.common import display

    rows = [("requirement", "needed", "rating or limit", "margin", "rule")]
    for r in spec.get("requirements") or []:
        at = f" at {display(r['at'], units)}" if r.get("at") else ""
        rating = display(r["rating"], units) if r.get("rating") else "not stated"
        if r.get("sense") == "at-most":
            rating = "max " + rating if r.get("rating") else rating
        margin = display(r["margin"], units, ratio=True) if r.get("margin") else "—"
        rows.append((_clean(r["item"]), display(r["needed"], units) + at, rating, margin,
                     f"{r['outcome']} {_clean(r['rule'])}{case_label(r)}"))
    widths = [max(len(row[i]) for row in rows) for i in range(5)]
    head = f"{_clean(spec['file'])}: what {_clean(spec.get('tag') or 'the drive train')} needs:"
    lines = [head]
    for row in rows:
        lines.append("    " + "  ".join([row[0].ljust(widths[0]), row[1].rjust(widths[1]), row[2].rjust(widths[2]),
                                         row[3].rjust(widths[3]), row[4]]).rstrip())
    return lines


def render(result: dict[str, Any], *, colour: bool = False, verbose: bool = False,
           show_derived: bool = False, requirements: bool = False) -> str:
    """Return the terminal report of a whole result (``requirements``: each drive train's requirements table)."""
    report = TextReport(colour=colour, verbose=verbose, show_derived=show_derived,
                        units=result.get("settings", {}).get("units", "si"), requirements=requirements)
    return "".join(report.spec(spec) for spec in result["specs"]) + report.footer(result["summary"])
