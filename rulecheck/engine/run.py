"""Evaluating compiled rules against one drive-train model: exactly one outcome per rule."""

from __future__ import annotations

import itertools
import math
from collections.abc import Callable, Mapping
from dataclasses import dataclass, field
from typing import Any

from rulecheck import units
from rulecheck.engine import expr
from rulecheck.engine.expr import Missing, MissingInput
from rulecheck.engine.ruleset import Rule
from rulecheck.model import Model

__all__ = ["Outcome", "Shown", "SpecNames", "evaluate_rule", "model_sections", "rule_location"]

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


def model_sections(model: Model, wrap: Any = None) -> expr.SectionMap:
    """Return the model as nested read-only sections for rule expressions (lists included).

    ``wrap(value, kind)``, when given, turns each value into what a message template shows.
    """
    if wrap is None:
        values: Any = model.values.items()
    else:
        values = ((path, wrap(value, model.kinds.get(path))) for path, value in model.values.items())
    return expr.sections_from(itertools.chain(values, model.lists.items()))


class SpecNames:
    """The names rule expressions and message templates see on one spec, made once for the spec's check.

    The caller makes one per spec (``SpecNames(model, derived)``) and passes it to :func:`evaluate_rule`; it
    keeps what every rule of the spec reads (the sections, the spec's names per sandbox, the sections as
    messages show them), so nothing is kept on the model. ``derived``: the derive stage's catalogue (path →
    (kind, how it is derived), or path → kind), which names what could not be derived in a not-checked
    outcome. ``needs``, when given, turns a path a rule could not read into the spec fields to give for it,
    each with its unit and an example in words (``[("motor.power_factor", "number, e.g. 0.86")]``); empty
    when it knows none."""

    __slots__ = ("model", "sections", "derived", "needs", "_parents", "_display")

    def __init__(self, model: Model, derived: Mapping[str, Any] | None = None,
                 needs: Callable[[str], list[tuple[str, str]]] | None = None) -> None:
        self.model = model
        self.sections = model_sections(model)
        self.derived = derived or {}
        self.needs = needs
        self._parents: dict[int, expr.Names] = {}
        self._display: dict[tuple[int, str], expr.Names] = {}

    def parent(self, env: Any) -> expr.Names:
        """Return the names every rule's expressions of sandbox ``env`` see on this spec."""
        parent = self._parents.get(id(env))
        if parent is None:
            parent = self._parents[id(env)] = expr.spec_parent(env, self.sections)
        return parent

    def display(self, env: Any, system: str) -> expr.Names:
        """Return the names message templates see: the sections with every quantity shown with its unit."""
        key = (id(env), system)
        found = self._display.get(key)
        if found is None:
            kinds = self.model.kinds
            found = self._display[key] = expr.spec_parent(env, {
                k: _ShownSection(v, kinds, system) if isinstance(v, expr.Section) else v
                for k, v in self.sections.items()})
        return found

    def how_derived(self, path: str) -> str | None:
        """Return how a derived path is obtained (None: the spec gives it)."""
        if path not in self.derived:
            return None
        entry = self.derived[path]
        return entry[1] if isinstance(entry, tuple) and len(entry) > 1 else ""


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


def _param_display(param: Any, value: float, system: str) -> Shown:
    """Return a parameter as messages show it, by its declared kind: a fraction as a percentage, a parameter
    without a kind (a margin such as 1.1, a count) as a plain number."""
    return Shown(value, param.kind, system)


def _severity(rule: Rule, level: str, overrides: dict[str, str]) -> str:
    override = overrides.get(rule.id)
    if not override:
        return level
    # a configured severity caps (or raises) every level of the rule to that level
    return override


def _render(template: Any, spec: SpecNames, system: str, names: dict[str, Any]) -> str:
    if template is None:
        return ""
    try:
        parent = spec.display(template.environment, system)
        return expr.render_template(template, parent, names).strip()
    except expr.MissingInput as exc:
        return f"(message needs {', '.join(exc.paths)})"
    except Exception as exc:  # a template is untrusted text; its failure must not stop the run
        return f"(message could not be shown: {type(exc).__name__})"


class _RuleError(Exception):
    """A rule expression that failed: its outcome."""

    def __init__(self, outcome: Outcome) -> None:
        super().__init__(outcome.message)
        self.outcome = outcome


def _add_missing(missing: list[str], paths: tuple[str, ...]) -> None:
    for p in paths:
        if p not in missing:
            missing.append(p)


def evaluate_rule(rule: Rule, spec: SpecNames, params: dict[str, Any], system: str = "si",
                  severity_overrides: dict[str, str] | None = None, parent: dict[str, Any] | None = None) -> Outcome:
    """Return the one outcome of ``rule`` on the spec whose names are ``spec``; rule errors become outcomes,
    never exceptions.

    ``parent``: the spec's names for the rule's sandbox (``spec.parent(env)``), when the caller has them."""
    if parent is None:
        parent = spec.parent(rule.expression_environment)
    try:
        skipped = _not_applicable(rule, params, parent)
        if skipped is not None:
            return skipped
        ns = dict(params)
        missing: list[str] = []
        shown_values = _values(rule, ns, parent, missing)
        limit = _limit(rule, params, shown_values, system)
        for i, check in enumerate(rule.checks):
            try:
                failed = expr.run(check.when, ns, parent)
            except MissingInput as exc:
                _add_missing(missing, exc.paths)
                return Outcome(rule.id, "not-checked", "warning" if rule.safety else "info",
                               _not_checked_message(rule, spec, missing), rule_location(rule, spec.model),
                               values=shown_values, missing=missing, limit=limit)
            except expr.ExpressionError as exc:
                raise _RuleError(_rule_error(rule, f"checks[{i}].when", check.when_text, exc)) from None
            if failed:
                return _failed(rule, check, spec, ns, params, shown_values, limit, system, severity_overrides)
    except _RuleError as exc:
        return exc.outcome
    # every check could be decided: values that no check needed may stay missing
    display = _display_names(rule, (rule.pass_message,), ns, params, shown_values, system)
    return Outcome(rule.id, "pass", "info", _render(rule.pass_message, spec, system, display),
                   rule_location(rule, spec.model),
                   values=shown_values, limit=limit)


def _not_applicable(rule: Rule, params: dict[str, Any], parent: dict[str, Any]) -> Outcome | None:
    """Return the outcome when the rule does not apply, or cannot tell whether it does; None when it applies."""
    if rule.applies_when is None:
        return None
    try:
        applies = expr.run(rule.applies_when, params, parent)
    except MissingInput as exc:
        return Outcome(rule.id, "not-checked", "warning" if rule.safety else "info",
                       f"cannot tell whether the rule applies: needs {', '.join(exc.paths)}",
                       rule.location, missing=list(exc.paths))
    except expr.ExpressionError as exc:
        raise _RuleError(_rule_error(rule, "applies_when", rule.applies_text, exc)) from None
    return None if applies else Outcome(rule.id, "not-applicable", "info", "", rule.location)


def _values(rule: Rule, ns: dict[str, Any], parent: dict[str, Any],
            missing: list[str]) -> dict[str, tuple[float, str | None]]:
    """Evaluate the rule's named values into ``ns``; return the numbers computed, with their declared kinds."""
    shown_values: dict[str, tuple[float, str | None]] = {}
    for name, compiled, text, kind_name in rule.values:
        try:
            value = expr.run(compiled, ns, parent)
        except MissingInput as exc:
            _add_missing(missing, exc.paths)
            ns[name] = Missing(paths=exc.paths)  # ns: the rule's own names, read by what follows
            continue
        except expr.ExpressionError as exc:
            raise _RuleError(_rule_error(rule, f"values.{name}", text, exc)) from None
        if isinstance(value, (int, float)) and not isinstance(value, bool):
            if isinstance(value, float) and not math.isfinite(value):
                raise _RuleError(_rule_error(rule, f"values.{name}", text,
                                             expr.ExpressionError("result is not a finite number")))
            shown_values[name] = (value, kind_name)
        ns[name] = value
    return shown_values


def _limit(rule: Rule, params: dict[str, Any], shown_values: dict[str, tuple[float, str | None]],
           system: str) -> tuple[float, str | None] | None:
    if not rule.limit:
        return None
    if rule.limit in rule.params and isinstance(params.get(rule.limit), (int, float)):
        shown = _param_display(rule.params[rule.limit], params[rule.limit], system)
        return (params[rule.limit], shown.kind or "1")
    return shown_values.get(rule.limit)


def _failed(rule: Rule, check: Any, spec: SpecNames, ns: dict[str, Any], params: dict[str, Any],
            shown_values: dict[str, tuple[float, str | None]], limit: tuple[float, str | None] | None, system: str,
            severity_overrides: dict[str, str] | None) -> Outcome:
    message, fix = check.message or rule.message, check.fix or rule.fix
    if check.not_applicable:  # the derived values tell that the rule does not apply: the message says why
        display = _display_names(rule, (message,), ns, params, shown_values, system)
        return Outcome(rule.id, "not-applicable", "info", _render(message, spec, system, display), rule.location,
                       values=shown_values)
    display = _display_names(rule, (message, fix), ns, params, shown_values, system)
    return Outcome(rule.id, "fail", _severity(rule, check.severity, severity_overrides or {}),
                   _render(message, spec, system, display), _check_location(rule, check, spec.model),
                   fix=_render(fix, spec, system, display), values=shown_values, limit=limit)


def _given(model: Model, path: str) -> bool:
    """Return whether the spec gives ``path`` (a value, a list, or a section holding a given value)."""
    derivation = model.provenance.get(path)
    if derivation is not None:
        return derivation.source == "given"
    if path in model.lists:
        return True
    prefix = path + "."
    return any(p.startswith(prefix) and d.source == "given" for p, d in model.provenance.items())


def rule_location(rule: Rule, model: Model) -> str:
    """Return the spec key path the rule's findings point at: its first location candidate the spec gives,
    else its first (whose nearest given parent the report then points at)."""
    if len(rule.locations) > 1:
        return next((p for p in rule.locations if _given(model, p)), rule.location)
    return rule.location


def _check_location(rule: Rule, check: Any, model: Model) -> str:
    """Return the spec key path a failing check's finding points at: the first of the check's location
    candidates the spec gives, else the rule's location."""
    return next((p for p in check.location if _given(model, p)), None) or rule_location(rule, model)


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


def _not_checked_message(rule: Rule, spec: SpecNames, missing: list[str]) -> str:
    """Return the message of a not-checked outcome: the spec fields to give (a derived value that could not
    be derived followed to the inputs it lacks, each with its unit and an example), and the derived values
    whose inputs could not be told."""
    lead = "safety-relevant check could not be evaluated" if rule.safety else "could not be evaluated"
    how = {p: spec.how_derived(p) for p in missing}
    give: dict[str, str] = {}
    lost: list[str] = []
    for p in missing:
        asked = spec.needs(p) if spec.needs is not None else []
        if asked:
            for path, words in asked:
                give.setdefault(path, words)
        elif how[p] is None:
            give.setdefault(p, "")
        else:
            lost.append(p)
    parts = []
    if give:
        parts.append("give " + ", ".join(f"{p} ({w})" if w else p for p, w in give.items()))
    if lost:
        parts.append("could not derive " + "; ".join(f"{p} ({how[p]})" if how[p] else p for p in lost))
    derived = [p for p in missing if how[p] is not None and p not in lost]
    if derived and give:
        parts.append("needed for " + ", ".join(derived))
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
