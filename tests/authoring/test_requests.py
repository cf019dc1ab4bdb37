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
    # overload); the braking energy needs the motor's inertia. Those are the fields to ask for, not
    # cable.voltage_drop, train.peak_torque_available, train.braking_energy.
    text = _without(SOUND.read_text(encoding="utf-8"), "motor.power_factor", "motor.inertia", "drive.overload")
    result = _check(tmp_path, text)
    schema = json.loads((ROOT / "rulecheck" / "schemas" / "result.schema.json").read_text(encoding="utf-8"))
    jsonschema.validate(result, schema)
    spec = result["specs"][0]
    messages = {o["rule"]: o["message"] for o in spec["outcomes"] if o["outcome"] == "not-checked"}
    assert "give motor.power_factor (e.g. 0.86)" in messages["cable-voltage-drop"]
    assert "give motor.inertia (e.g. 0.62 kg*m^2)" in messages["regen-braking-energy"]
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


# --- what-if: --set PATH=VALUE ----------------------------------------------------------------------------


def test_set_overrides_a_field_for_one_run(tmp_path: Path) -> None:
    before = SOUND.read_bytes()
    result = _check(tmp_path, SOUND.read_text(encoding="utf-8"), "--set", "motor.rated_power=55 kW",
                    "--set", "cable.length=50 m")
    spec = result["specs"][0]
    # 55 kW at 1480 r/min is 55 000 W ÷ (2π·1480/60 rad/s) = 354.9 N·m, against the nameplate's 290 N·m
    # (hand calculation): the nameplate cross-check now fails, with the overridden power
    failed = {o["rule"]: o for o in spec["outcomes"] if o["outcome"] == "fail"}
    assert "354.9 N·m" in failed["nameplate-power-torque-speed"]["message"]
    assert spec["overrides"] == [{"path": "motor.rated_power", "value": "55 kW", "was": "45 kW"},
                                 {"path": "cable.length", "value": "50 m", "was": "60 m"}]
    assert SOUND.read_bytes() == before
    proc = run_cli("check", "--no-cache", "--set", "motor.rated_power=55 kW", str(SOUND))
    assert "overridden for this run: motor.rated_power = 55 kW (was 45 kW)" in proc.stdout
    # without --set the spec is as it was: sound
    assert "overrides" not in _check(tmp_path, SOUND.read_text(encoding="utf-8"))["specs"][0]


def test_a_bad_set_is_a_usage_error_naming_it() -> None:
    for given, words in (("motor.rated_powr=55 kW", "did you mean motor.rated_power?"),
                         ("motor.rated_power=55", "has no unit"),
                         ("motor.power_factor=1.5", "above 100 %"),
                         ("supply.frequency=1500 r/min", "not an electrical frequency"),
                         ("motor.poles=3", "multiple of 2"),
                         ("motor.kind=diesel", "expected one of"),
                         ("motor.rated_power", "PATH=VALUE")):
        proc = run_cli("check", "--no-cache", "--set", given, str(SOUND))
        assert proc.returncode == 2, (given, proc.stdout, proc.stderr)
        assert words in proc.stderr and given.split("=")[0] in proc.stderr, (given, proc.stderr)


def test_set_reaches_the_worker_processes(tmp_path: Path) -> None:
    text = SOUND.read_text(encoding="utf-8")
    for i in range(24):  # enough specs for the run to use two worker processes
        (tmp_path / f"s{i}.yaml").write_text(text.replace("HR-CV-110", f"T-{i}"), encoding="utf-8")
    proc = run_cli("check", "-j", "2", "-f", "json", "--set", "motor.rated_power=55 kW", str(tmp_path))
    specs = json.loads(proc.stdout)["specs"]
    assert len(specs) == 24 and all(s["overrides"][0]["value"] == "55 kW" for s in specs)
