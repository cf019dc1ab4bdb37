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

import contextlib
import difflib
import signal
import threading
from collections.abc import Callable, Mapping
from functools import lru_cache
from typing import Any

from rulecheck import units
from rulecheck.engine import expr
from rulecheck.engine.dims import Dim, Unsure, dims_of_unit
from rulecheck.engine.ruleset import DIMENSIONLESS_KINDS, Rule, RuleError, RuleSet

__all__ = ["catalogue", "derived_kinds", "lint_rule", "lint_ruleset"]

# The derived catalogue a caller gives: path → kind, or path → (kind, how it is derived); a kind is a name of
# units.KINDS, "flag", or None for a plain number (a count, a ratio).
Derived = Mapping[str, Any]


def derived_kinds(derived: Derived) -> tuple[tuple[str, str | None], ...]:
    """Return the derived catalogue as sorted (path, kind) pairs: hashable, one form for either input form."""
    return tuple(sorted((p, v[0] if isinstance(v, tuple) else v) for p, v in derived.items()))


@lru_cache(maxsize=1)
def _spec_catalogue() -> dict[str, tuple[str, Any]]:
    """Return every path of the spec format: path → (type, kind or enum choices)."""
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
    return out


@lru_cache(maxsize=1)
def _required_paths() -> dict[str, str]:
    """Return every key the spec format requires within its section: path → that section ("" for the top)."""
    from rulecheck.load import path_text
    from rulecheck.schema import _resolve, spec_schema

    out: dict[str, str] = {}

    def walk(node: dict[str, Any], parts: tuple[str, ...]) -> None:
        node = _resolve(node)
        if node.get("type") != "object":
            return
        for key in node.get("required", []):
            out[path_text((*parts, key))] = path_text(parts)
        for key, sub in node.get("properties", {}).items():
            walk(sub, (*parts, key))

    walk(spec_schema(), ())
    return out


def _absent_with(path: str) -> str | None:
    """Return what must be absent from a valid spec for ``path`` to be: the path itself, or the section holding
    it when the format requires it there (``drive`` for ``drive.kind``); None when it is always given
    (``motor.kind``)."""
    required = _required_paths()
    while path in required:
        path = required[path]
        if not path:
            return None
    return path


def catalogue(derived: Derived) -> dict[str, tuple[str, Any]]:
    """Return every model path a rule may read: path → (type, kind or enum choices): the spec format's fields
    and the ``derived`` catalogue the caller gives (the derive stage's paths and kinds)."""
    return dict(_catalogue(derived_kinds(derived)))


@lru_cache(maxsize=4)
def _catalogue(derived: tuple[tuple[str, str | None], ...]) -> dict[str, tuple[str, Any]]:
    out = dict(_spec_catalogue())
    for path, kind_name in derived:
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


@lru_cache(maxsize=4)
def _dimension_namespace(derived: tuple[tuple[str, str | None], ...], fast: bool = False) -> dict[str, expr.Section]:
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

    return expr.sections_from((path, sample(typ, info)) for path, (typ, info) in _catalogue(derived).items()
                              if "[" not in path)


class _LintError(Exception):
    pass


def _dimensional_method(name: str, info: Any, fast: bool = False) -> Callable[..., Any]:
    import inspect

    signature = inspect.signature(info.function)
    # a method annotated to return true or false gives a flag (the method registry has no flag kind)
    gives_flag = signature.return_annotation in (bool, "bool")

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
        return True if gives_flag else _quantity(info.returns, fast)

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
def _lint_environment(take_first: bool | None = True, fast: bool = False, guards: bool = False) -> Any:
    from rulecheck.physics import METHODS

    env = expr.environment({n: _dimensional_method(n, i, fast) for n, i in METHODS.items() if i.expose})
    # every part of a conditional or of and/or is evaluated, so no branch escapes the dimension check: the
    # test and the first arm in one pass, the second arm in the other (compiler.translate)
    env.rule_branches = "first" if take_first else "second"
    # the message check's sample specs: a presence test decides as at run time (compiler._presence_test)
    env.rule_guards = guards
    env.cache_tag = "lint-guards" if guards else "lint"  # its translations differ from the run environment's
    return env


class _Lint:
    """What linting one rule set needs: the catalogue it reads and the compile cache its rules share."""

    def __init__(self, derived: Derived, cache: expr.CompileCache | None,
                 links: Mapping[str, tuple[str, ...]] | None = None) -> None:
        self.derived = derived_kinds(derived)
        self.cache = cache if cache is not None else expr.CompileCache()
        self.links = links or {}
        self.users: dict[str, set[str]] = {}  # a path → the derived values computed from it directly
        for path, inputs in self.links.items():
            for source in inputs:
                self.users.setdefault(source, set()).add(path)

    def dependents(self, path: str) -> set[str]:
        """Return the derived values computed from ``path``, directly or through others."""
        found: set[str] = set()
        todo = [path]
        while todo:
            for user in self.users.get(todo.pop(), ()):
                if user not in found:
                    found.add(user)
                    todo.append(user)
        return found

    def inputs(self, path: str) -> set[str]:
        """Return the fields a derived ``path`` is computed from, followed through other derived values (empty:
        a spec field, or a derived value whose inputs are not known)."""
        found: set[str] = set()
        seen = {path}
        todo = [path]
        while todo:
            for source in self.links.get(todo.pop(), ()):
                if source in seen:
                    continue
                seen.add(source)
                if source in self.links:
                    todo.append(source)
                else:
                    found.add(source)
        return found

    def missing_together(self, path: str, paths: Any) -> list[set[str]]:
        """Return the ways ``path`` can be missing from a valid spec, each as the set of ``paths`` missing with it:
        a field with every value derived from it (a field the format requires in its section: the whole section);
        a derived value through each field it is computed from; a derived value of unknown inputs on its own.
        None for a field always given, or a value computed only from such fields."""
        fields = self.inputs(path)
        ways = []
        for field in sorted(fields) if fields else [path]:
            absent = _absent_with(field)
            if absent is None:
                continue
            gone = {p for p in paths if p == absent or p.startswith(absent + ".")} | {field}
            ways.append(gone.union(*(self.dependents(p) for p in list(gone))))
        return ways

    def namespace(self, fast: bool) -> dict[str, Any]:
        return dict(_dimension_namespace(self.derived, fast))

    def names(self) -> list[str]:
        return sorted(_catalogue(self.derived))

    def compile(self, text: str, take_first: bool = True, fast: bool = False, guards: bool = False) -> Any:
        return expr.compile_expression(_lint_environment(take_first, fast, guards), text, self.cache)


def _error(rule: Rule, where: str, message: str) -> RuleError:
    pos = rule.doc.position(where) if rule.doc else None
    return RuleError(rule.file, f"{where}: {message}", pos.line if pos else None, pos.column if pos else None)


def _run(lint: _Lint, rule: Rule, where: str, text: str, ns: dict[str, Any], fast: bool = False) -> Any:
    try:
        if " if " in text or " and " in text or " or " in text:
            # the other branches, for their dimensions
            expr.evaluate(lint.compile(text, take_first=False, fast=fast), ns)
        return expr.evaluate(lint.compile(text, fast=fast), ns)
    except expr.MissingInput as exc:
        names = lint.names()
        hints = []
        for p in exc.paths:
            close = difflib.get_close_matches(p, names, n=1, cutoff=0.7)
            hints.append(f"'{p}'" + (f" (did you mean '{close[0]}'?)" if close else ""))
        raise _error(rule, where, f"unknown input {', '.join(hints)} in {text!r}") from None
    except expr.ExpressionError as exc:
        raise _error(rule, where, f"{exc} in {text!r}") from None
    except _LintError as exc:
        raise _error(rule, where, f"{exc} in {text!r}") from None


def lint_rule(rule: Rule, derived: Derived, cache: expr.CompileCache | None = None,
              messages: bool = False,
              links: Mapping[str, tuple[str, ...]] | None = None) -> tuple[dict[str, str | None], list[RuleError]]:
    """Return (kinds of the rule's named values, problems found) for one compiled rule.

    ``derived``: the derive stage's catalogue (path → kind, or path → (kind, meaning)), the paths besides the
    spec format's that expressions may read. ``cache``: the compile cache to translate with.
    A first pass evaluates with :class:`dims.Dim` samples (no pint); a rule it finds anything in, or is
    unsure of, is checked again with pint quantities, whose findings (and wording) are the ones kept.
    ``messages``: also report a message, fix or pass message that can show a value the rule does not need to
    reach it (:func:`_lint_missing_in_messages`). ``links``: derived path → the paths it is computed from (the
    derive stage's provenance, given by the caller), so that a value shown beside one the checks read from the
    same inputs (a rotor inertia beside the inertia ratio) is known to be missing only where the checks are not
    reached; without it each shown value is taken as missing on its own.
    """
    return _lint_both(_Lint(derived, cache, links), rule, messages)


# A rule file's lint is milliseconds; one that takes longer than this is refused (a hostile file may try to spend
# the parent's time before any spec is checked).
LINT_SECONDS = 5.0


class _LintTimeout(BaseException):
    """Raised by the lint's timer (a BaseException: nothing in an expression's evaluation catches it)."""


@contextlib.contextmanager
def _deadline(seconds: float) -> Any:
    """Raise _LintTimeout in the block after ``seconds`` (POSIX main thread with no timer running; else no limit)."""
    usable = (hasattr(signal, "setitimer") and threading.current_thread() is threading.main_thread()
              and signal.getitimer(signal.ITIMER_REAL)[0] == 0)
    if not usable:
        yield
        return

    def expire(_signum: int, _frame: Any) -> None:
        raise _LintTimeout

    previous = signal.signal(signal.SIGALRM, expire)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        yield
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, previous if previous is not None else signal.SIG_DFL)


def _lint_both(lint: _Lint, rule: Rule, messages: bool = False) -> tuple[dict[str, str | None], list[RuleError]]:
    try:
        with _deadline(LINT_SECONDS):
            return _lint_checked(lint, rule, messages)
    except _LintTimeout:
        return {}, [RuleError(rule.file, f"checking the rule took longer than {LINT_SECONDS:g} s: it is refused", 1, 1)]


def _lint_checked(lint: _Lint, rule: Rule, messages: bool) -> tuple[dict[str, str | None], list[RuleError]]:
    try:
        kinds, problems = _lint_rule(lint, rule, fast=True)
    except Unsure:
        problems = [None]  # type: ignore[list-item]
    if problems:
        kinds, problems = _lint_rule(lint, rule, fast=False)
    _lint_locations(rule, problems)
    if messages and not problems:
        # with pint quantities: a missing value used in arithmetic raises MissingInput, as in a run
        ns = lint.namespace(False)
        _rule_names(rule, ns, False)
        _lint_missing_in_messages(lint, rule, ns, False, problems)
    return kinds, problems


def _lint_locations(rule: Rule, problems: list[RuleError]) -> None:
    """Report a ``location`` (the rule's or a check's) that is not a key of the spec format: a finding must point
    at a line of the spec, so a derived value or a misspelt key is refused, with the closest key."""
    spec_paths = _spec_catalogue()
    sections = {p.rsplit(".", i)[0] for p in spec_paths for i in range(1, p.count(".") + 1)}
    raw_checks = rule.raw.get("checks") if isinstance(rule.raw, dict) else None
    places = [("location", rule.raw.get("location") if isinstance(rule.raw, dict) else None)]
    places += [(f"checks[{i}].location", c.get("location")) for i, c in enumerate(raw_checks or [])
               if isinstance(c, dict)]
    for where, value in places:
        candidates = [value] if isinstance(value, str) else value if isinstance(value, list) else []
        for i, path in enumerate(candidates):
            if not isinstance(path, str) or path in spec_paths or path in sections:
                continue
            at = where if isinstance(value, str) else f"{where}[{i}]"
            close = difflib.get_close_matches(path, sorted(spec_paths), n=1, cutoff=0.6)
            problems.append(_error(rule, at, f"'{path}' is not a key of the spec format: a finding points at a "
                                   "line of the spec" + (f" (did you mean '{close[0]}'?)" if close else "")))


def _rule_names(rule: Rule, ns: dict[str, Any], fast: bool) -> None:
    """Put the rule's parameters among the names, as samples of their kinds."""
    for name, param in rule.params.items():
        if isinstance(param.default, bool):
            ns[name] = param.default
        elif param.kind in (None, "fraction"):
            ns[name] = param.default
        else:
            ns[name] = _quantity(param.kind, fast) * 1.0


def _kind_problem(declared: str, value: Any, fast: bool) -> str | None:
    """Return why ``value`` (a sample result) is not of the ``declared`` kind, or None when it is.

    No value (``else none``) goes with any kind. The first pass raises Unsure where pint decides."""
    if value is None:
        return None
    if declared == "flag":
        return None if isinstance(value, bool) else f"declared kind flag but the expression gives {_what(value)}"
    if isinstance(value, bool | str):
        return f"declared kind {declared} but the expression gives {_what(value)}"
    dims = getattr(value, "dimensionality", None)
    if declared in DIMENSIONLESS_KINDS:
        if dims is None or value.dimensionless:
            return None
        if fast:
            raise Unsure("a dimension where none is declared")
        return f"declared kind {declared} (dimensionless) but the expression gives {value.units}"
    if dims is None:
        return f"declared kind {declared} but the expression gives a plain number"
    expected = _quantity(declared, fast)
    if fast:
        if not isinstance(value, Dim) or value.dims != expected.dims:
            raise Unsure("another dimension")
        return None
    if dims != expected.dimensionality:
        return f"declared kind {declared} but the expression gives {value.units}"
    return None


def _what(value: Any) -> str:
    if isinstance(value, bool):
        return "true or false"
    if isinstance(value, str):
        return "text"
    return "a number" if getattr(value, "dimensionality", None) is None else str(getattr(value, "units", "a quantity"))


def _lint_rule(lint: _Lint, rule: Rule, fast: bool) -> tuple[dict[str, str | None], list[RuleError]]:
    ns = lint.namespace(fast)
    _rule_names(rule, ns, fast)
    problems: list[RuleError] = []
    if rule.applies_text:
        try:
            _run(lint, rule, "applies_when", rule.applies_text, ns, fast)
        except RuleError as exc:
            problems.append(exc)
    kinds = _lint_values(lint, rule, ns, fast, problems)
    _lint_checks(lint, rule, ns, fast, problems)
    _lint_templates(rule, ns, problems)
    return kinds, problems


def _lint_values(lint: _Lint, rule: Rule, ns: dict[str, Any], fast: bool,
                 problems: list[RuleError]) -> dict[str, str | None]:
    kinds: dict[str, str | None] = {}
    for name, _compiled, text, declared in rule.values:
        try:
            value = _run(lint, rule, f"values.{name}", text, ns, fast)
        except RuleError as exc:
            problems.append(exc)
            ns[name] = expr.Missing(paths=(name,))
            continue
        problem = _kind_problem(declared, value, fast)
        if problem:
            problems.append(_error(rule, f"values.{name}", problem))
        kinds[name] = declared
        ns[name] = value
    return kinds


def _lint_checks(lint: _Lint, rule: Rule, ns: dict[str, Any], fast: bool, problems: list[RuleError]) -> None:
    for i, check in enumerate(rule.checks):
        try:
            result = _run(lint, rule, f"checks[{i}].when", check.when_text, ns, fast)
        except RuleError as exc:
            problems.append(exc)
            continue
        if not isinstance(result, bool):
            problems.append(_error(rule, f"checks[{i}].when", f"must be a comparison (true or false), got "
                                   f"{type(result).__name__}: {check.when_text!r}"))


def _lint_templates(rule: Rule, ns: dict[str, Any], problems: list[RuleError]) -> None:
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


_MAX_PATHS = 200  # paths a rule may read before the message check gives up (a bound on its loop)


def _read_paths(lint: _Lint, rule: Rule, full: dict[str, Any], fast: bool) -> set[str]:
    """Return the spec and derived paths the rule's ``applies_when``, values and checks read (every arm of their
    conditionals), found by evaluating with no path present and adding each path a MissingInput names until
    they all evaluate."""
    paths = full["_paths"]
    present: set[str] = set()
    texts = ([rule.applies_text] if rule.applies_text else []) + [t for _n, _c, t, _k in rule.values] + \
        [c.when_text for c in rule.checks]
    for _ in range(_MAX_PATHS):
        ns = _partial_namespace(rule, full, present)
        try:
            for name, _compiled, text, _kind in rule.values:
                ns[name] = expr.evaluate(lint.compile(text, take_first=False, fast=fast), ns)
                ns[name] = expr.evaluate(lint.compile(text, fast=fast), ns)
            for text in texts:
                for first in (True, False):
                    expr.evaluate(lint.compile(text, take_first=first, fast=fast), ns)
            return present
        except expr.ExpressionError:
            return present | set(paths)  # cannot tell here: take everything as read (no report)
        except expr.MissingInput as exc:
            added = {p for name in exc.paths for p in paths if p == name or p.startswith(name + ".")} - present
            if not added:
                return present | set(paths)  # a name the lint cannot place: take everything as read
            present |= added
    return present | set(paths)


def _partial_namespace(rule: Rule, full: dict[str, Any], present: set[str]) -> dict[str, Any]:
    """Return a lint namespace in which only the ``present`` paths have values (the rule's parameters too)."""
    ns: dict[str, Any] = dict(expr.sections_from((p, v) for p, v in full["_paths"].items() if p in present))
    for name in rule.params:
        if name in full:
            ns[name] = full[name]
    return ns


def _lint_missing_in_messages(lint: _Lint, rule: Rule, full_ns: dict[str, Any], fast: bool,
                              problems: list[RuleError]) -> None:
    """Report a message, fix or pass message that shows a spec or derived value the rule can do without on its way
    to that text (the checks before it decided, the text's own check true, or every check for the pass message):
    on a spec without the value the text would say "(message needs …)" instead of the finding. A value read by
    nothing else of the rule, and one read only by a later check, both count. Read it in a value the checks use
    before the text (the rule is then not-checked without it) or show it only when given
    (``{{ x if x is defined else '…' }}``)."""
    paths = _all_paths(full_ns)
    full = {**{name: full_ns[name] for name in rule.params if name in full_ns}, "_paths": paths}
    read = _read_paths(lint, rule, full, fast)
    if len(read) == len(paths):
        return
    ns = _partial_namespace(rule, full, read)
    for name, _compiled, text, _kind in rule.values:
        ns[name] = expr.evaluate(lint.compile(text, fast=fast), ns)
    # each text with the checks that show it: the rule's message and fix by the checks without their own, the
    # pass message after every check (index: the number of checks)
    uses = {part: [i for i, c in enumerate(rule.checks) if getattr(c, part) is None] for part in ("message", "fix")}
    templates = [("message", rule.message, uses["message"]), ("fix", rule.fix, uses["fix"]),
                 ("pass_message", rule.pass_message, [len(rule.checks)]),
                 *((f"checks[{i}].{part}", template, [i]) for i, c in enumerate(rule.checks)
                   for part, template in (("message", c.message), ("fix", c.fix)))]
    templates = [(where, template, upto) for where, template, upto in templates if template is not None and upto]
    extra = {where: _template_reads(lint, template, rule, full, read, ns, fast) for where, template, _ in templates}
    reach = _Reach(lint, rule, full, fast)
    for where, template, upto in templates:
        shown = [p for p in [*extra[where], *sorted(read)] if _shown_missing(reach, template, upto, p, lint, paths)]
        if shown:
            problems.append(_error(rule, where, f"shows {', '.join(shown)}, which the rule does not need to reach "
                                   "this text: on a spec without it the text would say '(message needs …)' instead "
                                   "of the finding; read it in a value the checks use, or show it only when "
                                   "given ('{{ x if x is defined else … }}')"))


def _shown_missing(reach: _Reach, template: Any, uses: list[int], path: str, lint: _Lint, paths: Any) -> bool:
    """Return whether, on some spec without ``path`` (and what goes with it), a check that shows ``template`` (or
    the pass) is reached and holds, and the text shows something missing there."""
    for gone in map(frozenset, lint.missing_together(path, paths)):
        for index in uses:
            key, ns = reach.spec(gone, index)
            if reach.reaches(key, ns, index) and _shows(template, ns, gone):
                return True
    return False


def _namespace_with(lint: _Lint, rule: Rule, full: dict[str, Any], present: set[str], fast: bool,
                    both: bool = False) -> dict[str, Any]:
    """Return a lint namespace with only the ``present`` paths, the rule's values computed (missing where their
    inputs are; a presence test decides as at run time). ``both``: a value is missing where either arm of its
    conditionals lacks an input."""
    ns = _partial_namespace(rule, full, present)
    for name, _compiled, text, _kind in rule.values:
        try:
            if both:
                expr.evaluate(lint.compile(text, take_first=False, fast=fast, guards=True), ns)
            ns[name] = expr.evaluate(lint.compile(text, fast=fast, guards=True), ns)
        except expr.MissingInput as exc:
            ns[name] = expr.Missing(paths=exc.paths)
        except expr.ExpressionError:
            ns[name] = expr.Missing(paths=(name,))
    return ns


def _shows(template: Any, ns: dict[str, Any], gone: set[str]) -> bool:
    """Return whether a template shows one of the paths ``gone`` (or a value computed from one): rendered on a
    spec without them, it needs one."""
    try:
        template.render(**ns)
    except expr.MissingInput as exc:
        return any(p in gone for p in exc.paths)
    except Exception:  # noqa: BLE001 - a template that cannot be shown is reported by _lint_templates
        return False
    return False


def _template_reads(lint: _Lint, template: Any, rule: Rule, full: dict[str, Any], read: set[str], ns: dict[str, Any],
                    fast: bool) -> list[str]:
    """Return the paths a template reads beyond ``read`` (rendering again with each one found present)."""
    extra: list[str] = []
    for _ in range(_MAX_PATHS):
        try:
            template.render(**ns)
            return extra
        except expr.MissingInput as exc:
            new = [p for p in exc.paths if p in full["_paths"] and p not in extra]
            if not new:
                return extra
            extra += new
            ns = _partial_namespace(rule, full, read | set(extra))
            for name, _compiled, text, _kind in rule.values:
                ns[name] = expr.evaluate(lint.compile(text, fast=fast), ns)
        except Exception:  # noqa: BLE001 - a template that cannot be shown is reported by _lint_templates
            return extra
    return extra


class _Reach:
    """Whether a spec without some paths (every other one given, but for what a check holds only without) shows a
    text of the rule: it applies, decides the checks before the text's and can hold the text's check (or passes)."""

    def __init__(self, lint: _Lint, rule: Rule, full: dict[str, Any], fast: bool) -> None:
        self.lint, self.rule, self.full, self.fast = lint, rule, full, fast
        values = {name: text for name, _c, text, _k in rule.values}
        self.paths = set(full["_paths"])
        # what each check holds only with (and, last, what the pass needs: the negated presence of 'not x' checks)
        self.wants = [_presence_subjects(c.when_text, values) for c in rule.checks]
        self.wants.append([w for c in rule.checks for w in _negated_subjects(c.when_text, values)])
        self.specs: dict[frozenset[str], dict[str, Any]] = {}
        self.known: dict[tuple[frozenset[str], int], bool] = {}

    def spec(self, gone: frozenset[str], index: int) -> tuple[frozenset[str], dict[str, Any]]:
        """Return the paths missing and the sample spec for the text of check ``index`` on a spec without ``gone``."""
        absent = {p for subject, want in self.wants[index] if want == "absent" for p in self.paths
                  if p == subject or p.startswith(subject + ".")}
        key = frozenset(gone | absent)
        if key not in self.specs:
            self.specs[key] = _namespace_with(self.lint, self.rule, self.full, self.paths - key, self.fast)
        return key, self.specs[key]

    def reaches(self, key: frozenset[str], ns: dict[str, Any], index: int) -> bool:
        """Return whether the rule reaches and can hold check ``index`` (or passes) on the sample spec ``ns``."""
        if (key, index) not in self.known:
            self.known[(key, index)] = self._reaches(ns, index)
        return self.known[(key, index)]

    def _reaches(self, ns: dict[str, Any], index: int) -> bool:
        lint, rule, fast = self.lint, self.rule, self.fast
        try:
            if rule.applies_text and not expr.evaluate(lint.compile(rule.applies_text, fast=fast, guards=True), ns):
                return False
            for check in rule.checks[:index + 1]:
                expr.evaluate(lint.compile(check.when_text, fast=fast, guards=True), ns)
        except (expr.MissingInput, expr.ExpressionError):
            return False  # not-checked (or a rule error, reported elsewhere) before the text is shown
        for subject, want in self.wants[index]:
            if want == "absent":
                continue
            try:
                value = expr.evaluate(lint.compile(subject, fast=fast, guards=True), ns)
            except (expr.MissingInput, expr.ExpressionError):
                return False
            if want == "present" and value is None:
                return False
        return True


def _conjunct_nodes(text: str) -> list[Any]:
    """Return the top-level ``and``-joined parts of an expression as jinja nodes (none when it does not parse)."""
    import jinja2
    from jinja2 import nodes

    try:
        node = jinja2.Environment().parse("{{ " + text + " }}").body[0].nodes[0]  # type: ignore[attr-defined]
    except Exception:  # noqa: BLE001 - compiled before; anything odd has no parts
        return []
    parts: list[Any] = []
    todo = [node]
    while todo:
        item = todo.pop()
        if isinstance(item, nodes.And):
            todo += [item.right, item.left]
        else:
            parts.append(item)
    return parts


def _presence_subjects(text: str, values: dict[str, str], depth: int = 0) -> list[tuple[str, str]]:
    """Return what a condition holds only with, from its ``and``-joined presence tests, also inside a flag value it
    is joined with (``values``: the rule's values by name): (``x``, "present") for ``x is defined`` and
    ``x is not none``, (``x``, "absent") for ``x is not defined``, (``x``, "known") for ``x is none``."""
    from jinja2 import nodes

    subjects: list[tuple[str, str]] = []
    for part in _conjunct_nodes(text):
        negated = isinstance(part, nodes.Not)
        inner = part.node if negated else part
        if isinstance(inner, nodes.Name) and inner.name in values and not negated and depth < 4:
            subjects += _presence_subjects(values[inner.name], values, depth + 1)
        elif isinstance(inner, nodes.Test) and not inner.args and _dotted(inner.node):
            want = {("defined", False): "present", ("defined", True): "absent", ("none", True): "present",
                    ("none", False): "known"}.get((inner.name, negated))
            if want:
                subjects.append((_dotted(inner.node), want))
    return subjects


def _negated_subjects(text: str, values: dict[str, str]) -> list[tuple[str, str]]:
    """Return what a pass needs of a check ``not x`` (false only where ``x`` holds): what ``x`` holds only with."""
    from jinja2 import nodes

    parts = _conjunct_nodes(text)
    if len(parts) != 1 or not isinstance(parts[0], nodes.Not):
        return []
    inner = parts[0].node
    if isinstance(inner, nodes.Name) and inner.name in values:
        return _presence_subjects(values[inner.name], values, 1)
    if isinstance(inner, nodes.Test) and inner.name == "defined" and not inner.args and _dotted(inner.node):
        return [(_dotted(inner.node), "present")]
    return []


def _dotted(node: Any) -> str:
    from jinja2 import nodes

    if isinstance(node, nodes.Getattr):
        return f"{_dotted(node.node)}.{node.attr}"
    return node.name if isinstance(node, nodes.Name) else ""


def _all_paths(ns: dict[str, Any]) -> dict[str, Any]:
    """Return every path → sample value of a lint namespace's sections."""
    found: dict[str, Any] = {}

    def walk(prefix: str, section: Any) -> None:
        for key, value in section._values.items():
            found[f"{prefix}.{key}"] = value
        for key, child in section._children.items():
            walk(f"{prefix}.{key}", child)

    for name, value in ns.items():
        if isinstance(value, expr.Section):
            walk(name, value)
    return found


def lint_ruleset(ruleset: RuleSet, derived: Derived,
                 cache: expr.CompileCache | None = None) -> tuple[dict[str, dict[str, str | None]], list[RuleError]]:
    """Return the value kinds of every rule and every problem found, for a whole rule set (``derived``, ``cache``:
    as :func:`lint_rule`; the cache defaults to the one the rule set was compiled with)."""
    lint = _Lint(derived, cache if cache is not None else ruleset.compile_cache)
    kinds: dict[str, dict[str, str | None]] = {}
    problems: list[RuleError] = []
    for rule in ruleset.rules.values():
        k, p = _lint_both(lint, rule)
        kinds[rule.id] = k
        problems.extend(p)
    return kinds, problems
