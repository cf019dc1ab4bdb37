"""Static checks of rules before any spec is evaluated.

Every expression of a rule is evaluated once against a *dimensional model*: each
input the spec format or the derive stage declares is a pint quantity of its
kind, each physics method checks the dimensions of its arguments and returns a
quantity of its declared kind. A rule that adds a torque to a speed, compares a
voltage with a current, names an input that does not exist or calls a method
with the wrong kind of argument is reported with its file, line and column.
The same pass finds the kind of every named value, so messages show units.
"""

from __future__ import annotations

import difflib
from collections.abc import Callable
from functools import lru_cache
from typing import Any

from rulecheck import units
from rulecheck.engine import expr
from rulecheck.engine.dims import Dim, Unsure, dims_of_unit
from rulecheck.engine.ruleset import Rule, RuleError, RuleSet
from rulecheck.engine.run import kind_of_result

__all__ = ["catalogue", "lint_rule", "lint_ruleset"]


@lru_cache(maxsize=1)
def catalogue() -> dict[str, tuple[str, Any]]:
    """Return every model path a rule may read: path → (type, kind or enum choices)."""
    from rulecheck.derive import DERIVED
    from rulecheck.load import path_text
    from rulecheck.schema import _resolve, spec_schema

    out: dict[str, tuple[str, Any]] = {}

    def walk(node: dict[str, Any], parts: tuple[str, ...]) -> None:
        node = _resolve(node)
        path = path_text(parts)
        if "x-dimension" in node:
            out[path] = ("quantity", node["x-dimension"])
            return
        if "enum" in node:
            out[path] = ("choice", node["enum"])
            return
        typ = node.get("type")
        if typ == "object":
            for key, sub in node.get("properties", {}).items():
                walk(sub, (*parts, key))
        elif typ == "array":
            out[path] = ("list", None)
        elif typ == "boolean":
            out[path] = ("flag", None)
        elif typ in ("integer", "number"):
            out[path] = ("number", typ)
        elif typ == "string" or "const" in node:
            out[path] = ("text", None)

    walk(spec_schema(), ())
    for path, (kind_name, _meaning) in DERIVED.items():
        if kind_name == "flag":
            out[path] = ("flag", None)
        elif kind_name is None:
            out[path] = ("number", "number")
        else:
            out[path] = ("quantity", kind_name)
    out["duty.segments"] = ("list", None)
    return out


def _quantity(kind_name: str, fast: bool = False) -> Any:
    """Return a sample value of a kind: a pint quantity, or (``fast``) a :class:`dims.Dim`."""
    k = units.KINDS[kind_name]
    if kind_name == "fraction":
        return 0.5
    if fast:
        return Dim(1.0, dims_of_unit("K" if kind_name == "temperature" else k.si_unit))
    ureg = units.registry()
    if kind_name == "temperature":
        return ureg.Quantity(1.0, "kelvin")  # differences of temperature compare like kelvin here
    return ureg.Quantity(1.0, k.si_unit.replace("^", "**"))


@lru_cache(maxsize=2)
def _dimension_namespace(fast: bool = False) -> dict[str, expr.Section]:
    def sample(typ: str, info: Any) -> Any:
        if typ == "quantity":
            return _quantity(info, fast)
        if typ == "choice":
            return info[0]
        if typ == "flag":
            return True
        if typ == "number":
            return 4 if info == "integer" else 2.0
        if typ == "list":
            return [{}]
        return "text"

    return expr.sections_from((path, sample(typ, info)) for path, (typ, info) in catalogue().items()
                              if "[" not in path)


class _LintError(Exception):
    pass


def _dimensional_method(name: str, info: Any, fast: bool = False) -> Callable[..., Any]:
    import inspect

    signature = inspect.signature(info.function)

    def call(*args: Any, **kwargs: Any) -> Any:
        try:
            bound = signature.bind(*args, **kwargs)
        except TypeError as exc:
            raise _LintError(f"{name}(): {exc}") from None
        for arg, value in bound.arguments.items():
            kind_name = info.params.get(arg)
            if kind_name is None:
                continue
            if fast:  # only what pint would accept passes; anything else is decided by pint
                _fast_argument(kind_name, value)
                continue
            expected = _quantity(kind_name)
            got_dims = getattr(value, "dimensionality", None)
            if kind_name == "fraction":
                if got_dims is not None and not value.dimensionless:
                    raise _LintError(f"{name}(): argument '{arg}' must be dimensionless, got {value.units}")
                continue
            if isinstance(value, str) or isinstance(value, bool):
                continue
            if got_dims is None:
                raise _LintError(f"{name}(): argument '{arg}' must be a {kind_name.replace('_', ' ')}, "
                                 f"got a plain number")
            if got_dims != expected.dimensionality:
                raise _LintError(f"{name}(): argument '{arg}' must be a {kind_name.replace('_', ' ')} "
                                 f"({expected.units}), got {value.units}")
        return _quantity(info.returns, fast)

    call.__name__ = name
    return call


def _fast_argument(kind_name: str, value: Any) -> None:
    """Pass an argument the pint check would pass; raise Unsure for any other."""
    if isinstance(value, str | bool):
        return  # pint's check lets text and flags through
    if kind_name == "fraction":
        if isinstance(value, Dim) and not value.dimensionless:
            raise Unsure("a fraction with a dimension")
        if isinstance(value, Dim) or type(value) in (int, float):
            return
        raise Unsure("argument")
    if not isinstance(value, Dim) or value.dims != _quantity(kind_name, True).dims:
        raise Unsure("argument of another kind")


@lru_cache(maxsize=4)
def _lint_environment(take_first: bool = True, fast: bool = False) -> Any:
    from rulecheck.physics import METHODS

    env = expr.environment({n: _dimensional_method(n, i, fast) for n, i in METHODS.items() if i.expose})
    # every part of a conditional or of and/or is evaluated, so no branch escapes the dimension check: the
    # test and the first arm in one pass, the second arm in the other (compiler.translate)
    env.rule_branches = "first" if take_first else "second"
    env.cache_tag = "lint"  # its translations differ from the run environment's
    return env


def _compile_for_lint(text: str, take_first: bool = True, fast: bool = False) -> Any:
    return expr.compile_expression(_lint_environment(take_first, fast), text)


def _error(rule: Rule, where: str, message: str) -> RuleError:
    pos = rule.doc.position(where) if rule.doc else None
    return RuleError(rule.file, f"{where}: {message}", pos.line if pos else None, pos.column if pos else None)


def _run(rule: Rule, where: str, text: str, ns: dict[str, Any], fast: bool = False) -> Any:
    try:
        if " if " in text or " and " in text or " or " in text:
            # the other branches, for their dimensions
            expr.evaluate(_compile_for_lint(text, take_first=False, fast=fast), ns)
        return expr.evaluate(_compile_for_lint(text, fast=fast), ns)
    except expr.MissingInput as exc:
        names = sorted(catalogue())
        hints = []
        for p in exc.paths:
            close = difflib.get_close_matches(p, names, n=1, cutoff=0.7)
            hints.append(f"'{p}'" + (f" (did you mean '{close[0]}'?)" if close else ""))
        raise _error(rule, where, f"unknown input {', '.join(hints)} in {text!r}") from None
    except expr.ExpressionError as exc:
        raise _error(rule, where, f"{exc} in {text!r}") from None
    except _LintError as exc:
        raise _error(rule, where, f"{exc} in {text!r}") from None


def lint_rule(rule: Rule) -> tuple[dict[str, str | None], list[RuleError]]:
    """Return (kinds of the rule's named values, problems found) for one compiled rule.

    A first pass evaluates with :class:`dims.Dim` samples (no pint); a rule it finds anything in, or is
    unsure of, is checked again with pint quantities, whose findings (and wording) are the ones kept.
    """
    try:
        kinds, problems = _lint_rule(rule, fast=True)
        if not problems:
            return kinds, problems
    except Unsure:
        pass
    return _lint_rule(rule, fast=False)


def _lint_rule(rule: Rule, fast: bool) -> tuple[dict[str, str | None], list[RuleError]]:
    ns: dict[str, Any] = dict(_dimension_namespace(fast))
    for name, param in rule.params.items():
        if isinstance(param.default, bool):
            ns[name] = param.default
        elif param.kind in (None, "fraction"):
            ns[name] = param.default
        else:
            ns[name] = _quantity(param.kind, fast) * 1.0
    problems: list[RuleError] = []
    kinds: dict[str, str | None] = {}
    if rule.applies_text:
        try:
            _run(rule, "applies_when", rule.applies_text, ns, fast)
        except RuleError as exc:
            problems.append(exc)
    for name, _compiled, text, declared in rule.values:
        try:
            value = _run(rule, f"values.{name}", text, ns, fast)
        except RuleError as exc:
            problems.append(exc)
            ns[name] = expr.Missing(paths=(name,))
            continue
        kind_name = kind_of_result(value, declared, name)
        if declared and hasattr(value, "dimensionality") and declared != "fraction":
            expected = _quantity(declared, fast)
            if value.dimensionality != expected.dimensionality:
                problems.append(_error(rule, f"values.{name}", f"declared kind {declared} but the expression gives "
                                       f"{value.units}"))
        kinds[name] = kind_name
        ns[name] = value
    for i, check in enumerate(rule.checks):
        try:
            result = _run(rule, f"checks[{i}].when", check.when_text, ns, fast)
        except RuleError as exc:
            problems.append(exc)
            continue
        if not isinstance(result, bool):
            problems.append(_error(rule, f"checks[{i}].when", f"must be a comparison (true or false), got "
                                   f"{type(result).__name__}: {check.when_text!r}"))
    for where, template in (("message", rule.message), ("fix", rule.fix), ("pass_message", rule.pass_message),
                            *((f"checks[{i}].{part}", template) for i, c in enumerate(rule.checks)
                              for part, template in (("message", c.message), ("fix", c.fix)))):
        if template is None:
            continue
        try:
            template.render(**ns)
        except expr.MissingInput as exc:
            problems.append(_error(rule, where, f"unknown name {', '.join(exc.paths)} in the template"))
        except Exception as exc:
            problems.append(_error(rule, where, f"template cannot be shown: {exc}"))
    return kinds, problems


def lint_ruleset(ruleset: RuleSet) -> tuple[dict[str, dict[str, str | None]], list[RuleError]]:
    """Return the value kinds of every rule and every problem found, for a whole rule set."""
    kinds: dict[str, dict[str, str | None]] = {}
    problems: list[RuleError] = []
    for rule in ruleset.rules.values():
        k, p = lint_rule(rule)
        kinds[rule.id] = k
        problems.extend(p)
    return kinds, problems
