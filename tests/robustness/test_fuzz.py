"""Property-based fuzzing: random mutations of valid specs never crash the checker, finish in bounded time, and
always give a result that validates against the JSON output schema."""

from __future__ import annotations

import time
import warnings
from typing import Any

import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from rulecheck.check import CheckContext, check_document
from rulecheck.load import LoadError, load_text
from rulecheck.report import jsonout
from rulecheck.result import assemble
from tests.robustness.specs import CONVEYOR, PUMP

# A good spec checks in ~10 ms; 2 s per example leaves room for a loaded 2-core machine and still catches a hang.
FUZZ = settings(max_examples=150, deadline=2000, suppress_health_check=[HealthCheck.too_slow,
                                                                         HealthCheck.function_scoped_fixture])
BOUND_SECONDS = 10.0  # a hang guard, not a benchmark (shared CI machines stall for seconds)

BASES = [CONVEYOR, PUMP]
UNITS = ["kW", "hp", "N*m", "r/min", "rpm", "Hz", "V", "A", "%", "kg*m^2", "degC", "K", "m/s", "s", "", "1/min",
         "lbf*ft", "V/krpm", "ohm", "9**9**9", "((((kW))))", "m^2^2", "kWz", "€", "1e400 kW"]
SCALARS = st.one_of(
    st.text(max_size=40),
    st.integers(min_value=-10**30, max_value=10**30),
    st.floats(allow_nan=True, allow_infinity=True),
    st.booleans(),
    st.none(),
    st.builds(lambda n, u: f"{n} {u}", st.one_of(st.integers(-10**6, 10**6), st.floats(allow_nan=True)),
              st.sampled_from(UNITS)),
)


def _paths(data: Any, parts: tuple[Any, ...] = ()) -> list[tuple[Any, ...]]:
    out = [parts] if parts else []
    if isinstance(data, dict):
        for k, v in data.items():
            out += _paths(v, (*parts, k))
    elif isinstance(data, list):
        for i, v in enumerate(data):
            out += _paths(v, (*parts, i))
    return out


def _get(data: Any, parts: tuple[Any, ...]) -> Any:
    for p in parts:
        data = data[p]
    return data


def _set(data: Any, parts: tuple[Any, ...], value: Any) -> None:
    _get(data, parts[:-1])[parts[-1]] = value


@st.composite
def mutated_specs(draw: st.DrawFn) -> bytes:
    """Return the bytes of a valid spec after one to four random mutations."""
    data = yaml.safe_load(draw(st.sampled_from(BASES)))
    for _ in range(draw(st.integers(1, 4))):
        paths = _paths(data)
        if not paths:
            break
        op = draw(st.sampled_from(["drop", "swap", "replace", "replace"]))
        path = draw(st.sampled_from(paths))
        if op == "drop":
            parent = _get(data, path[:-1])
            if isinstance(parent, dict):
                del parent[path[-1]]
            else:
                parent.pop(path[-1])
        elif op == "swap":
            other = draw(st.sampled_from(paths))
            if path[:len(other)] == other or other[:len(path)] == path:
                continue  # one contains the other
            a, b = _get(data, path), _get(data, other)
            _set(data, path, b)
            _set(data, other, a)
        else:
            _set(data, path, draw(SCALARS))
    text = yaml.safe_dump(data, sort_keys=False, allow_unicode=True).encode("utf-8")
    lines = text.split(b"\n")
    if draw(st.booleans()):  # duplicate a line
        i = draw(st.integers(0, len(lines) - 1))
        lines.insert(i, lines[i])
    text = b"\n".join(lines)
    if draw(st.integers(0, 3)) == 0:  # insert random bytes
        at = draw(st.integers(0, len(text)))
        text = text[:at] + draw(st.binary(min_size=1, max_size=8)) + text[at:]
    return text


def _check(data: bytes, ctx: CheckContext) -> dict[str, Any] | None:
    try:
        doc = load_text(data, "fuzz.yaml")
    except LoadError as exc:
        assert exc.message and len(exc.message) < 600
        return None
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)  # numpy warnings are not the property under test
        return check_document(doc, ctx)


def _valid_json(result: dict[str, Any]) -> None:
    jsonout.load(jsonout.render(assemble([result], "error", "si", "sha256:" + "0" * 64, 1)))


@FUZZ
@given(data=mutated_specs())
def test_mutated_spec_never_crashes_and_validates(data: bytes, ctx: CheckContext) -> None:
    start = time.perf_counter()
    result = _check(data, ctx)
    assert time.perf_counter() - start < BOUND_SECONDS
    if result is None:
        return
    faults = [o["message"] for o in result["outcomes"] if o["rule"] == "internal-error"]
    assert not faults, faults
    _valid_json(result)


@FUZZ
@given(base=st.sampled_from(BASES), cut=st.integers(0, 4000), junk=st.binary(max_size=64))
def test_truncated_spec_with_junk_never_crashes(base: str, cut: int, junk: bytes, ctx: CheckContext) -> None:
    data = base.encode()[:cut] + junk
    result = _check(data, ctx)
    if result is not None:
        assert not any(o["rule"] == "internal-error" for o in result["outcomes"])
        _valid_json(result)
