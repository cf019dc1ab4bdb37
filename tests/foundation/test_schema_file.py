"""The shipped spec schema for editors (rulecheck/schemas/spec.schema.json) and the README's modeline.

The unit patterns are judged against rulecheck's own quantity parser (the outside world for an editor is
the tool that will read the file): every quantity written in the docs, the demo specs, the rule examples
and a generated corpus must match its field's pattern exactly when rulecheck accepts it; whatever a
pattern accepts must parse; a value of another kind is refused unless rulecheck would read it too.
"""

from __future__ import annotations

import importlib.util
import json
import re
import shutil
import subprocess
import sys
from pathlib import Path

import pytest
import yaml
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st
from jsonschema import Draft202012Validator

from rulecheck import schema_export, units
from rulecheck.schema import spec_schema, walk_fields

ROOT = Path(__file__).resolve().parents[2]
SHIPPED = ROOT / "rulecheck" / "schemas" / "spec.schema.json"


def _shipped() -> dict:
    return json.loads(SHIPPED.read_text(encoding="utf-8"))


def _quantity_nodes(node, path="#"):
    """(JSON pointer, node) of every subschema declaring x-dimension."""
    if isinstance(node, dict):
        if "x-dimension" in node:
            yield path, node
        for key, value in node.items():
            yield from _quantity_nodes(value, f"{path}/{key}")
    elif isinstance(node, list):
        for i, value in enumerate(node):
            yield from _quantity_nodes(value, f"{path}/{i}")


def _accepts(value: str, kind: str) -> bool:
    try:
        units.parse_quantity(value, kind)
    except units.QuantityError:
        return False
    return True


def test_shipped_file_is_generated_from_the_yaml_schema():
    assert SHIPPED.read_text(encoding="utf-8") == schema_export.render(), (
        "rulecheck/schemas/spec.schema.json is stale: run python -m rulecheck.schema_export")
    assert schema_export.main(["--check"]) == 0


def test_shipped_file_is_a_valid_2020_12_schema_and_installs_as_package_data():
    schema = _shipped()
    Draft202012Validator.check_schema(schema)
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    assert schema_export.shipped_text() == SHIPPED.read_text(encoding="utf-8")


def test_every_quantity_field_has_a_pattern_examples_and_a_length_limit():
    nodes = list(_quantity_nodes(_shipped()))
    assert [p for p, _ in nodes] == [p for p, _ in _quantity_nodes(spec_schema())]  # every one, none added
    assert len(nodes) > 90
    for pointer, node in nodes:
        kind = node["x-dimension"]
        assert node["pattern"] == schema_export.quantity_pattern(kind), pointer
        assert node["maxLength"] == units.MAX_QUANTITY_LENGTH, pointer
        assert node["examples"], pointer
        for example in node["examples"]:
            assert re.search(node["pattern"], example), (pointer, example)
            assert _accepts(example, kind), (pointer, example)


def test_an_editor_refuses_a_power_for_an_angle():
    schema = _shipped()
    incline = schema["$defs"]["load"]["properties"]["incline"]
    assert incline["x-dimension"] == "angle"
    for good in ("5 deg", "10deg", "0.0873 rad", "12 °", "-3 deg"):
        assert re.search(incline["pattern"], good), good
    for bad in ("5 kW", "5", "5 degC", "5 %", "five deg", "5,5 deg", "5 deg + 1 deg"):
        assert not re.search(incline["pattern"], bad), bad
    validator = Draft202012Validator(schema)
    spec = {"format": 1, "tag": "CV-1", "motor": {"kind": "induction"},
            "load": {"model": "conveyor", "incline": "5 kW"}}
    errors = list(validator.iter_errors(spec))
    assert [list(e.absolute_path) for e in errors] == [["load", "incline"]]
    assert errors[0].validator == "pattern"


def _yaml_specs():
    """Every spec written in the repository's docs, demo and rule examples, as data."""
    for path in sorted((ROOT / "specs_demo").glob("*.yaml")):
        yield str(path.relative_to(ROOT)), yaml.safe_load(path.read_text(encoding="utf-8"))
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    for i, block in enumerate(re.findall(r"```yaml\n(.*?)```", readme, re.S)):
        data = yaml.safe_load(block)
        if isinstance(data, dict) and "format" in data:
            yield f"README.md yaml block {i}", data
    for path in sorted((ROOT / "rules").glob("*.yaml")):
        rule = yaml.safe_load(path.read_text(encoding="utf-8"))
        for example in rule.get("examples", []):
            yield f"{path.name}: {example.get('name')}", {"format": 1, "tag": "X", **example["spec"]}


def _generated_specs(count=150):
    """A seeded corpus from the benchmark's generator: SI and customary units, with seeded mistakes."""
    loader = importlib.util.spec_from_file_location("bench_generate_schema_file", ROOT / "bench" / "generate.py")
    module = importlib.util.module_from_spec(loader)
    sys.modules[loader.name] = module
    loader.loader.exec_module(module)
    for i in range(count):
        spec = module.generate_one(i, 11)
        try:
            data = yaml.safe_load(spec.text)
        except yaml.YAMLError:
            continue  # a seeded duplicate key or syntax error: no values to judge
        yield spec.path, data


def _quantities(data):
    for _parts, value, node, path in walk_fields(data):
        if node.get("x-dimension") and isinstance(value, str):
            yield path, value, node["x-dimension"]


@pytest.mark.parametrize("source", ["repository", "generated"])
def test_patterns_agree_with_the_parser_on_every_written_value(source):
    specs = _yaml_specs() if source == "repository" else _generated_specs()
    seen, disagree = 0, []
    for name, data in specs:
        for path, value, kind in _quantities(data):
            seen += 1
            matched = re.search(schema_export.quantity_pattern(kind), value) is not None
            if matched != _accepts(value, kind):
                disagree.append((name, path, value, kind, matched))
    assert seen > (300 if source == "repository" else 3000)
    assert not disagree, disagree[:20]


# Quantities that share an SI dimension with another kind but are not the same quantity: rulecheck reads them
# (by dimension), an editor asks for the field's own units, since writing one for the other is a real mistake.
SAME_DIMENSION_OTHER_QUANTITY = {
    # (a kVA written for a power is refused by the parser itself, with its own message: tests/foundation/test_units.py)
    ("apparent_power", "5 kW"), ("apparent_power", "7.5 kW"),
    ("energy", "49.2 N*m"), ("energy", "5 N*m"),  # a torque, though J = N*m
    # Kt for Ke and back: equal in SI only for an ideal PM motor, and a datasheet gives each in its own unit
    ("back_emf_constant", "1.6 N*m/A"), ("back_emf_constant", "5 N*m/A"), ("torque_constant", "98 V/krpm"),
}


def test_values_of_another_kind_are_refused_unless_the_parser_reads_them():
    examples = {k.example for k in units.KINDS.values()} | {"5 kW", "1455 rpm", "50 Hz", "45 degC", "12 %",
                                                             "5 kVA", "5 N*m", "5 N*m/A", "5 deg"}
    differ = set()
    for kind in units.KINDS:
        pattern = schema_export.quantity_pattern(kind)
        for value in sorted(examples):
            matched = re.search(pattern, value) is not None
            if matched != _accepts(value, kind):
                assert not matched, (kind, value)  # a pattern never accepts what rulecheck refuses
                differ.add((kind, value))
    assert differ == SAME_DIMENSION_OTHER_QUANTITY


@pytest.mark.parametrize("kind", sorted(units.KINDS))
@settings(max_examples=60, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(data=st.data())
def test_whatever_a_pattern_accepts_the_parser_reads(kind, data):
    value = data.draw(st.from_regex(schema_export.quantity_pattern(kind), fullmatch=True))
    if len(value) <= units.MAX_QUANTITY_LENGTH:  # the schema's maxLength
        assert _accepts(value, kind), (kind, value)


def test_patterns_use_only_escapes_that_ecmascript_unicode_mode_allows():
    for _pointer, node in _quantity_nodes(_shipped()):
        for escape in re.findall(r"\\(.)", node["pattern"]):
            assert escape in "\\^$.|?*+()[]{}/", (node["x-dimension"], escape)


@pytest.mark.skipif(shutil.which("node") is None, reason="node is not installed: patterns not tried in JavaScript")
def test_patterns_compile_and_match_in_javascript(tmp_path):
    cases = [(schema_export.quantity_pattern(k), units.KINDS[k].example, "5 kW" if k != "power" else "5 deg")
             for k in units.KINDS]
    script = tmp_path / "patterns.js"
    script.write_text(
        "const cases = " + json.dumps(cases, ensure_ascii=False) + ";\n"
        "for (const [p, good, bad] of cases) {\n"
        "  const re = new RegExp(p, 'u');\n"
        "  if (!re.test(good) || re.test(bad)) { console.log('wrong: ' + p); process.exit(1); }\n"
        "}\nconsole.log('ok ' + cases.length);\n", encoding="utf-8")
    proc = subprocess.run(["node", str(script)], capture_output=True, text=True, timeout=60)
    assert proc.returncode == 0 and proc.stdout.strip() == f"ok {len(units.KINDS)}", proc.stdout + proc.stderr


def test_readme_modeline_resolves_to_the_shipped_schema():
    readme = (ROOT / "README.md").read_text(encoding="utf-8")
    section = readme.split("## Editor completion", 1)[1].split("\n## ", 1)[0]
    # the example names the spec it belongs to on its first line, then the modeline
    found = re.findall(r"^# (\S+\.ya?ml)\n# yaml-language-server: \$schema=(\S+)$", section, re.M)
    assert found, "README's Editor completion section needs a spec path line and a modeline"
    for spec, target in found:
        spec_path = ROOT / spec
        assert spec_path.is_file(), spec
        resolved = (spec_path.parent / target).resolve()
        assert resolved == SHIPPED.resolve(), (spec, target)
        assert json.loads(resolved.read_text(encoding="utf-8"))["$id"] == "urn:rulecheck:spec-format:1"
