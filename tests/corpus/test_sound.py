"""The sound-design corpus: realistic drive trains, each sized soundly and checked by hand, must stay quiet.

Each spec in ``sound/`` starts with its hand calculation (sources named) and carries the hand values under
``x-hand-derived`` (a user note the tool ignores), in the units of the JSON result. The tests run the public
command line (``python -m rulecheck check sound -f json --no-cache``) and assert, per spec:

* the spec is valid (status ``checked``);
* no rule fails at error or warning severity (an info note is allowed);
* no rule is ``not-checked`` unless listed below as a request for data the format or the datasheet lacks;
* every hand value agrees with the tool's derived value (or the given value the tool uses) within 0.5 %.

Where the current rules raise a false alarm on a sound design, or derive a value wrongly, the spec is not
changed to dodge it: its test is marked ``xfail(strict=True)`` naming every false finding and the issue point
that removes it. ``KNOWN_FALSE_ALARMS.md`` (section "sound corpus") holds the same list with the numbers.
"""

from __future__ import annotations

from pathlib import Path
from typing import Any

import pytest
import yaml

from tests.corpus.conftest import check_folder

SOUND = Path(__file__).parent / "sound"
SPECS = sorted(p.name for p in SOUND.glob("*.yaml"))

# Hand values are written to four significant figures; 0.5 % covers that rounding and is far below any margin
# a rule decides on (the corpus designs keep 15–40 % margins).
HAND_TOLERANCE = 0.005

# spec file → the false findings the current rules give it (rule id, numbers, issue point that fixes it)
FALSE_ALARMS: dict[str, str] = {}

# spec file → derived values the current tool gets wrong against the hand calculation
WRONG_DERIVATIONS: dict[str, str] = {}

# spec file → {rule id: why not-checked is acceptable} (requests for data a datasheet does not give)
NOT_CHECKED_ALLOWED: dict[str, dict[str, str]] = {}


@pytest.fixture(scope="module")
def results() -> dict[str, dict[str, Any]]:
    return check_folder(SOUND)


def _param(name: str, known: dict[str, str]) -> Any:
    marks = [pytest.mark.xfail(strict=True, reason=known[name])] if name in known else []
    return pytest.param(name, marks=marks, id=name.removesuffix(".yaml"))


def _problems(spec: dict[str, Any], name: str) -> list[str]:
    allowed = NOT_CHECKED_ALLOWED.get(name, {})
    found = []
    for o in spec["outcomes"]:
        if o["outcome"] == "fail" and o["severity"] in ("error", "warning"):
            found.append(f"{o['severity']} {o['rule']}: {o.get('message', '')}")
        elif o["outcome"] == "not-checked" and o["rule"] not in allowed:
            found.append(f"not-checked {o['rule']}: {o.get('message', '')}")
    return found


def test_corpus_size_and_spread() -> None:
    """At least 22 drive trains, each opening with its hand calculation."""
    assert len(SPECS) >= 22, SPECS
    for name in SPECS:
        text = (SOUND / name).read_text(encoding="utf-8")
        assert text.startswith("#"), f"{name}: no comment block"
        assert "HAND CALCULATION" in text, f"{name}: no hand calculation"
        assert "x-hand-derived" in text, f"{name}: no hand values"


@pytest.mark.parametrize("name", [_param(n, FALSE_ALARMS) for n in SPECS])
def test_sound_spec_is_quiet(name: str, results: dict[str, dict[str, Any]]) -> None:
    spec = results[name]
    assert spec["status"] == "checked", spec.get("problems") or spec["outcomes"]
    assert _problems(spec, name) == []


@pytest.mark.parametrize("name", [_param(n, WRONG_DERIVATIONS) for n in SPECS])
def test_derived_values_match_hand_calculation(name: str, results: dict[str, dict[str, Any]]) -> None:
    hand = yaml.safe_load((SOUND / name).read_text(encoding="utf-8")).get("x-hand-derived") or {}
    derived = results[name].get("derived") or {}
    assert hand, f"{name}: no x-hand-derived values"
    wrong = []
    for path, expected in hand.items():
        assert path in derived, f"{name}: the tool gives no value for {path}"
        got = derived[path]["value"]
        if abs(got - expected) > HAND_TOLERANCE * max(abs(expected), 1e-9):
            wrong.append(f"{path}: hand {expected}, tool {got} {derived[path].get('unit', '')}")
    assert wrong == []
