"""JSON result: the schema is a valid Draft 2020-12 schema, the sample fits it, render/load round-trip,
and broken documents are rejected with the JSON path of the problem named."""

from __future__ import annotations

import json
import os
import subprocess
import sys
from importlib import resources
from pathlib import Path

import pytest
from jsonschema import Draft202012Validator

from rulecheck.report import jsonout

from .sample import HOSTILE, sample_result

SCHEMA_FILE = Path(__file__).resolve().parents[2] / "rulecheck" / "schemas" / "result.schema.json"


def test_schema_is_a_valid_draft_2020_12_schema():
    schema = jsonout.schema()
    Draft202012Validator.check_schema(schema)
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    assert schema["properties"]["format_version"] == {
        "description": schema["properties"]["format_version"]["description"], "const": 1}


def test_schema_is_loaded_from_the_shipped_file_and_fresh_per_call():
    assert jsonout.schema() == json.loads(SCHEMA_FILE.read_text(encoding="utf-8"))
    assert resources.files("rulecheck").joinpath("schemas", "result.schema.json").is_file()
    first = jsonout.schema()
    first["title"] = "changed"
    assert jsonout.schema()["title"] != "changed"


def _property_schemas(node, where="$"):
    """Yield (json path, subschema) for every named property and $defs entry (not the conditions of if/then)."""
    if isinstance(node, dict):
        node = {k: v for k, v in node.items() if k not in ("if", "then")}
        for key in ("properties", "$defs"):
            for name, sub in (node.get(key) or {}).items():
                yield f"{where}.{key}.{name}", sub
        for key, sub in node.items():
            yield from _property_schemas(sub, f"{where}.{key}")
    elif isinstance(node, list):
        for i, sub in enumerate(node):
            yield from _property_schemas(sub, f"{where}[{i}]")


def test_every_field_of_the_schema_is_described():
    undocumented = [where for where, sub in _property_schemas(jsonout.schema())
                    if not (isinstance(sub, dict) and sub.get("description"))]
    assert undocumented == []


def test_sample_validates_against_the_schema():
    validator = Draft202012Validator(jsonout.schema(), format_checker=Draft202012Validator.FORMAT_CHECKER)
    errors = [f"{list(e.absolute_path)}: {e.message}" for e in validator.iter_errors(sample_result())]
    assert errors == []


def test_a_result_with_load_cases_validates_and_its_case_fields_are_described(tmp_path):
    """The flawed-corpus belt f45 (loaded and empty): its result fits the schema, and the fields load cases add
    (an outcome's case, the spec's cases block) are named properties of it, not just allowed extras."""
    root = SCHEMA_FILE.parents[2]
    spec = root / "tests" / "corpus" / "flawed" / "f45-declining-belt-resistor-sized-empty.yaml"
    proc = subprocess.run([sys.executable, "-m", "rulecheck", "check", str(spec), "-f", "json", "--no-cache"],
                          cwd=root, capture_output=True, text=True, timeout=300,
                          env={**os.environ, "PYTHONPATH": str(root)})
    result = json.loads(proc.stdout)
    schema = jsonout.schema()
    errors = [f"{list(e.absolute_path)}: {e.message}" for e in Draft202012Validator(schema).iter_errors(result)]
    assert errors == []
    spec_result = result["specs"][0]
    assert {c["name"] for c in spec_result["cases"]} == {"loaded", "empty"}
    assert any(o.get("case") == "loaded" for o in spec_result["outcomes"])
    assert "case" in schema["$defs"]["outcome"]["properties"] and "cases" in schema["$defs"]["spec"]["properties"]
    case_keys = {k for c in spec_result["cases"] for k in c}
    assert case_keys <= set(schema["$defs"]["case"]["properties"])
    # a wrong case name in a result is refused
    spec_result["outcomes"][0]["case"] = "Not A Name"
    assert list(Draft202012Validator(schema).iter_errors(result))


def test_render_then_load_round_trips_to_an_equal_dict():
    result = sample_result()
    assert jsonout.load(jsonout.render(result)) == result


def test_render_layout_indent_two_utf8_kept_and_final_newline():
    text = jsonout.render(sample_result())
    assert text.endswith("}\n") and not text.endswith("\n\n")
    assert text.startswith('{\n  "format_version": 1,\n  "tool": {\n    "name": "rulecheck"')
    assert "N·m" in text and "\\u00b7" not in text
    # control characters are escaped by JSON, so the hostile text stays on one line of the file
    assert "\\n::error file=evil.yaml" in text and "\\u0007" in text


def test_header_and_summary_key_order_is_stable_whatever_order_the_dict_was_built_in():
    result = sample_result()

    def reverse(node):
        if isinstance(node, dict):
            return {k: reverse(node[k]) for k in reversed(list(node))}
        if isinstance(node, list):
            return [reverse(v) for v in node]
        return node

    turned = {**reverse({k: v for k, v in result.items() if k != "specs"}), "specs": result["specs"]}
    assert jsonout.render(turned) == jsonout.render(result)
    assert list(json.loads(jsonout.render(turned))) == ["format_version", "tool", "generated", "settings", "specs",
                                                         "summary"]


def test_each_spec_is_one_line_of_the_bytes_the_result_encoder_writes():
    """A spec result is written as result.encode wrote it (once, in the worker): rendered at once or streamed,
    a spec is the same line, in the key order the check built it in (the contract's)."""
    from rulecheck.result import encode

    result = sample_result()
    text = jsonout.render(result)
    lines = [line.strip().rstrip(",") for line in text.split("\n") if line.startswith("    {")]
    assert lines == [encode(spec).decode("utf-8") for spec in result["specs"]]
    keys = list(json.loads(text)["specs"][0]["outcomes"][0])
    assert keys[:5] == ["rule", "title", "topic", "outcome", "severity"]


def test_additional_fields_in_specs_and_outcomes_are_accepted():
    result = sample_result()
    result["specs"][0]["reviewer_note"] = "see minutes of 2026-11-12"
    result["specs"][0]["outcomes"][0]["margin_trend"] = [0.9, 0.84]
    assert jsonout.load(jsonout.render(result)) == result


def _broken(mutate):
    result = sample_result()
    mutate(result)
    return json.dumps(result)


@pytest.mark.parametrize(("mutate", "path"), [
    (lambda r: r.update(format_version=2), "$.format_version"),
    (lambda r: r["specs"][0]["outcomes"][2].update(outcome="fial"), "$.specs[0].outcomes[2].outcome"),
    (lambda r: r["specs"][0]["outcomes"][0]["values"]["required"].pop("unit"),
     "$.specs[0].outcomes[0].values.required"),
    (lambda r: r["specs"][1]["outcomes"][1].update(waiver=None), "$.specs[1].outcomes[1].waiver"),
    (lambda r: r["specs"][0]["outcomes"][0]["location"].update(line=0), "$.specs[0].outcomes[0].location.line"),
    (lambda r: r["specs"][0]["counts"].update({"not-checked": -1}), '$.specs[0].counts["not-checked"]'),
    (lambda r: r["specs"][2].update(status="broken"), "$.specs[2].status"),
    (lambda r: r["summary"].pop("exit_code"), "$.summary"),
    (lambda r: r.update(generated="yesterday"), "$.generated"),
    (lambda r: r["specs"][0].pop("outcomes"), "$.specs[0]"),
])
def test_a_broken_document_is_rejected_naming_the_json_path(mutate, path):
    with pytest.raises(ValueError) as caught:
        jsonout.load(_broken(mutate))
    assert f"at {path}:" in str(caught.value)


@pytest.mark.parametrize(("text", "words"), [
    ('{"format_version": 1, "format_version": 1}', "duplicate key 'format_version'"),
    ('{"format_version": NaN}', "NaN is not a JSON number"),
    ('{"format_version": 1,', "not JSON"),
    ("[" * 100_000 + "]" * 100_000, "nested too deeply"),
])
def test_text_that_is_not_a_clean_json_document_gives_a_clear_error(text, words):
    with pytest.raises(ValueError, match=words.replace("(", r"\(")):
        jsonout.load(text)


def test_render_refuses_values_json_cannot_carry_and_names_where():
    result = sample_result()
    result["specs"][0]["outcomes"][0]["values"]["margin"]["value"] = float("nan")
    with pytest.raises(ValueError, match=r"\$\.specs\[0\]\.outcomes\[0\]\.values\.margin\.value"):
        jsonout.render(result)
    result = sample_result()
    result["specs"][0]["outcomes"][0]["values"]["margin"]["value"] = object()
    with pytest.raises(ValueError, match=r"\$\.specs\[0\]\.outcomes\[0\]\.values\.margin\.value: object"):
        jsonout.render(result)


def test_a_lone_surrogate_is_written_as_its_escape_and_reads_back():
    """An undecodable byte of a file name (a lone surrogate) cannot be UTF-8: it is written as its JSON escape,
    rendered or streamed alike, and reads back as the same text."""
    result = sample_result()
    result["specs"][1]["title"] = "bad \udc80 byte"
    text = jsonout.render(result)
    assert "\\udc80" in text
    assert json.loads(text)["specs"][1]["title"] == "bad \udc80 byte"


def test_hostile_text_round_trips_exactly():
    result = sample_result()
    loaded = jsonout.load(jsonout.render(result))
    assert HOSTILE in loaded["specs"][1]["outcomes"][0]["title"]
    assert loaded["specs"][1]["file"] == result["specs"][1]["file"]


def test_result_values_are_rounded_to_six_figures_the_same_every_time() -> None:
    """Rounded values are kept between calls (many repeat in a run); a kept one equals a fresh rounding,
    and the two zeros keep their signs."""
    import math

    from rulecheck.check import _ROUNDED, _value_dict

    _ROUNDED.clear()
    for value in (49.2205, 1234567.891, 1e-9 / 3, -0.0, 0.0, -0.0, 157.07963267948966, 49.2205):
        first, again = _value_dict(value, "torque"), _value_dict(value, "torque")
        assert first == again == {"value": float(f"{value:.6g}"), "unit": "N*m", "kind": "torque"}
        assert math.copysign(1.0, again["value"]) == math.copysign(1.0, value)
    speed = _value_dict(157.07963267948966, "rotational_speed")  # 157.08 rad/s is 1500 r/min
    assert speed == {"value": 1500.0, "unit": "r/min", "kind": "rotational_speed"}
    assert _value_dict(3, None) == {"value": 3.0, "unit": "1"}
