"""The HTML report: one self-contained, printable file per result, readable without scripts.

:func:`render` turns the result dict into HTML through the jinja2 templates
shipped in ``rulecheck/templates``. Autoescaping is on for every value; the only
markup inserted unescaped is the chart SVG this package draws itself (its text
comes from :mod:`rulecheck.report.charts`, which escapes the spec's labels).
The page has no scripts and fetches nothing: styles are inline, charts are inline
SVG (or, for e-mail, ``cid:`` images supplied by the caller).
"""

from __future__ import annotations

from collections.abc import Callable, Iterable, Mapping
from dataclasses import dataclass
from functools import lru_cache
from typing import Any

from markupsafe import Markup

from rulecheck.report import cautions, charts, common
from rulecheck.report.common import plain
from rulecheck.result import level_of

__all__ = ["MARK", "PAPERS", "ImageSource", "StreamedReport", "context", "counted", "render", "render_summary"]

# (spec number, chart key, chart data) -> the ``src`` of an <img>; used by the e-mail builder
ImageSource = Callable[[int, str, Mapping[str, Any]], str]

UNITS_WORDS = {"si": "SI", "customary": "US customary"}


@lru_cache(maxsize=1)
def _environment() -> Any:
    from jinja2 import Environment, PackageLoader, StrictUndefined

    class _Views(Environment):
        """The views are dicts: ``s.name`` reads the key first (jinja tries the attribute first, and a failed
        attribute look-up per value cost about a fifth of the rendering). No template calls a dict's methods."""

        def getattr(self, obj: Any, attribute: str) -> Any:
            if type(obj) is dict:
                try:
                    return obj[attribute]
                except KeyError:
                    pass
            return super().getattr(obj, attribute)

    env = _Views(
        loader=PackageLoader("rulecheck", "templates"),
        autoescape=True,
        undefined=StrictUndefined,
        trim_blocks=True,
        lstrip_blocks=True,
        keep_trailing_newline=True,
        auto_reload=False,  # the templates are part of the package: no file check at every include
    )
    env.filters["counted"] = counted
    return env


def counted(n: Any, word: str, plural: str | None = None) -> str:
    """Return ``n`` and the noun for it: "1 note", "2 notes", "0 notes" (``plural`` where it is not word + s)."""
    return f"{n} {word if n == 1 else plural or word + 's'}"


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


# chart key -> SVG body: one spec's charts drawn where it was checked (charts.draw_series); others are drawn here
Drawn = Mapping[str, str | None]


def _chart_views(spec: Mapping[str, Any], number: int, units: str, image: ImageSource | None,
                 drawn: Drawn | None = None, chart_id: str | None = None) -> list[dict]:
    """Return the views of a spec's charts; ``chart_id`` prefixes the ids inside each chart's SVG (default
    ``dt<number>``: unique in the page)."""
    views = []
    failing = charts.failing_rules(spec)
    for key in charts.available(spec):
        data = spec["charts"][key]
        view: dict[str, Any] = {"key": key, "svg": None, "src": None, "error": None, "text": None}
        try:
            view["text"] = text = charts.describe(key, data, units, failing)
            if image is not None:
                view["src"] = image(number, key, data)
            else:
                # our own drawing: plot.py escapes every text it writes, charts.svg the title and description
                view["svg"] = Markup(charts.svg(key, data, units, chart_id=f"{chart_id or f'dt{number}'}-{key}",
                                                failing=failing, body=(drawn or {}).get(key), text=text))
        except charts.ChartDataError as exc:
            view["error"] = str(exc)
        views.append(view)
    return views


def _passed(o: Mapping[str, Any], units: str, rules: Mapping[str, Mapping[str, Any]]) -> dict[str, Any]:
    """Return what the appendix shows of a passed rule (what :func:`_finding` gives, without what it leaves out)."""
    title = o["title"] if "title" in o else rules.get(str(o.get("rule")), {}).get("title")
    computed = common.value_items(o, units)
    limit = o.get("limit")
    limit_text = common.display(limit, units) if limit is not None else ""
    return {
        "rule": plain(o.get("rule"), 120),
        "case": plain(o.get("case"), 40),
        "title": plain(title, 300),
        "safety": o.get("safety") is True,
        "message": plain(o.get("message"), 2000),
        "computed": computed,
        "limit": "" if limit_text in {v for _, v in computed} else limit_text,
    }


def _not_applicable(o: Mapping[str, Any]) -> dict[str, str]:
    return {"rule": plain(o.get("rule"), 120), "case": plain(o.get("case"), 40)}


DECIDING_SHOWN = 3  # deciding findings listed per drive train on the summary page ("and N more" after them)


def _deciding(groups: common.OutcomeGroups) -> tuple[list[dict[str, Any]], int]:
    """Return the first findings that decide a verdict (fails, waived fails and unchecked rules that count), one
    line each, and how many more there are: the summary page lists these and nothing else."""
    picked = [o for o in [*groups.failures, *groups.not_checked]
              if level_of(str(o.get("outcome")), str(o.get("severity") or "error"), o.get("safety") is True)
              in ("error", "warning")]
    shown = [{"label": common.outcome_label(o), "safety": o.get("safety") is True, "case": plain(o.get("case"), 40),
              "short": plain(o.get("message"), 115)} for o in picked[:DECIDING_SHOWN]]
    return shown, len(picked) - len(shown)


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


def _summary_row(spec: Mapping[str, Any], number: Any, groups: common.OutcomeGroups,
                 errors: list[Any]) -> dict[str, Any]:
    """Return what the summary page shows of a spec (a streamed report keeps only this of each spec)."""
    deciding, more = _deciding(groups)
    return {
        "number": Markup(number),
        "anchor": Markup(f"dt-{number}"),
        "name": common.spec_name(spec),
        "verdict": common.verdict_label(spec),
        "counts": common.counts(spec),
        "deciding": deciding,
        "deciding_more": more,
        "load_errors": [plain(e.get("message") if isinstance(e, Mapping) else e, 500) for e in errors[:1]],
    }


def _spec_view(spec: Mapping[str, Any], number: Any, units: str, draw: bool, image: ImageSource | None,
               rules: Mapping[str, Mapping[str, Any]], drawn: Drawn | None = None,
               chart_id: str | None = None) -> dict:
    """Return the view of a spec's section; ``number`` is its place in the report (or the mark a streamed report
    puts there until every place is known)."""
    groups = common.group_outcomes(spec)
    errors = spec.get("errors") if isinstance(spec.get("errors"), list) else []
    # (path, value, from, method, source): the table's rows unpacked in the template, no look-up per cell
    derived = [(d["path"], d["value"], d["from"], d["method"], d["source"]) for d in common.derived_items(spec, units)]
    used = common.derived_used(spec, [*groups.failures, *groups.not_checked, *groups.waived])
    return {
        **_summary_row(spec, number, groups, errors),
        "requirements": _requirement_views(spec, units),
        "derived_used": [d for d in derived if d[0] in used],
        "quiet": not groups.failures and not groups.not_checked and not groups.waived and not errors,
        "tag": plain(spec.get("tag"), 80),
        "title": plain(spec.get("title"), 300),
        "file": plain(spec.get("file"), 300),
        "spec_status": plain(spec.get("spec_status"), 60),
        "status": plain(spec.get("status"), 30),
        "sha256": plain(spec.get("sha256"), 80),
        "safety_errors": common.safety_errors(spec),
        "failures": [_finding(o, units, rules) for o in groups.failures],
        "not_checked": [_finding(o, units, rules) for o in groups.not_checked],
        "waived": [_finding(o, units, rules) for o in groups.waived],
        "passed": [_passed(o, units, rules) for o in groups.passed],
        "not_applicable": [_not_applicable(o) for o in groups.not_applicable],
        "derived": derived,
        "charts": _chart_views(spec, number, units, image, drawn, chart_id) if draw else [],
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


def _page(header: Mapping[str, Any], *, units: str, meta: Mapping[str, Any] | None, details: bool,
          for_mail: bool, summary_line: str, totals: Mapping[str, int], hazards: list[Any],
          specs: Any) -> dict[str, Any]:
    """Return the context of the page around the drive trains' sections (the result's header, the summary)."""
    tool = header.get("tool") if isinstance(header.get("tool"), Mapping) else {}
    settings = header.get("settings") if isinstance(header.get("settings"), Mapping) else {}
    return {
        "tool_name": plain(tool.get("name"), 40) or "rulecheck",
        "tool_version": plain(tool.get("version"), 40) or "unknown",
        "rules_digest": plain(tool.get("rules_digest"), 100) or "not stated",
        "rule_count": plain(tool.get("rule_count"), 10) or "not stated",
        "generated": plain(header.get("generated"), 40) or "not stated",
        "fail_on": plain(settings.get("fail_on") or (header.get("summary") or {}).get("fail_on"), 20) or "error",
        "units_word": UNITS_WORDS[units],
        "summary_line": summary_line,
        "order_statement": common.ORDER_STATEMENT,
        "totals": totals,
        "specs": specs,
        "general_cautions": cautions.GENERAL,
        "hazards": hazards,
        "basis_words": common.BASIS_STATUS,
        "for_mail": for_mail,
        "page": _page_meta(meta),
        "details": details,
        "summary_only": False,
    }


def _totals(counts: Iterable[Mapping[str, int]]) -> dict[str, int]:
    totals = dict.fromkeys(common.counts({}), 0)
    for c in counts:
        for k in totals:
            totals[k] += c[k]
    return totals


def context(result: Mapping[str, Any], *, units: str = "si", charts: bool = True,
            image: ImageSource | None = None, meta: Mapping[str, Any] | None = None,
            details: bool = True) -> dict[str, Any]:
    """Return the template context for ``result`` (plain strings, labels and chart markup).

    ``meta`` gives the page header (project, revision, reviewer, date) and the paper (``a4`` or ``letter``);
    ``details=False`` leaves out what only the full report carries (passes, derived values, chart data tables).
    Charts are drawn here, about a millisecond each (report/plot.py).
    """
    if units not in UNITS_WORDS:
        raise ValueError(f"units must be 'si' or 'customary', not {units!r}")
    specs = common.sorted_specs(result.get("specs") or [])
    rules = _rules(result)
    views = [_spec_view(s, i, units, charts, image, rules) for i, s in enumerate(specs, start=1)]
    return _page(result, units=units, meta=meta, details=details, for_mail=image is not None,
                 summary_line=common.summary_line(result), totals=_totals(v["counts"] for v in views),
                 hazards=cautions.select_hazards(specs), specs=views)


def render(result: dict, *, units: str = "si", charts: bool = True, image: ImageSource | None = None,
           meta: Mapping[str, Any] | None = None, details: bool = True) -> str:
    """Return the whole HTML report for ``result`` as one self-contained document (text).

    ``units`` is ``"si"`` or ``"customary"``; ``charts=False`` leaves the charts
    out (their text equivalents too). ``image`` is for the e-mail builder: when
    given, charts become ``<img src=...>`` with the source it returns instead of
    inline SVG. ``meta`` and ``details``: see :func:`context`.
    A report of many specs is better written by :class:`StreamedReport`, which holds one spec at a time.
    """
    return _environment().get_template("report.html").render(context(result, units=units, charts=charts,
                                                                     image=image, meta=meta, details=details))


def render_summary(result: dict, *, units: str = "si", meta: Mapping[str, Any] | None = None) -> str:
    """Return the summary page alone (verdicts, deciding findings, requirements, hazards, cautions) as HTML:
    the body of the e-mail, whose full report travels as an attachment."""
    ctx = context(result, units=units, charts=False, meta=meta, details=False)
    ctx["summary_only"] = True
    return _environment().get_template("report.html").render(ctx)


# where a streamed section's number goes until every verdict is in: markup no escaped text or drawn chart can hold
# (autoescaping turns every "<" of the data into "&lt;"; a chart's SVG holds only well-formed tags)
MARK = "<@n@>"
_MARK = MARK.encode()


@dataclass(slots=True)
class _Row:
    """What a streamed report keeps of a spec: its place in the order, where its section is, its summary row."""

    key: tuple
    offset: int
    length: int
    view: dict[str, Any]
    word: str
    raised: list[cautions.Raised]


class StreamedReport:
    """The HTML report written as spec results arrive, holding one spec at a time.

    :meth:`add` renders each spec's section (its appendix too) into a scratch file and keeps only its summary
    row; :meth:`write` then writes the page head and summary, every section in the report's order
    (:func:`common.sort_key`) copied from the scratch file with its number put in, and the page's end. The page
    reads as :func:`render`'s. ``folder``: where the scratch file goes (the report's folder; None: the system's
    temporary folder).
    """

    def __init__(self, header: Mapping[str, Any], *, units: str = "si", charts: bool = True,
                 meta: Mapping[str, Any] | None = None, folder: str | None = None) -> None:
        if units not in UNITS_WORDS:
            raise ValueError(f"units must be 'si' or 'customary', not {units!r}")
        _page_meta(meta)  # a bad paper is refused before any spec is checked
        self.header, self.units, self.charts, self.meta = header, units, charts, meta
        self.rules = _rules(header)
        self.rows: list[_Row] = []
        self._size = 0
        self._section = _environment().get_template("report-section.html")
        import tempfile

        try:
            self._scratch = tempfile.TemporaryFile(dir=folder, prefix=".rulecheck-html-")
        except OSError:
            self._scratch = tempfile.TemporaryFile(prefix="rulecheck-html-")

    def add(self, spec: Mapping[str, Any], series: Mapping[str, Any] | None = None,
            drawings: Mapping[str, str | None] | None = None) -> None:
        """Render one spec's section; ``series``: its chart series, ``drawings``: those charts already drawn
        (chart key -> SVG body, as :func:`charts.svg_body` gives; the others are drawn here)."""
        arrival = len(self.rows) + 1
        drawn = None
        if self.charts:
            spec = {**spec, "charts": dict(series or {})}
            drawn = drawings or {}
        view = _spec_view(spec, MARK, self.units, self.charts, None, self.rules, drawn, chart_id=f"dt{arrival}")
        data = self._section.render(s=view, details=True).encode("utf-8")
        self._scratch.write(data)
        row = {k: view[k] for k in ("verdict", "name", "counts", "deciding", "deciding_more")}
        row["load_errors"] = view["load_errors"][:1]
        self.rows.append(_Row(common.sort_key(spec), self._size, len(data), row, view["verdict"].word.lower(),
                              cautions.raised_by(spec)))
        self._size += len(data)

    def write(self, out: Callable[[bytes], Any], progress: Callable[[int, int], None] | None = None) -> None:
        """Write the whole page through ``out``: head and summary, the sections in order, the end;
        ``progress(done, total)`` as sections are written."""
        self.rows.sort(key=lambda r: r.key)  # stable: equal keys keep the order the specs came in
        for n, r in enumerate(self.rows, start=1):
            r.view["number"] = n
            r.view["anchor"] = f"dt-{n}"
        ctx = _page(self.header, units=self.units, meta=self.meta, details=True, for_mail=False,
                    summary_line=common.verdicts_line(r.word for r in self.rows),
                    totals=_totals(r.view["counts"] for r in self.rows),
                    hazards=cautions.merge_hazards(line for r in self.rows for line in r.raised),
                    specs=[r.view for r in self.rows])
        env = _environment()
        for chunk in env.get_template("report-head.html").generate(ctx):
            out(chunk.encode("utf-8"))
        total = len(self.rows)
        for n, r in enumerate(self.rows, start=1):
            self._scratch.seek(r.offset)
            out(self._scratch.read(r.length).replace(_MARK, str(n).encode()))
            if progress is not None:
                progress(n, total)
        out(b"\n")
        for chunk in env.get_template("report-tail.html").generate(ctx):
            out(chunk.encode("utf-8"))

    def close(self) -> None:
        """Remove the scratch file."""
        self._scratch.close()
