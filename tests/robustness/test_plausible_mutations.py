"""Plausible engineering changes to every sound and flawed corpus spec — a quantity scaled within a realistic
factor, its sign flipped, an optional field left out — still validate, and then no rule ends in a rule error
(an expression that failed), no message shows a placeholder instead of text, and no safety rule passes
silently with an input missing: it fails, is not checked naming the input, or does not apply.

test_fuzz.py throws garbage at the loader; this keeps the specs valid so the rules themselves run on values
their authors did not foresee (a declining belt whose friction holds it, a zero-length ramp, a hoist with no
load).
"""

from __future__ import annotations

import re
import warnings
from pathlib import Path
from typing import Any

import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from rulecheck.check import CheckContext, check_document
from rulecheck.load import load_text

CORPUS = Path(__file__).resolve().parents[1] / "corpus"
SPECS = sorted([*CORPUS.glob("sound/*.yaml"), *CORPUS.glob("flawed/*.yaml")])
SPECS = [p for p in SPECS if p.name != "expected.yaml"]
TEXTS = {p.name: p.read_text(encoding="utf-8") for p in SPECS}

# a quantity written as "<number> <unit>": scaled or negated, its unit kept
QUANTITY = re.compile(r"^\s*(-?\d+(?:\.\d+)?(?:[eE][-+]?\d+)?)\s+(\S.*)$")
# fields whose absence the format allows and rules must cope with (a not-checked outcome, never a rule error)
OPTIONAL = ("inertia", "efficiency", "power_factor", "breakdown_torque", "peak_torque", "overload", "braking",
            "brake", "backstop", "acceleration_time", "deceleration_time", "cable", "friction_coefficient",
            "locked_rotor_current", "locked_rotor_torque", "dc_bus_capacitance", "reverse_efficiency", "incline",
            "counterweight", "thermal_time_constant", "duty", "stall_torque", "service_factor", "soft_start")

SETTINGS = settings(max_examples=300, deadline=None, derandomize=True,
                    suppress_health_check=[HealthCheck.too_slow, HealthCheck.function_scoped_fixture])
SECTIONS = ("supply", "drive", "motor", "transmission", "load", "environment", "protection")


def _leaves(data: Any, parts: tuple[Any, ...] = ()) -> list[tuple[Any, ...]]:
    out = []
    if isinstance(data, dict):
        for k, v in data.items():
            out += _leaves(v, (*parts, k)) if isinstance(v, (dict, list)) else [(*parts, k)]
    elif isinstance(data, list):
        for i, v in enumerate(data):
            out += _leaves(v, (*parts, i)) if isinstance(v, (dict, list)) else [(*parts, i)]
    return out


def _parent(data: Any, parts: tuple[Any, ...]) -> Any:
    for p in parts[:-1]:
        data = data[p]
    return data


@st.composite
def plausible_specs(draw: st.DrawFn) -> tuple[str, str]:
    name = draw(st.sampled_from(sorted(TEXTS)))
    data = yaml.safe_load(TEXTS[name])
    for _ in range(draw(st.integers(1, 3))):
        paths = [p for p in _leaves(data) if p and p[0] in SECTIONS]
        if not paths:
            break
        path = draw(st.sampled_from(paths))
        parent, key = _parent(data, path), path[-1]
        value = parent[key]
        optional = [p for p in paths if isinstance(p[-1], str) and p[-1] in OPTIONAL]
        op = draw(st.sampled_from(["scale", "scale", "negate", "drop"]))
        if op == "drop" and optional:
            p = draw(st.sampled_from(optional))
            del _parent(data, p)[p[-1]]
            continue
        if isinstance(value, bool):
            continue
        if isinstance(value, (int, float)):
            parent[key] = type(value)(value * draw(st.sampled_from([0, 0.1, 0.5, 0.9, 1.1, 2, 10])))
            continue
        m = QUANTITY.match(value) if isinstance(value, str) else None
        if m is None:
            continue
        number = float(m.group(1))
        factor = -1.0 if op == "negate" else draw(st.sampled_from([0.0, 0.1, 0.5, 0.9, 1.1, 2.0, 10.0]))
        parent[key] = f"{number * factor:g} {m.group(2)}"
    return name, yaml.safe_dump(data, sort_keys=False, allow_unicode=True)


@SETTINGS
@given(case=plausible_specs())
def test_rules_never_err_and_messages_always_render(case: tuple[str, str], ctx: CheckContext) -> None:
    name, text = case
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", RuntimeWarning)
        result = check_document(load_text(text, name), ctx)
    if any(o["rule"] in ("spec-schema", "units-and-dimensions", "yaml-syntax") and o["outcome"] == "fail"
           for o in result["outcomes"]):
        return  # the change made the spec invalid: reported as such, rules depending on it not checked
    for o in result["outcomes"]:
        message = o.get("message") or ""
        assert o["rule"] != "internal-error", (name, message, text)
        assert not message.startswith("rule error"), (name, o["rule"], message, text)
        assert "(message needs" not in message and "(message could not be shown" not in message, (
            name, o["rule"], message, text)
        if o["outcome"] == "fail":
            assert message, (name, o["rule"], text)
