"""Checking one spec file: load → validate → derive → rules → one result dict per spec."""

from __future__ import annotations

import contextlib
import copy
import datetime as _dt
import os
import re
import signal
import threading
from collections.abc import Callable
from dataclasses import dataclass, field
from functools import cached_property
from pathlib import Path
from typing import Any

from rulecheck import units
from rulecheck.engine.ruleset import RuleSet
from rulecheck.engine.run import Outcome, SpecNames, effective_params, evaluate_rule
from rulecheck.load import Document, Limits, LoadError, load_file
from rulecheck.result import VERDICT_RANK, Finding, SpecResult
from rulecheck.schema import check_structure, read_quantities

__all__ = ["BUILTIN_RULES", "CheckContext", "Checked", "check_document", "check_file", "check_spec", "failed",
           "failed_result", "finding", "outcome_dict", "set_overrides"]

# Checks done by the loader and schema rather than by rule files; listed with the rules.
BUILTIN_RULES: dict[str, dict[str, Any]] = {
    "yaml-syntax": {
        "title": "The file is readable YAML: UTF-8, a mapping at the top, no duplicate keys or object tags",
        "topic": "data-integrity", "severity": "error", "safety": False,
        "description": "The spec must load as plain YAML data. Duplicate keys, tags that build objects, binary or "
                       "non-UTF-8 content, alias bombs and over-deep nesting are refused with their position.",
        "basis": [{"source": "YAML 1.2 specification; common practice", "status": "C"}],
    },
    "spec-schema": {
        "title": "The spec follows the drive specification format",
        "topic": "data-integrity", "severity": "error", "safety": False,
        "description": "Every key is known (or starts with 'x-'), every value has the expected type, choice and "
                       "range. A typo must not silently switch a check off.",
        "basis": [{"source": "rulecheck spec format 1 (JSON Schema Draft 2020-12)", "status": "C"}],
    },
    "units-and-dimensions": {
        "title": "Every physical value carries a unit of the right kind",
        "topic": "data-integrity", "severity": "error", "safety": False,
        "description": "Each quantity parses to the kind its field declares: torque is not energy, shaft speed is "
                       "not frequency, a temperature rise is not a temperature. Bare numbers, decimal commas, "
                       "unknown units and non-finite values are refused; an apparent power (kVA) is refused for a real "
                       "power; a bare hp is read as mechanical horsepower with an info note.",
        "basis": [{"source": "pint unit definitions; NIST SP 811 (2008) App. B", "status": "V*"},
                  {"source": "common practice", "status": "C"}],
    },
    "waiver-check": {
        "title": "Waivers name a failing rule and have not expired",
        "topic": "data-integrity", "severity": "warning", "safety": False,
        "description": "A waiver that has expired, names no known rule, or waives a rule that does not fail is "
                       "itself a finding, so stale deviations do not pile up.",
        "basis": [{"source": "common practice", "status": "C"}],
    },
    "internal-error": {
        "title": "rulecheck finished checking the spec",
        "topic": "data-integrity", "severity": "error", "safety": False,
        "description": "A fault inside rulecheck stopped the check of one spec; the other specs of the run are still "
                       "checked. The spec may be fine: report the fault with the spec attached.",
        "basis": [{"source": "common practice", "status": "C"}],
    },
    "margins-check": {
        "title": "A spec's margins name parameters that rules use",
        "topic": "data-integrity", "severity": "error", "safety": False,
        "description": "Each key of the spec's 'margins' section must be a parameter of some rule, and its value "
                       "must be valid for that parameter.",
        "basis": [{"source": "common practice", "status": "C"}],
    },
}


@dataclass
class CheckContext:
    """What every spec of one run shares: rules, configuration, display settings."""

    ruleset: RuleSet
    value_kinds: dict[str, dict[str, str | None]]
    project_params: dict[str, dict[str, Any]] = field(default_factory=dict)  # rule id or "*" → name → SI value
    severity_overrides: dict[str, str] = field(default_factory=dict)
    limits: Limits = field(default_factory=Limits)
    today: _dt.date = field(default_factory=_dt.date.today)
    system: str = "si"
    base_dir: Path | None = None  # paths in results are relative to this
    charts: bool = True  # compute chart series beside the result (for the HTML report and the e-mail)
    # draws a spec's charts from its result, series and units (report.charts.draw_series, given by the command
    # line): drawn here, beside the check (in a worker process), the SVG travels with the series under "drawn"
    draw: Callable[[dict[str, Any], dict[str, Any], str], dict[str, str]] | None = None

    @cached_property
    def params_without_margins(self) -> dict[str, dict[str, Any]]:
        """Every rule's parameters for a spec without margins of its own: the same for each such spec of
        the run (evaluating a rule does not change them)."""
        return {rule_id: effective_params(rule, self.project_params, {})
                for rule_id, rule in self.ruleset.rules.items()}


# kind → (JSON unit, factor from the internal SI unit); kinds without a JSON unit are shown as plain numbers
_JSON_UNITS = {name: (k.json_unit, units.RPM_PER_RAD_S if name == "rotational_speed" else None)
               for name, k in units.KINDS.items() if k.json_unit is not None}
_JSON_UNITS.update({"ratio": ("1", None), "count": ("1", None)})  # rule values' dimensionless kinds carry their kind


def _value_dict(value: float, kind_name: str | None) -> dict[str, Any]:
    shown = _JSON_UNITS.get(kind_name) if kind_name else None  # type: ignore[arg-type]
    if shown is None:
        return {"value": _round(value), "unit": "1"}  # no kind: the result schema has no null kind
    unit, factor = shown
    if factor is not None:
        value = value * factor
    return {"value": _round(value), "unit": unit, "kind": kind_name}


def _derived_dict(model: Any) -> dict[str, Any]:
    """Return every derived or defaulted number of the model, by path (in path order), as :func:`_value_dict`
    gives it, with where it came from."""
    derived: dict[str, Any] = {}
    paths = [p for p, d in model.provenance.items() if d.source != "given"]
    paths.sort()
    for p in paths:
        v = model.values[p]
        if isinstance(v, (int, float)) and not isinstance(v, bool):
            d = model.provenance[p]
            entry = derived[p] = _value_dict(v, model.kinds.get(p))
            entry["from"], entry["method"], entry["source"] = d.describe(), d.method, d.source
    return derived


# Values rounded as shown: a run's results repeat most values (a spec's values reappear in its findings,
# and common ratings in many specs; measured: 70 % of them), and rounding one (to text and back) costs
# several times a dictionary look-up.
_ROUNDED: dict[float, float] = {}


def _round(value: float) -> float:
    """Return a number to six significant figures, as the values are shown (a float's kept per value)."""
    if type(value) is float:
        rounded = _ROUNDED.get(value)
        if rounded is None:
            rounded = float(f"{value:.6g}")
            if value:  # 0.0 and -0.0 are equal keys but keep their signs
                if len(_ROUNDED) > 8192:
                    _ROUNDED.clear()  # a bound keeps memory flat on large runs
                _ROUNDED[value] = rounded
        return rounded
    if isinstance(value, bool) or not isinstance(value, (int, float)):
        return value
    return float(f"{value:.6g}")


def finding(o: Outcome, meta: dict[str, Any], doc: Document | None, at: Any = None) -> Finding:
    """Return one rule outcome as a :class:`~rulecheck.result.Finding` (``at``: a position that overrides the
    one looked up for the outcome's path)."""
    title, topic, safety = meta.get("title", ""), meta.get("topic", ""), bool(meta.get("safety", False))
    if o.outcome == "not-applicable":
        return Finding(o.rule, title, topic, o.outcome, o.severity, safety, o.message, path=o.path)
    pos = at
    # a pass points at nothing a reviewer must find: no line is looked up; any other outcome points at its path,
    # or at the top of the document when it has none (a required section missing)
    if pos is None and doc is not None and o.outcome != "pass":
        pos = doc.position(o.path)
        if pos is None and o.rule == "spec-schema" and o.path in doc.key_positions:
            pos = doc.key_positions[o.path]
    return Finding(o.rule, title, topic, o.outcome, o.severity, safety, o.message, o.fix or o.hint,
                   meta.get("formula", ""), meta.get("basis", []), o.path, pos.line if pos else None,
                   pos.column if pos else None, {n: _value_dict(v, k) for n, (v, k) in o.values.items()},
                   _value_dict(*o.limit) if o.limit else None, tuple(o.missing), o.waiver)


def outcome_dict(o: Outcome, meta: dict[str, Any], doc: Document | None) -> dict[str, Any]:
    """Return one outcome in the JSON-result form."""
    return finding(o, meta, doc).to_json()


def display_path(path: Path, base: Path | None) -> str:
    try:
        rel = os.path.relpath(path, base) if base else str(path)
    except ValueError:
        rel = str(path)
    return rel.replace(os.sep, "/")


class SpecTimeout(Exception):
    """Checking one spec took longer than its time limit."""


def _expire(_signum: int, _frame: Any) -> None:
    raise SpecTimeout()


# True in a worker process, whose SIGALRM handler stays set for its life (see :func:`keep_alarm_handler`)
_ALARM = {"kept": False}


def keep_alarm_handler() -> None:
    """Set this process's SIGALRM handler to the spec time limit's for good (a worker's, which checks specs
    and nothing else): each spec then costs two timer calls instead of two handler swaps as well."""
    if hasattr(signal, "setitimer") and threading.current_thread() is threading.main_thread():
        signal.signal(signal.SIGALRM, _expire)
        _ALARM["kept"] = True


@contextlib.contextmanager
def _time_limit(seconds: int) -> Any:
    """Raise SpecTimeout in the block after ``seconds`` (POSIX, main thread only; elsewhere no limit)."""
    usable = (hasattr(signal, "setitimer") and threading.current_thread() is threading.main_thread()
              and seconds > 0)
    if not usable:
        yield
        return
    swap = not _ALARM["kept"]
    previous = signal.signal(signal.SIGALRM, _expire) if swap else None
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        if swap:
            signal.signal(signal.SIGALRM, previous if previous is not None else signal.SIG_DFL)


def failed(file: str, status: str, rule: str, message: str, hint: str, line: int | None = None,
           column: int | None = None, sha256: str | None = None, tag: str | None = None) -> SpecResult:
    """Return the result of a spec that could not be checked: one failing built-in check, at a position if known."""
    meta = BUILTIN_RULES[rule]
    outcome = Finding(rule, meta["title"], meta["topic"], "fail", "error", bool(meta["safety"]), message, hint,
                      meta.get("formula", ""), meta["basis"], "", line, column)
    return SpecResult(file, status, (outcome,), tag=tag, sha256=sha256)


def failed_result(file: str, status: str, rule: str, message: str, hint: str, line: int | None = None,
                  column: int | None = None) -> dict[str, Any]:
    """Return the JSON result of a spec that could not be checked (see :func:`failed`)."""
    return failed(file, status, rule, message, hint, line, column).to_json()


@dataclass(frozen=True)
class Checked:
    """A spec's result and, when the run draws charts, its chart series (never part of the result)."""

    result: dict[str, Any]
    charts: dict[str, Any] | None = None


def check_file(path: Path, ctx: CheckContext, display: str | None = None) -> dict[str, Any]:
    """Return the result dict of one spec file (never raises for a bad spec; bounded by the time limit).

    ``display`` is the path shown in the result, when the caller has it already (relative to ``ctx.base_dir``).
    """
    return check_spec(path, ctx, display).result


def check_spec(path: Path, ctx: CheckContext, display: str | None = None) -> Checked:
    """Return the result of one spec file with its chart series when ``ctx.charts`` asks for them (see
    :func:`check_file`)."""
    file = display if display is not None else display_path(path, ctx.base_dir)
    extra: dict[str, Any] = {}
    try:
        with _time_limit(ctx.limits.max_seconds):
            result, charts, extra = _check_file(path, file, ctx)
    except SpecTimeout:
        result = failed(file, "invalid", "internal-error",
                        f"checking this spec took longer than the limit of {ctx.limits.max_seconds} s and was "
                        "stopped", "report the spec to the rulecheck maintainers; limits.max_seconds in the "
                        "configuration sets the limit")
        charts = None
    result = _json(result, extra)
    if ctx.charts and charts and ctx.draw is not None:
        charts = {**charts, "drawn": ctx.draw(result, charts, ctx.system)}
    return Checked(result, (charts or {}) if ctx.charts else None)  # a spec that did not load: none


def _json(result: SpecResult, extra: dict[str, Any]) -> dict[str, Any]:
    """Return a spec's JSON result with the additions of this module (what to give, overrides, load cases)."""
    out = result.to_json()
    out.update(extra)
    return out


# what a check returns: the result, its chart series, and additions to its JSON form
_Done = tuple[SpecResult, "dict[str, Any] | None", dict[str, Any]]


def _check_file(path: Path, file: str, ctx: CheckContext) -> _Done:
    try:
        doc = load_file(path, ctx.limits, display_name=file)
    except LoadError as exc:
        return failed(file, "unreadable" if exc.rule == "unreadable" else "invalid", "yaml-syntax",
                      exc.message, exc.hint, exc.line, exc.column), None, {}
    return _check_safely(doc, ctx, path.parent)


def check_document(doc: Document, ctx: CheckContext, base_dir: Path | None = None) -> dict[str, Any]:
    """Return the result dict of a loaded spec document (a fault of the checker becomes an ``internal-error``)."""
    result, _charts, extra = _check_safely(doc, ctx, base_dir)
    return _json(result, extra)


def _check_safely(doc: Document, ctx: CheckContext, base_dir: Path | None) -> _Done:
    try:
        return _check_document(doc, ctx, base_dir)
    except Exception as exc:  # one spec that trips a bug must not stop the run or show a traceback
        reason = f"{type(exc).__name__}: {exc}"
        reason = reason if len(reason) <= 300 else reason[:297] + "..."
        data = doc.data if isinstance(doc.data, dict) else {}
        return failed(doc.file, "invalid", "internal-error",
                      f"rulecheck could not finish checking this spec ({reason})",
                      "this is a fault of rulecheck, not necessarily of the spec: report it with the spec",
                      sha256=doc.sha256, tag=data.get("tag") if isinstance(data.get("tag"), str) else None), None, {}


def _without(data: Any, problems: list[Any]) -> Any:
    """Return ``data`` without the values that ``problems`` name: an unusable value counts as a missing one."""
    cuts = [p.parts for p in problems if p.severity == "error" and p.parts]
    if not cuts:
        return data
    data = copy.deepcopy(data)
    for parts in cuts:
        node = data
        for part in parts[:-1]:
            try:
                node = node[part]
            except (KeyError, IndexError, TypeError):
                break
        else:
            if isinstance(node, dict):
                node.pop(parts[-1], None)
            elif isinstance(node, list) and isinstance(parts[-1], int) and parts[-1] < len(node):
                node[parts[-1]] = None
    return data


def _text(data: dict[str, Any], key: str) -> str | None:
    value = data.get(key)
    return value if isinstance(value, str) else None


# field path → spec value given on the command line for this run (``--set``); a forked worker inherits it
_OVERRIDES: dict[str, Any] = {}


def set_overrides(values: dict[str, Any]) -> None:
    """Give fields of every spec of this process's runs another value (``check --set``); ``{}``: none.
    The values must be valid for their fields (:mod:`rulecheck.authoring.overrides` checks them)."""
    _OVERRIDES.clear()
    _OVERRIDES.update(values)


def _overridden(doc: Document) -> tuple[Document, list[dict[str, Any]]]:
    """Return the document with the run's overrides put in, and what each replaced."""
    if not _OVERRIDES or not isinstance(doc.data, dict):
        return doc, []
    data = copy.deepcopy(doc.data)
    done = []
    for path, value in _OVERRIDES.items():
        parts = path.split(".")
        node = data
        for part in parts[:-1]:
            if not isinstance(node.get(part), dict):
                node[part] = {}
            node = node[part]
        was = node.get(parts[-1])
        node[parts[-1]] = value
        done.append({"path": path, "value": value, "was": was if isinstance(was, (str, int, float, bool)) else None})
    return doc.with_data(data), done


def _check_document(doc: Document, ctx: CheckContext, base_dir: Path | None) -> _Done:
    from rulecheck import cases

    doc, overrides = _overridden(doc)
    data = doc.data
    problems = check_structure(doc)
    quantities, unit_problems = read_quantities(doc)
    problems += unit_problems
    load_cases = cases.declared(data) and cases.usable(data)
    if load_cases:
        problems += cases.problems(doc)
    findings = [finding(Outcome(p.rule, "fail", p.severity, p.message, p.path, hint=p.hint), BUILTIN_RULES[p.rule],
                        doc, doc.key_positions.get(p.path) if p.at_key else None) for p in problems]
    status = "invalid" if any(p.severity == "error" for p in problems) else "checked"
    margins = data.get("margins") if isinstance(data.get("margins"), dict) else {}
    spec_margins, margin_outcomes = _read_margins(margins, ctx.ruleset)
    findings += [finding(o, BUILTIN_RULES["margins-check"], doc) for o in margin_outcomes]
    if load_cases:
        return _check_cases(doc, cases.case_documents(doc), findings, status, spec_margins, ctx, base_dir, overrides)
    run = _Run(doc, problems, quantities, status, spec_margins, ctx, base_dir)
    waiver_outcomes = _apply_waivers(data.get("waivers"), {None: run.outcomes}, ctx)
    rules = ctx.ruleset.rules
    findings += [finding(outcome, rules[rule_id].metadata(), doc) for rule_id, outcome in run.outcomes.items()]
    findings += [finding(o, BUILTIN_RULES["waiver-check"], doc) for o in waiver_outcomes]
    result = SpecResult(doc.file, status, tuple(findings), _text(data, "tag"), _text(data, "title"),
                        _text(data, "status"), doc.sha256, _derived_dict(run.model), tuple(run.model.notes))
    extra: dict[str, Any] = {"overrides": overrides} if overrides else {}
    to_give = _to_give(run.outcomes, run.needs)
    if to_give:
        extra["to_give"] = to_give
    return result, _charts(run.model) if ctx.charts else None, extra


class _Run:
    """Every rule's outcome on one document (the spec, or one of its load cases), with its model."""

    def __init__(self, doc: Document, problems: list[Any], quantities: Any, status: str, spec_margins: Any,
                 ctx: CheckContext, base_dir: Path | None, shown: dict[str, str] | None = None) -> None:
        from rulecheck.derive import build_model

        self.doc = doc
        self.model = build_model(doc.with_data(_without(doc.data, problems)), quantities, base_dir=base_dir)
        self.needs = _Needs(self.model)
        self.outcomes = _evaluate_rules(self.model, spec_margins, ctx, self.needs)
        if status == "invalid":
            self.outcomes = _not_checked_on_invalid(doc, problems, quantities, self.outcomes, spec_margins, ctx,
                                                    base_dir, shown)


def _check_cases(doc: Document, load_cases: list[Any], findings: list[Finding], status: str, spec_margins: Any,
                 ctx: CheckContext, base_dir: Path | None, overrides: list[dict[str, Any]]) -> _Done:
    """Return the result of a spec with load cases: every rule run on each case (see :mod:`rulecheck.cases`)."""
    from rulecheck import cases

    runs: dict[str, _Run] = {}
    for case in load_cases:
        problems = check_structure(case.doc)
        quantities, unit_problems = read_quantities(case.doc)
        problems += unit_problems  # reported once, at the file's own paths, by the check of the whole spec
        case_status = "invalid" if any(p.severity == "error" for p in problems) else "checked"
        shown = {f"load.{key}": f"cases.{case.name}.load.{key}" for key in case.overrides}
        runs[case.name] = _Run(case.doc, problems, quantities, case_status, spec_margins, ctx, base_dir, shown)
    waiver_outcomes = _apply_waivers(doc.data.get("waivers"), {n: r.outcomes for n, r in runs.items()}, ctx)
    rules = ctx.ruleset.rules
    findings += cases.merge({n: [finding(o, rules[rule_id].metadata(), r.doc) for rule_id, o in r.outcomes.items()]
                             for n, r in runs.items()})
    findings += [finding(o, BUILTIN_RULES["waiver-check"], doc) for o in waiver_outcomes]
    common, own = cases.merge_derived({n: _derived_dict(r.model) for n, r in runs.items()})
    notes = list(dict.fromkeys(note for r in runs.values() for note in r.model.notes))
    data = doc.data
    result = SpecResult(doc.file, status, tuple(findings), _text(data, "tag"), _text(data, "title"),
                        _text(data, "status"), doc.sha256, common, tuple(notes))
    verdicts = cases.verdicts(status, findings, runs)
    extra: dict[str, Any] = {"overrides": overrides} if overrides else {}
    # a field a case gives is not asked for in that case (when it failed validation, it is to correct, not to give)
    to_give = _merged_to_give([(_to_give(r.outcomes, r.needs), {f"load.{k}" for k in c.overrides})
                               for c, r in zip(load_cases, runs.values(), strict=True)])
    if to_give:
        extra["to_give"] = to_give
    extra["cases"] = [{"name": c.name, "title": c.title, "verdict": verdicts[c.name], "derived": own[c.name]}
                      for c in load_cases]
    worst = max(runs, key=lambda n: VERDICT_RANK.get(verdicts[n], 0))  # the first of the worst: its charts are drawn
    return result, _charts(runs[worst].model) if ctx.charts else None, extra


def _merged_to_give(asked: list[tuple[dict[str, Any] | None, set[str]]]) -> dict[str, Any] | None:
    """Return what to give over all load cases: each field once, with every rule that needs it in any case.
    ``asked``: each case's request and the fields the case itself gives (left out of its request)."""
    inputs: dict[str, dict[str, Any]] = {}
    for a, given in asked:
        for entry in (a or {}).get("inputs", ()):
            if entry["path"] in given or entry["path"].startswith("cases."):
                continue
            known = inputs.setdefault(entry["path"], {**entry, "rules": []})
            known["rules"] += [r for r in entry["rules"] if r not in known["rules"]]
    if not inputs:
        return None
    return {"rules": len({r for e in inputs.values() for r in e["rules"]}),
            "inputs": sorted(inputs.values(), key=lambda e: (_COMPONENTS.get(e["component"], 99), e["path"]))}


def _probes(doc: Document, path: str, quantities: Any) -> list[Any] | None:
    """Return two stand-in values for a field that failed validation (SI floats for a quantity, two choices
    of an enumeration, true and false for a flag), or None when the field has no stand-ins."""
    from rulecheck.schema import fields

    if "[" in path:
        return None  # a field inside a list: no stand-in is put there
    for _parts, value, node, field_path in fields(doc.data):
        if field_path != path or not isinstance(node, dict):
            continue
        if node.get("x-dimension"):
            found = re.match(r"\s*[-+]?(\d+(?:\.\d*)?(?:[eE][-+]?\d+)?)", str(value))
            base = float(found.group(1)) if found and float(found.group(1)) > 0 else 1.0
            return [("q", node["x-dimension"], base), ("q", node["x-dimension"], 1.5 * base)]
        if isinstance(node.get("enum"), list) and len(node["enum"]) >= 2:
            return [("v", None, node["enum"][0]), ("v", None, node["enum"][1])]
        if node.get("type") == "boolean":
            return [("v", None, True), ("v", None, False)]
    return None


def _probe_outcomes(doc: Document, problems: list[Any], quantities: Any, probes: dict[str, Any], spec_margins: Any,
                    ctx: CheckContext, base_dir: Path | None) -> dict[str, Outcome]:
    """Return every rule's outcome with the failed fields given the stand-in values ``probes`` (path → probe)."""
    from rulecheck.derive import build_model

    data = _without(doc.data, problems)
    q = copy.copy(quantities)
    q.values, q.kinds, q.written = dict(quantities.values), dict(quantities.kinds), dict(quantities.written)
    for path, (how, kind_name, value) in probes.items():
        node = data
        parts = path.split(".")
        for part in parts[:-1]:
            node = node.setdefault(part, {}) if isinstance(node, dict) else {}
        if not isinstance(node, dict):
            continue
        if how == "q":
            q.values[path], q.kinds[path], q.written[path] = float(value), kind_name, str(doc_value(doc, parts))
            node[parts[-1]] = doc_value(doc, parts)
        else:
            node[parts[-1]] = value
    model = build_model(doc.with_data(data), q, base_dir=base_dir)
    return _evaluate_rules(model, spec_margins, ctx)


def doc_value(doc: Document, parts: list[str]) -> Any:
    """Return the value at a key path of a spec as written (None when absent)."""
    node: Any = doc.data
    for part in parts:
        if not isinstance(node, dict) or part not in node:
            return None
        node = node[part]
    return node


def _signature(o: Outcome) -> tuple[Any, ...]:
    return (o.outcome, o.severity, o.message, tuple(sorted(o.values.items())), tuple(o.missing))


def _not_checked_on_invalid(doc: Document, problems: list[Any], quantities: Any, outcomes: dict[str, Outcome],
                            spec_margins: Any, ctx: CheckContext, base_dir: Path | None,
                            shown: dict[str, str] | None = None) -> dict[str, Outcome]:
    """Return the outcomes with every rule that depends on a field that failed validation made not-checked,
    naming that field: the rules ran with the field left out, and a rule that falls back to another value
    when a field is absent would otherwise report a finding about a value the spec does not give.

    A rule depends on the failed fields when its outcome changes once they are given stand-in values (two
    sets, and their absence): an outcome that is the same whatever they are does not depend on them."""
    failed = sorted({p.path for p in problems if p.severity == "error" and p.parts and p.path})
    stand_ins = {path: _probes(doc, path, quantities) for path in failed}
    if not failed or any(v is None for v in stand_ins.values()):
        return outcomes  # a field without stand-ins (a list, free text): the outcomes stay as they are
    runs = [_probe_outcomes(doc, problems, quantities, {p: v[i] for p, v in stand_ins.items()}, spec_margins, ctx,
                            base_dir) for i in (0, 1)]
    named = [(shown or {}).get(path, path) for path in failed]  # a load case's override: the path it is written at
    reason = ", ".join(named)
    changed: dict[str, Outcome] = {}
    for rule_id, outcome in outcomes.items():
        signatures = {_signature(outcome), *(_signature(run[rule_id]) for run in runs if rule_id in run)}
        if len(signatures) == 1:
            changed[rule_id] = outcome
            continue
        rule = ctx.ruleset.rules[rule_id]
        missing = [*named, *(m for m in outcome.missing if m not in failed)]
        changed[rule_id] = Outcome(rule_id, "not-checked", "warning" if rule.safety else "info",
                                   f"not checked: it depends on {reason}, which failed validation; correct "
                                   f"{'it' if len(failed) == 1 else 'them'} first", rule.location, missing=missing)
    return changed


def _charts(model: Any) -> dict[str, Any]:
    from rulecheck.derive.charts import chart_data

    return chart_data(model)


class _Needs:
    """The spec fields to give for a path a rule could not read (see :class:`SpecNames`), worked out from the
    derive stage's provenance only when a rule asks (:mod:`rulecheck.authoring.requests`)."""

    def __init__(self, model: Any) -> None:
        self.model = model
        values = model.values
        self.facts = {k: values.get(k) for k in ("motor.kind", "drive.kind", "load.model")}
        self.cache: dict[str, list[tuple[str, str]]] = {}

    def __call__(self, path: str) -> list[tuple[str, str]]:
        found = self.cache.get(path)
        if found is None:
            found = self.cache[path] = self._fields(path)
        return found

    def _fields(self, path: str) -> list[tuple[str, str]]:
        from rulecheck.authoring import requests
        from rulecheck.derive import CATALOGUE

        motor, load = str(self.facts["motor.kind"] or ""), str(self.facts["load.model"] or "")
        fields = requests.inputs_of(path, self.facts, self.model.values) if path in CATALOGUE else \
            requests.leaves(path)
        return [(f, requests.words(f, motor, load)) for f in fields]


def _to_give(outcomes: dict[str, Outcome], needs: _Needs) -> dict[str, Any] | None:
    """Return what to give to check the rules that were not checked, grouped by component: the number of
    such rules and each field with its unit, an example and the rules that need it (None: nothing to ask)."""
    from rulecheck.authoring import requests

    asked: dict[str, dict[str, Any]] = {}
    rules = 0
    for rule_id, o in outcomes.items():
        if o.outcome != "not-checked" or not o.missing:
            continue
        fields = [f for m in o.missing for f, _w in needs(m)]
        rules += bool(fields)
        for f in fields:
            entry = asked.setdefault(f, {"path": f, "component": requests.component(f),
                                         "unit": requests.unit_words(f),
                                         "example": requests.example(f, str(needs.facts["motor.kind"] or ""),
                                                                     str(needs.facts["load.model"] or "")),
                                         "rules": []})
            if rule_id not in entry["rules"]:
                entry["rules"].append(rule_id)
    if not asked:
        return None
    return {"rules": rules, "inputs": sorted(asked.values(), key=lambda e: (_COMPONENTS.get(e["component"], 99),
                                                                            e["path"]))}


_COMPONENTS = {name: i for i, name in enumerate(("supply", "drive", "motor", "transmission", "load", "cable",
                                                 "protection", "environment", "duty"))}


def _evaluate_rules(model: Any, spec_margins: dict[str, Any], ctx: CheckContext,
                    needs: _Needs | None = None) -> dict[str, Outcome]:
    """Return every rule's outcome for the model, by rule id (``needs``: what to give for a missing input)."""
    from rulecheck.derive import catalogue

    spec = SpecNames(model, catalogue(), needs)
    rule_outcomes: dict[str, Outcome] = {}
    env = parent = None
    for rule in ctx.ruleset.rules.values():
        params = effective_params(rule, ctx.project_params, spec_margins) if spec_margins else \
            ctx.params_without_margins[rule.id]
        if rule.expression_environment is not env:  # one sandbox per rule set: the spec's names looked up once
            env = rule.expression_environment
            parent = spec.parent(env)
        rule_outcomes[rule.id] = evaluate_rule(rule, spec, params, ctx.system, ctx.severity_overrides, parent)
    return rule_outcomes


def _read_margins(margins: dict[str, Any], ruleset: RuleSet) -> tuple[dict[str, Any], list[Outcome]]:
    if not margins:
        return {}, []
    known = ruleset.parameters_by_name
    values: dict[str, Any] = {}
    problems: list[Outcome] = []
    for name, raw in margins.items():
        path = f"margins.{name}"
        if name not in known:
            import difflib

            close = difflib.get_close_matches(name, sorted(known), n=1)
            problems.append(Outcome("margins-check", "fail", "error", f"{path}: no rule has a parameter '{name}'",
                                    path, hint=f"did you mean '{close[0]}'?" if close else
                                    "see 'rulecheck rules show ID' for each rule's parameters"))
            continue
        try:
            values[name] = known[name].parse(raw)
        except ValueError as exc:
            problems.append(Outcome("margins-check", "fail", "error", f"{path}: {exc}", path))
    return values, problems


def _apply_waivers(waivers: Any, runs: dict[str | None, dict[str, Outcome]], ctx: CheckContext) -> list[Outcome]:
    """Mark the failing outcomes a waiver covers as waived and return the waiver findings. ``runs``: case name
    → every rule's outcome in that case (``{None: outcomes}`` for a spec without cases); a waiver that names a
    case covers that case, one that names none every case."""
    findings: list[Outcome] = []
    if not isinstance(waivers, list):
        return findings
    any_run = next(iter(runs.values()))
    for i, waiver in enumerate(waivers):
        if not isinstance(waiver, dict) or not isinstance(waiver.get("rule"), str):
            continue
        path = f"waivers[{i}]"
        rule_id = ctx.ruleset.resolve(waiver["rule"])
        if rule_id is None or rule_id not in any_run:  # unknown, or disabled by the configuration (an alias too)
            findings.append(Outcome("waiver-check", "fail", "warning",
                                    f"{path}: waiver names rule '{waiver['rule']}', which this run does not check "
                                    "(no such rule, or the configuration disables it)", path + ".rule",
                                    hint="remove the waiver or correct the rule id ('rulecheck rules' lists them)"))
            continue
        case = waiver.get("case")
        if isinstance(case, str) and case not in runs:
            findings.append(Outcome("waiver-check", "fail", "warning",
                                    f"{path}: waiver names load case '{case}', which the spec does not declare",
                                    path + ".case", hint="correct the case name, or remove 'case' to waive the "
                                    "rule in every case"))
            continue
        try:
            expires = _dt.date.fromisoformat(str(waiver.get("expires")))
        except ValueError:
            continue  # the schema reports the malformed date
        covered = [runs[case][rule_id]] if isinstance(case, str) else [run[rule_id] for run in runs.values()]
        failing = [o for o in covered if o.outcome == "fail"]
        info = {"reason": waiver.get("reason", ""), "approved_by": waiver.get("approved_by", ""),
                "expires": expires.isoformat(), "severity": (failing or covered)[0].severity}
        if expires < ctx.today:
            findings.append(Outcome("waiver-check", "fail", "warning",
                                    f"{path}: waiver of '{rule_id}' expired on {expires.isoformat()}; "
                                    f"the finding counts again", path + ".expires",
                                    hint="renew the waiver at a design review, or fix the finding"))
            continue
        if not failing:
            shown = ", ".join(dict.fromkeys(o.outcome for o in covered))
            findings.append(Outcome("waiver-check", "fail", "warning",
                                    f"{path}: waiver of '{rule_id}' is not needed: the rule's outcome is "
                                    f"{shown}", path + ".rule", hint="remove the stale waiver"))
            continue
        for outcome in failing:
            outcome.outcome = "waived"
            outcome.waiver = info
    return findings
