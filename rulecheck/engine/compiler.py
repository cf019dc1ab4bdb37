"""Rule expressions and message templates translated to plain Python functions.

jinja parses the text (its expression grammar is what rule authors write); this module then
writes Python source for the parsed tree itself, node by node, from a short list of allowed
node types, and compiles it with no builtins. Every operation that the sandbox guards goes
through a helper here:

* a name is looked up in the rule's own names, then in the spec's (sections, methods,
  constants); an unknown name is an undefined value, an error when used;
* ``a.b`` and ``a[b]`` read model sections only (no name starting with ``_``), or an element
  of a list by integer index;
* a call is made only to a function marked as a rule callable (the physics methods and the
  rule builtins);
* ``*``, ``**``, ``%`` and ``//`` refuse text and lists and bound the exponent;
* filters and tests are the sandbox environment's own (a short allowed list).

Any other node (slices, ``*args``, attribute stores...) is refused when the rule is compiled.
A compiled expression is a function of two mappings, the rule's names and the spec's names,
so evaluating one costs a few dictionary look-ups rather than a jinja context.

For the dimensional lint the same translation can evaluate *every* branch: the test and both
arms of ``a if c else b`` and both operands of ``and``/``or`` (see :func:`translate`).
"""

from __future__ import annotations

import keyword
import math
import reprlib
from typing import Any, NamedTuple

from jinja2 import nodes
from jinja2 import tests as jinja_tests
from jinja2.exceptions import SecurityError
from jinja2.runtime import Undefined

from rulecheck.units import REL_TOL

__all__ = ["Translation", "TranslationError", "runtime", "translate"]

_BINARY = {"Sub": "-", "Div": "/"}  # plain Python operators (jinja's sandbox leaves them alone)
_GUARDED = {"Add": "_add", "Mul": "_mul", "Pow": "_pow", "Mod": "_mod", "FloorDiv": "_floordiv"}
# Text and lists a rule builds may not grow past these (values build on each other: doubling a text in each of 24
# values would be 2**24 times its length). A message is shown to MAX_MESSAGE characters.
MAX_TEXT = 1000
MAX_ITEMS = 1000
MAX_MESSAGE = 1000
_COMPARE = {"eq": "==", "ne": "!=", "gt": ">", "gteq": ">=", "lt": "<", "lteq": "<=", "in": "in",
            "notin": "not in"}
# Comparisons of two numbers go through these helpers: they compare at the data's precision (REL_TOL below).
_NUMERIC_COMPARE = {"eq": "_eq", "ne": "_ne", "gt": "_gt", "gteq": "_ge", "lt": "_lt", "lteq": "_le"}

# Two numbers within REL_TOL (rulecheck.units, 1e-9: the one definition, shared with the physics' limit tests) of
# each other compare as equal: 690 V x 1.1 = 759.0000000000001 is 759 V.


# jinja's own tests that are one Python expression: written inline (as jinja's functions read), not called
_INLINE_TESTS = {"defined": (jinja_tests.test_defined, "(not _isinstance({}, _Undefined))"),
                 "undefined": (jinja_tests.test_undefined, "_isinstance({}, _Undefined)"),
                 "none": (jinja_tests.test_none, "({} is None)")}


class TranslationError(Exception):
    """A construct that rule expressions may not use; the message says which."""


class Translation(NamedTuple):
    """The Python source of one expression or template and the names it reads.

    ``names``: the rule's own names it may read (parameters, computed values), collected from the jinja tree
    while translating; ``bare``: those a template only substitutes as they are (``{{ margin }}``) and reads
    nowhere else. The source also defines them (``_NAMES``, ``_BARE``), so a kept source or its compiled
    form carries them too."""

    source: str
    names: frozenset[str]
    bare: frozenset[str]


def translate(tree: nodes.Node, env: Any, template: bool = False, branches: str | None = None,
              reserved: frozenset[str] = frozenset(), sections: frozenset[str] = frozenset()) -> Translation:
    """Return the :class:`Translation` defining ``_compiled(L, G)`` for a parsed expression (or template).

    ``branches`` is None at run time; "first" or "second" evaluates every part of conditionals and
    of ``and``/``or`` and takes the first or the second arm (the lint's two passes). ``reserved``
    names may not appear in the text. ``sections`` are the names of model sections, always present
    among the spec's names and never a rule's own: they are read there directly, and their attributes
    without the general guard (a section is known to be one).
    """
    writer = _Writer(env, branches, reserved, sections)
    if template:
        body = writer.template(tree)
    else:
        body = writer.visit(tree)
    elsewhere = frozenset(writer.reads)
    names = elsewhere | writer.bare
    bare = writer.bare - elsewhere
    source = (f"def _compiled(L, G):\n    return {body}\n"
              f"_NAMES = {tuple(sorted(names))!r}\n_BARE = {tuple(sorted(bare))!r}\n")
    return Translation(source, names, bare)


def _presence_test(node: nodes.Node) -> bool:
    """Return whether a condition only tests whether values are present (``is defined``, ``is none``, joined by
    ``and``, ``or``, ``not``): the lint of messages decides those as at run time."""
    if isinstance(node, nodes.Test):
        return node.name in ("defined", "undefined", "none")
    if isinstance(node, (nodes.And, nodes.Or)):
        return _presence_test(node.left) and _presence_test(node.right)
    if isinstance(node, nodes.Not):
        return _presence_test(node.node)
    return False


def _holds_presence_test(node: nodes.Node) -> bool:
    """Return whether an ``and``/``or`` chain has a part that only tests presence."""
    if isinstance(node, (nodes.And, nodes.Or)):
        return any(_holds_presence_test(part) if type(part) is type(node) else _presence_test(part)
                   for part in (node.left, node.right))
    return _presence_test(node)


class _Writer:
    def __init__(self, env: Any, branches: str | None, reserved: frozenset[str], sections: frozenset[str]) -> None:
        self.env = env
        self.branches = branches
        self.reserved = reserved
        self.sections = sections
        self.reads: set[str] = set()  # the rule's own names read (anywhere but as a bare substitution)
        self.bare: set[str] = set()  # the rule's own names substituted as they are: {{ name }}
        # lint of messages: a test of presence (is defined, is none) decides as at run time, since the lint's
        # sample spec has exactly the values present that a spec would
        self.guards = bool(getattr(env, "rule_guards", False))

    @staticmethod
    def constant(value: Any) -> str:
        """Return a Python literal for a constant of the text (repr of str, int, float, bool, None)."""
        if isinstance(value, float) and not math.isfinite(value):
            raise TranslationError(f"constant {value!r} is not a finite number")
        return repr(value)

    def template(self, tree: nodes.Node) -> str:
        parts: list[str] = []
        for node in tree.body if isinstance(tree, nodes.Template) else [tree]:
            if not isinstance(node, nodes.Output):
                raise TranslationError("only {{ value }} substitutions are allowed in messages")
            for child in node.nodes:
                if isinstance(child, nodes.TemplateData):
                    parts.append(self.constant(child.data))
                elif isinstance(child, nodes.Name) and child.name not in self.sections:
                    parts.append(f"_text({self.rule_name(child)})")
                    self.bare.add(child.name)
                else:
                    parts.append(f"_text({self.visit(child)})")
        return "_message((" + "".join(p + ", " for p in parts) + "))"

    def visit(self, node: nodes.Node) -> str:
        method = getattr(self, "visit_" + type(node).__name__, None)
        if method is None:
            raise TranslationError(f"{type(node).__name__.lower()} is not allowed in a rule expression")
        return method(node)

    # --- names and values ---------------------------------------------------------------------------

    def visit_Name(self, node: nodes.Name) -> str:
        if node.name in self.sections:
            self.rule_name(node)  # checks its form
            return f"G[{node.name!r}]"
        self.reads.add(node.name)
        return self.rule_name(node)

    def rule_name(self, node: nodes.Name) -> str:
        """Return the code reading a name: the rule's own, else the spec's (a section: the spec's only)."""
        if node.ctx != "load":
            raise TranslationError("assignment is not allowed in a rule expression")
        if node.name in self.reserved:
            raise TranslationError(f"'{node.name}' is not a model value; it is not allowed in rules")
        key = repr(node.name)
        if node.name in self.sections:
            return f"G[{key}]"
        return f"(L[{key}] if {key} in L else G[{key}])"

    def visit_Const(self, node: nodes.Const) -> str:
        value = node.value
        if value is None or isinstance(value, bool | int | float | str):
            return self.constant(value)
        raise TranslationError(f"constant {value!r} is not allowed in a rule expression")

    def visit_List(self, node: nodes.List) -> str:
        return "[" + "".join(self.visit(i) + ", " for i in node.items) + "]"

    def visit_Tuple(self, node: nodes.Tuple) -> str:
        if node.ctx != "load":
            raise TranslationError("assignment is not allowed in a rule expression")
        return "(" + "".join(self.visit(i) + ", " for i in node.items) + ")"

    def visit_Dict(self, node: nodes.Dict) -> str:
        return "{" + "".join(f"{self.visit(p.key)}: {self.visit(p.value)}, " for p in node.items) + "}"

    def visit_Getattr(self, node: nodes.Getattr) -> str:
        if node.ctx != "load":
            raise TranslationError("assignment is not allowed in a rule expression")
        if isinstance(node.node, nodes.Name) and node.node.name in self.sections and not node.attr.startswith("_"):
            text = f"G[{node.node.name!r}].__getattr__({self.constant(node.attr)})"
        else:
            text = f"_getattr({self.visit(node.node)}, {self.constant(node.attr)})"
        path = self.section_path(node)
        if path is None or self.branches is not None:
            return text
        # a model value read by its whole path: one look-up among the spec's names, where the model puts
        # each value under its dotted path (expr.sections_from); anything else walks the sections
        key = self.constant(path)
        return f"(G[{key}] if {key} in G else {text})"

    def section_path(self, node: nodes.Node) -> str | None:
        """Return ``motor.brake.torque`` for a chain of plain attributes on a section name, else None."""
        parts: list[str] = []
        while isinstance(node, nodes.Getattr):
            if node.attr.startswith("_") or not node.attr.isidentifier():
                return None
            parts.append(node.attr)
            node = node.node
        if not isinstance(node, nodes.Name) or node.name not in self.sections:
            return None
        return ".".join([node.name, *reversed(parts)])

    def visit_Getitem(self, node: nodes.Getitem) -> str:
        if node.ctx != "load":
            raise TranslationError("assignment is not allowed in a rule expression")
        if isinstance(node.arg, nodes.Slice):
            raise TranslationError("slices are not allowed in a rule expression")
        return f"_getitem({self.visit(node.node)}, {self.visit(node.arg)})"

    # --- operators ------------------------------------------------------------------------------------

    def _binary(self, node: Any) -> str:
        name = type(node).__name__
        left, right = self.visit(node.left), self.visit(node.right)
        if name in _BINARY:
            return f"({left} {_BINARY[name]} {right})"
        return f"{_GUARDED[name]}({left}, {right})"

    visit_Add = visit_Sub = visit_Div = visit_Mul = visit_Pow = visit_Mod = visit_FloorDiv = _binary

    def visit_Concat(self, node: nodes.Concat) -> str:
        return "_cat((" + "".join(f"_text({self.visit(n)}), " for n in node.nodes) + "))"

    def visit_Neg(self, node: nodes.Neg) -> str:
        return f"(-{self.visit(node.node)})"

    def visit_Pos(self, node: nodes.Pos) -> str:
        return f"(+{self.visit(node.node)})"

    def visit_Not(self, node: nodes.Not) -> str:
        return f"(not {self.visit(node.node)})"

    def visit_Compare(self, node: nodes.Compare) -> str:
        for operand in node.ops:
            if operand.op not in _COMPARE:
                raise TranslationError(f"operator {operand.op!r} is not allowed in a rule expression")
        left = self.visit(node.expr)
        if len(node.ops) == 1:
            operand = node.ops[0]
            right = self.visit(operand.expr)
            if operand.op in _NUMERIC_COMPARE:
                return f"{_NUMERIC_COMPARE[operand.op]}({left}, {right})"
            return f"({left} {_COMPARE[operand.op]} {right})"
        # a chain (1 < x < 2): each later operand is evaluated only when the comparison before it held, as in Python
        parts = "".join(f", {self.constant(o.op)}, lambda: {self.visit(o.expr)}" for o in node.ops)
        return f"_chain({left}{parts})"

    def _boolean(self, node: Any) -> str:
        if self.branches is not None and self.guards and _holds_presence_test(node):
            # lint of messages: every part evaluated (a missing one raises), but a presence test that settles the
            # whole (false in an 'and', true in an 'or') stops it, as at run time
            kind = type(node)
            parts: list[nodes.Node] = []
            todo = [node]
            while todo:
                item = todo.pop()
                if type(item) is kind:
                    todo += [item.right, item.left]
                else:
                    parts.append(item)
            items = "".join(f"({_presence_test(part)!r}, lambda: {self.visit(part)}), " for part in parts)
            return f"_settle({isinstance(node, nodes.Or)!r}, {items})"
        left, right = self.visit(node.left), self.visit(node.right)
        if self.branches is not None:  # lint: both operands, for their dimensions; a missing left one is used
            return f"((_operand({left})), ({right}))[1]"  # (its truth is asked at run time)
        return f"({left} {'and' if isinstance(node, nodes.And) else 'or'} {right})"

    visit_And = visit_Or = _boolean

    def visit_CondExpr(self, node: nodes.CondExpr) -> str:
        test, first = self.visit(node.test), self.visit(node.expr1)
        second = self.visit(node.expr2) if node.expr2 is not None else "_no_else()"
        if self.branches is not None and self.guards and not _presence_test(node.test) and \
                isinstance(node.test, (nodes.And, nodes.Or)) and _holds_presence_test(node.test):
            # lint of messages: a presence test that settles the condition chooses the arm, as at run time
            return f"_choose(lambda: {test}, lambda: {first}, lambda: {second}, {self.branches == 'first'})"
        if self.branches is not None and not (self.guards and _presence_test(node.test)):
            # lint: the test (used, as at run time) and one arm, chosen by the pass
            chosen = first if self.branches == "first" or node.expr2 is None else second
            return f"((_operand({test})), ({chosen}))[1]"
        return f"({first} if {test} else {second})"

    # --- calls, filters, tests ------------------------------------------------------------------------

    def _arguments(self, node: Any) -> str:
        if getattr(node, "dyn_args", None) is not None or getattr(node, "dyn_kwargs", None) is not None:
            raise TranslationError("*args and **kwargs are not allowed in a rule expression")
        if not all(k.key.isidentifier() and not keyword.iskeyword(k.key) for k in node.kwargs):
            raise TranslationError("keyword arguments must be plain names")
        return "".join(self.visit(a) + ", " for a in node.args) + "".join(
            f"{k.key}={self.visit(k.value)}, " for k in node.kwargs)

    def visit_Call(self, node: nodes.Call) -> str:
        return f"_call({self.visit(node.node)}, {self._arguments(node)})"

    def visit_Filter(self, node: nodes.Filter) -> str:
        if node.node is None:
            raise TranslationError("filter blocks are not allowed")
        if node.name not in self.env.filters:
            raise TranslationError(f"no filter named '{node.name}'")
        return f"_filter({self.constant(node.name)}, {self.visit(node.node)}, {self._arguments(node)})"

    def visit_Test(self, node: nodes.Test) -> str:
        if node.name not in self.env.tests:
            raise TranslationError(f"no test named '{node.name}'")
        if node.name in _INLINE_TESTS and self.env.tests[node.name] is _INLINE_TESTS[node.name][0] \
                and not node.args and not node.kwargs:
            return _INLINE_TESTS[node.name][1].format(self.visit(node.node))
        return f"_test({self.constant(node.name)}, {self.visit(node.node)}, {self._arguments(node)})"


# --- the helpers the generated code calls --------------------------------------------------------------


def runtime(env: Any, section_type: type, missing_type: type, magnitude: Any, max_exponent: float,
            max_magnitude: float) -> dict[str, Any]:
    """Return the globals of compiled expressions for ``env`` (no builtins: only these helpers)."""
    return {"__builtins__": {}, **_access(section_type, missing_type),
            **_operators(magnitude, max_exponent, max_magnitude), **_filters_and_tests(env, missing_type),
            "_text": _text, "_Undefined": Undefined, "_isinstance": isinstance}


def _access(section_type: type, missing_type: type) -> dict[str, Any]:
    """Return ``_getattr`` and ``_getitem``: model sections by name, list elements by index, nothing else."""

    def unsafe(obj: Any, attr: str) -> Any:
        return missing_type(f"access to attribute {attr!r} of {type(obj).__name__!r} object is unsafe.", obj, attr,
                            SecurityError)

    def _getattr(obj: Any, attr: str) -> Any:
        if isinstance(obj, section_type):
            if attr.startswith("_"):
                return unsafe(obj, attr)
            return type(obj).__getattr__(obj, attr)
        if isinstance(obj, missing_type):
            return obj  # a part of a missing thing is missing too
        return unsafe(obj, attr)

    def _getitem(obj: Any, argument: Any) -> Any:
        if isinstance(obj, section_type) and isinstance(argument, str):
            return _getattr(obj, argument)
        if isinstance(obj, list | tuple) and isinstance(argument, int) and not isinstance(argument, bool):
            try:
                return obj[argument]
            except IndexError:
                return missing_type(paths=(f"[{argument}]",))
        if isinstance(obj, missing_type):
            return obj
        return missing_type(obj=obj, name=str(argument))

    return {"_getattr": _getattr, "_getitem": _getitem}


def _refuse_sequences(operator: str, left: Any, right: Any) -> None:
    if isinstance(left, str | list | tuple | dict) or isinstance(right, str | list | tuple | dict):
        raise SecurityError(f"operator {operator!r} is not allowed on text or lists in a rule expression")


_PLAIN = (float, int)


def _bounded(value: Any) -> Any:
    """Return ``value``, refusing text longer than MAX_TEXT characters and lists longer than MAX_ITEMS."""
    if isinstance(value, str):
        if len(value) > MAX_TEXT:
            raise SecurityError(f"text longer than {MAX_TEXT} characters in a rule expression")
    elif isinstance(value, list | tuple | dict) and len(value) > MAX_ITEMS:
        raise SecurityError(f"a list longer than {MAX_ITEMS} items in a rule expression")
    return value


def _add(left: Any, right: Any) -> Any:
    if type(left) in _PLAIN and type(right) in _PLAIN:  # two numbers: nothing to bound
        return left + right
    if isinstance(left, str | list | tuple) and isinstance(right, str | list | tuple):
        if isinstance(left, str) and len(left) + len(right) > MAX_TEXT:
            raise SecurityError(f"text longer than {MAX_TEXT} characters in a rule expression")
        if not isinstance(left, str) and len(left) + len(right) > MAX_ITEMS:
            raise SecurityError(f"a list longer than {MAX_ITEMS} items in a rule expression")
    return left + right


_SHORT = reprlib.Repr()
_SHORT.maxlevel, _SHORT.maxlist, _SHORT.maxtuple, _SHORT.maxdict, _SHORT.maxstring = 3, 20, 20, 20, MAX_TEXT


def _text(value: Any) -> str:
    """A value as text in a message or ``~``: lists shown to a bounded depth and length (a list nested in itself
    24 times over would print 2**24 leaves)."""
    if isinstance(value, list | tuple | dict | set | frozenset):
        return _SHORT.repr(value)
    return str(value)


def _cat(parts: tuple[str, ...]) -> str:
    """``a ~ b``: the texts joined, refused past MAX_TEXT characters (counted before they are joined)."""
    if sum(map(len, parts)) > MAX_TEXT:
        raise SecurityError(f"text longer than {MAX_TEXT} characters in a rule expression")
    return "".join(parts)


def _message(parts: tuple[str, ...]) -> str:
    """A rendered message: its parts joined, shown to MAX_MESSAGE characters (each part is a bounded value)."""
    text = "".join(parts)
    return text if len(text) <= MAX_MESSAGE else text[:MAX_MESSAGE - 1] + "…"


def _mul(left: Any, right: Any) -> Any:
    if type(left) in _PLAIN and type(right) in _PLAIN:  # two numbers: nothing to refuse
        return left * right
    _refuse_sequences("*", left, right)
    return left * right


def _mod(left: Any, right: Any) -> Any:
    _refuse_sequences("%", left, right)
    return left % right


def _floordiv(left: Any, right: Any) -> Any:
    _refuse_sequences("//", left, right)
    return left // right


def _call(fn: Any, *args: Any, **kwargs: Any) -> Any:
    if getattr(fn, "_rule_callable", False) is not True:
        raise SecurityError(f"{fn!r} is not safely callable")
    return fn(*args, **kwargs)


def _operators(magnitude: Any, max_exponent: float, max_magnitude: float) -> dict[str, Any]:
    """Return the guarded operators (no repeating text or lists; ``**`` bounded) and ``_call``."""

    def _pow(left: Any, right: Any) -> Any:
        _refuse_sequences("**", left, right)
        exponent = magnitude(right)
        base = magnitude(left)
        if exponent is None or abs(exponent) > max_exponent:
            raise SecurityError(f"exponent {right!r} is outside ±{max_exponent:g} in a rule expression")
        if base is not None and abs(base) > max_magnitude ** (1 / max(abs(exponent), 1)):
            raise SecurityError("power too large in a rule expression")
        return left**right

    return {"_add": _add, "_cat": _cat, "_message": _message, "_mul": _mul, "_mod": _mod, "_floordiv": _floordiv,
            "_pow": _pow, "_call": _call, **_COMPARISONS}


# --- comparisons at the data's precision -----------------------------------------------------------------------


def _numbers(left: Any, right: Any) -> bool:
    """True when both operands are plain numbers (not flags): the only operands compared with a tolerance."""
    return type(left) in _PLAIN and type(right) in _PLAIN


def _close(left: float, right: float) -> bool:
    return abs(left - right) <= REL_TOL * max(abs(left), abs(right))


def _eq(left: Any, right: Any) -> Any:
    return _close(left, right) if _numbers(left, right) else left == right


def _ne(left: Any, right: Any) -> Any:
    return not _close(left, right) if _numbers(left, right) else left != right


def _lt(left: Any, right: Any) -> Any:
    return left < right and not _close(left, right) if _numbers(left, right) else left < right


def _le(left: Any, right: Any) -> Any:
    return left <= right or _close(left, right) if _numbers(left, right) else left <= right


def _gt(left: Any, right: Any) -> Any:
    return left > right and not _close(left, right) if _numbers(left, right) else left > right


def _ge(left: Any, right: Any) -> Any:
    return left >= right or _close(left, right) if _numbers(left, right) else left >= right


def _in(left: Any, right: Any) -> Any:
    return left in right


def _notin(left: Any, right: Any) -> Any:
    return left not in right


_BY_OPERATOR = {"eq": _eq, "ne": _ne, "gt": _gt, "gteq": _ge, "lt": _lt, "lteq": _le, "in": _in, "notin": _notin}


def _chain(left: Any, *rest: Any) -> Any:
    """Evaluate ``a op1 b op2 c …`` as Python does (stop at the first false link), each link at the data's precision."""
    result: Any = True
    for i in range(0, len(rest), 2):
        right = rest[i + 1]()
        result = _BY_OPERATOR[rest[i]](left, right)
        if not result:
            return result
        left = right
    return result


_COMPARISONS = {"_eq": _eq, "_ne": _ne, "_lt": _lt, "_le": _le, "_gt": _gt, "_ge": _ge, "_chain": _chain}


def _filters_and_tests(env: Any, missing_type: type) -> dict[str, Any]:
    """Return ``_filter``, ``_test`` (the sandbox's own), ``_no_else`` and the lint's ``_operand``."""
    # filters and tests that take no jinja context are called directly; the others through jinja
    try:
        from jinja2.utils import _PassArg

        plain_filters = {n: f for n, f in env.filters.items() if _PassArg.from_obj(f) is None}
        plain_tests = {n: f for n, f in env.tests.items() if _PassArg.from_obj(f) is None}
    except ImportError:  # another jinja version: every call goes through jinja
        plain_filters, plain_tests = {}, {}

    def _filter(name: str, value: Any, *args: Any, **kwargs: Any) -> Any:
        fn = plain_filters.get(name)
        if fn is not None:
            return _bounded(fn(value, *args, **kwargs))
        return _bounded(env.call_filter(name, value, args, kwargs))

    def _test(name: str, value: Any, *args: Any, **kwargs: Any) -> Any:
        fn = plain_tests.get(name)
        if fn is not None:
            return fn(value, *args, **kwargs)
        return env.call_test(name, value, args, kwargs)

    def _no_else() -> Any:
        return missing_type("the inline if-expression evaluated to false and no else section was defined.")

    settled: list[bool] = []  # whether the last _settle stopped at a presence test (read by _choose)

    def _settle(stop_on: bool, *items: Any) -> Any:
        value: Any = not stop_on
        settled[:] = [False]
        for presence, part in items:
            value = part()
            if presence and bool(value) is stop_on:
                settled[:] = [True]
                return stop_on
            _operand(value)
        settled[:] = [False]
        return value

    def _choose(test: Any, first: Any, second: Any, take_first: bool) -> Any:
        value = _operand(test())
        if settled and settled[0]:
            return first() if value else second()
        return first() if take_first else second()

    def _operand(value: Any) -> Any:
        """Return a value whose truth the run would ask (lint: the test of ``and``, ``or``, ``if``); a missing
        one raises, as its truth does at run time."""
        if isinstance(value, missing_type):
            value._fail_with_undefined_error()
        return value

    return {"_filter": _filter, "_test": _test, "_no_else": _no_else, "_operand": _operand, "_settle": _settle,
            "_choose": _choose}
