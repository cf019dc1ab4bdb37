"""Baselines: record a repository's current findings so that only new ones fail a pull request.

A finding's identity is its rule, its file and its spec key path — never its line,
so an edit that moves lines keeps the finding matched. Findings of the baseline
that no longer occur are reported as fixed.
"""

from __future__ import annotations

import json
from collections import Counter
from typing import Any

from rulecheck.result import is_finding, summarise

__all__ = ["BaselineError", "apply", "identity", "load", "render"]

_FORMAT = "rulecheck-baseline"


class BaselineError(ValueError):
    """A baseline file that cannot be used."""


def identity(spec: dict[str, Any], outcome: dict[str, Any]) -> tuple[str, str, str]:
    """Return the stable identity of a finding: (rule, file, spec path)."""
    return (outcome["rule"], spec["file"], (outcome.get("location") or {}).get("path") or "")


def render(result: dict[str, Any]) -> str:
    """Return the baseline document for the findings of ``result``."""
    findings = []
    for spec in result["specs"]:
        for o in spec["outcomes"]:
            if is_finding(o):
                rule, file, path = identity(spec, o)
                findings.append({"rule": rule, "file": file, "path": path, "outcome": o["outcome"],
                                 "severity": o["severity"], "message": o["message"]})
    findings.sort(key=lambda f: (f["file"], f["rule"], f["path"]))
    doc = {"format": _FORMAT, "version": 1, "tool_version": result["tool"]["version"], "findings": findings}
    return json.dumps(doc, indent=2, ensure_ascii=False) + "\n"


def load(text: str, name: str = "baseline") -> Counter[tuple[str, str, str]]:
    """Return the finding identities of a baseline document (with their counts)."""
    try:
        doc = json.loads(text)
    except ValueError as exc:
        raise BaselineError(f"{name}: not a baseline file (invalid JSON: {exc})") from None
    if not isinstance(doc, dict) or doc.get("format") != _FORMAT or not isinstance(doc.get("findings"), list):
        raise BaselineError(f"{name}: not a rulecheck baseline file (write one with 'rulecheck baseline')")
    out: Counter[tuple[str, str, str]] = Counter()
    for i, f in enumerate(doc["findings"]):
        if not isinstance(f, dict) or not all(isinstance(f.get(k), str) for k in ("rule", "file", "path")):
            raise BaselineError(f"{name}: findings[{i}] needs rule, file and path")
        out[(f["rule"], f["file"], f["path"])] += 1
    return out


class Matcher:
    """Marks the findings a baseline knows, one spec at a time; what is left over has been fixed."""

    def __init__(self, known: Counter[tuple[str, str, str]], name: str) -> None:
        self.remaining = Counter(known)
        self.name = name
        self.new = 0
        self.matched = 0

    def mark(self, spec: dict[str, Any]) -> dict[str, Any]:
        """Return one spec with the findings the baseline knows marked (``baseline: true``; the spec given is
        left as it is: a copy is returned when something is marked); count the new findings."""
        marked = None
        for i, o in enumerate(spec["outcomes"]):
            if not is_finding(o):
                continue
            key = identity(spec, o)
            if self.remaining[key] > 0:
                self.remaining[key] -= 1
                if marked is None:
                    marked = list(spec["outcomes"])
                marked[i] = {**o, "baseline": True}
                self.matched += 1
            else:
                self.new += 1
        return spec if marked is None else {**spec, "outcomes": marked}

    def summary(self) -> dict[str, Any]:
        """Return the baseline's part of the run summary."""
        fixed = [{"rule": r, "file": f, "path": p} for (r, f, p), n in sorted(self.remaining.items())
                 for _ in range(n)]
        return {"file": self.name, "matched": self.matched, "new": self.new, "fixed": fixed}


def apply(result: dict[str, Any], known: Counter[tuple[str, str, str]], name: str) -> None:
    """Mark the findings of ``result`` that the baseline knows; record new and fixed ones in the summary."""
    matcher = Matcher(known, name)
    result["specs"] = [matcher.mark(spec) for spec in result["specs"]]
    result.setdefault("summary", {})["baseline"] = matcher.summary()
    summarise(result)
