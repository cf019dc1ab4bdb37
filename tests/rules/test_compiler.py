"""Rule expressions translated to Python (rulecheck.engine.compiler) evaluate as jinja's own sandbox does.

The reference is jinja2's ``ImmutableSandboxedEnvironment.compile_expression`` on the same environment
(same globals, filters, tests and attribute rules), so the translation keeps the language rule authors
write. Both are run on the same names; results, missing inputs and refusals must agree.
"""

from __future__ import annotations

from typing import Any

import pytest

from rulecheck.engine import expr
from rulecheck.engine.ruleset import environment

ENV = environment()


def _names() -> dict[str, Any]:
    sections = expr.sections_from([
        ("motor.rated_power", 7500.0), ("motor.rated_speed", 152.37), ("motor.kind", "induction"),
        ("motor.brake.static_torque", 80.0), ("load.torque", 40.0), ("load.speeds", [1.0, 2.0, 3.0]),
        ("drive.kind", "inverter"),
    ])
    return {**sections, "margin": 1.1, "count": 3, "flag": True, "label": "S1", "empty": None, "zero": 0.0}


def _outcome(run: Any) -> tuple[str, Any]:
    try:
        value = run()
        if isinstance(value, expr.Missing):
            value._fail_with_undefined_error()
        return "value", value
    except expr.MissingInput as exc:
        return "missing", exc.paths
    except Exception as exc:  # refusals and errors: the kind is what must agree
        return "error", _family(exc)


def _family(exc: Exception) -> str:
    if isinstance(exc, expr.ExpressionError):
        text = str(exc)
        if text.startswith("not allowed"):
            return "refused"
        if text.startswith("unknown name"):
            return "undefined"
        return "failed"
    name = type(exc).__name__
    if name == "SecurityError":
        return "refused"
    if name == "UndefinedError":
        return "undefined"
    return "failed"


def _ours(text: str, names: dict[str, Any]) -> tuple[str, Any]:
    compiled = expr.compile_expression(ENV, text)
    parent = expr.spec_parent(ENV, {k: v for k, v in names.items() if isinstance(v, expr.Section)})
    own = {k: v for k, v in names.items() if not isinstance(v, expr.Section)}
    return _outcome(lambda: expr.run(compiled, own, parent))


def _jinja(text: str, names: dict[str, Any]) -> tuple[str, Any]:
    compiled = ENV.compile_expression(text, undefined_to_none=False)
    return _outcome(lambda: compiled(**names))


CASES = [
    # arithmetic and precedence
    "motor.rated_power / motor.rated_speed", "load.torque * margin + 2 - 1", "-load.torque", "+count",
    "2 ** 3", "count // 2", "count % 2", "(1 + 2) * 3 / 4", "load.torque ** 0.5",
    # comparisons, chained, membership
    "margin > 1", "1 < margin < 2", "1 < margin > 5", "motor.kind == 'induction'", "drive.kind != 'dol'",
    "motor.kind in ['induction', 'pm-synchronous']", "motor.kind not in ['dc']", "2.0 in load.speeds",
    # and / or return an operand; not
    "flag and margin", "zero or margin", "empty or label", "not flag", "not (margin > 1 and zero)",
    # conditionals
    "margin if flag else 0", "margin if zero else count", "margin if flag",
    # tests
    "motor.rated_power is defined", "motor.nameplate_current is defined", "motor.nameplate_current is undefined",
    "empty is none", "label is string", "margin is number", "motor.brake.static_torque is defined",
    # filters
    "margin | round(1)", "-load.torque | abs", "motor.nameplate_current | default(5)", "load.speeds | length",
    "load.speeds | max", "load.speeds | min", "load.speeds | sum", "load.speeds | first", "load.speeds | last",
    "label | lower", "label ~ '/' ~ count",
    # literals and indexing
    "[1, 2, 3][1]", "load.speeds[0]", "load.speeds[7]", "motor['rated_power']", "(1, 2)[0]", "true", "none",
    # calls of rule functions and constants
    "sqrt(load.torque)", "min(margin, count)", "max(1, 2, 3)", "abs(-2)", "interp(1.5, [1, 2], [10, 20])",
    "pi * 2", "sqrt3 * 400", "g_n",
    # missing inputs propagate
    "motor.nameplate_current * 2", "motor.nameplate_current > 1", "margin > motor.nameplate_current",
    "motor.brake.holding_torque + 1", "sqrt(motor.nameplate_current)",
    # refusals
    "label * 3", "[1] * 3", "10 ** 99", "2 ** count ** count", "load.torque.real", "label.upper",
    "unknown_name + 1", "margin(1)",
]


@pytest.mark.parametrize("text", CASES)
def test_translation_agrees_with_jinja(text: str) -> None:
    names = _names()
    assert _ours(text, names) == _jinja(text, names)


@pytest.mark.parametrize("text", ["load.speeds[1:2]", "self", "loop", "{1: 2} | list", "x.__class__"])
def test_constructs_outside_the_language_are_refused_when_compiled(text: str) -> None:
    with pytest.raises(expr.ExpressionError):
        expr.compile_expression(ENV, text)


def test_templates_agree_with_jinja() -> None:
    names = _names()
    text = "margin {{ margin | round(2) }} at {{ motor.rated_speed }} ({{ label }}, {{ empty }})"
    ours = expr.compile_template(ENV, text).render(**names)
    assert ours == ENV.from_string(text).render(**names)
    assert ours == "margin 1.1 at 152.37 (S1, None)"


def test_generated_code_reaches_no_builtins() -> None:
    compiled = expr.compile_expression(ENV, "margin + 1")
    assert compiled.fn.__globals__["__builtins__"] == {}
    assert expr.run(compiled, {"margin": 1.0}, expr.spec_parent(ENV, {})) == 2.0


def test_lint_passes_evaluate_every_branch() -> None:
    """The linter's translations evaluate the test and one arm of a conditional, and both sides of and/or."""
    from rulecheck.engine.lint import _Lint

    _compile_for_lint = _Lint({}, None).compile

    names = {"a": 1.0, "b": expr.Missing(paths=("b",))}
    run = expr.compile_expression(ENV, "a if a > 0 else b")
    assert expr.evaluate(run, names) == 1.0  # at run time the unused arm is never evaluated
    with pytest.raises(expr.MissingInput):
        expr.evaluate(_compile_for_lint("a if a > 0 else b", take_first=False), names)
    with pytest.raises(expr.MissingInput):
        expr.evaluate(_compile_for_lint("a > 0 or b > 0"), names)


def test_a_template_knows_the_names_it_substitutes_as_they_are() -> None:
    """``bare``: names only ever written ``{{ name }}``, whose shown text may stand in for the value."""
    text = "{{ margin }} at {{ speed }}, {{ margin }}; {{ count * 2 }} {{ label | upper }} {{ motor.rated_speed }}"
    template = expr.compile_template(ENV, text)
    assert template.names == {"margin", "speed", "count", "label"}
    assert template.bare == {"margin", "speed"}
    assert expr.compile_template(ENV, "{{ margin }} and {{ margin + 1 }}").bare == frozenset()
    assert expr.compile_template(ENV, "no names").bare == frozenset()


def test_values_shown_as_text_read_as_the_values_would() -> None:
    """Evaluating a rule gives a bare name its text at once; any other use still gets the value with its
    unit (so what a template does with it is unchanged)."""
    from rulecheck.engine.run import Shown, _display_names

    class _Rule:
        params: dict[str, Any] = {}

    bare = expr.compile_template(ENV, "margin {{ margin }} at {{ speed }}")
    other = expr.compile_template(ENV, "{{ speed | length }}")
    ns = {"margin": 1.2306, "speed": 125.66}
    values = {"margin": (1.2306, None), "speed": (125.66, "rotational_speed")}
    shown = _display_names(_Rule(), (bare,), ns, {}, values, "si")
    assert shown == {"margin": "1.231", "speed": "1200 r/min"}  # 125.66 rad/s = 1199.99 r/min
    assert shown["speed"] == str(Shown(125.66, "rotational_speed", "si"))
    assert bare.fn(shown, expr.spec_parent(ENV, {})) == "margin 1.231 at 1200 r/min"
    mixed = _display_names(_Rule(), (bare, other), ns, {}, values, "si")
    assert mixed["margin"] == "1.231" and isinstance(mixed["speed"], Shown)  # 'speed' has another use there


# --- comparisons at the data's precision (the one place the translation departs from jinja on purpose) ----------
# 690 V x 1.1 in binary floating point is 759.0000000000001; the limit a drive datasheet prints is 759 V.
# A rule compares two numbers with a relative tolerance of 1e-9 (compiler.REL_TOL): far below any printed
# resolution (a nameplate gives at most about 6 significant figures), far above double rounding (~1e-16).


def _value(text: str, **names: Any) -> Any:
    return _ours(text, {**_names(), **names})


def test_rounding_of_the_data_does_not_cross_a_limit() -> None:
    v = 690 * 1.1
    assert v == 759.0000000000001 and v > 759  # plain Python: the float is just above the limit
    assert _value("v <= 759", v=v) == ("value", True)
    assert _value("v > 759", v=v) == ("value", False)
    assert _value("v == 759", v=v) == ("value", True)
    assert _value("v != 759", v=v) == ("value", False)
    assert _value("759 >= v", v=v) == ("value", True)
    assert _value("759 < v", v=v) == ("value", False)
    # the other side of the limit: 759 - 1e-13 is 759 too
    assert _value("w >= 759", w=759 - 1e-13) == ("value", True)
    assert _value("w < 759", w=759 - 1e-13) == ("value", False)


def test_a_real_excess_still_fails() -> None:
    # 760 V against 759 V: 1.3e-3 relative, six orders of magnitude beyond the tolerance
    assert _value("v <= 759", v=760.0) == ("value", False)
    assert _value("v > 759", v=760.0) == ("value", True)
    assert _value("v == 759", v=760.0) == ("value", False)
    # just beyond the tolerance: 759 x (1 + 1e-8) is above the limit
    assert _value("v > 759", v=759 * (1 + 1e-8)) == ("value", True)
    assert _value("v <= 759", v=759 * (1 + 1e-8)) == ("value", False)
    # zero is compared exactly (a relative tolerance around 0 is 0)
    assert _value("v > 0", v=1e-300) == ("value", True)
    assert _value("v < 0", v=-1e-300) == ("value", True)


def test_chains_compare_at_precision_and_stop_at_the_first_false_link() -> None:
    v = 690 * 1.1
    assert _value("621 <= v <= 759", v=v) == ("value", True)
    assert _value("621 <= v < 759", v=v) == ("value", False)
    # the second link is not evaluated when the first is false, as in Python: no missing input is reported
    assert _value("v > 800 > motor.nameplate_current", v=v) == ("value", False)
    assert _value("v > 700 > motor.nameplate_current", v=v) == ("missing", ("motor.nameplate_current",))


def test_text_and_flags_compare_exactly() -> None:
    assert _value("motor.kind == 'induction'") == ("value", True)
    assert _value("flag == 1") == ("value", True)  # True == 1 as in Python; flags take no tolerance
    assert _value("motor.kind in ['induction']") == ("value", True)
