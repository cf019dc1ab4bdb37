"""``rulecheck new``: every template parses, fails validation only on its placeholders, validates once they
are replaced by their examples, and asks for what the rules read (so a filled template is fully checked)."""

from __future__ import annotations

import itertools
import json
import re
from pathlib import Path

import pytest
import yaml

from rulecheck.authoring.fields import Choice, fields_for
from rulecheck.authoring.templates import MARK, PLACEHOLDER, fill_examples, write_template
from rulecheck.authoring.words import LOADS, MOTORS, STARTERS
from rulecheck.load import path_text

from .conftest import problems

COMBINATIONS = [c for c in itertools.product(MOTORS, STARTERS, LOADS) if not Choice(*c).problem()]


def _placeholder_paths(data, parts=()):
    """Yield the key path of every placeholder value in loaded YAML data."""
    if isinstance(data, dict):
        for key, value in data.items():
            yield from _placeholder_paths(value, (*parts, key))
    elif isinstance(data, list):
        for i, value in enumerate(data):
            yield from _placeholder_paths(value, (*parts, i))
    elif isinstance(data, str) and PLACEHOLDER.match(data):
        yield path_text(parts)


def test_every_motor_kind_and_load_has_a_combination() -> None:
    # DC motors only on DC converters, PM motors only on inverters; induction motors on every AC starter
    assert {(m, s) for m, s, _l in COMBINATIONS} == {
        ("induction", "inverter"), ("induction", "dol"), ("induction", "soft-starter"), ("pm", "inverter"),
        ("dc", "dc-converter")}
    assert len(COMBINATIONS) == 5 * len(LOADS)


@pytest.mark.parametrize("motor,starter,load", COMBINATIONS)
def test_template_fails_only_on_its_placeholders_and_validates_with_the_examples(motor, starter, load) -> None:
    template = write_template(motor, starter, load)
    data = yaml.safe_load(template.text)  # plain YAML
    assert data["format"] == 1 and data["motor"]["kind"] == MOTORS[motor] and data["drive"]["kind"] == STARTERS[starter]
    assert data["load"]["model"] == LOADS[load][0]
    in_text = sorted(_placeholder_paths(data))
    assert in_text == sorted(template.placeholders) and len(in_text) >= 20
    found = problems(template.text)
    # one problem per placeholder, at its path, quoting it (so the user sees "replace this example value")
    assert sorted(p.path for p in found) == in_text
    assert all(MARK in p.message for p in found), [p.message for p in found if MARK not in p.message]
    filled = fill_examples(template.text)
    assert MARK not in filled
    assert problems(filled) == []
    # each example reads back as the value it stands for (a frame '100' would read as a number)
    for path, example in template.placeholders.items():
        assert yaml.safe_load(f"v: {example if not isinstance(example, bool) else str(example).lower()}")["v"] \
            == example, path


def test_optional_lines_validate_once_uncommented_and_filled() -> None:
    template = write_template("induction", "inverter", "conveyor")
    field_line = re.compile(r'^(\s*)# ([a-z_]+:( "<.*)?|  - .*|    [a-z_]+: "<.*)$')
    uncommented = "\n".join(field_line.sub(r"\1\2", line) for line in template.text.splitlines())
    data = yaml.safe_load(uncommented)
    assert sorted(_placeholder_paths(data)) == sorted([*template.placeholders, *template.optional])
    assert problems(fill_examples(uncommented)) == []


def test_the_fields_follow_the_machine() -> None:
    hoist = write_template("induction", "inverter", "hoist")
    conveyor = write_template("induction", "inverter", "conveyor")
    pm = write_template("pm", "inverter", "screw")
    dc = write_template("dc", "dc-converter", "constant-torque")
    # the hoist's torque comes from payload, drum and reeving; the conveyor's from mass, incline and pulley
    assert {"load.mass", "load.drum_diameter", "load.reeving", "load.line_speed"} <= set(hoist.placeholders)
    assert {"load.mass", "load.incline", "load.pulley_diameter", "load.line_speed"} <= set(conveyor.placeholders)
    assert "load.drum_diameter" not in conveyor.text and "load.pulley_diameter" not in hoist.placeholders
    # a suspended load needs its holding brake declared (holding-brake-vertical applies to every hoist)
    assert {"motor.brake.kind", "motor.brake.static_torque"} <= set(hoist.placeholders)
    assert "holding-brake-vertical" in hoist.fields.rules_core
    # PM: back-EMF constant for the bus-voltage rules; DC: the armature circuit
    assert {"motor.back_emf_constant", "motor.torque_constant"} <= set(pm.placeholders)
    assert {"load.thrust", "load.lead", "load.screw_efficiency"} <= set(pm.placeholders)
    assert {"motor.armature_voltage", "motor.armature_resistance"} <= set(dc.placeholders)
    assert "motor.back_emf_constant" not in dc.text and "motor.armature_resistance" not in conveyor.text
    # direct on line: the starting current and the supply's fault level; no inverter fields
    dol = write_template("induction", "dol", "pump")
    assert {"motor.locked_rotor_current", "supply.fault_level"} <= set(dol.placeholders)
    assert "switching_frequency" not in dol.text and "dc_bus_trip" not in dol.text
    # rated torque is derived from rated power and speed: offered as an override, not asked
    assert "motor.rated_torque" not in conveyor.placeholders and "motor.rated_torque" in conveyor.optional


def test_the_field_list_comes_from_the_rules(tmp_path: Path) -> None:
    """A rule that reads a field makes a template ask for it; dropping the rule drops the field."""
    from rulecheck.authoring.examples import examples_for
    from rulecheck.authoring.fields import schema_fields
    from rulecheck.engine.ruleset import shipped_rules_dir

    rule = {
        "id": "starting-torque-ratio", "title": "t", "topic": "torque-thermal", "severity": "warning",
        "safety": False, "description": "d", "basis": [{"source": "s", "status": "C"}],
        "applies_when": "motor.kind == 'induction' and drive.kind == 'direct-on-line'",
        "values": {"ratio": "motor.locked_rotor_torque / motor.rated_torque"},
        "checks": [{"when": "ratio < 1.5", "severity": "warning"}], "message": "m", "fix": "f",
    }
    (tmp_path / "starting-torque-ratio.yaml").write_text(yaml.safe_dump(rule), encoding="utf-8")
    examples = examples_for(schema_fields(), "induction", "quadratic")
    alone = fields_for(Choice("induction", "dol", "fan"), examples, str(tmp_path))
    assert alone.rules_core == ["starting-torque-ratio"]
    # locked-rotor torque as read; rated torque is derived, so rated power and speed are asked for instead
    assert set(alone.core) == {"motor.locked_rotor_torque", "motor.rated_power", "motor.rated_speed"}
    assert set(alone.derived) == {"motor.rated_torque"}
    inverter = fields_for(Choice("induction", "inverter", "fan"), examples, str(tmp_path))
    assert inverter.rules_dropped == ["starting-torque-ratio"] and not inverter.core
    shipped = fields_for(Choice("induction", "inverter", "fan"), examples, str(shipped_rules_dir()))
    assert "motor.locked_rotor_torque" not in shipped.core  # no shipped rule reads it on an inverter
    soft = fields_for(Choice("induction", "soft-starter", "fan"), examples, str(shipped_rules_dir()))
    assert "motor.locked_rotor_torque" in soft.core  # soft-starter-starting reads it


def test_filled_templates_are_fully_checked(tmp_path: Path, cli) -> None:
    """Done when: a user who fills only the fields a template lists gets no not-checked outcome."""
    for motor, starter, load in COMBINATIONS:
        text = fill_examples(write_template(motor, starter, load).text)
        (tmp_path / f"{motor}-{starter}-{load}.yaml").write_text(text.replace("CV-101", f"T-{motor}-{starter}-{load}"),
                                                                 encoding="utf-8")
    proc = cli("check", str(tmp_path), "--format", "json", "--no-cache")
    result = json.loads(proc.stdout)
    assert len(result["specs"]) == len(COMBINATIONS)
    for spec in result["specs"]:
        assert spec["status"] == "checked", (spec["file"], spec["outcomes"][:2])
        not_checked = [(o["rule"], o["message"]) for o in spec["outcomes"] if o["outcome"] == "not-checked"]
        assert not_checked == [], (spec["file"], not_checked)


def test_the_conveyor_example_is_a_sound_design(tmp_path: Path, cli) -> None:
    """The examples of the induction / inverter / conveyor template describe one coherent drive train (the
    clean demo conveyor's figures): with the datasheet's output voltage given, every rule passes or does not
    apply. Hand check of the motor: T_N = 45 kW ÷ (1480 r/min × 2π/60) = 290.4 N·m; slip (1500 − 1480)/1500
    = 1.33 %; I = 45 kW ÷ (√3 · 400 V · 0.942 · 0.86) = 80.2 A against the 81 A nameplate (IE3 4-pole 45 kW:
    94.2 %, IEC 60034-30-1, from memory)."""
    text = fill_examples(write_template("induction", "inverter", "conveyor").text)
    assert "  # output_voltage_max: 400 V\n" in text
    text = text.replace("  # output_voltage_max: 400 V\n", "  output_voltage_max: 400 V\n")
    spec = tmp_path / "cv-101.yaml"
    spec.write_text(text, encoding="utf-8")
    proc = cli("check", str(spec), "--format", "json", "--no-cache")
    assert proc.returncode == 0, proc.stdout
    outcomes = json.loads(proc.stdout)["specs"][0]["outcomes"]
    assert {o["outcome"] for o in outcomes} <= {"pass", "not-applicable"}, \
        [(o["rule"], o["message"]) for o in outcomes if o["outcome"] not in ("pass", "not-applicable")]
    slip = next(o for o in outcomes if o["rule"] == "induction-pole-slip")
    assert "1.333 %" in slip["message"]


def test_new_writes_the_file_and_refuses_what_is_not_a_drive_train(tmp_path: Path, cli) -> None:
    target = tmp_path / "p-101.yaml"
    proc = cli("new", "--motor", "induction", "--starter", "dol", "--load", "pump", "-o", str(target))
    assert proc.returncode == 0, proc.stderr
    assert "values to fill in" in proc.stderr
    assert target.read_text(encoding="utf-8") == write_template("induction", "dol", "pump").text
    again = cli("new", "--motor", "induction", "--starter", "dol", "--load", "pump", "-o", str(target))
    assert again.returncode == 2 and "exists; use --force" in again.stderr
    assert cli("new", "--motor", "induction", "--starter", "dol", "--load", "pump", "-o", str(target),
               "--force").returncode == 0
    wrong = cli("new", "--motor", "pm", "--starter", "dol", "--load", "fan")
    assert wrong.returncode == 2 and "needs an inverter" in wrong.stderr and wrong.stdout == ""
    dc = cli("new", "--motor", "dc", "--starter", "inverter", "--load", "fan")
    assert dc.returncode == 2 and "DC converter" in dc.stderr
    typo = cli("new", "--motor", "induction", "--starter", "inverter", "--load", "conveyer")
    assert typo.returncode == 2 and "invalid choice" in typo.stderr
    stdout = cli("new", "--motor", "induction", "--starter", "inverter", "--load", "fan")
    assert stdout.returncode == 0 and stdout.stdout.startswith("# Drive specification: induction motor on an inverter")
    # an untouched template never passes: the check fails on the placeholders
    check = cli("check", str(target), "--no-cache")
    assert check.returncode == 1 and MARK in check.stdout


def test_help_describes_every_option(cli) -> None:
    for command in ("new", "import"):
        text = cli(command, "--help").stdout
        options = [w for w in text.split() if w.startswith("--") and w not in ("--help",)]
        assert options
        for line in text.splitlines():
            stripped = line.strip()
            if stripped.startswith("--") and "  " not in stripped and not stripped.endswith(("FILE", "DIR")):
                # an option whose help wrapped to the next line is followed by it; none is left bare
                assert text.split(stripped, 1)[1].lstrip().split("\n")[0], stripped
