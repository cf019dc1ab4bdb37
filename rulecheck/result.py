"""The result of a run, defined once: findings, spec results, what counts toward failure, verdicts, the tally.

Everything that reads or writes a result takes its rules from here: the check (:mod:`rulecheck.check`)
builds spec results with :func:`finish_spec`; the run, the cache and the baseline count them with
:class:`SpecTally` and :class:`Tally`; every report asks :func:`failure_level` whether an outcome is a
finding and at which level. The JSON form of a result (``--format json``) is the contract
(``schemas/result.schema.json``): ``format_version``, ``tool``, ``rules``, ``generated``, ``settings``,
``specs[]`` (``file``, ``tag``, ``status``, ``outcomes``, ``derived`` ...) and ``summary``. Field names
are never renamed; new ones may be added.

:class:`Finding` and :class:`SpecResult` are the typed, immutable forms a check builds; their
:meth:`~Finding.to_json` gives the contract's objects (key order as the contract lists them), which
:func:`encode` writes once, in the worker that checked the spec: the cache keeps those bytes and a
JSON report copies them as they are, so the JSON of a run does not depend on which other reports the
run writes. Chart series are not part of the result: a run that draws charts (HTML, e-mail) gets
them beside it (:func:`with_charts` makes the view those renderers read).

This module imports nothing from the rest of rulecheck but its version: every stage may use it.
"""

from __future__ import annotations

import datetime as _dt
import json
import os
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field
from typing import Any, NamedTuple

import orjson as _orjson

from rulecheck import __version__

__all__ = [
    "FAIL_LEVELS", "FORMAT_VERSION", "OUTCOMES", "SEVERITY_RANK", "VERDICT_RANK", "Finding", "SpecResult", "SpecTally",
    "Tally",
    "counts_of", "counts_toward_failure", "decode", "encode", "failure_level", "finish_spec", "header",
    "is_finding", "requirements_of", "summarise", "verdict_of", "with_charts",
]

FORMAT_VERSION = 1
# Severities from the most severe; the rank is higher for the more severe.
FAIL_LEVELS = ("error", "warning", "info")
SEVERITY_RANK = {"info": 1, "warning": 2, "error": 3}
OUTCOMES = ("fail", "not-checked", "waived", "pass", "not-applicable")
STATUSES = ("checked", "invalid", "unreadable")
COUNT_KEYS = ("error", "warning", "info", "not-checked", "waived", "pass", "not-applicable")

# the order of a spec's outcomes: kind, severity (most severe first), line, column, rule
_OUTCOME_ORDER = {"fail": 0, "not-checked": 1, "waived": 2, "pass": 3, "not-applicable": 4}
_SEVERITY_ORDER = {"error": 0, "warning": 1, "info": 2}


# --- what counts toward failure -------------------------------------------------------------------------


def level_of(outcome: str, severity: str, safety: bool) -> str | None:
    """Return the level at which an outcome is a finding, or None when it is none.

    A fail counts at its severity. A rule that could not be evaluated (``not-checked``) is a finding when it
    is safety-relevant (a warning: an unchecked safety rule is never a silent pass) or when its severity is
    error (the rule itself could not run: an error). Passes, waived fails and rules that do not apply are not
    findings.
    """
    if outcome == "fail":
        return severity
    if outcome == "not-checked":
        if severity == "error":
            return "error"
        if safety:
            return "warning"
    return None


def failure_level(outcome: Mapping[str, Any]) -> str | None:
    """Return the level at which an outcome of the JSON result is a finding (see :func:`level_of`)."""
    return level_of(outcome["outcome"], outcome["severity"], bool(outcome.get("safety")))


def is_finding(outcome: Mapping[str, Any]) -> bool:
    """Return whether an outcome is a finding at any level (what a baseline records and a report lists)."""
    return failure_level(outcome) is not None


def counts_toward_failure(outcome: Mapping[str, Any], fail_on: str) -> bool:
    """Return whether an outcome makes the run fail at the ``fail_on`` level.

    A finding counts when its level is at or above ``fail_on``; a finding matched by a baseline does not count.
    """
    if outcome.get("baseline"):
        return False
    level = failure_level(outcome)
    return level is not None and SEVERITY_RANK.get(level, 0) >= SEVERITY_RANK[fail_on]


# --- findings and spec results --------------------------------------------------------------------------


def _nothing() -> dict[str, Any]:
    return {}


class Finding(NamedTuple):
    """One rule's outcome for one spec (immutable). ``to_json`` gives the contract's ``outcome`` object.

    A rule that does not apply points at nothing: its JSON leaves out the fields that say what was found. A
    pass leaves out its formula and basis (they are in the result's ``rules`` block and ``rulecheck rules
    show``): repeating them per spec only fattens the result.
    """

    rule: str
    title: str
    topic: str
    outcome: str
    severity: str
    safety: bool
    message: str
    fix: str = ""
    formula: str = ""
    basis: Any = ()
    path: str = ""
    line: int | None = None
    column: int | None = None
    values: Mapping[str, Any] = {}  # name → the contract's quantity object
    limit: Mapping[str, Any] | None = None
    missing: tuple[str, ...] = ()
    waiver: Mapping[str, Any] | None = None
    case: str | None = None  # the load case it was found in; None: the spec has no cases, or every case gives it

    @property
    def level(self) -> str | None:
        """The level at which this outcome is a finding (:func:`level_of`)."""
        return level_of(self.outcome, self.severity, self.safety)

    def to_json(self) -> dict[str, Any]:
        """Return the contract's ``outcome`` object."""
        entry: dict[str, Any] = {"rule": self.rule}
        if self.case is not None:
            entry["case"] = self.case  # only when set: a spec without cases gives the same bytes as before
        entry.update(title=self.title, topic=self.topic, outcome=self.outcome, severity=self.severity,
                     safety=self.safety, message=self.message)
        if self.outcome == "not-applicable":
            entry["location"] = {"path": self.path, "line": None, "column": None}
            return entry
        entry["fix"] = self.fix
        if self.outcome != "pass":
            entry["formula"] = self.formula
            entry["basis"] = self.basis if isinstance(self.basis, list) else list(self.basis)
        entry["location"] = {"path": self.path, "line": self.line, "column": self.column}
        entry["values"] = dict(self.values)
        entry["limit"] = self.limit
        entry["missing"] = list(self.missing)
        entry["waiver"] = self.waiver
        return entry


@dataclass(frozen=True)
class SpecResult:
    """The check of one spec file (immutable). ``to_json`` gives the contract's ``spec`` object, with its
    counts, verdict and outcome order worked out here."""

    file: str
    status: str
    findings: tuple[Finding, ...] = ()
    tag: str | None = None
    title: str | None = None
    spec_status: str | None = None
    sha256: str | None = None
    derived: Mapping[str, Any] = field(default_factory=_nothing)
    notes: tuple[str, ...] = ()

    def to_json(self) -> dict[str, Any]:
        """Return the contract's ``spec`` object (outcomes in their stable order)."""
        result = {"file": self.file, "tag": self.tag, "title": self.title, "spec_status": self.spec_status,
                  "sha256": self.sha256, "status": self.status, "verdict": "invalid", "counts": {},
                  "outcomes": [f.to_json() for f in self.findings], "derived": dict(self.derived)}
        if self.notes:
            result["notes"] = list(self.notes)
        finish_spec(result)
        if self.status == "checked":
            result["requirements"] = requirements_of(result["outcomes"])
        return result


def counts_of(outcomes: Iterable[Mapping[str, Any]]) -> dict[str, int]:
    """Return a spec's outcome counts: fails by severity, the other outcomes by kind."""
    counts = dict.fromkeys(COUNT_KEYS, 0)
    for o in outcomes:
        counts[o["severity"] if o["outcome"] == "fail" else o["outcome"]] += 1
    return counts


VERDICT_RANK = {"pass": 0, "warning": 1, "fail": 2, "invalid": 3}  # worse is higher (the worst load case decides)


def verdict_of(status: str, counts: Mapping[str, int], outcomes: Iterable[Mapping[str, Any]]) -> str:
    """Return a spec's verdict: invalid (it did not load), fail (an error-level finding), warning (a
    warning-level finding) or pass."""
    if status != "checked":
        return "invalid"
    if counts["error"]:
        return "fail"
    if counts["warning"] or any(o["outcome"] == "not-checked" and o["severity"] == "warning" for o in outcomes):
        return "warning"
    return "pass"


def outcome_sort_key(o: Mapping[str, Any]) -> tuple[Any, ...]:
    """Return the key of an outcome in a spec's stable outcome order."""
    loc = o.get("location") or {}
    return (_OUTCOME_ORDER.get(o["outcome"], 9), _SEVERITY_ORDER.get(o["severity"], 9), loc.get("line") or 0,
            loc.get("column") or 0, o["rule"])


def finish_spec(result: dict[str, Any]) -> dict[str, Any]:
    """Set a spec result's counts and verdict and sort its outcomes (in place); return it."""
    outcomes = result["outcomes"]
    counts = result["counts"] = counts_of(outcomes)
    result["verdict"] = verdict_of(result["status"], counts, outcomes)
    outcomes.sort(key=outcome_sort_key)
    return result


# --- what a drive train needs ------------------------------------------------------------------------


class Requirement(NamedTuple):
    """One line of a drive train's purchase requirements: which rule's values give it and how they compare.

    ``sense`` is ``"at-least"`` when the rating must reach the requirement (a torque, a current) and
    ``"at-most"`` when the value must stay under a limit (a voltage drop, a peak voltage). The names are the
    rule's own value names; a row whose rule did not report them is left out (nothing is guessed).
    """

    item: str
    rule: str
    needed: str
    rating: str | None = None
    margin: str | None = None
    at: str | None = None
    sense: str = "at-least"


REQUIREMENTS: tuple[Requirement, ...] = (
    Requirement("continuous torque at the motor shaft (worst speed)", "torque-margin-continuous", "required",
                "capability", "margin", "worst_speed"),
    Requirement("peak torque at the motor shaft", "torque-peak", "required", "available", "margin", "speed"),
    Requirement("RMS torque over the duty cycle", "torque-rms-duty-cycle", "rms_torque"),
    Requirement("drive continuous current at the site", "drive-current-continuous", "i_req", "i_drive", "margin"),
    Requirement("drive overload current", "drive-overload-duty", "i_pk", "i_ol"),
    Requirement("gearbox rated torque with service factor", "gearbox-service-factor", "t2_req", "t2_rated", "margin"),
    Requirement("gearbox peak output torque", "gearbox-peak-speed-thermal", "t2_pk", "t2_max"),
    Requirement("holding brake torque", "holding-brake-vertical", "t_required", "t_brake", "margin"),
    Requirement("braking energy into the DC bus", "regen-braking-energy", "e_bus", "e_cap", sense="at-most"),
    Requirement("braking resistor power (mean)", "regen-braking-energy", "p_req"),
    Requirement("braking resistor peak power", "regen-braking-energy", "p_pk"),
    Requirement("braking resistance (largest)", "regen-braking-energy", "r_max", sense="at-most"),
    Requirement("supply conductor ampacity", "conductor-and-protection-sizing", "supply_min"),
    Requirement("drive-to-motor conductor ampacity", "conductor-and-protection-sizing", "motor_min"),
    Requirement("motor cable voltage drop", "cable-voltage-drop", "drop", "limit", sense="at-most"),
    Requirement("motor peak voltage (reflected wave)", "inverter-insulation-reflected-wave", "v_pk", "v_limit",
                sense="at-most"),
    Requirement("highest reachable speed", "mechanical-max-speed", "reachable_speed", "speed_limit",
                "speed_margin", sense="at-most"),
)


def _positive(q: Any) -> float | None:
    value = q.get("value") if isinstance(q, Mapping) else None
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not value > 0:
        return None
    return float(value)


def _requirement_row(req: Requirement, outcome: Mapping[str, Any]) -> dict[str, Any] | None:
    values = outcome.get("values") or {}
    needed = values.get(req.needed)
    rating = values.get(req.rating) if req.rating else None
    if _positive(needed) is None:
        return None  # the rule found nothing needed here (or could not say): no line
    margin = values.get(req.margin) if req.margin else None
    if margin is None and _positive(rating) is not None:
        # the rule's own ratio where it gives one; otherwise rating ÷ need (at-least) or limit ÷ value (at-most)
        ratio = _positive(rating) / _positive(needed)  # type: ignore[operator]
        margin = {"value": float(f"{ratio:.6g}"), "unit": "1", "kind": "ratio"}
    row = {"item": req.item, "rule": req.rule, "outcome": outcome["outcome"], "sense": req.sense,
           "needed": dict(needed), "rating": dict(rating) if isinstance(rating, Mapping) else None,
           "margin": dict(margin) if isinstance(margin, Mapping) else None,
           "at": dict(values[req.at]) if req.at and isinstance(values.get(req.at), Mapping) else None,
           "limit": outcome.get("limit")}
    if outcome.get("case"):
        row["case"] = outcome["case"]  # the load case whose finding gives the line
    return row


def requirements_of(outcomes: Iterable[Mapping[str, Any]]) -> list[dict[str, Any]]:
    """Return a drive train's requirements table from its outcomes, in :data:`REQUIREMENTS` order.

    Every number is a value the rule computed (its ``values`` and ``limit``); only a missing margin is the
    ratio of the two. Rules that did not apply or could not be checked give no line.
    """
    by_rule: dict[str, list[Mapping[str, Any]]] = {}
    for o in outcomes:
        if o.get("outcome") in ("pass", "fail", "waived"):
            by_rule.setdefault(o["rule"], []).append(o)
    # with load cases a rule has a finding per case: all its lines come from its worst case (a fail before a waived
    # one before a pass, then the largest need of its first line), the first of equals in the stable order
    worst = {rule: min(found, key=lambda o: (_OUTCOME_ORDER.get(o["outcome"], 9), -_first_need(rule, o)))
             for rule, found in by_rule.items()}
    rows = []
    for req in REQUIREMENTS:
        outcome = worst.get(req.rule)
        row = _requirement_row(req, outcome) if outcome is not None else None
        if row is not None:
            rows.append(row)
    return rows


def _first_need(rule: str, outcome: Mapping[str, Any]) -> float:
    """Return the need of a rule's first requirements line that the outcome gives (0 when none)."""
    values = outcome.get("values") or {}
    for req in REQUIREMENTS:
        need = _positive(values.get(req.needed)) if req.rule == rule else None
        if need is not None:
            return need
    return 0.0


# --- the tally -----------------------------------------------------------------------------------------


@dataclass(frozen=True)
class SpecTally:
    """What a run's summary counts of one spec result (immutable): its status, fails by severity, not-checked
    and waived outcomes, and the most severe level at which it makes a run fail (None: at no level).

    A worker works it out once with the result; the cache keeps it beside the result's JSON, so a JSON
    report of cached results never parses them.
    """

    status: str
    fail: tuple[int, int, int] = (0, 0, 0)  # error, warning, info
    not_checked: int = 0
    waived: int = 0
    failing: str | None = None  # the most severe level that fails the run

    @classmethod
    def of(cls, spec: Mapping[str, Any]) -> SpecTally:
        """Return the tally of a spec result (baseline marks included)."""
        fails = [0, 0, 0]
        other = {"not-checked": 0, "waived": 0}
        worst = 0
        for o in spec.get("outcomes", ()):
            kind = o["outcome"]
            if kind == "fail":
                fails[FAIL_LEVELS.index(o["severity"])] += 1
            elif kind in other:
                other[kind] += 1
            if counts_toward_failure(o, "info"):
                worst = max(worst, SEVERITY_RANK[failure_level(o)])  # type: ignore[index]
        status = spec.get("status")
        known = all(o.get("baseline") for o in spec.get("outcomes", ()) if o["outcome"] == "fail")
        if status != "checked" and not known:
            worst = SEVERITY_RANK["error"]  # a spec that did not load fails at every level (unless in a baseline)
        failing = next((lvl for lvl, rank in SEVERITY_RANK.items() if rank == worst), None)
        return cls(str(status), (fails[0], fails[1], fails[2]), other["not-checked"], other["waived"], failing)

    def fails_at(self, fail_on: str) -> bool:
        """Return whether this spec makes a run fail at the ``fail_on`` level."""
        return self.failing is not None and SEVERITY_RANK[self.failing] >= SEVERITY_RANK[fail_on]

    def to_json(self) -> dict[str, Any]:
        """Return the tally as JSON-ready data (kept in a cache entry's header)."""
        return {"status": self.status, "fail": list(self.fail), "not-checked": self.not_checked,
                "waived": self.waived, "failing": self.failing}

    @classmethod
    def from_json(cls, data: Any) -> SpecTally:
        """Return a tally read back from :meth:`to_json`'s data; ValueError when it is not one."""
        try:
            fail = tuple(int(n) for n in data["fail"])
            failing = data["failing"]
            if len(fail) != 3 or failing not in (None, *SEVERITY_RANK):
                raise ValueError("not a tally")
            return cls(str(data["status"]), fail, int(data["not-checked"]), int(data["waived"]), failing)  # type: ignore[arg-type]
        except (KeyError, TypeError) as exc:
            raise ValueError("not a tally") from exc


class Tally:
    """The summary of a run, built one spec at a time."""

    def __init__(self, fail_on: str) -> None:
        self.fail_on = fail_on
        self.summary: dict[str, Any] = {
            "specs": 0, "checked": 0, "invalid": 0, "unreadable": 0, "fail": dict.fromkeys(FAIL_LEVELS, 0),
            "not-checked": 0, "waived": 0, "fail_on": fail_on,
        }
        self.failing = False

    def add(self, spec: Any) -> None:
        """Count one spec: a result (its counts worked out here) or anything carrying its ``tally``."""
        tally = getattr(spec, "tally", None)
        self.add_tally(tally if isinstance(tally, SpecTally) else SpecTally.of(spec))

    def add_tally(self, tally: SpecTally) -> None:
        """Count one spec's tally."""
        s = self.summary
        s["specs"] += 1
        if tally.status in STATUSES:
            s[tally.status] += 1
        for level, n in zip(FAIL_LEVELS, tally.fail, strict=True):
            s["fail"][level] += n
        s["not-checked"] += tally.not_checked
        s["waived"] += tally.waived
        self.failing = self.failing or tally.fails_at(self.fail_on)

    def result(self) -> dict[str, Any]:
        """Return the summary with its exit code."""
        return {**self.summary, "exit_code": 1 if self.failing else 0}


def summarise(result: dict[str, Any]) -> None:
    """Recompute a result's summary and exit code from its specs (after a baseline is applied, too); the
    summary's cache and baseline parts are kept."""
    tally = Tally(result["settings"]["fail_on"])
    for spec in result["specs"]:
        tally.add(spec)
    summary = tally.result()
    for key in ("cache", "baseline"):
        if key in result.get("summary", {}):
            summary[key] = result["summary"][key]
    result["summary"] = summary


# --- the document --------------------------------------------------------------------------------------


def generated_at() -> str:
    """Return the time a result is made, in UTC to the second; SOURCE_DATE_EPOCH (the reproducible-builds
    convention) sets it, so two runs of the same inputs can give the same bytes."""
    epoch = os.environ.get("SOURCE_DATE_EPOCH", "").strip()
    when = _dt.datetime.now(_dt.UTC)
    if epoch.isdigit():
        when = _dt.datetime.fromtimestamp(int(epoch), _dt.UTC)
    return when.replace(microsecond=0).isoformat().replace("+00:00", "Z")


def header(fail_on: str, units_system: str, digest: str, rule_count: int,
           rules: list[dict[str, Any]] | None = None) -> dict[str, Any]:
    """Return the result document's fields that come before its specs.

    ``rules`` is the metadata of every rule the run applied (id, title, topic, severity, safety, description,
    basis, fix, formula): reports that describe rules (SARIF's driver, the HTML report) read it from here.
    """
    head: dict[str, Any] = {
        "format_version": FORMAT_VERSION,
        "tool": {"name": "rulecheck", "version": __version__, "rules_digest": digest, "rule_count": rule_count},
    }
    if rules is not None:
        head["rules"] = rules
    head["generated"] = generated_at()
    head["settings"] = {"fail_on": fail_on, "units": units_system}
    return head


RULE_FIELDS = ("id", "title", "topic", "severity", "safety", "description", "basis", "fix", "formula")


def rule_entry(meta: Mapping[str, Any]) -> dict[str, Any]:
    """Return a rule's entry of the result's ``rules`` block from its metadata."""
    entry = {k: meta.get(k) for k in RULE_FIELDS}
    entry["safety"] = bool(entry["safety"])
    entry["basis"] = list(entry["basis"] or [])
    for k in ("title", "topic", "description", "fix", "formula"):
        entry[k] = "" if entry[k] is None else str(entry[k])
    return entry


def assemble(specs: list[dict[str, Any]], fail_on: str, units_system: str, digest: str, rule_count: int,
             rules: list[dict[str, Any]] | None = None) -> dict[str, Any]:
    """Return the complete result document for a list of spec results."""
    result = {**header(fail_on, units_system, digest, rule_count, rules), "specs": specs, "summary": {}}
    summarise(result)
    return result


def with_charts(result: Mapping[str, Any], charts: Iterable[Mapping[str, Any] | None]) -> dict[str, Any]:
    """Return the view of a result that the reports drawing charts read: each spec with its chart series
    (``charts``, in spec order) under the key ``charts``. The result itself is left as it is."""
    specs = [{**spec, "charts": dict(series or {})} for spec, series in zip(result["specs"], charts, strict=True)]
    return {**result, "specs": specs}


# --- bytes ---------------------------------------------------------------------------------------------


def encode(value: Any) -> bytes:
    """Return a spec result (or any JSON value) as compact JSON in UTF-8, characters and key order kept.

    The one encoder of spec results: a worker encodes each result once, the cache keeps those bytes, and a
    JSON report copies them or, for a result changed since (a baseline mark), encodes it here again. orjson
    writes JSON about ten times faster than the standard library; the standard encoder takes what orjson
    refuses (text with a lone surrogate, integers beyond 64 bits). A result holds no non-finite number (the
    engine turns one into a rule error).
    """
    try:
        return _orjson.dumps(value)
    except (TypeError, _orjson.JSONEncodeError):
        return json.dumps(value, ensure_ascii=True, separators=(",", ":"), allow_nan=False).encode("ascii")


def decode(text: str | bytes) -> Any:
    """Return the value of JSON text written by :func:`encode`; raise ValueError when it is not JSON."""
    return _orjson.loads(text)
