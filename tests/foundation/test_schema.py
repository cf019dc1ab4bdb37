"""The spec schema: every section and enum, findings in plain words at the right line."""

from __future__ import annotations

import json

import pytest
from jsonschema import Draft202012Validator

from rulecheck.load import load_text
from rulecheck.schema import check_structure, read_quantities, schema_json, spec_schema, walk_fields
from rulecheck.units import KINDS


def problems_of(text: str):
    doc = load_text(text, "s.yaml")
    structure = check_structure(doc)
    _q, units = read_quantities(doc)
    return doc, structure + units


def test_schema_is_valid_draft_2020_12() -> None:
    schema = json.loads(schema_json())
    Draft202012Validator.check_schema(schema)
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"


def _fields(node, path=""):
    node = node if "$ref" not in node else {**spec_schema()["$defs"][node["$ref"].split("/")[-1]], **node}
    for key, sub in node.get("properties", {}).items():
        yield f"{path}.{key}".lstrip("."), sub
        yield from _fields(sub if "$ref" not in sub else {**spec_schema()["$defs"][sub["$ref"].split("/")[-1]], **sub},
                           f"{path}.{key}")
        if "items" in sub:
            yield from _fields(sub["items"], f"{path}.{key}[]")


def test_every_field_is_described_and_quantities_declare_a_known_kind() -> None:
    for path, node in _fields(spec_schema()):
        resolved = node if "$ref" not in node else {**spec_schema()["$defs"][node["$ref"].split("/")[-1]], **node}
        assert resolved.get("description"), f"{path} has no description"
        if "x-dimension" in resolved:
            assert resolved["x-dimension"] in KINDS, path


def test_unknown_key_with_suggestion_at_the_key() -> None:
    doc, problems = problems_of("format: 1\ntag: A\nmotor:\n  kind: induction\n  rated_sped: 1455 r/min\n")
    (p,) = problems
    assert p.rule == "spec-schema" and "unknown key 'rated_sped'" in p.message and "rated_speed" in p.hint
    assert p.at_key and doc.key_positions[p.path].line == 5


def test_user_notes_with_x_prefix_are_allowed() -> None:
    _doc, problems = problems_of("format: 1\ntag: A\nx-owner: plant\nmotor:\n  kind: dc\n  x-note: spare\n")
    assert problems == []


@pytest.mark.parametrize(
    ("section", "key", "good"),
    [(path.rsplit(".", 1)[0] if "." in path else "", path.rsplit(".", 1)[-1], node["enum"][0])
     for path, node in _fields(spec_schema()) if "enum" in node and "[]" not in path and path.count(".") <= 2],
)
def test_every_enum_misspelt_is_caught_with_a_suggestion(section: str, key: str, good: object) -> None:
    if not isinstance(good, str):
        pytest.skip("numeric choice")
    wrong = good[0] + good  # a doubled first letter: the commonest typing slip
    base = {"format": 1, "tag": "A", "motor": {"kind": "induction"}}
    node = base
    for part in [p for p in section.split(".") if p]:
        node = node.setdefault(part, {})
    node[key] = wrong
    if section.endswith(("drive",)) or section == "drive":
        node.setdefault("kind", "inverter")
    if section == "load":
        node.setdefault("model", "constant-torque")
    import yaml

    _doc, problems = problems_of(yaml.safe_dump(base))
    assert any(f"'{wrong}' is not a known value" in p.message and f"did you mean '{good}'" in p.hint
               for p in problems), [p.message for p in problems]


def test_bare_number_for_a_speed() -> None:
    doc, problems = problems_of("format: 1\ntag: A\nmotor:\n  kind: induction\n  rated_speed: 1455\n")
    (p,) = problems
    assert p.rule == "units-and-dimensions" and "1455" in p.message and "r/min" in p.hint
    assert doc.position(p.path).line == 5


def test_yaml_11_boolean_trap_is_explained() -> None:
    _doc, problems = problems_of("format: 1\ntag: A\nmotor:\n  kind: induction\n  inverter_rated: yes\n"
                                 "drive:\n  kind: no\n")
    (p,) = problems
    assert "'no'" in p.hint and "quotes" in p.hint


def test_sexagesimal_trap_is_explained() -> None:
    _doc, problems = problems_of("format: 1\ntag: A\nmotor:\n  kind: induction\n  rated_speed: 1:30\n")
    (p,) = problems
    assert "base-60" in p.hint


def test_efficiency_above_one_hundred_percent() -> None:
    _doc, problems = problems_of("format: 1\ntag: A\nmotor:\n  kind: induction\n  efficiency: 92\n")
    (p,) = problems
    assert "above 100 %" in p.message and "92 %" in p.hint


@pytest.mark.parametrize(("field", "value", "words"), [
    ("poles", 0, "at least 2"), ("poles", 1, "at least 2"), ("rated_power", "0 kW", "greater than zero"),
    ("rated_power", "-7.5 kW", "greater than zero"), ("rated_speed", "-5 r/min", "greater than zero"),
    ("rated_speed", "0 r/min", "greater than zero"), ("max_speed", "0 r/min", "greater than zero"),
    ("rated_torque", "0 N*m", "greater than zero"), ("breakdown_torque", "-10 N*m", "greater than zero")])
def test_values_that_cannot_be(field: str, value: object, words: str) -> None:
    # a machine has at least two poles (n_s = 120·f/p, docs/references.md R04); power is not negative, and a speed
    # or torque rating of zero is a slip (every ratio with it divides by it)
    import yaml

    spec = {"format": 1, "tag": "A", "motor": {"kind": "induction", field: value}}
    assert problems_of(yaml.safe_dump({**spec, "motor": {"kind": "induction"}}))[1] == []  # the rest is sound
    _doc, problems = problems_of(yaml.safe_dump(spec))
    (p,) = problems
    assert (p.rule, p.path, p.severity) == ("spec-schema", f"motor.{field}", "error") and words in p.message


def test_required_sections_named() -> None:
    _doc, problems = problems_of("format: 1\ntag: A\n")
    assert any("needs 'motor'" in p.message for p in problems)


def test_quantities_are_read_once_into_si() -> None:
    doc = load_text("format: 1\ntag: A\nmotor:\n  kind: induction\n  rated_power: 10 hp\n  inertia: 1 lb*ft^2\n")
    q, problems = read_quantities(doc)
    assert q.values["motor.rated_power"] == pytest.approx(745.69987158 * 10)
    assert q.values["motor.inertia"] == pytest.approx(0.04214011, rel=1e-7)  # NIST SP 811 B.9
    # a nameplate's bare hp is mechanical horsepower: an info note, never a warning (NEC/NEMA practice)
    assert [p.severity for p in problems] == ["info"]


def test_walk_fields_reaches_list_items() -> None:
    doc = load_text("format: 1\ntag: A\nmotor: {kind: dc}\nload:\n  model: points\n  points:\n"
                    "    - {speed: 10 r/min, torque: 5 N*m}\n")
    kinds = {tuple(p): n.get("x-dimension") for p, _v, n, _path in walk_fields(doc.data)}
    assert kinds[("load", "points", 0, "speed")] == "rotational_speed"
    paths = {path for _p, _v, _n, path in walk_fields(doc.data)}
    assert "load.points[0].speed" in paths and "motor.kind" in paths
