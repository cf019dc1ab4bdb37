"""``rules lint --strict``: a message, fix or pass message that can print a missing value where the rule still ends
in a fail or a pass is refused, with its file, line and column; one that prints only what the checks needed to get
there (or shows a value only when given) is not.

On a spec without ``motor.inertia`` the base rule below still fails on its nameplate deviation, so a text showing the
rotor inertia would read "(message needs motor.inertia)" in place of the finding."""

from __future__ import annotations

from pathlib import Path

import pytest

from rulecheck.authoring.requests import all_links
from rulecheck.derive import DERIVED
from rulecheck.engine.lint import lint_rule
from rulecheck.engine.ruleset import load_rule_file
from tests.robustness.conftest import assert_no_traceback, run_cli
from tests.robustness.hostile import rule

CHECK = '    severity: error\nmessage:'
SECOND_CHECK = ('    severity: error\n  - when: "motor.inertia > 0 and deviation > 2 * deviation_error"\n'
                '    severity: warning\n    message: "rotor {{ motor.inertia }}"\nmessage:')

# name → (the rule text's change, where the refusal points)
SHOWS_MISSING = {
    "rule message": (rule(message="deviation {{ deviation }}, rotor {{ motor.inertia }}"), "message"),
    "rule fix": (rule().replace("the torque is {{ from_power }}", "the efficiency is {{ motor.efficiency }}"), "fix"),
    "pass message": (rule().replace("\nfix:", '\npass_message: "agrees; rotor {{ motor.inertia }}"\nfix:'),
                     "pass_message"),
    "a check's own message": (rule().replace(CHECK, '    severity: error\n    message: "off by {{ deviation }}, '
                                                     'rotor {{ motor.inertia }}"\nmessage:'), "checks[0].message"),
    "a check's own fix": (rule().replace(CHECK, '    severity: error\n    fix: "see {{ motor.frame }}"\nmessage:'),
                          "checks[0].fix"),
    # the rule's message is shown by the first check, which never reads the inertia; a later check reading it does
    # not make the first one need it
    "rule message of an earlier check": (rule(message="deviation {{ deviation }}, rotor {{ motor.inertia }}")
                                         .replace(CHECK, SECOND_CHECK), "message"),
}

QUIET = {
    "what the checks read": rule(message="deviation {{ deviation }} of {{ motor.rated_power }}"),
    "shown only when given": rule(message="deviation {{ deviation }}, rotor {{ motor.inertia if motor.inertia is "
                                          "defined else 'not given' }}"),
    # computed from rated power and speed, which the deviation reads: missing only where the check is not reached
    "derived from what the checks read": rule(message="deviation {{ deviation }}; P/n "
                                                      "{{ motor.rated_torque_from_nameplate }}"),
    # the second check reads the inertia before its own message shows it
    "a later check's own message": rule().replace(CHECK, SECOND_CHECK),
}


def _write(tmp_path: Path, text: str) -> Path:
    folder = tmp_path / "rules"
    folder.mkdir()
    (folder / "strict-probe.yaml").write_text(text.replace("id: hostile-rule", "id: strict-probe"), encoding="utf-8")
    return folder


def _strict(folder: Path, links: bool = True) -> list[str]:
    found = lint_rule(load_rule_file(folder / "strict-probe.yaml"), DERIVED, messages=True,
                      links=all_links() if links else None)[1]
    return [str(p) for p in found]


@pytest.mark.parametrize("name", sorted(SHOWS_MISSING))
def test_strict_lint_refuses_a_text_that_can_print_a_missing_value(tmp_path: Path, name: str) -> None:
    text, where = SHOWS_MISSING[name]
    folder = _write(tmp_path, text)
    assert lint_rule(load_rule_file(folder / "strict-probe.yaml"), DERIVED)[1] == []  # not without --strict
    problems = _strict(folder)
    assert len(problems) == 1 and f": {where}: shows " in problems[0], problems
    rule_file = load_rule_file(folder / "strict-probe.yaml")
    pos = rule_file.doc.position(where)
    assert f"strict-probe.yaml:{pos.line}:{pos.column}: " in problems[0]


def test_the_command_refuses_it_with_file_line_and_column(tmp_path: Path) -> None:
    folder = _write(tmp_path, SHOWS_MISSING["a check's own message"][0])
    assert run_cli("rules", "lint", str(folder)).returncode == 0
    strict = run_cli("rules", "lint", "--strict", str(folder))
    assert strict.returncode == 1
    assert_no_traceback(strict)
    line = next(line for line in strict.stdout.splitlines() if "strict-probe.yaml:" in line)
    assert "checks[0].message: shows motor.inertia" in line and line.split(":")[1].isdigit(), line


@pytest.mark.parametrize("name", sorted(QUIET))
def test_strict_lint_accepts_a_text_that_prints_only_what_was_needed(tmp_path: Path, name: str) -> None:
    assert _strict(_write(tmp_path, QUIET[name])) == []


def test_a_derived_value_is_followed_to_its_inputs(tmp_path: Path) -> None:
    """Without the derive stage's links a derived value shown is taken as missing on its own: refused."""
    folder = _write(tmp_path, QUIET["derived from what the checks read"])
    problems = _strict(folder, links=False)
    assert len(problems) == 1 and "motor.rated_torque_from_nameplate" in problems[0], problems


def _without_one_key(spec: dict, prefix: tuple = ()):
    """Yield (path, spec) for every key of a spec (nested), the spec left without it."""
    for key, value in spec.items():
        path = (*prefix, key)
        if isinstance(value, dict):
            for inner, changed in _without_one_key(value, path):
                yield inner, {**spec, key: changed}
        yield path, {k: v for k, v in spec.items() if k != key}


SHIPPED = sorted(p.stem for p in (Path(__file__).resolve().parents[2] / "rules").glob("*.yaml"))


@pytest.mark.parametrize("rule_id", SHIPPED)
def test_a_shipped_rule_never_prints_a_missing_value(rule_id: str) -> None:
    """What strict lint promises, on real specs: every example of the rule with any one key left out ends in an outcome
    whose message and fix show no '(message needs …)'."""
    from rulecheck.engine.ruleset import load_rule_file, shipped_rules_dir
    from tests.rules.harness import run_example

    rule_file = load_rule_file(shipped_rules_dir() / f"{rule_id}.yaml")
    for example in rule_file.examples:
        for path, spec in _without_one_key(example["spec"]):
            result = run_example({**example, "spec": spec})
            for outcome in (o for o in result["outcomes"] if o["rule"] == rule_id):  # none: the spec is refused
                for part in ("message", "fix"):
                    text = outcome.get(part) or ""
                    assert "(message" not in text, (example["name"], ".".join(path), text)
