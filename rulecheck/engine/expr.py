"""Rule expressions: compiled once in a sandbox, evaluated per spec on SI floats.

Rule files may come from a pull request, so an expression is untrusted code.
We use jinja2's ``ImmutableSandboxedEnvironment`` to compile expressions and
narrow it further:

* no attribute access except on the model's own sections (no ``__class__``,
  no string or list methods);
* only the filters and tests listed here, and only registered physics methods
  and a few pure maths functions as callables; no ``range``, ``dict``,
  ``namespace``, ``lipsum``;
* ``**`` is bounded (small exponent, finite result), ``*`` and ``%`` refuse
  sequences and strings, so nothing can repeat its way to exhaustion;
* expression text is limited in length; jinja expressions have no loops, so
  evaluation time is bounded by the text.

A missing input is not an error: the model returns :class:`Missing`, an
undefined value that remembers its key path; any use of it raises
:class:`MissingInput`, which the engine turns into a ``not-checked`` outcome
naming the inputs that would allow the check. ``x is defined`` tests it.
"""

from __future__ import annotations

import math
from collections.abc import Callable
from typing import Any

from jinja2 import StrictUndefined, TemplateSyntaxError
from jinja2.exceptions import SecurityError, UndefinedError
from jinja2.sandbox import ImmutableSandboxedEnvironment
from jinja2.utils import missing as _JINJA_MISSING

MAX_EXPRESSION_LENGTH = 600
MAX_EXPONENT = 8.0
MAX_MAGNITUDE = 1e100

__all__ = [
    "CompileCache",
    "ExpressionError",
    "render_template",
    "spec_parent",
    "Missing",
    "MissingInput",
    "Section",
    "compile_expression",
    "environment",
]


class ExpressionError(Exception):
    """A rule expression that cannot be compiled or evaluated; the message says why."""


class MissingInput(Exception):
    """An expression needed a spec value that is not given and could not be derived."""

    def __init__(self, paths: tuple[str, ...]) -> None:
        super().__init__(", ".join(paths))
        self.paths = paths


class Missing(StrictUndefined):
    """An absent model value that remembers where it would have come from.

    Without ``paths`` it is jinja's ordinary undefined (an unknown name, or an
    attribute the sandbox refuses) and its use is an error of the rule.
    """

    __slots__ = ("_paths",)

    def __init__(self, hint: Any = None, obj: Any = None, name: Any = None, exc: Any = UndefinedError,
                 paths: tuple[str, ...] = ()) -> None:
        super().__init__(hint, _JINJA_MISSING if obj is None else obj, name, exc)
        self._paths = paths

    def _fail_with_undefined_error(self, *args: Any, **kwargs: Any) -> Any:
        if self._paths:
            raise MissingInput(self._paths)
        raise self._undefined_exception(self._undefined_message)


# jinja binds its operators to the base class's function; point every one at ours.
for _op in (
    "__add__ __radd__ __sub__ __rsub__ __mul__ __rmul__ __truediv__ __rtruediv__ __floordiv__ __rfloordiv__ "
    "__mod__ __rmod__ __pos__ __neg__ __call__ __getitem__ __lt__ __le__ __gt__ __ge__ __int__ __float__ "
    "__complex__ __pow__ __rpow__ __iter__ __str__ __len__ __eq__ __ne__ __bool__ __hash__ __contains__ __abs__"
).split():
    setattr(Missing, _op, Missing._fail_with_undefined_error)


# The undefined value of each absent model path, made once (it holds nothing but its path).
_ABSENT: dict[tuple[str, str], Missing] = {}


class Section:
    """A read-only view of one part of the model (``motor``, ``load``...) for expressions."""

    __slots__ = ("_name", "_values", "_children")

    def __init__(self, name: str, values: dict[str, Any], children: dict[str, Section] | None = None) -> None:
        object.__setattr__(self, "_name", name)
        object.__setattr__(self, "_values", values)
        object.__setattr__(self, "_children", children or {})

    def __getattr__(self, key: str) -> Any:
        if key.startswith("_"):
            raise AttributeError(key)
        children = object.__getattribute__(self, "_children")
        if key in children:
            return children[key]
        values = object.__getattribute__(self, "_values")
        if key in values:
            return values[key]
        name = object.__getattribute__(self, "_name")
        missing = _ABSENT.get((name, key))
        if missing is None:
            if len(_ABSENT) > 4096:
                _ABSENT.clear()
            missing = _ABSENT[(name, key)] = Missing(paths=(f"{name}.{key}" if name else key,))
        return missing

    __getitem__ = __getattr__

    def __setattr__(self, key: str, value: Any) -> None:
        raise SecurityError("the model is read-only")

    def __repr__(self) -> str:
        return f"<section {object.__getattribute__(self, '_name')}>"


# The sections every expression can name, present (perhaps empty) on every spec.
SECTION_NAMES = ("supply", "drive", "motor", "transmission", "load", "environment", "cable", "protection",
                 "duty", "spec", "site", "train")


class SectionMap(dict):  # type: ignore[type-arg]
    """The model's sections by name; ``paths`` holds each value the sections hold under its dotted path
    (``motor.brake.static_torque``), so translated code reads a whole path with one look-up."""

    __slots__ = ("paths",)


def sections_from(items: Any) -> SectionMap:
    """Return nested sections for (key path, value) pairs: ``motor.brake.static_torque`` → motor → brake.

    Where a value already sits where a section would go (or a section where a value would), the first one
    stays: a value is never replaced by a section, nor a section by a value.
    """
    sections = SectionMap()
    paths: dict[str, Any] = {}
    top: set[str] = set()  # names given a value at the top, which is no section's
    folders: dict[str, Section | None] = {}  # the section at each path prefix (None: a value is there)
    for path, value in items:
        prefix, dot, leaf = path.rpartition(".")
        if not dot:
            if leaf not in sections:
                top.add(leaf)
            continue
        node = folders.get(prefix, False)  # most values share their section with the one before
        if node is False:
            node = _folder(prefix, folders, sections, top)
        if node is not None and leaf not in node._children:
            node._values[leaf] = value
            paths[path] = value
    for name in SECTION_NAMES:
        if name not in sections:
            sections[name] = Section(name, {})
    sections.paths = paths
    return sections


def _folder(prefix: str, folders: dict[str, Section | None], sections: SectionMap, top: set[str]) -> Section | None:
    """Return the section at a path prefix, made on first use (None where a value sits instead).

    A module function, not a closure: a recursive closure is a reference cycle, which would keep each spec's
    sections alive until the garbage collector's next pass."""
    found = folders.get(prefix, False)
    if found is not False:
        return found  # type: ignore[return-value]
    up, dot, name = prefix.rpartition(".")
    node: Section | None
    if dot:
        parent = _folder(up, folders, sections, top)
        if parent is None:
            node = None
        else:
            children = parent._children
            node = children.get(name)
            if node is None and name not in parent._values:
                node = children[name] = Section(prefix, {}, {})
    else:
        node = sections.get(prefix)
        if node is None and prefix not in top:
            node = sections[prefix] = Section(prefix, {}, {})
    folders[prefix] = node
    return node


def _magnitude(value: Any) -> float | None:
    if isinstance(value, bool):
        return None
    if isinstance(value, (int, float)):
        return float(value)
    mag = getattr(value, "magnitude", None)  # pint quantities during the dimensional check
    return float(mag) if isinstance(mag, (int, float)) else None


_GUARDED_BINOPS = {"**": "_pow", "*": "_mul", "%": "_mod", "//": "_floordiv"}


class _RuleEnvironment(ImmutableSandboxedEnvironment):
    intercepted_binops = frozenset(["**", "*", "%", "//"])
    intercepted_unops = frozenset()

    def is_safe_attribute(self, obj: Any, attr: str, value: Any) -> bool:
        return isinstance(obj, Section) and not attr.startswith("_")

    def is_safe_callable(self, obj: Any) -> bool:
        return getattr(obj, "_rule_callable", False) is True

    def call_binop(self, context: Any, operator: str, left: Any, right: Any) -> Any:
        return _runtime(self)[_GUARDED_BINOPS[operator]](left, right)

    # jinja's own code (filters reading attributes, the tests' reference) reads as translated code does
    def getattr(self, obj: Any, attribute: str) -> Any:
        return _runtime(self)["_getattr"](obj, attribute)

    def getitem(self, obj: Any, argument: Any) -> Any:
        return _runtime(self)["_getitem"](obj, argument)


def _callable(fn: Callable[..., Any]) -> Callable[..., Any]:
    fn._rule_callable = True  # type: ignore[attr-defined]
    return fn


def _sqrt(x: Any) -> Any:
    return x**0.5


def _cos(x: Any) -> Any:
    return math.cos(float(getattr(x, "magnitude", x)))


def _sin(x: Any) -> Any:
    return math.sin(float(getattr(x, "magnitude", x)))


def _tan(x: Any) -> Any:
    return math.tan(float(getattr(x, "magnitude", x)))


def _interp(x: Any, xs: Any, ys: Any) -> Any:
    """Linear interpolation in a table (clamped at both ends)."""
    points = list(zip(xs, ys, strict=True))
    if not points:
        raise ExpressionError("interp needs a table")
    if x <= points[0][0]:
        return points[0][1]
    for (x0, y0), (x1, y1) in zip(points, points[1:], strict=False):
        if x <= x1:
            return y0 + (y1 - y0) * (x - x0) / (x1 - x0)
    return points[-1][1]


BUILTINS: dict[str, Callable[..., Any]] = {
    "min": min,
    "max": max,
    "abs": abs,
    "sqrt": _sqrt,
    "cos": _cos,
    "sin": _sin,
    "tan": _tan,
    "interp": _interp,
}

CONSTANTS: dict[str, float] = {
    "pi": math.pi,
    "g_n": 9.80665,  # standard acceleration of gravity, CGPM 1901 (exact)
    "sqrt2": math.sqrt(2.0),
    "sqrt3": math.sqrt(3.0),
}

_FILTERS = {"abs", "round", "float", "int", "default", "d", "length", "min", "max", "sum", "first", "last", "lower",
            "upper", "join"}
_TESTS = {"defined", "undefined", "none", "number", "string", "true", "false", "boolean", "in", "eq", "ne", "lt", "le",
          "gt", "ge", "==", "!=", "<", "<=", ">", ">="}


def environment(methods: dict[str, Callable[..., Any]] | None = None) -> _RuleEnvironment:
    """Return a fresh sandbox with the rule builtins and the given methods as callables."""
    env = _RuleEnvironment(undefined=Missing, autoescape=False)
    env.globals.clear()
    env.filters = {k: v for k, v in env.filters.items() if k in _FILTERS}
    env.tests = {k: v for k, v in env.tests.items() if k in _TESTS}
    for name, fn in {**BUILTINS, **(methods or {})}.items():
        env.globals[name] = _callable(_wrap(fn))
    env.globals.update(CONSTANTS)
    return env


def _wrap(fn: Callable[..., Any]) -> Callable[..., Any]:
    def call(*args: Any, **kwargs: Any) -> Any:
        for a in (*args, *kwargs.values()):
            if isinstance(a, Missing):
                a._fail_with_undefined_error()
        result = fn(*args, **kwargs)
        if result is None:
            # a method with no published value for these inputs (e.g. a table point it does not hold)
            return Missing(paths=(f"{getattr(fn, '__name__', 'method')}(): a published value for these inputs",))
        return result

    call.__name__ = getattr(fn, "__name__", "function")
    return call


# Names jinja itself binds in every template: ``self`` is the template object, the others belong to loops and macros.
JINJA_NAMES = frozenset({"self", "loop", "super", "caller", "varargs", "kwargs"})


class Names(dict):  # type: ignore[type-arg]
    """The names of a spec (sections, methods, constants): an unknown one is undefined, an error when used."""

    def __missing__(self, key: str) -> Any:
        return Missing(name=key)


class Compiled:
    """A compiled expression: a plain Python function of the rule's names and the spec's names."""

    __slots__ = ("fn", "environment", "text", "names")

    def __init__(self, fn: Callable[[dict[str, Any], dict[str, Any]], Any], env: Any, text: str,
                 names: frozenset[str] = frozenset()) -> None:
        self.fn = fn
        self.environment = env
        self.text = text
        self.names = names  # the names it may read from the rule's own (parameters, computed values)

    def __call__(self, **names: Any) -> Any:
        """Evaluate with ``names`` and the sandbox's globals (no model sections unless given)."""
        return self.fn(*_split_names(self.environment, names))


class CompiledTemplate(Compiled):
    """A compiled message template. ``bare``: the rule's own names it only substitutes as they are
    (``{{ margin }}``, not ``{{ margin * 2 }}``): for those the text shown may stand in for the value."""

    __slots__ = ("bare",)

    def __init__(self, fn: Callable[[dict[str, Any], dict[str, Any]], Any], env: Any, text: str,
                 names: frozenset[str] = frozenset(), bare: frozenset[str] = frozenset()) -> None:
        super().__init__(fn, env, text, names)
        self.bare = bare

    def render(self, **names: Any) -> str:
        """Return the text with ``names`` substituted."""
        return self.fn(*_split_names(self.environment, names))


def global_names(env: Any) -> Names:
    """Return (and keep on ``env``) the sandbox's globals as a mapping of names."""
    names = env.__dict__.get("rule_names")
    if names is None:
        names = env.rule_names = Names(env.globals)
    return names


def _split_names(env: Any, names: dict[str, Any]) -> tuple[dict[str, Any], Names]:
    """Return (rule names, spec names) for one mapping of names: its sections go with the spec's names,
    where translated code reads them (a rule cannot name a value like a section)."""
    sections = {k: v for k, v in names.items() if k in SECTION_NAMES}
    if not sections:
        return names, global_names(env)
    spec = Names(env.globals)
    spec.update(sections)
    return {k: v for k, v in names.items() if k not in sections}, spec


def _runtime(env: Any) -> dict[str, Any]:
    rt = env.__dict__.get("rule_runtime")
    if rt is None:
        from rulecheck.engine.compiler import runtime

        rt = env.rule_runtime = runtime(env, Section, Missing, _magnitude, MAX_EXPONENT, MAX_MAGNITUDE)
    return rt


class CompileCache:
    """What compiling rule text keeps for reuse: jinja's parsed trees (one parse per text per run: the run and
    the lint's two passes translate the same tree), and the Python source of each translation, which
    is compiled anew from that source by each run (no marshalled code is ever loaded: ``marshal`` is not
    made for data others may have written), keyed by :func:`source_key`.

    The caller owns it and passes it to :func:`compile_expression` and :func:`compile_template`. Sources
    may be kept between runs: the caller loads them only from entries it has verified as its own
    (signed with the user's key, which lives apart from every cache folder; keyed by the tool's code), with
    :meth:`load`, and saves :meth:`export` when ``dirty``. Anything else is translated from the rule's text.
    A kept source that no longer compiles is dropped and the text translated anew."""

    TREES_LIMIT = 8192

    __slots__ = ("sources", "trees", "dirty")

    def __init__(self) -> None:
        self.sources: dict[str, str] = {}
        self.trees: dict[tuple[bool, str], Any] = {}
        self.dirty = False

    def load(self, entry: Any) -> None:
        """Take the sources of a verified entry (``{"sources": {...}}``); text only."""
        sources = entry.get("sources") if isinstance(entry, dict) else None
        if isinstance(sources, dict):
            self.sources.update({k: v for k, v in sources.items() if isinstance(k, str) and isinstance(v, str)})
        self.dirty = False

    def export(self) -> dict[str, dict[str, str]]:
        """Return the sources to keep (``load``'s form)."""
        return {"sources": dict(self.sources)}

    def parse(self, env: Any, text: str, template: bool) -> Any:
        """Return jinja's tree of an expression (or template), parsed once (the translator only reads it)."""
        key = (template, text)
        tree = self.trees.get(key)
        if tree is None:
            if len(self.trees) > self.TREES_LIMIT:
                self.trees.clear()
            tree = self.trees[key] = _parse_anew(env, text, template)
        return tree

    def keep(self, key: str, source: str) -> None:
        """Keep a fresh translation."""
        self.sources[key] = source
        self.dirty = True

    def forget(self, key: str) -> None:
        """Drop a kept source that no longer compiles."""
        self.sources.pop(key, None)
        self.dirty = True


def _parse_anew(env: Any, text: str, template: bool) -> Any:
    from jinja2.parser import Parser

    if template:
        return env.parse(text)
    parser = Parser(env, text, state="variable")
    tree = parser.parse_expression()
    if not parser.stream.eos:
        raise TemplateSyntaxError("chunk after expression", parser.stream.current.lineno, None, None)
    return tree


def _translate(env: Any, kind: str, text: str, cache: CompileCache) -> str:
    """Return the Python source of one expression or template, translated from its text."""
    from rulecheck.engine.compiler import TranslationError, translate

    try:
        tree = cache.parse(env, text, kind == "template")
    except TemplateSyntaxError as exc:
        raise ExpressionError(f"syntax error: {exc.message}") from None
    except RecursionError:
        raise ExpressionError("expression nests too deeply") from None
    except Exception as exc:  # jinja raises a few types for malformed input
        raise ExpressionError(f"cannot compile: {exc}") from None
    try:
        return translate(tree, env, template=kind == "template", branches=getattr(env, "rule_branches", None),
                         reserved=JINJA_NAMES, sections=frozenset(SECTION_NAMES)).source
    except TranslationError as exc:
        raise ExpressionError(str(exc)) from None
    except RecursionError:
        raise ExpressionError("expression nests too deeply") from None


def _build(env: Any, kind: str, text: str, cache: CompileCache) -> Compiled:
    """Translate (or take from the kept sources), compile and wrap one expression or template."""
    key = source_key(env, kind, text)
    source = cache.sources.get(key)
    fresh = source is None
    if source is None:
        source = _translate(env, kind, text, cache)
    namespace = dict(_runtime(env))
    try:
        exec(compile(source, "<rule>", "exec"), namespace)  # noqa: S102 - our own translation, no builtins
        names, bare = frozenset(namespace["_NAMES"]), frozenset(namespace["_BARE"])
    except (SyntaxError, RecursionError, ValueError, MemoryError, KeyError, TypeError) as exc:
        if not fresh:  # a kept source that no longer compiles (or lacks its names): translate anew
            cache.forget(key)
            return _build(env, kind, text, cache)
        raise ExpressionError(f"cannot compile: {type(exc).__name__}") from None
    if fresh:
        cache.keep(key, source)
    if kind == "template":
        return CompiledTemplate(namespace["_compiled"], env, text, names, bare)
    return Compiled(namespace["_compiled"], env, text, names)


def compile_expression(env: _RuleEnvironment, text: str, cache: CompileCache | None = None) -> Compiled:
    """Compile one expression; raise :class:`ExpressionError` with the reason.

    ``cache``: the caller's :class:`CompileCache` (none: nothing is reused or kept)."""
    if not isinstance(text, str):
        text = str(text)
    if len(text) > MAX_EXPRESSION_LENGTH:
        raise ExpressionError(f"expression is longer than {MAX_EXPRESSION_LENGTH} characters")
    if "__" in text:
        raise ExpressionError("names with double underscores are not allowed in rule expressions")
    return _build(env, "expr", text, cache if cache is not None else CompileCache())


def compile_template(env: _RuleEnvironment, text: str, cache: CompileCache | None = None) -> CompiledTemplate:
    """Compile a message template (the caller has checked its form); raise :class:`ExpressionError`."""
    return _build(env, "template", text, cache if cache is not None else CompileCache())  # type: ignore[return-value]


def source_key(env: Any, kind: str, text: str) -> str:
    """Return the key of a translation: the environment's tag and branches, the kind and the text."""
    import hashlib

    tag = f"{getattr(env, 'cache_tag', 'run')}/{getattr(env, 'rule_branches', None)}"
    return hashlib.sha256(f"{tag}\0{kind}\0{text}".encode()).hexdigest()


def spec_parent(env: Any, namespace: dict[str, Any]) -> Names:
    """Return the names every rule sees on one spec: the sandbox's globals, then the model's sections."""
    parent = Names(env.globals)
    parent.update(namespace)
    paths = getattr(namespace, "paths", None)
    if paths:
        parent.update(paths)
    return parent


def render_template(template: CompiledTemplate, parent: dict[str, Any], names: dict[str, Any]) -> str:
    """Render a message template with the rule's ``names`` and a spec's ``parent`` names."""
    return template.fn(names, parent)


def evaluate(compiled: Compiled, namespace: dict[str, Any]) -> Any:
    """Evaluate a compiled expression with one mapping of names; raise MissingInput, or ExpressionError."""
    return run(compiled, *_split_names(compiled.environment, namespace))


def run(compiled: Compiled, names: dict[str, Any], parent: dict[str, Any]) -> Any:
    """Evaluate a compiled expression with the rule's ``names`` and the spec's ``parent`` names (see
    :func:`evaluate`)."""
    try:
        result = compiled.fn(names, parent)
        if isinstance(result, Missing):
            result._fail_with_undefined_error()
        return result
    except MissingInput:
        raise
    except Exception as exc:
        raise expression_error(exc) from None


def expression_error(exc: Exception) -> ExpressionError:
    """Return the rule error that an exception raised while evaluating an expression stands for."""
    if isinstance(exc, SecurityError):
        return ExpressionError(f"not allowed: {exc}")
    if isinstance(exc, UndefinedError):
        return ExpressionError(f"unknown name: {exc.message}")
    if isinstance(exc, ZeroDivisionError):
        return ExpressionError("division by zero")
    name = type(exc).__name__
    if name == "DimensionalityError":  # pint: a torque compared with a speed, and the like
        return ExpressionError(f"dimension mismatch: {exc}")
    if isinstance(exc, RecursionError):
        return ExpressionError("expression nests too deeply")
    return ExpressionError(f"{name}: {exc}")
