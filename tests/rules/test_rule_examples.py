"""Every shipped rule's pass and fail examples, collected by one parametrised test.

Adding a rule's cases needs no new Python: write them in the rule file's ``examples``.
Each case asserts the rule id, the outcome, the severity, the computed values that
decided it (within 1 % unless the example states its own tolerance) and, where it gives one,
the spec key the finding points at.
"""

from __future__ import annotations

import math

import pytest

from rulecheck.engine.ruleset import load_rules, shipped_rules_dir
from tests.rules.harness import outcome_of, run_example

RULESET, ERRORS = load_rules([shipped_rules_dir()])
CASES = [
    pytest.param(rule, example, id=f"{rule.id}:{i}:{example['outcome']}")
    for rule in RULESET.rules.values()
    for i, example in enumerate(rule.examples)
]


def test_shipped_rules_load_without_errors() -> None:
    assert ERRORS == []


@pytest.mark.parametrize(("rule", "example"), CASES)
def test_rule_example(rule, example) -> None:
    result = run_example(example)
    bad_input = [o for o in result["outcomes"] if o["rule"] in ("spec-schema", "units-and-dimensions", "yaml-syntax")
                 and o["outcome"] == "fail"]
    assert bad_input == [], f"example spec is itself invalid: {[o['message'] for o in bad_input]}"
    outcome = outcome_of(result, rule.id)
    assert outcome["outcome"] == example["outcome"], outcome["message"]
    if "severity" in example:
        assert outcome["severity"] == example["severity"], outcome["message"]
    tolerance = example.get("tolerance", 0.01)
    for name, expected in (example.get("values") or {}).items():
        assert name in outcome["values"], f"value {name!r} not computed; got {sorted(outcome['values'])}"
        got = outcome["values"][name]["value"]
        assert math.isclose(got, expected, rel_tol=tolerance, abs_tol=1e-9), f"{name}: {got} != {expected}"
    for path in example.get("missing") or []:
        assert path in outcome["missing"], f"{path} not named among missing inputs {outcome['missing']}"
    if outcome["outcome"] == "fail":
        assert outcome["message"] and "(message" not in outcome["message"]
        assert "(message" not in outcome["fix"], outcome["fix"]
    if "location" in example:
        assert outcome["location"]["path"] == example["location"], outcome["message"]
