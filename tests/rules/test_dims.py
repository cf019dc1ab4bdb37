"""The lint's first pass without pint (rulecheck.engine.dims) decides as pint decides, or defers to it.

Reference: pint's own dimensionality of the same units and products (the library, as installed).
"""

from __future__ import annotations

import itertools
import subprocess
import sys
import textwrap

import pytest

from rulecheck import units
from rulecheck.derive import DERIVED
from rulecheck.engine import lint
from rulecheck.engine.dims import Dim, Unsure, dims_of_unit
from rulecheck.engine.ruleset import load_rules, shipped_rules_dir

_ORDER = ["[length]", "[mass]", "[time]", "[current]", "[temperature]"]
_KINDS = [k for k in units.KINDS if k not in ("fraction", "temperature")]


def _pint_vector(quantity) -> tuple[float, ...]:
    dims = quantity.dimensionality
    assert set(dims) <= set(_ORDER), dims
    return tuple(float(dims.get(name, 0)) for name in _ORDER)


def _pint(kind_name: str):
    unit = units.KINDS[kind_name].si_unit.replace("^", "**")
    return units.registry().Quantity(1.0, unit)


@pytest.mark.parametrize("kind_name", _KINDS)
def test_the_si_unit_of_each_kind_has_pints_dimension(kind_name: str) -> None:
    assert dims_of_unit(units.KINDS[kind_name].si_unit) == _pint_vector(_pint(kind_name))


@pytest.mark.parametrize(("a", "b"), list(itertools.combinations(_KINDS, 2))[::7])
def test_products_quotients_and_powers_have_pints_dimension(a: str, b: str) -> None:
    da, db = Dim(1.0, dims_of_unit(units.KINDS[a].si_unit)), Dim(1.0, dims_of_unit(units.KINDS[b].si_unit))
    pa, pb = _pint(a), _pint(b)
    assert (da * db).dims == _pint_vector(pa * pb)
    assert (da / db).dims == _pint_vector(pa / pb)
    assert (da**2).dims == _pint_vector(pa**2)
    assert (1.0 / da).dims == _pint_vector(1.0 / pa)


def test_what_pint_refuses_is_left_to_pint() -> None:
    torque, speed = Dim(1.0, dims_of_unit("N*m")), Dim(1.0, dims_of_unit("rad/s"))
    for operation in (lambda: torque + speed, lambda: torque < speed, lambda: torque + 1.0, lambda: float(torque),
                      lambda: torque == "text", lambda: torque.units):
        with pytest.raises(Unsure):
            operation()
    assert (torque + 0).dims == torque.dims and torque > 0  # zero goes with any dimension, as in pint
    ratio = torque / torque
    assert ratio.dimensionless and float(ratio + 1.0) == 2.0


def _rules():
    ruleset, errors = load_rules([shipped_rules_dir()], validate=True)
    assert not errors
    return ruleset.rules


def test_every_shipped_rule_is_decided_without_pint_with_the_kinds_pint_gives() -> None:
    for rule_id, rule in _rules().items():
        fast_kinds, fast_problems = lint._lint_rule(lint._Lint(DERIVED, None), rule, fast=True)
        pint_kinds, pint_problems = lint._lint_rule(lint._Lint(DERIVED, None), rule, fast=False)
        assert not fast_problems and not pint_problems, rule_id
        assert fast_kinds == pint_kinds, rule_id


def test_a_rule_with_a_dimension_error_gets_pints_finding(tmp_path) -> None:
    text = (shipped_rules_dir() / "torque-peak.yaml").read_text(encoding="utf-8")
    assert 'margin: {expr: "available / required if' in text
    (tmp_path / "torque-peak.yaml").write_text(text.replace('margin: {expr: "available / required if',
                                                            'margin: {expr: "available + speed if'), encoding="utf-8")
    ruleset, errors = load_rules([tmp_path], validate=True)
    assert not errors, errors
    rule = ruleset.rules["torque-peak"]
    assert lint._lint_rule(lint._Lint(DERIVED, None), rule, fast=True)[1], "the first pass must not let it through"
    kinds, problems = lint.lint_rule(rule, DERIVED)
    pint_kinds, pint_problems = lint._lint_rule(lint._Lint(DERIVED, None), rule, fast=False)
    assert kinds == pint_kinds and [str(p) for p in problems] == [str(p) for p in pint_problems]
    assert any("dimension" in str(p) and "values.margin" in str(p) for p in problems), problems


def test_checking_specs_with_the_shipped_rules_does_not_load_pint(tmp_path) -> None:
    # pint's import and unit registry are a third of a second of every run with an empty cache
    code = textwrap.dedent("""\
        import datetime, sys
        from pathlib import Path
        from rulecheck.config import Config
        from rulecheck.run import prepare
        prepare(Config(), [], datetime.date.today(), "si", Path.cwd())
        print("pint" in sys.modules)
        """)
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, timeout=120, check=True)
    assert out.stdout.strip() == "False"
