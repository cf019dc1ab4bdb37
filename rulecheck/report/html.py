"""The HTML report: one self-contained, printable file per result, readable without scripts.

:func:`render` turns the result dict into HTML through the jinja2 templates
shipped in ``rulecheck/templates``. Autoescaping is on for every value; the only
markup inserted unescaped is the chart SVG this package draws itself (its text
comes from :mod:`rulecheck.report.charts`, which escapes the spec's labels).
The page has no scripts and fetches nothing: styles are inline, charts are inline
SVG (or, for e-mail, ``cid:`` images supplied by the caller).
"""

from __future__ import annotations

from collections.abc import Callable, Mapping
from functools import lru_cache
from typing import Any

from markupsafe import Markup

from rulecheck.report import cautions, charts, common
from rulecheck.report.common import plain
from rulecheck.result import level_of

__all__ = ["PAPERS", "ImageSource", "context", "render", "render_summary"]

# (spec number, chart key, chart data) -> the ``src`` of an <img>; used by the e-mail builder
ImageSource = Callable[[int, str, Mapping[str, Any]], str]

UNITS_WORDS = {"si": "SI", "customary": "US customary"}


@lru_cache(maxsize=1)
def _environment() -> Any:
    from jinja2 import Environment, PackageLoader, StrictUndefined

    return Environment(
        loader=PackageLoader("rulecheck", "templates"),
        autoescape=True,
        undefined=StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
        keep_trailing_newline=True,
    )


def _rules(result: Mapping[str, Any]) -> dict[str, Mapping[str, Any]]:
    """Return the result's ``rules`` block by rule id (the metadata of every rule the run applied)."""
    rules = result.get("rules") if isinstance(result.get("rules"), list) else []
    return {str(r.get("id")): r for r in rules if isinstance(r, Mapping)}


def _finding(o: Mapping[str, Any], units: str, rules: Mapping[str, Mapping[str, Any]]) -> dict[str, Any]:
    # a pass carries no formula or basis: the rule's own are in the result's rules block
    meta = rules.get(str(o.get("rule")), {})
    o = {**{k: meta.get(k) for k in ("title", "topic", "formula", "basis")}, **o}
    return {
        "rule": plain(o.get("rule"), 120),
        "case": plain(o.get("case"), 40),
        "title": plain(o.get("title"), 300),
        "topic": plain(o.get("topic"), 80),
        "label": common.outcome_label(o),
        "severity": plain(o.get("severity"), 20),
        "safety": o.get("safety") is True,
        "message": plain(o.get("message"), 2000),
        "fix": plain(o.get("fix"), 2000),
        "formula": plain(o.get("formula"), 500),
        "basis": common.basis_items(o),
        "location": common.location_text(o),
        "computed": common.value_items(o, units),
        "limit": common.display_limit(o, units),
        "missing": common.missing_items(o),
        "waiver": common.waiver_items(o) if o.get("outcome") == "waived" else None,
    }


def _glance(c: Mapping[str, int], safety: int) -> list[tuple[str, str]]:
    """Return the verdict-at-a-glance cells: (label text, count text)."""
    return [
        ("[X] errors", f"{c['error']}" + (f" ({safety} safety-relevant)" if safety else "")),
        ("[!] warnings", str(c["warning"])),
        ("[i] info", str(c["info"])),
        ("[?] not checked", str(c["not-checked"])),
        ("[W] waived", str(c["waived"])),
        ("[ok] pass", str(c["pass"])),
        ("[-] not applicable", str(c["not-applicable"])),
    ]


# (spec number, chart key) -> (drawn, SVG text or why it cannot be drawn): charts drawn beforehand (charts.draw_all)
Drawn = Mapping[tuple[int, str], tuple[bool, str]]


def _chart_views(spec: Mapping[str, Any], number: int, units: str, image: ImageSource | None,
                 drawn: Drawn | None = None) -> list[dict]:
    views = []
    failing = charts.failing_rules(spec)
    for key in charts.available(spec):
        data = spec["charts"][key]
        view: dict[str, Any] = {"key": key, "svg": None, "src": None, "error": None, "text": None}
        try:
            view["text"] = charts.describe(key, data, units, failing)
            if image is not None:
                view["src"] = image(number, key, data)
            else:
                # our own drawing: charts.svg escapes the only spec text it writes (title and description)
                ok, body = (drawn or {}).get((number, key), (True, None))  # type: ignore[assignment]
                if not ok:
                    raise charts.ChartDataError(body)
                view["svg"] = Markup(charts.svg(key, data, units, chart_id=f"dt{number}-{key}", failing=failing,
                                                body=body))
        except charts.ChartDataError as exc:
            view["error"] = str(exc)
        views.append(view)
    return views


def _deciding(groups: common.OutcomeGroups, units: str, rules: Mapping[str, Mapping[str, Any]]) -> list[dict]:
    """Return the findings that decide a verdict (fails, waived fails and unchecked rules that count), one line each:
    the summary page lists these and nothing else."""
    out = []
    for o in [*groups.failures, *groups.not_checked]:
        if level_of(str(o.get("outcome")), str(o.get("severity") or "error"), o.get("safety") is True) not in (
                "error", "warning"):
            continue
        f = _finding(o, units, rules)
        f["short"] = common.plain(f["message"], 115)
        out.append(f)
    return out


def _requirement_views(spec: Mapping[str, Any], units: str) -> list[dict[str, str]]:
    rows = spec.get("requirements") if isinstance(spec.get("requirements"), list) else []
    views = []
    for r in rows:
        if not isinstance(r, Mapping):
            continue
        at = common.display(r["at"], units) if isinstance(r.get("at"), Mapping) else ""
        margin = r.get("margin")
        views.append({
            "item": plain(r.get("item"), 200),
            "rule": plain(r.get("rule"), 120),
            "needed": ("≤ " if r.get("sense") == "at-most" and r.get("rating") is None else "")
                      + common.display(r.get("needed"), units) + (f" at {at}" if at else ""),
            "rating": common.display(r["rating"], units) if isinstance(r.get("rating"), Mapping) else "not stated",
            "sense": "at most" if r.get("sense") == "at-most" else "at least",
            "margin": common.display(margin, units, ratio=True) if isinstance(margin, Mapping) else "—",
            "label": common.outcome_label({"outcome": r.get("outcome"), "severity": _severity_of(spec, r)}),
        })
    return views


def _severity_of(spec: Mapping[str, Any], row: Mapping[str, Any]) -> str:
    for o in spec.get("outcomes") or []:
        if isinstance(o, Mapping) and o.get("rule") == row.get("rule"):
            return str(o.get("severity"))
    return "info"


def _spec_view(spec: Mapping[str, Any], number: int, units: str, draw: bool, image: ImageSource | None,
               rules: Mapping[str, Mapping[str, Any]], drawn: Drawn | None = None) -> dict:
    groups = common.group_outcomes(spec)
    c = common.counts(spec)
    safety = common.safety_errors(spec)
    errors = spec.get("errors") if isinstance(spec.get("errors"), list) else []
    derived = common.derived_items(spec, units)
    used = common.derived_used(spec, [*groups.failures, *groups.not_checked, *groups.waived])
    return {
        "deciding": _deciding(groups, units, rules),
        "requirements": _requirement_views(spec, units),
        "derived_used": [d for d in derived if d["path"] in used],
        "quiet": not groups.failures and not groups.not_checked and not groups.waived and not errors,
        "anchor": f"dt-{number}",
        "number": number,
        "name": common.spec_name(spec),
        "tag": plain(spec.get("tag"), 80),
        "title": plain(spec.get("title"), 300),
        "file": plain(spec.get("file"), 300),
        "spec_status": plain(spec.get("spec_status"), 60),
        "status": plain(spec.get("status"), 30),
        "sha256": plain(spec.get("sha256"), 80),
        "verdict": common.verdict_label(spec),
        "counts": c,
        "safety_errors": safety,
        "glance": _glance(c, safety),
        "failures": [_finding(o, units, rules) for o in groups.failures],
        "not_checked": [_finding(o, units, rules) for o in groups.not_checked],
        "waived": [_finding(o, units, rules) for o in groups.waived],
        "passed": [_finding(o, units, rules) for o in groups.passed],
        "not_applicable": [_finding(o, units, rules) for o in groups.not_applicable],
        "derived": derived,
        "charts": _chart_views(spec, number, units, image, drawn) if draw else [],
        "load_errors": [plain(e.get("message") if isinstance(e, Mapping) else e, 500) for e in errors],
        "cases": [(plain(k.get("name"), 40), plain(k.get("title"), 200), plain(k.get("verdict"), 20))
                  for k in spec.get("cases") or [] if isinstance(k, Mapping)],
    }


PAPERS = {"a4": "A4", "letter": "letter"}
META_FIELDS = ("project", "revision", "reviewer", "date")


def _page_meta(meta: Mapping[str, Any] | None) -> dict[str, str]:
    """Return the page header's project, revision, reviewer and date (plain text, "" where not given) and the
    paper size; ValueError for a paper that is neither A4 nor Letter."""
    meta = meta or {}
    paper = str(meta.get("paper") or "a4").lower()
    if paper not in PAPERS:
        raise ValueError(f"paper must be 'a4' or 'letter', not {plain(paper, 20)!r}")
    out = {k: plain(meta.get(k), 120) for k in META_FIELDS}
    out["paper"] = PAPERS[paper]
    return out


def _draw(specs: list[Mapping[str, Any]], units: str, jobs: int, progress: Callable[[int, int], None] | None,
          store: charts.DrawingStore | None) -> dict[tuple[int, str], tuple[bool, str]]:
    """Draw every chart of the report beforehand, in a pool of processes (charts.draw_all)."""
    keys = [(i, key) for i, s in enumerate(specs, start=1) if isinstance(s, Mapping) for key in charts.available(s)]
    work = [(key, specs[i - 1]["charts"][key], units, charts.failing_rules(specs[i - 1])) for i, key in keys]
    return dict(zip(keys, charts.draw_all(work, jobs, progress, store), strict=True))


def context(result: Mapping[str, Any], *, units: str = "si", charts: bool = True,
            image: ImageSource | None = None, meta: Mapping[str, Any] | None = None,
            details: bool = True, jobs: int = 1, progress: Callable[[int, int], None] | None = None,
            store: charts.DrawingStore | None = None) -> dict[str, Any]:
    """Return the template context for ``result`` (plain strings, labels and chart markup).

    ``meta`` gives the page header (project, revision, reviewer, date) and the paper (``a4`` or ``letter``);
    ``details=False`` leaves out what only the full report carries (passes, derived values, chart data tables).
    ``jobs``: processes drawing the charts (0: one per core); ``progress(done, total)`` as charts are drawn;
    ``store``: charts drawn by earlier runs, by content (the signed cache).
    """
    if units not in UNITS_WORDS:
        raise ValueError(f"units must be 'si' or 'customary', not {units!r}")
    specs = common.sorted_specs(result.get("specs") or [])
    tool = result.get("tool") if isinstance(result.get("tool"), Mapping) else {}
    settings = result.get("settings") if isinstance(result.get("settings"), Mapping) else {}
    rules = _rules(result)
    drawn = _draw(specs, units, jobs, progress, store) if charts and image is None and (
        jobs != 1 or store is not None) else None
    views = [_spec_view(s, i, units, charts, image, rules, drawn) for i, s in enumerate(specs, start=1)]
    totals = {k: sum(v["counts"][k] for v in views) for k in common.counts({})}
    return {
        "tool_name": plain(tool.get("name"), 40) or "rulecheck",
        "tool_version": plain(tool.get("version"), 40) or "unknown",
        "rules_digest": plain(tool.get("rules_digest"), 100) or "not stated",
        "rule_count": plain(tool.get("rule_count"), 10) or "not stated",
        "generated": plain(result.get("generated"), 40) or "not stated",
        "fail_on": plain(settings.get("fail_on") or (result.get("summary") or {}).get("fail_on"), 20) or "error",
        "units_word": UNITS_WORDS[units],
        "summary_line": common.summary_line(result),
        "order_statement": common.ORDER_STATEMENT,
        "totals": totals,
        "specs": views,
        "general_cautions": cautions.GENERAL,
        "hazards": cautions.select_hazards(specs),
        "basis_words": common.BASIS_STATUS,
        "for_mail": image is not None,
        "page": _page_meta(meta),
        "details": details,
        "summary_only": False,
    }


def render(result: dict, *, units: str = "si", charts: bool = True, image: ImageSource | None = None,
           meta: Mapping[str, Any] | None = None, details: bool = True, jobs: int = 1,
           progress: Callable[[int, int], None] | None = None, store: charts.DrawingStore | None = None) -> str:
    """Return the whole HTML report for ``result`` as one self-contained document (text).

    ``units`` is ``"si"`` or ``"customary"``; ``charts=False`` leaves the charts
    out (their text equivalents too). ``image`` is for the e-mail builder: when
    given, charts become ``<img src=...>`` with the source it returns instead of
    inline SVG. ``meta``, ``details``, ``jobs``, ``progress`` and ``store``: see :func:`context`.
    """
    return _environment().get_template("report.html").render(context(result, units=units, charts=charts,
                                                                     image=image, meta=meta, details=details,
                                                                     jobs=jobs, progress=progress, store=store))


def render_summary(result: dict, *, units: str = "si", meta: Mapping[str, Any] | None = None) -> str:
    """Return the summary page alone (verdicts, deciding findings, requirements, hazards, cautions) as HTML:
    the body of the e-mail, whose full report travels as an attachment."""
    ctx = context(result, units=units, charts=False, meta=meta, details=False)
    ctx["summary_only"] = True
    return _environment().get_template("report.html").render(ctx)
