"""Baselines: record a repository's current findings so that only new ones fail a pull request.

A finding's identity is its rule, its file (relative to the repository root), its spec key path and, for a
finding of one load case, the case's name — never its line, so an edit that moves lines keeps the finding
matched. A finding the baseline knows is reported as known: it does not fail the run, does not count among the
run's failures and does not make its spec's verdict. A baseline entry whose spec was checked and no longer has
the finding is fixed; the entries of specs that were not checked in this run (a changed-only run, another
folder) are neither new nor fixed.

``rulecheck baseline`` writes a new baseline; ``--update`` replaces the entries of the specs it checks and
keeps the others; ``--prune`` only removes the entries that are fixed.
"""

from __future__ import annotations

import json
from collections import Counter
from collections.abc import Callable, Iterable
from typing import Any

from rulecheck.result import counts_of, is_finding, summarise, verdict_of

__all__ = ["BaselineError", "Matcher", "apply", "identity", "load", "load_entries", "merge", "render",
           "render_entries"]

_FORMAT = "rulecheck-baseline"

Key = tuple[str, str, str, str]  # rule, file, spec path, load case ("" when the finding names none)


class BaselineError(ValueError):
    """A baseline file that cannot be used."""


def identity(spec: dict[str, Any], outcome: dict[str, Any], file: str | None = None) -> Key:
    """Return the stable identity of a finding: (rule, file, spec path, load case); ``file`` overrides the
    spec's."""
    return (outcome["rule"], spec["file"] if file is None else file, (outcome.get("location") or {}).get("path") or "",
            outcome.get("case") or "")


def _key(entry: dict[str, Any]) -> Key:
    """Return the identity of a baseline entry (an entry without ``case`` holds in every case)."""
    return (entry["rule"], entry["file"], entry["path"], entry.get("case") or "")


def _entry(rule: str, file: str, path: str, case: str) -> dict[str, Any]:
    """Return a baseline entry's identity fields (``case`` only when the finding names one)."""
    return {"rule": rule, "file": file, "path": path, **({"case": case} if case else {})}


def _entries(result: dict[str, Any], file_of: Callable[[str], str] | None = None) -> list[dict[str, Any]]:
    """Return the baseline entries of the findings of ``result`` (``file_of`` maps a spec's file)."""
    findings = []
    for spec in result["specs"]:
        file = file_of(spec["file"]) if file_of else spec["file"]
        for o in spec["outcomes"]:
            if is_finding(o):
                findings.append({**_entry(*identity(spec, o, file)), "outcome": o["outcome"],
                                 "severity": o["severity"], "message": o["message"]})
    return findings


def render_entries(entries: Iterable[dict[str, Any]], tool_version: str) -> str:
    """Return the baseline document of ``entries`` (sorted by file, rule, path)."""
    findings = sorted(entries, key=lambda f: (f["file"], f["rule"], f["path"], f.get("case") or ""))
    doc = {"format": _FORMAT, "version": 1, "tool_version": tool_version, "findings": findings}
    return json.dumps(doc, indent=2, ensure_ascii=False) + "\n"


def render(result: dict[str, Any], file_of: Callable[[str], str] | None = None) -> str:
    """Return the baseline document for the findings of ``result``."""
    return render_entries(_entries(result, file_of), result["tool"]["version"])


def load_entries(text: str, name: str = "baseline") -> list[dict[str, Any]]:
    """Return the entries of a baseline document; BaselineError when it is not one."""
    try:
        doc = json.loads(text)
    except ValueError as exc:
        raise BaselineError(f"{name}: not a baseline file (invalid JSON: {exc})") from None
    if not isinstance(doc, dict) or doc.get("format") != _FORMAT or not isinstance(doc.get("findings"), list):
        raise BaselineError(f"{name}: not a rulecheck baseline file (write one with 'rulecheck baseline')")
    for i, f in enumerate(doc["findings"]):
        if not isinstance(f, dict) or not all(isinstance(f.get(k), str) for k in ("rule", "file", "path")):
            raise BaselineError(f"{name}: findings[{i}] needs rule, file and path")
        if not isinstance(f.get("case", ""), str):
            raise BaselineError(f"{name}: findings[{i}].case must be the name of a load case")
    return list(doc["findings"])


def load(text: str, name: str = "baseline") -> Counter[Key]:
    """Return the finding identities of a baseline document (with their counts)."""
    return Counter(_key(f) for f in load_entries(text, name))


def merge(old: list[dict[str, Any]], result: dict[str, Any], *, prune: bool,
          file_of: Callable[[str], str] | None = None,
          gone: Callable[[str], bool] | None = None) -> tuple[list[dict[str, Any]], dict[str, int]]:
    """Return the entries of an updated baseline and what changed (``added``, ``removed``, ``kept``).

    Entries of files not checked in ``result`` are kept as they are, unless their file is ``gone`` (deleted):
    those are removed. For the files checked: update (``prune`` False) takes the current findings; prune
    keeps an old entry only while the finding still occurs (as many times as it occurs) and adds nothing.
    """
    checked = {file_of(s["file"]) if file_of else s["file"] for s in result["specs"]}
    current = _entries(result, file_of)
    deleted = {f["file"] for f in old if f["file"] not in checked and gone is not None and gone(f["file"])}
    kept = [f for f in old if f["file"] not in checked and f["file"] not in deleted]
    previous = [f for f in old if f["file"] in checked or f["file"] in deleted]
    if prune:
        occurring = Counter(_key(f) for f in current)
        survivors = []
        for f in previous:
            key = _key(f)
            if occurring[key] > 0:
                occurring[key] -= 1
                survivors.append(f)
        return kept + survivors, {"added": 0, "removed": len(previous) - len(survivors), "kept": len(kept)}
    before = Counter(_key(f) for f in previous)
    after = Counter(_key(f) for f in current)
    return kept + current, {"added": sum((after - before).values()), "removed": sum((before - after).values()),
                            "kept": len(kept)}


class Matcher:
    """Marks the findings a baseline knows, one spec at a time; what is left of the checked specs is fixed."""

    def __init__(self, known: Counter[Key], name: str, gone: Callable[[str], bool] | None = None) -> None:
        self.remaining = Counter(known)
        self.gone = gone  # whether a spec file no longer exists: its entries are fixed
        self.name = name
        self.new = 0
        self.matched = 0
        self.known = dict.fromkeys(("error", "warning", "info"), 0)  # known fails by severity
        self.files: set[str] = set()

    def mark(self, spec: dict[str, Any], file: str | None = None) -> dict[str, Any]:
        """Return one spec with the findings the baseline knows marked (``baseline: true``) and its verdict
        worked out from the other findings; count the new findings. The spec given is left as it is (a copy
        is returned when something is marked). ``file``: the spec's file as the baseline names it."""
        self.files.add(spec["file"] if file is None else file)
        marked = None
        for i, o in enumerate(spec["outcomes"]):
            if not is_finding(o):
                continue
            key = identity(spec, o, file)
            if self.remaining[key] > 0:
                self.remaining[key] -= 1
                if marked is None:
                    marked = list(spec["outcomes"])
                marked[i] = {**o, "baseline": True}
                self.matched += 1
                if o["outcome"] == "fail":
                    self.known[o["severity"]] += 1
            else:
                self.new += 1
        if marked is None:
            return spec
        unknown = [o for o in marked if not o.get("baseline")]
        out = {**spec, "outcomes": marked, "verdict": _verdict(spec, unknown)}
        if isinstance(spec.get("cases"), list):  # each load case's verdict, from the findings the baseline lacks
            out["cases"] = [{**c, "verdict": _verdict(spec, [o for o in unknown if o.get("case") in (None, c["name"])])}
                            for c in spec["cases"]]
        return out

    def summary(self) -> dict[str, Any]:
        """Return the baseline's part of the run summary: known (matched) and new findings, the known fails by
        severity, and the fixed entries (of the specs checked in this run, or deleted)."""
        fixed = [_entry(r, f, p, c) for (r, f, p, c), n in sorted(self.remaining.items())
                 if (f in self.files or (self.gone is not None and self.gone(f))) for _ in range(n)]
        return {"file": self.name, "matched": self.matched, "new": self.new, "known": dict(self.known),
                "fixed": fixed}

    def adjust(self, summary: dict[str, Any]) -> None:
        """Record the baseline in a run summary: known fails leave the failure counts and are counted as known."""
        for level, n in self.known.items():
            summary["fail"][level] = max(0, summary["fail"][level] - n)
        summary["baseline"] = self.summary()


def _verdict(spec: dict[str, Any], unknown: list[dict[str, Any]]) -> str:
    """Return a spec's verdict from the findings a baseline does not know (a spec that did not load stays
    invalid)."""
    if spec.get("status") != "checked":
        return str(spec.get("verdict") or "invalid")
    return verdict_of("checked", counts_of(unknown), unknown)


def apply(result: dict[str, Any], known: Counter[Key], name: str,
          file_of: Callable[[str], str] | None = None, gone: Callable[[str], bool] | None = None) -> None:
    """Mark the findings of ``result`` that the baseline knows; record new, known and fixed ones in the
    summary (the exit code and failure counts leave the known findings out)."""
    matcher = Matcher(known, name, gone)
    result["specs"] = [matcher.mark(spec, file_of(spec["file"]) if file_of else None) for spec in result["specs"]]
    summarise(result)
    matcher.adjust(result["summary"])
