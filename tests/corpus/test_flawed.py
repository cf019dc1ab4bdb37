"""The flawed-design corpus: realistic drive trains, each with ONE deliberate design flaw a senior reviewer
would catch, and the rule and numbers that must catch it.

Each spec in tests/corpus/flawed/ starts with a comment block (the drive train, the flaw, the hand calculation
with the source of each check value); tests/corpus/flawed/expected.yaml holds the catching rule, outcome,
severity and key values with tolerances that say why they are that size. The tool is run through its public
command line (JSON result). Where the current tool misses a flaw, shows other numbers or errs elsewhere, the
case is xfail(strict=True) naming the issue point that fixes it (see tests/corpus/KNOWN_FALSE_ALARMS.md,
"flawed corpus: misses"); the expectation itself is never adapted to the tool.
"""

from __future__ import annotations

from typing import Any

import pytest

from tests.corpus.flawed_helpers import (
    FLAWED,
    catching_outcome,
    check_json,
    header_comment,
    load_expectations,
    other_errors,
    spec_files,
    value_problems,
)

EXPECTATIONS = load_expectations()


def _params() -> list[Any]:
    params = []
    for name, expect in EXPECTATIONS.items():
        marks = [pytest.mark.xfail(strict=True, reason=expect["xfail"])] if expect.get("xfail") else []
        params.append(pytest.param(name, id=name.removesuffix(".yaml"), marks=marks))
    return params


@pytest.fixture(scope="module")
def results() -> dict[str, dict[str, Any]]:
    """One run of the command line over the whole corpus."""
    return check_json([FLAWED / name for name in EXPECTATIONS])


def test_corpus_is_complete() -> None:
    """Every spec has an expectation and every expectation a spec; at least 24 cases."""
    files = {p.name for p in spec_files()}
    assert files == set(EXPECTATIONS), (sorted(files - set(EXPECTATIONS)), sorted(set(EXPECTATIONS) - files))
    assert len(files) >= 24


@pytest.mark.parametrize("name", sorted(EXPECTATIONS))
def test_spec_documents_its_flaw(name: str) -> None:
    """Each spec opens with the drive train, the flaw and the hand calculation of the catching rule's numbers."""
    head = header_comment(FLAWED / name)
    for part in ("DRIVE TRAIN:", "FLAW:", "HAND CALCULATION"):
        assert part in head, f"{name}: the opening comment has no {part!r} part"
    expect = EXPECTATIONS[name]
    assert expect["outcome"] == "fail"
    assert expect["severity"] in ("error", "warning")
    for value_name, want in (expect.get("values") or {}).items():
        assert {"value", "tol", "why"} <= set(want), f"{name}: {value_name} needs value, tol and why"


@pytest.mark.parametrize("name", _params())
def test_flaw_is_caught(name: str, results: dict[str, dict[str, Any]]) -> None:
    """The right rule fails with the right severity and the hand-calculated values; nothing else errs."""
    expect = EXPECTATIONS[name]
    spec = results[name]
    assert spec["status"] == "checked", f"{name}: spec not checked ({spec['status']})"
    outcome = catching_outcome(spec, expect["rule"], expect.get("case"))
    assert outcome is not None, f"{name}: no outcome of {expect['rule']}" + (
        f" naming case {expect['case']}" if expect.get("case") else "")
    assert outcome["outcome"] == expect["outcome"], (
        f"{name}: {outcome['rule']} gives {outcome['outcome']} ({outcome.get('message', '')[:300]})")
    assert outcome["severity"] == expect["severity"], (
        f"{name}: {outcome['rule']} fails with severity {outcome['severity']}, expected {expect['severity']}")
    problems = value_problems(outcome, expect.get("values") or {})
    assert not problems, f"{name}: {outcome['rule']} values differ from the hand calculation: {problems}"
    others = other_errors(spec, outcome["rule"], expect.get("also_errors"))
    assert not others, f"{name}: other rules fail with severity error (the spec has one flaw): {others}"
    if expect.get("case"):  # the flaw is in that case only: every other case passes, and the worst decides
        verdicts = {c["name"]: c["verdict"] for c in spec.get("cases", [])}
        assert verdicts.get(expect["case"]) == "fail" and spec["verdict"] == "fail", (name, verdicts)
        assert all(v != "fail" for k, v in verdicts.items() if k != expect["case"]), (name, verdicts)
