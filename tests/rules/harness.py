"""Running a rule's documented examples: the examples are the rule's documentation and its tests."""

from __future__ import annotations

import datetime as dt
from functools import lru_cache
from typing import Any

import yaml

from rulecheck.check import CheckContext, check_document
from rulecheck.config import Config
from rulecheck.load import load_text
from rulecheck.run import prepare

EXAMPLE_DAY = dt.date(2026, 12, 1)  # examples with waivers are written against this date


@lru_cache(maxsize=1)
def shipped_context() -> CheckContext:
    """Return the check context of the shipped rules with no configuration."""
    return prepare(Config(), [], EXAMPLE_DAY, "si", None).context


def run_example(example: dict[str, Any], ctx: CheckContext | None = None) -> dict[str, Any]:
    """Return the spec result for one example (format and tag filled in when left out)."""
    ctx = ctx or shipped_context()
    spec = {"format": 1, "tag": "EXAMPLE", **example["spec"]}
    if example.get("margins"):
        spec["margins"] = example["margins"]
    text = yaml.safe_dump(spec, sort_keys=False, allow_unicode=True)
    doc = load_text(text, "example.yaml")
    return check_document(doc, ctx)


def outcome_of(result: dict[str, Any], rule_id: str) -> dict[str, Any]:
    """Return the outcome of ``rule_id`` in a spec result."""
    found = [o for o in result["outcomes"] if o["rule"] == rule_id]
    assert len(found) == 1, f"expected one outcome of {rule_id}, got {len(found)}"
    return found[0]
