"""Build a model from a spec written as a dict (as the rule examples are)."""

from __future__ import annotations

import yaml

from rulecheck.derive import build_model
from rulecheck.load import load_text
from rulecheck.model import Model
from rulecheck.schema import read_quantities


def model_of(spec: dict) -> Model:
    doc = load_text(yaml.safe_dump({"format": 1, "tag": "T", **spec}), "t.yaml")
    quantities, problems = read_quantities(doc)
    assert [p for p in problems if p.severity == "error"] == []
    return build_model(doc, quantities, None)
