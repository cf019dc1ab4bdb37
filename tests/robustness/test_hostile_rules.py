"""Hostile rule files in a temporary folder: each is refused by ``rules lint`` and by ``check --rules`` (exit 2),
with the file (and line) named, within a second, never executed, never a traceback."""

from __future__ import annotations

import os
import time
from pathlib import Path

import pytest

from rulecheck.derive import DERIVED
from rulecheck.engine.lint import lint_rule
from rulecheck.engine.ruleset import RuleError, load_rule_file, load_rules
from tests.robustness.conftest import assert_no_traceback, run_cli
from tests.robustness.hostile import EXPRESSIONS, GROWING, growing_rule, rule
from tests.robustness.specs import CONVEYOR

# Refusing a rule is parsing plus one dimensional evaluation (~10 ms); a second leaves room for a slow machine
# and is far below what a repetition of 10**9 or a power tower would take.
SECONDS = 10.0  # a hang guard, not a benchmark (shared CI machines stall for seconds)

TEMPLATES = {
    "template-for": "{% for i in range(999999999) %}x{% endfor %}",
    "template-set": "{% set x = 1 %}{{ x }}",
    "template-comment": "{# hidden #} {{ from_power }}",
    "template-huge": "{{ from_power }} " * 200,
    "template-lipsum": "{{ lipsum(999999) }}",
    "template-self": "{{ self }}",
    "template-repeat": "{{ 'a' * 999999999 }}",
    "template-dunder": "{{ from_power.__class__ }}",
    "template-misspelt": "{{ motor.rated_torqe }}",
}

FILES = {
    **{f"expr-{name}-value": rule(value=text) for name, text in EXPRESSIONS.items()},
    **{f"expr-{name}-when": rule(when=text) for name, text in EXPRESSIONS.items()},
    **{name: rule(message=text) for name, text in TEMPLATES.items()},
    "string-repeat-small-exponent": rule(value="'a' * 999999999"),
    "list-repeat-plain": rule(value="[0] * 999999999"),
    "self-value-name": rule().replace("  from_power:", "  self: {expr: \"1\"}\n  from_power:"),
    "yaml-python-tag": rule().replace("title: Rated", "title: !!python/object/apply:os.system ['id'] #"),
    "yaml-custom-tag": rule().replace("severity: error\ndescription", "severity: !sev error\ndescription"),
    "id-not-file-name": rule(rule_id="another-rule"),
    "unknown-key": rule() + "run_as: root\n",
    "binary": "\x00\x01binary rule",
    **{name: growing_rule(join) for name, join in GROWING.items()},
    "alias-bomb": "a0: &a0 [x,x,x,x,x,x,x,x,x,x]\n" + "".join(
        f"a{i}: &a{i} [" + ",".join([f"*a{i - 1}"] * 10) + "]\n" for i in range(1, 9)),
}


def _folder(tmp_path: Path, name: str) -> Path:
    folder = tmp_path / "rules"
    folder.mkdir()
    (folder / "hostile-rule.yaml").write_text(FILES[name], encoding="utf-8")
    return folder


def _refusals(folder: Path) -> list[RuleError]:
    """Return the rule errors of a folder as a run sees them: loading, then the dimensional lint."""
    ruleset, errors = load_rules([folder])
    for r in ruleset.rules.values():
        errors += lint_rule(r, DERIVED)[1]
    return errors


def test_the_base_rule_is_valid(tmp_path: Path) -> None:
    folder = tmp_path / "rules"
    folder.mkdir()
    (folder / "hostile-rule.yaml").write_text(rule(), encoding="utf-8")
    r = load_rule_file(folder / "hostile-rule.yaml")
    assert lint_rule(r, DERIVED)[1] == []


@pytest.mark.parametrize("name", sorted(FILES))
def test_hostile_rule_is_refused_with_file_and_line(name: str, tmp_path: Path) -> None:
    folder = _folder(tmp_path, name)
    start = time.perf_counter()
    errors = _refusals(folder)
    assert time.perf_counter() - start < SECONDS
    assert errors, f"{name} was accepted"
    first = errors[0]
    assert first.file.endswith("hostile-rule.yaml") and first.message
    assert str(first).startswith(str(folder / "hostile-rule.yaml"))
    if name.startswith(("expr-", "template-")):
        assert first.line is not None, str(first)  # the expression's own line


@pytest.mark.parametrize("name", ["expr-import-value", "expr-string-repeat-when", "template-for", "template-self",
                                  "expr-torque-vs-speed-when", "expr-volt-plus-amp-value", "expr-misspelt-path-when",
                                  "yaml-python-tag", "id-not-file-name", "unknown-key", "alias-bomb"])
def test_cli_lint_and_check_refuse_it(name: str, tmp_path: Path) -> None:
    folder = _folder(tmp_path, name)
    specs = tmp_path / "specs"
    (specs / ".git").mkdir(parents=True)
    (specs / "cv-210.yaml").write_text(CONVEYOR, encoding="utf-8")
    lint = run_cli("rules", "lint", str(folder))
    assert_no_traceback(lint)
    assert lint.returncode != 0 and str(folder / "hostile-rule.yaml") in lint.stdout + lint.stderr
    check = run_cli("check", "--rules", str(folder), str(specs))
    assert_no_traceback(check)
    assert check.returncode == 2, check.stdout[-2000:]
    assert str(folder / "hostile-rule.yaml") in check.stderr
    assert "pwned" not in check.stdout + check.stderr + lint.stdout + lint.stderr


def test_expressions_never_run_a_python_builtin(tmp_path: Path) -> None:
    """The escape attempts fail before evaluation or in the sandbox; nothing was written by os.system."""
    marker = tmp_path / "ran"
    folder = tmp_path / "rules"
    folder.mkdir()
    (folder / "hostile-rule.yaml").write_text(rule(value=f"__import__('os').system('touch {marker}')"))
    assert _refusals(folder)
    assert not marker.exists()


def test_duplicate_id_of_a_shipped_rule_is_refused_by_check(tmp_path: Path) -> None:
    folder = tmp_path / "rules"
    folder.mkdir()
    shipped = "nameplate-power-torque-speed"
    (folder / f"{shipped}.yaml").write_text(rule(rule_id=shipped), encoding="utf-8")
    specs = tmp_path / "specs"
    (specs / ".git").mkdir(parents=True)
    (specs / "cv-210.yaml").write_text(CONVEYOR, encoding="utf-8")
    check = run_cli("check", "--rules", str(folder), str(specs))
    assert_no_traceback(check)
    assert check.returncode == 2 and f"rule id '{shipped}' is already defined" in check.stderr


def test_symlinked_rule_file_is_refused_by_check(tmp_path: Path) -> None:
    folder = tmp_path / "rules"
    folder.mkdir()
    os.symlink("/etc/passwd", folder / "passwd.yaml")
    errors = _refusals(folder)
    assert errors and errors[0].file.endswith("passwd.yaml") and "symbolic link" in errors[0].message
    specs = tmp_path / "specs"
    (specs / ".git").mkdir(parents=True)
    (specs / "cv-210.yaml").write_text(CONVEYOR, encoding="utf-8")
    check = run_cli("check", "--rules", str(folder), str(specs))
    assert_no_traceback(check)
    assert check.returncode == 2 and "passwd.yaml" in check.stderr and "root:" not in check.stderr


def test_lint_reports_symlinks_and_shipped_duplicates(tmp_path: Path) -> None:
    folder = tmp_path / "rules"
    folder.mkdir()
    os.symlink("/etc/passwd", folder / "passwd.yaml")
    (folder / "nameplate-power-torque-speed.yaml").write_text(rule(rule_id="nameplate-power-torque-speed"))
    lint = run_cli("rules", "lint", str(folder))
    assert_no_traceback(lint)
    assert lint.returncode != 0 and "passwd.yaml" in lint.stdout and "already" in lint.stdout


def test_text_built_by_a_rule_is_bounded() -> None:
    from jinja2.exceptions import SecurityError

    from rulecheck.engine import expr
    from rulecheck.engine.compiler import MAX_MESSAGE, MAX_TEXT

    env = expr.environment()
    long = "x" * (MAX_TEXT // 2 + 1)
    for text in ("a ~ a", "a + a", "[a, a] | join", "[a] * 1"):
        with pytest.raises(SecurityError):
            expr.compile_expression(env, text)(a=long)
    assert expr.compile_expression(env, "a ~ a")(a="x" * 10) == "x" * 20  # ordinary text is left alone
    nested = expr.compile_expression(env, "[a, a]")(a=[[[[[[long]]]]]])
    shown = expr.compile_expression(env, "'' ~ a")(a=nested)
    assert len(shown) < 200  # a list is shown to a bounded depth
    message = expr.compile_template(env, "{{ a }}" * 20).render(a="y" * 999)
    assert len(message) == MAX_MESSAGE and message.endswith("…")


def test_a_rule_whose_check_takes_too_long_is_refused(monkeypatch: pytest.MonkeyPatch, tmp_path: Path) -> None:
    from rulecheck.engine import lint

    folder = tmp_path / "rules"
    folder.mkdir()
    (folder / "hostile-rule.yaml").write_text(rule(), encoding="utf-8")
    slow_lint = lint._lint_rule

    def slow(*args, **kwargs):
        time.sleep(5)
        return slow_lint(*args, **kwargs)

    monkeypatch.setattr(lint, "LINT_SECONDS", 0.3)
    monkeypatch.setattr(lint, "_lint_rule", slow)
    start = time.perf_counter()
    errors = _refusals(folder)
    assert time.perf_counter() - start < 2
    assert any("took longer than 0.3 s" in str(e) for e in errors)
