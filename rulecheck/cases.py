"""Load cases: one spec, several states of its load (``cases:`` — a declining belt loaded and empty, a winder at
the core and at the full roll, a hoist with rated load and empty hook).

Each case is the spec with the case's ``load`` fields put in place of the spec's own (a duty list replaces the
whole list; a field the case does not give keeps the spec's value). The document of a case keeps the file's
positions: a field the case overrides points at the case's line, every other field at its own. The check
(:mod:`rulecheck.check`) runs every rule on each case; :func:`merge` keeps one finding where every case gives the
same, else one per case naming it; the worst case decides the verdict.

``--set load.x=...`` changes the spec's own field before the cases are built, so it reaches every case that does
not give ``load.x`` itself (the case's own value is more specific and wins).
"""

from __future__ import annotations

import re
from collections.abc import Iterable, Mapping
from dataclasses import dataclass
from typing import Any

import yaml

from rulecheck.load import Document
from rulecheck.result import Finding, counts_of, verdict_of

__all__ = ["MAX_CASES", "NAME", "Case", "case_documents", "declared", "merge", "merge_derived", "problems",
           "verdicts"]

NAME = re.compile(r"^[a-z][a-z0-9_-]{0,31}$")  # as the schema's propertyNames of `cases`
MAX_CASES = 16  # as the schema's maxProperties of `cases`


@dataclass(frozen=True)
class Case:
    """One load case: its name, title and the spec document as the case sees it (without ``cases``)."""

    name: str
    title: str | None
    doc: Document
    overrides: tuple[str, ...] = ()  # the load fields the case gives


def declared(data: Any) -> bool:
    """Return whether a spec's data declares load cases (a non-empty ``cases`` mapping)."""
    return isinstance(data, dict) and isinstance(data.get("cases"), dict) and bool(data["cases"])


def usable(data: Any) -> bool:
    """Return whether the declared cases can be run: at most :data:`MAX_CASES`, each with a valid name (the
    schema reports the others; a spec whose cases cannot be run is checked without them)."""
    cases = data["cases"]
    return len(cases) <= MAX_CASES and all(isinstance(k, str) and NAME.match(k) for k in cases)


def problems(doc: Document) -> list[Any]:
    """Return the problems of the cases that the schema cannot see: a case that changes load fields of a spec
    that has no load section (there is no load model for the fields to belong to)."""
    from rulecheck.schema import Problem

    out = []
    if isinstance(doc.data.get("load"), dict):
        return out
    for name, body in doc.data["cases"].items():
        if isinstance(body, dict) and isinstance(body.get("load"), dict) and body["load"]:
            path = f"cases.{name}.load"
            out.append(Problem("spec-schema", path, f"{path}: the spec has no load section for this case to change",
                               "give the spec's load with its model; a case changes load fields, not the model",
                               parts=("cases", name, "load")))
    return out


def _pair(node: Any, key: str) -> tuple[Any, Any] | None:
    if isinstance(node, yaml.MappingNode):
        for k, v in node.value:
            if isinstance(k, yaml.ScalarNode) and k.value == key:
                return k, v
    return None


def _mapping(like: Any, pairs: list[tuple[Any, Any]]) -> yaml.MappingNode:
    return yaml.MappingNode(like.tag, pairs, like.start_mark, like.end_mark, like.flow_style)


def _merged_root(root: Any, name: str) -> Any:
    """Return the YAML node tree of a case: the spec's, without ``cases``, with the case's load pairs in place
    of the spec's (positions of the data :func:`case_documents` builds)."""
    if not isinstance(root, yaml.MappingNode):
        return root
    case = _pair(root, "cases")
    body = _pair(case[1], name) if case else None
    over = _pair(body[1], "load") if body else None
    given = {k.value: (k, v) for k, v in over[1].value if isinstance(k, yaml.ScalarNode)} \
        if over and isinstance(over[1], yaml.MappingNode) else {}
    pairs = []
    found = False
    for k, v in root.value:
        key = k.value if isinstance(k, yaml.ScalarNode) else None
        if key == "cases":
            continue
        if key == "load" and isinstance(v, yaml.MappingNode):
            found = True
            own = [given.get(lk.value, (lk, lv)) if isinstance(lk, yaml.ScalarNode) else (lk, lv) for lk, lv in v.value]
            keys = {lk.value for lk, _ in v.value if isinstance(lk, yaml.ScalarNode)}
            v = _mapping(v, own + [pair for key2, pair in given.items() if key2 not in keys])
        pairs.append((k, v))
    if not found and over is not None:
        pairs.append(over)
    return _mapping(root, pairs)


def case_documents(doc: Document) -> list[Case]:
    """Return the spec's load cases in the file's order, each as a document of its own (see the module)."""
    out = []
    base = {k: v for k, v in doc.data.items() if k != "cases"}
    own = base.get("load") if isinstance(base.get("load"), dict) else None
    for name, body in doc.data["cases"].items():
        body = body if isinstance(body, dict) else {}
        over = body.get("load") if isinstance(body.get("load"), dict) else {}
        data = dict(base)
        if own is not None or over:
            data["load"] = {**(own or {}), **over}
        case_doc = Document(doc.file, data, doc.sha256, _merged_root(doc.root, name))
        case_doc.aliases, case_doc.odd_numbers = doc.aliases, doc.odd_numbers
        title = body.get("title")
        out.append(Case(name, title if isinstance(title, str) else None, case_doc, tuple(over)))
    return out


def merge(per_case: Mapping[str, list[Finding]]) -> list[Finding]:
    """Return the findings of all cases: where every case gives the same finding for a rule, that finding once
    without a case; otherwise each case's finding naming its case. ``per_case``: case name → findings (one per
    rule, the same rules in each case)."""
    by_rule: dict[str, dict[str, Finding]] = {}
    for name, findings in per_case.items():
        for f in findings:
            by_rule.setdefault(f.rule, {})[name] = f
    out: list[Finding] = []
    for found in by_rule.values():
        first = next(iter(found.values()))
        if len(found) == len(per_case) and all(f == first for f in found.values()):
            out.append(first)
        else:
            out.extend(f._replace(case=name) for name, f in found.items())
    return out


def verdicts(status: str, findings: Iterable[Finding], names: Iterable[str]) -> dict[str, str]:
    """Return each case's verdict: the spec's verdict over its own findings and those common to every case."""
    common = [f.to_json() for f in findings if f.case is None]
    mine: dict[str, list[dict[str, Any]]] = {name: list(common) for name in names}
    for f in findings:
        if f.case is not None and f.case in mine:
            mine[f.case].append(f.to_json())
    return {name: verdict_of(status, counts_of(outcomes), outcomes) for name, outcomes in mine.items()}


def merge_derived(per_case: Mapping[str, Mapping[str, Any]]) -> tuple[dict[str, Any], dict[str, dict[str, Any]]]:
    """Return the derived values every case shares, and each case's values that differ (or that only it has)."""
    tables = list(per_case.values())
    common = {p: v for p, v in tables[0].items() if all(t.get(p) == v for t in tables[1:])}
    own = {name: {p: v for p, v in t.items() if p not in common} for name, t in per_case.items()}
    return common, own
