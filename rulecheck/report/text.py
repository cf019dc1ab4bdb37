"""Terminal output: one line per finding as ``file:line:col: severity rule-id: message``.

Colour only when writing to a terminal and ``NO_COLOR`` is unset. Every value
comes from the result dict; nothing is computed here.
"""

from __future__ import annotations

from typing import Any

from rulecheck.report.cautions import select_hazards

__all__ = ["render"]

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


def render(result: dict[str, Any], *, colour: bool = False, verbose: bool = False,
           show_derived: bool = False) -> str:
    """Return the terminal report of a result."""
    out: list[str] = []

    def paint(key: str, text: str) -> str:
        return f"{_COLOURS[key]}{text}{_RESET}" if colour and key in _COLOURS else text

    for spec in result["specs"]:
        for o in spec["outcomes"]:
            kind = o["outcome"]
            if kind == "fail" or (kind == "not-checked" and (o.get("safety") or o["severity"] == "error")):
                level = o["severity"] if kind == "fail" else ("error" if o["severity"] == "error" else "warning")
                label = paint(level, level) + (" (not checked)" if kind == "not-checked" else "")
                line = f"{_where(spec, o)}: {label} {o['rule']}: {_clean(o['message'])}"
                if o.get("fix") and (verbose or kind == "fail"):
                    line += f"\n    fix: {_clean(o['fix'])}"
                if o.get("safety") and kind == "fail":
                    line += "\n    safety-relevant: review by a qualified engineer before purchase"
                out.append(line)
            elif verbose and kind in ("not-checked", "waived", "pass"):
                detail = _clean(o["message"])
                if kind == "waived" and o.get("waiver"):
                    w = o["waiver"]
                    detail = (f"waived by {_clean(w.get('approved_by'))} until {w.get('expires')}: "
                              f"{_clean(w.get('reason'))} — {detail}")
                out.append(f"{_where(spec, o)}: {paint(kind, kind)} {o['rule']}: {detail}")
        if show_derived and spec.get("derived"):
            out.append(f"{_clean(spec['file'])}: derived values of {_clean(spec.get('tag') or '?')}:")
            from rulecheck.report.common import display

            for path, value in spec["derived"].items():
                out.append(f"    {path} = {display(value, result.get('settings', {}).get('units', 'si'))}"
                           f"  ({_clean(value.get('from'))})")
        for note in spec.get("notes", []):
            out.append(f"{_clean(spec['file'])}: note: {_clean(note)}")
    s = result["summary"]
    fails = s["fail"]
    verdicts: dict[str, int] = {}
    for spec in result["specs"]:
        verdicts[spec["verdict"]] = verdicts.get(spec["verdict"], 0) + 1
    parts = [f"{s['specs']} spec{'s' if s['specs'] != 1 else ''} checked"]
    parts += [f"{n} {v}" for v, n in sorted(verdicts.items())]
    out.append("")
    out.append(", ".join(parts) + f"; findings: {fails['error']} error, {fails['warning']} warning, "
               f"{fails['info']} info; {s['not-checked']} not checked, {s['waived']} waived "
               f"(failing at {s['fail_on']} and above)")
    hazards = select_hazards([spec for spec in result["specs"] if spec["verdict"] != "pass"])
    if hazards:
        out.append("Cautions: " + "; ".join(h.hazard.title for h in hazards) + ".")
    out.append("Screening aid only: local codes and the authority having jurisdiction govern; "
               "safety-relevant designs need licensed review.")
    return "\n".join(out) + "\n"
