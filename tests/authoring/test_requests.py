"""Requests that can be acted on: a rule that could not be checked names the spec fields to give (followed
through the derived values it reads), each with an example and its unit, grouped per component."""

from __future__ import annotations

import json
import re
from pathlib import Path

import jsonschema

from .conftest import ROOT, run_cli

SOUND = ROOT / "specs_demo" / "cv-110-incline-conveyor.yaml"


def _without(text: str, *keys: str) -> str:
    """Return a spec without the lines of ``keys`` (``motor.power_factor``: the key under its section)."""
    lines, section = [], ""
    for line in text.splitlines():
        top = re.match(r"^(\w+):", line)
        if top:
            section = top.group(1)
        own = re.match(r"^\s+(\w+):", line)
        if own and f"{section}.{own.group(1)}" in keys:
            continue
        lines.append(line)
    return "\n".join(lines) + "\n"


def _check(tmp_path: Path, text: str, *args: str) -> dict:
    spec = tmp_path / "cv.yaml"
    spec.write_text(text, encoding="utf-8")
    proc = run_cli("check", "--no-cache", "-f", "json", *args, str(spec))
    assert proc.returncode in (0, 1), proc.stderr
    return json.loads(proc.stdout)


def test_missing_inputs_are_named_not_the_values_derived_from_them(tmp_path: Path) -> None:
    # The motor cable's voltage drop, u = √3·I·L·(R'·cos φ + X'·sin φ) (IEC 60364-5-52 Annex G), needs the
    # motor's power factor; the peak torque the drive can give needs its overload current (rated current ×
    # overload); the inertia ratio needs the motor's inertia. Those are the fields to ask for, not
    # cable.voltage_drop, train.peak_torque_available, train.inertia_ratio.
    text = _without(SOUND.read_text(encoding="utf-8"), "motor.power_factor", "motor.inertia", "drive.overload")
    result = _check(tmp_path, text)
    schema = json.loads((ROOT / "rulecheck" / "schemas" / "result.schema.json").read_text(encoding="utf-8"))
    jsonschema.validate(result, schema)
    spec = result["specs"][0]
    messages = {o["rule"]: o["message"] for o in spec["outcomes"] if o["outcome"] == "not-checked"}
    assert "give motor.power_factor (e.g. 0.86)" in messages["cable-voltage-drop"]
    assert "give motor.inertia (e.g. 0.62 kg*m^2)" in messages["inertia-ratio"]
    assert "drive.overload.current (e.g. 150 %)" in messages["torque-peak"]
    assert not any("could not derive" in m for m in messages.values()), messages
    asked = {e["path"]: e for e in spec["to_give"]["inputs"]}
    assert {"motor.power_factor", "motor.inertia", "drive.overload.current"} <= set(asked)
    # nothing the spec gives is asked for
    assert not {"motor.rated_current", "cable.length", "drive.rated_current"} & set(asked)
    assert asked["motor.inertia"]["unit"].startswith("moment of inertia")
    assert asked["motor.inertia"]["example"] == "0.62 kg*m^2" and asked["motor.inertia"]["component"] == "motor"
    assert "cable-voltage-drop" in asked["motor.power_factor"]["rules"]
    assert spec["to_give"]["rules"] == len(messages)
    # grouped per component in the terminal: "to check N more rules, give drive: …; motor: inertia, power_factor"
    proc = run_cli("check", "--no-cache", str(tmp_path / "cv.yaml"))
    line = next(x for x in proc.stdout.splitlines() if "to check" in x)
    assert f"to check {len(messages)} more rules, give drive: " in line
    assert "motor: inertia, power_factor" in line


def test_a_fully_given_spec_asks_for_nothing(tmp_path: Path) -> None:
    spec = _check(tmp_path, SOUND.read_text(encoding="utf-8"))["specs"][0]
    assert "to_give" not in spec
    assert not [o for o in spec["outcomes"] if o["outcome"] == "not-checked"]
