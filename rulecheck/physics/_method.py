"""Registry of physics methods and the kinds of their arguments.

Physics functions compute on plain floats in the internal SI units of
:mod:`rulecheck.units` (shaft speed in rad/s, torque in N*m, fractions as
numbers). :func:`method` records the kind of each argument and of the result, so
that

* rule expressions can call a method by name (the engine exposes every
  registered method whose ``expose`` flag is true), and
* ``rulecheck rules lint`` can check the dimensions of an expression once, with
  pint quantities, before any spec is evaluated.

Tests call :func:`call_with_quantities` to pass pint quantities in any unit and
get a quantity back, so a check value from a handbook can be written in the
handbook's own units.
"""

from __future__ import annotations

import inspect
from collections.abc import Callable
from dataclasses import dataclass, field
from typing import Any

from rulecheck import units


@dataclass(frozen=True)
class MethodInfo:
    """What the engine and the linter know about one physics method."""

    name: str
    function: Callable[..., Any]
    returns: str  # kind name of the result (see rulecheck.units.KINDS)
    params: dict[str, str] = field(default_factory=dict)  # argument -> kind name
    expose: bool = True
    summary: str = ""


METHODS: dict[str, MethodInfo] = {}


def method(returns: str, expose: bool = True, **params: str) -> Callable[[Callable[..., Any]], Callable[..., Any]]:
    """Register a physics function: the kind it returns and the kind of each argument."""

    def register(fn: Callable[..., Any]) -> Callable[..., Any]:
        signature = inspect.signature(fn)
        for name, kind_name in [("return", returns), *params.items()]:
            if kind_name not in units.KINDS:
                raise ValueError(f"{fn.__name__}: unknown kind {kind_name!r} for {name}")
        unknown = set(params) - set(signature.parameters)
        if unknown:
            raise ValueError(f"{fn.__name__}: kinds given for unknown arguments {sorted(unknown)}")
        undeclared = [
            p
            for p, spec in signature.parameters.items()
            if p not in params and spec.default is inspect.Parameter.empty
        ]
        if undeclared:
            raise ValueError(f"{fn.__name__}: no kind declared for {undeclared}")
        if fn.__name__ in METHODS:
            raise ValueError(f"physics method {fn.__name__!r} registered twice")
        doc = inspect.getdoc(fn) or ""
        METHODS[fn.__name__] = MethodInfo(
            fn.__name__, fn, returns, dict(params), expose, doc.splitlines()[0] if doc else ""
        )
        return fn

    return register


def call_with_quantities(fn: Callable[..., Any], *args: Any, **kwargs: Any) -> Any:
    """Call a registered method with pint quantities; return a pint quantity of its result kind."""
    info = METHODS[fn.__name__]
    ureg = units.registry()
    bound = inspect.signature(fn).bind(*args, **kwargs)
    plain: dict[str, Any] = {}
    for name, value in bound.arguments.items():
        kind_name = info.params.get(name)
        if kind_name is None or not hasattr(value, "to"):
            plain[name] = value
            continue
        si = units.KINDS[kind_name].si_unit.replace("^", "**")
        if kind_name == "fraction":
            plain[name] = float(value.to("dimensionless").magnitude)
        else:
            plain[name] = value.to(si).magnitude
    result = fn(**plain)
    si = units.KINDS[info.returns].si_unit.replace("^", "**")
    if info.returns == "temperature":
        return ureg.Quantity(result, "degC")
    return ureg.Quantity(result, "dimensionless" if si == "1" else si)
