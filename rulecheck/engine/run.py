"""Evaluating compiled rules against one drive-train model: exactly one outcome per rule."""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from typing import Any

from rulecheck import units
from rulecheck.engine import expr
from rulecheck.engine.expr import Missing, MissingInput
from rulecheck.engine.ruleset import Rule
from rulecheck.model import Model

__all__ = ["Outcome", "Shown", "evaluate_rule", "kind_of_result", "spec_names"]

@dataclass(slots=True)
class Outcome:
    """The result of one rule on one spec."""

    rule: str
    outcome: str  # pass | fail | not-checked | not-applicable | waived
    severity: str
    message: str
    path: str = ""
    fix: str = ""
    values: dict[str, tuple[float, str]] = field(default_factory=dict)  # name -> (SI value, kind)
    limit: tuple[float, str] | None = None
    missing: list[str] = field(default_factory=list)
    waiver: dict[str, Any] | None = None
    hint: str = ""


class Shown:
    """A computed value as a message template shows it: with its unit."""

    __slots__ = ("value", "kind", "system")

    def __init__(self, value: float, kind: str | None, system: str) -> None:
        self.value = value
        self.kind = kind
        self.system = system

    def __str__(self) -> str:
        return _shown_text(self.value, self.kind, self.system)


def _shown_text(value: float, kind: str | None, system: str) -> str:
    """Return a value as a message shows it (:func:`units.format_value`), formatted once per value."""
    if not value:  # 0 and -0.0 are equal keys but read differently
        return units.format_value(value, kind, system)
    key = (value, kind, system)
    text = _SHOWN.get(key)
    if text is None:
        if len(_SHOWN) > 4096:
            _SHOWN.clear()  # a bound keeps memory flat on large runs
        text = _SHOWN[key] = units.format_value(value, kind, system)
    return text


# Values as messages show them: a spec's messages show the same value (and every spec the same parameter)
# several times.
_SHOWN: dict[tuple[float, str | None, str], str] = {}


def _show_model_value(value: Any, kind_name: str | None, system: str) -> Any:
    """Return a model value as a message shows it: a number of a kind with its unit, anything else as it is."""
    if isinstance(value, (int, float)) and not isinstance(value, bool) and kind_name and kind_name != "flag":
        return Shown(value, kind_name, system)
    return value


def spec_names(model: Model, env: Any, namespace: dict[str, Any]) -> dict[str, Any]:
    """Return (and keep on the model) the names every rule's expressions see on this spec."""
    cache = model.functions.get("_parents")
    if cache is None:
        cache = model.functions["_parents"] = {}
        model.functions["_sections"] = namespace
    parent = cache.get(id(env))
    if parent is None:
        parent = cache[id(env)] = expr.spec_parent(env, namespace)
    return parent


class _ShownSection(expr.Section):
    """A model section as message templates see it: every quantity shown with its unit, wrapped on access."""

    __slots__ = ("_inner", "_kinds", "_system")

    def __init__(self, inner: expr.Section, kinds: dict[str, str], system: str) -> None:
        object.__setattr__(self, "_name", object.__getattribute__(inner, "_name"))
        object.__setattr__(self, "_values", {})
        object.__setattr__(self, "_children", {})
        object.__setattr__(self, "_inner", inner)
        object.__setattr__(self, "_kinds", kinds)
        object.__setattr__(self, "_system", system)

    def __getattr__(self, key: str) -> Any:
        if key.startswith("_"):
            raise AttributeError(key)
        inner = object.__getattribute__(self, "_inner")
        value = getattr(inner, key)
        kinds = object.__getattribute__(self, "_kinds")
        system = object.__getattribute__(self, "_system")
        if isinstance(value, expr.Section):
            return _ShownSection(value, kinds, system)
        name = object.__getattribute__(self, "_name")
        return _show_model_value(value, kinds.get(f"{name}.{key}" if name else key), system)

    __getitem__ = __getattr__


def _display_parent(model: Model, env: Any, system: str) -> dict[str, Any]:
    """Return (and keep on the model) the names message templates see: the sections with units."""
    cache = model.functions.setdefault("_display", {})
    key = (id(env), system)
    if key not in cache:
        sections = model.functions.get("_sections") or model.namespace()
        cache[key] = expr.spec_parent(env, {k: _ShownSection(v, model.kinds, system) if isinstance(v, expr.Section)
                                            else v for k, v in sections.items()})
    return cache[key]


def _param_display(param: Any, value: float, system: str) -> Shown:
    if param.kind in (None, "fraction"):
        # a parameter written as a percentage is shown as one; a margin such as 1.1 as a plain number
        return Shown(value, "fraction" if param.written.strip().endswith("%") else None, system)
    return Shown(value, param.kind, system)


# Dimensionality (as pint writes it) → kind, for values whose kind a rule does not declare.
_DIMENSION_KINDS: dict[str, str] = {}


def kind_of_result(value: Any, declared: str | None, name: str) -> str | None:
    """Return the kind of a lint-time pint result (declared kind wins; torque over energy; speed by name)."""
    if declared:
        return declared
    if isinstance(value, bool) or value is None:
        return None
    if isinstance(value, (int, float)):
        return "fraction" if name.endswith(("efficiency", "factor", "share", "deviation", "slip")) else None
    from rulecheck.engine.dims import Dim

    if isinstance(value, Dim):
        found = _dims_kinds().get(value.dims)
    else:
        found = _pint_kind(value)
    if found in ("frequency", "rotational_speed"):
        return "rotational_speed" if "speed" in name else "frequency"
    if found == "torque" and "energy" in name:
        return "energy"
    if found == "fraction" and not name.endswith(("efficiency", "factor", "share", "deviation", "slip", "drop",
                                                  "unbalance", "utilisation", "cdf", "tolerance")):
        return None
    return found


def _kind_units() -> list[tuple[str, str]]:
    """Return (unit, kind) in the order a dimension's kind is decided: later entries win, so the first kind
    listed for a dimension wins, then torque over energy and a fraction over an angle."""
    pairs = [(units.KINDS[k].si_unit, k) for k in reversed(list(units.KINDS)) if k != "temperature"]
    return [*pairs, ("N*m", "torque"), ("1", "fraction")]


_DIMS_KINDS: dict[tuple[float, ...], str] = {}


def _dims_kinds() -> dict[tuple[float, ...], str]:
    """Return base-dimension exponents → kind (the lint's pass without pint)."""
    if not _DIMS_KINDS:
        from rulecheck.engine.dims import dims_of_unit

        for unit, kind_name in _kind_units():
            _DIMS_KINDS[dims_of_unit(unit)] = kind_name
    return _DIMS_KINDS


def _pint_kind(value: Any) -> str | None:
    dims = getattr(value, "dimensionality", None)
    if dims is None:
        return None
    if not _DIMENSION_KINDS:
        ureg = units.registry()
        for unit, kind_name in _kind_units():
            unit = "dimensionless" if unit == "1" else unit.replace("^", "**")
            _DIMENSION_KINDS[str(ureg.Quantity(1.0, unit).dimensionality)] = kind_name
    return _DIMENSION_KINDS.get(str(dims))


def _severity(rule: Rule, level: str, overrides: dict[str, str]) -> str:
    override = overrides.get(rule.id)
    if not override:
        return level
    # a configured severity caps (or raises) every level of the rule to that level
    return override


def _render(template: Any, model: Model, system: str, names: dict[str, Any]) -> str:
    if template is None:
        return ""
    try:
        parent = _display_parent(model, template.environment, system)
        return expr.render_template(template, parent, names).strip()
    except expr.MissingInput as exc:
        return f"(message needs {', '.join(exc.paths)})"
    except Exception as exc:  # a template is untrusted text; its failure must not stop the run
        return f"(message could not be shown: {type(exc).__name__})"


def evaluate_rule(rule: Rule, model: Model, namespace: dict[str, Any], params: dict[str, Any],
                  value_kinds: dict[str, str | None], system: str = "si",
                  severity_overrides: dict[str, str] | None = None, parent: dict[str, Any] | None = None) -> Outcome:
    """Return the one outcome of ``rule`` on ``model``; rule errors become outcomes, never exceptions.

    ``parent``: the spec's names for the rule's sandbox (:func:`spec_names`), when the caller has them."""
    ns = dict(params)
    unsure = "warning" if rule.safety else "info"
    if parent is None:
        parent = spec_names(model, rule.expression_environment, namespace)
    if rule.applies_when is not None:
        try:
            applies = expr.run(rule.applies_when, ns, parent)
        except MissingInput as exc:
            return Outcome(rule.id, "not-checked", unsure,
                           f"cannot tell whether the rule applies: needs {', '.join(exc.paths)}",
                           rule.location, missing=list(exc.paths))
        except expr.ExpressionError as exc:
            return _rule_error(rule, "applies_when", rule.applies_text, exc)
        if not applies:
            return Outcome(rule.id, "not-applicable", "info", "", rule.location)
    shown_values: dict[str, tuple[float, str | None]] = {}  # the numbers computed, with their kinds
    missing: list[str] = []
    for name, compiled, text, _kind in rule.values:
        try:
            value = expr.run(compiled, ns, parent)
        except MissingInput as exc:
            for p in exc.paths:
                if p not in missing:
                    missing.append(p)
            ns[name] = Missing(paths=exc.paths)  # ns: the rule's own names, read by what follows
            continue
        except expr.ExpressionError as exc:
            return _rule_error(rule, f"values.{name}", text, exc)
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            if isinstance(value, float) and not math.isfinite(value):
                return _rule_error(rule, f"values.{name}", text,
                                   expr.ExpressionError("result is not a finite number"))
            shown_values[name] = (value, value_kinds.get(name))
        ns[name] = value
    limit = None
    if rule.limit:
        if rule.limit in rule.params and isinstance(params.get(rule.limit), (int, float)):
            shown = _param_display(rule.params[rule.limit], params[rule.limit], system)
            limit = (params[rule.limit], shown.kind or "1")
        elif rule.limit in shown_values:
            limit = shown_values[rule.limit]
    for i, check in enumerate(rule.checks):
        try:
            failed = expr.run(check.when, ns, parent)
        except MissingInput as exc:
            for p in exc.paths:
                if p not in missing:
                    missing.append(p)
            return Outcome(rule.id, "not-checked", unsure, _not_checked_message(rule, missing), rule.location,
                           values=shown_values, missing=missing, limit=limit)
        except expr.ExpressionError as exc:
            return _rule_error(rule, f"checks[{i}].when", check.when_text, exc)
        if failed:
            message, fix = check.message or rule.message, check.fix or rule.fix
            display = _display_names(rule, (message, fix), ns, params, shown_values, system)
            return Outcome(rule.id, "fail", _severity(rule, check.severity, severity_overrides or {}),
                           _render(message, model, system, display), rule.location,
                           fix=_render(fix, model, system, display), values=shown_values, limit=limit)
    # every check could be decided: values that no check needed may stay missing
    display = _display_names(rule, (rule.pass_message,), ns, params, shown_values, system)
    return Outcome(rule.id, "pass", "info", _render(rule.pass_message, model, system, display), rule.location,
                   values=shown_values, limit=limit)


def _display_names(rule: Rule, templates: tuple[Any, ...], ns: dict[str, Any], params: dict[str, Any],
                   shown_values: dict[str, tuple[float, str | None]], system: str) -> dict[str, Any]:
    """Return the rule's names as the ``templates`` show them: a number with its unit, anything else as it is.

    A number that every template substitutes only as it is (``{{ margin }}``) is given as its text at once."""
    display: dict[str, Any] = {}
    present = [t for t in templates if t is not None]
    if len(present) == 1:
        bare = present[0].bare
    else:  # the names bare in every template that uses them
        bare = {n for t in present for n in t.bare if all(n in u.bare or n not in u.names for u in present)}
    rule_params = rule.params
    for template in present:
        for n in template.names:
            if n in display or n not in ns:
                continue
            value = params.get(n) if n in rule_params else None
            if isinstance(value, (int, float)) and not isinstance(value, bool):
                shown = _param_display(rule_params[n], value, system)
                display[n] = str(shown) if n in bare else shown
            elif n in shown_values:
                value, kind = shown_values[n]
                display[n] = _shown_text(value, kind, system) if n in bare else Shown(value, kind, system)
            else:
                display[n] = ns[n]
    return display


def _not_checked_message(rule: Rule, missing: list[str]) -> str:
    from rulecheck.derive import DERIVED

    lead = "safety-relevant check could not be evaluated" if rule.safety else "could not be evaluated"
    given = [p for p in missing if p not in DERIVED]
    derived = [p for p in missing if p in DERIVED]
    parts = []
    if given:
        parts.append("give " + ", ".join(given))
    if derived:
        parts.append("could not derive " + "; ".join(f"{p} ({DERIVED[p][1]})" for p in derived))
    return f"{lead}: {'; '.join(parts)}"


def _rule_error(rule: Rule, where: str, text: str, exc: Exception) -> Outcome:
    pos = rule.doc.position(where) if rule.doc else None
    loc = f"{rule.file}:{pos.line}:{pos.column}" if pos else rule.file
    return Outcome(rule.id, "not-checked", "error", f"rule error in {loc} ({where}: {text!r}): {exc}", "")


def effective_params(rule: Rule, project: dict[str, Any], spec_margins: dict[str, Any]) -> dict[str, Any]:
    """Return the rule's parameters: defaults, then project configuration, then the spec's margins (SI)."""
    out = {n: p.default for n, p in rule.params.items()}
    for source in (project.get("*", {}), project.get(rule.id, {}), spec_margins):
        for name, value in source.items():
            if name in rule.params:
                out[name] = value
    return out
