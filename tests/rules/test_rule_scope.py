"""Every shipped rule says what it covers, and `rulecheck rules show` tells a reader which rule covers hoists, which
covers belts and which starting methods are checked."""

from __future__ import annotations

import subprocess
import sys
from pathlib import Path

import pytest

from rulecheck.engine.ruleset import load_rules, shipped_rules_dir

ROOT = Path(__file__).resolve().parents[2]
RULESET, _ERRORS = load_rules([shipped_rules_dir()])


def _show(rule_id: str) -> str:
    proc = subprocess.run([sys.executable, "-m", "rulecheck", "rules", "show", rule_id], capture_output=True,
                          text=True, cwd=ROOT)
    assert proc.returncode == 0, proc.stderr
    return " ".join(proc.stdout.split())


def test_every_shipped_rule_states_its_scope() -> None:
    assert [r.id for r in RULESET.rules.values() if len(r.scope) < 10] == []


@pytest.mark.parametrize(("rule_id", "words"), [
    ("holding-brake-vertical", ["scope: Suspended loads only", "hoist", "conveyor-runback"]),
    ("conveyor-runback", ["scope: Belt conveyors and bucket elevators", "holding-brake-vertical"]),
    ("hoist-overspeed-protection", ["scope: Hoists only"]),
    ("acceleration-time", ["Starting methods checked", "direct on line", "Soft starters", "not checked"]),
    ("dol-starting", ["Starting method checked: direct on line", "soft starters"]),
])
def test_rules_show_prints_the_scope(rule_id: str, words: list[str]) -> None:
    text = _show(rule_id)
    for word in words:
        assert word in text, (rule_id, word, text[:600])


def test_a_conveyor_rule_never_speaks_of_working_under_a_suspended_load() -> None:
    # crane wording ("nobody may work under it") belongs to suspended loads: no text a belt finding shows says it
    raw = RULESET.rules["conveyor-runback"].raw
    texts = [raw["message"], raw["fix"], raw.get("pass_message", "")]
    texts += [c.get(k, "") for c in raw["checks"] for k in ("message", "fix")]
    assert not [t for t in texts if "work under" in t.lower()]
