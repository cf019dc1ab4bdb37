"""SARIF 2.1.0 log: validated against the official OASIS SARIF 2.1.0 JSON schema (vendored in data/, see
data/README.md for where it came from), then the properties a code-scanning view relies on are checked
one by one: rule index, levels, suppressions, locations, fingerprints. jsonschema checks no "uri" format
without an extra package, so the URI references are checked against RFC 3986's character set here."""

from __future__ import annotations

import json
import re
from pathlib import Path
from urllib.parse import unquote

import pytest
from jsonschema import Draft4Validator

from rulecheck.report import sarif

from .sample import HOSTILE, HOSTILE_PATH, sample_result, sample_rules

SCHEMA = json.loads((Path(__file__).parent / "data" / "sarif-schema-2.1.0.json").read_text(encoding="utf-8"))

# RFC 3986, section 2: the characters a URI reference may contain (unreserved, reserved and '%').
URI_CHARS = re.compile(r"^[A-Za-z0-9\-._~:/?#\[\]@!$&'()*+,;=%]*$")


def _log(rules=None, result=None):
    return json.loads(sarif.render(result or sample_result(), rules=rules))


def _errors(log):
    return [f"{list(e.absolute_path)}: {e.message}" for e in Draft4Validator(SCHEMA).iter_errors(log)]


def test_vendored_schema_is_the_oasis_sarif_2_1_0_schema():
    Draft4Validator.check_schema(SCHEMA)
    assert SCHEMA["id"].endswith("/sarif/v2.1.0/errata01/os/schemas/sarif-schema-2.1.0.json")
    assert SCHEMA["properties"]["version"]["enum"] == ["2.1.0"]


@pytest.mark.parametrize("rules", [None, sample_rules()], ids=["derived-driver", "given-rules"])
def test_log_validates_against_the_sarif_schema(rules):
    assert _errors(_log(rules)) == []


def test_schema_validation_can_fail():
    log = _log()
    log["runs"][0]["results"][0]["level"] = "fatal"
    del log["runs"][0]["tool"]["driver"]["name"]
    assert len(_errors(log)) == 2


def test_envelope_and_invocation():
    log = _log()
    assert log["version"] == "2.1.0" and log["$schema"] == sarif.SARIF_SCHEMA_URI
    (run,) = log["runs"]
    driver = run["tool"]["driver"]
    assert driver["name"] == "rulecheck" and driver["version"] == "0.1.0"
    assert "informationUri" not in driver
    assert run["invocations"][0]["executionSuccessful"] is True
    assert run["invocations"][0]["exitCode"] == 1
    assert run["properties"]["rules_digest"] == "sha256:" + "ab" * 32


def _reported(result):
    return [(s, o) for s in result["specs"] for o in s["outcomes"] if o["outcome"] in ("fail", "not-checked", "waived")]


def test_one_result_per_fail_not_checked_and_waived_outcome_in_order():
    result = sample_result()
    expected = [(o["rule"], o["outcome"]) for _, o in _reported(result)]
    results = _log(result=result)["runs"][0]["results"]
    assert [(r["ruleId"], r["properties"]["outcome"]) for r in results] == expected
    assert len(results) == 12


def test_rule_index_points_at_the_rule_and_every_given_rule_is_in_the_driver():
    log = _log(sample_rules())
    rules = log["runs"][0]["tool"]["driver"]["rules"]
    ids = [r["id"] for r in rules]
    assert ids[:3] == [r["id"] for r in sample_rules()]
    assert len(ids) == len(set(ids))
    for r in log["runs"][0]["results"]:
        assert rules[r["ruleIndex"]]["id"] == r["ruleId"]
    # the rule with no outcome is still described; rules only the result names are added after
    assert "cable-length-reflected-wave" in ids and {"yaml-syntax", "spec-schema", "units-and-dimensions"} <= set(ids)


def test_rule_descriptor_fields():
    rules = {r["id"]: r for r in _log(sample_rules())["runs"][0]["tool"]["driver"]["rules"]}
    torque = rules["torque-margin-continuous"]
    assert torque["name"] == "TorqueMarginContinuous"
    assert torque["shortDescription"]["text"] == "Continuous torque within the motor's continuous capability"
    assert torque["fullDescription"]["text"].startswith("The load torque at the motor shaft")
    assert "Fix: choose a larger motor" in torque["help"]["text"]
    assert "IEC TS 60034\\-25" in torque["help"]["markdown"]
    assert "Safety-relevant" in torque["help"]["text"]
    assert torque["defaultConfiguration"]["level"] == "error"
    assert torque["properties"]["topic"] == "torque-and-thermal"
    assert torque["properties"]["safety"] is True
    assert torque["properties"]["basis"] == [{"source": "IEC TS 60034-25, low-speed derating (from memory)",
                                              "status": "M"}]
    assert rules["cable-length-reflected-wave"]["defaultConfiguration"]["level"] == "warning"
    # without metadata the driver is derived from the outcomes
    derived = {r["id"]: r for r in _log()["runs"][0]["tool"]["driver"]["rules"]}
    assert derived["drive-current-margin"]["shortDescription"]["text"].startswith("Drive output current")
    assert derived["supply-voltage-window"]["defaultConfiguration"]["level"] == "note"


def test_markdown_help_cannot_inject_markup():
    rules = {r["id"]: r for r in _log(sample_rules())["runs"][0]["tool"]["driver"]["rules"]}
    markdown = rules["holding-brake-vertical-load"]["help"]["markdown"]
    assert "<script>" not in markdown and "](javascript" not in markdown
    assert not any(line.startswith("#") for line in markdown.splitlines())
    assert "\\<script\\>" in markdown


def _by_rule(log):
    return {(r["properties"]["tag"], r["ruleId"]): r for r in log["runs"][0]["results"]}


def test_levels_follow_severity_and_safety():
    results = _by_rule(_log())
    assert results["P-101", "torque-margin-continuous"]["level"] == "error"
    assert results["P-101", "drive-current-margin"]["level"] == "warning"
    assert results["P-101", "supply-voltage-window"]["level"] == "note"
    # not-checked: warning for a safety rule, note otherwise
    assert results["P-101", "pm-back-emf-uncontrolled"]["level"] == "warning"
    assert results["WG-2 <hoist>", "ip-rating-outdoor"]["level"] == "note"


def test_not_checked_message_says_what_is_missing():
    text = _by_rule(_log())["P-101", "pm-back-emf-uncontrolled"]["message"]["text"]
    assert "not checked: missing motor.back_emf_constant, drive.dc_bus_trip" in text
    assert "Safety-relevant" in text


def test_waived_result_carries_an_external_suppression_with_reason_approver_and_expiry():
    result = _by_rule(_log())["WG-2 <hoist>", "overspeed-mechanical-limit"]
    (suppression,) = result["suppressions"]
    assert suppression["kind"] == "external" and suppression["status"] == "accepted"
    assert suppression["justification"] == (f"drum re-rated by its maker, letter WG-17 {HOSTILE}; "
                                            "approved by R. Okafor, weir engineer; expires 2027-06-30")
    assert all("suppressions" not in r for r in _log()["runs"][0]["results"] if r["properties"]["outcome"] != "waived")


def test_fail_message_has_values_fix_and_hostile_text_intact():
    text = _by_rule(_log())["WG-2 <hoist>", "holding-brake-vertical-load"]["message"]["text"]
    assert HOSTILE in text and "Values: brake = 60.0 N*m, required = 72.0 N*m." in text
    assert "Fix: fit a brake of at least 72 N·m" in text


def test_locations_relative_uri_region_and_logical_location():
    results = _by_rule(_log())
    (loc,) = results["P-101", "torque-margin-continuous"]["locations"]
    physical = loc["physicalLocation"]
    assert physical["artifactLocation"]["uri"] == "specs_demo/p101.yaml"
    assert physical["artifactLocation"]["uriBaseId"] == "%SRCROOT%"
    assert physical["region"] == {"startLine": 12, "startColumn": 3}
    assert loc["logicalLocations"][0]["fullyQualifiedName"] == "motor.rated_torque"
    # line unknown: no region at all
    assert "region" not in results["WG-2 <hoist>", "regen-energy-braking-resistor"]["locations"][0]["physicalLocation"]


def test_hostile_file_path_is_a_valid_relative_uri_reference_that_decodes_back():
    for r in _log()["runs"][0]["results"]:
        uri = r["locations"][0]["physicalLocation"]["artifactLocation"]["uri"]
        assert URI_CHARS.match(uri), uri
        assert ":" not in uri  # no scheme: a relative reference against %SRCROOT%
    uri = _by_rule(_log())["WG-2 <hoist>", "holding-brake-vertical-load"]["locations"][0]
    assert unquote(uri["physicalLocation"]["artifactLocation"]["uri"]) == HOSTILE_PATH


@pytest.mark.parametrize(("path", "uri", "base"), [
    ("specs_demo\\weir\\g1.yaml", "specs_demo/weir/g1.yaml", "%SRCROOT%"),
    ("./specs_demo/p101.yaml", "specs_demo/p101.yaml", "%SRCROOT%"),
    ("/srv/specs/p 101.yaml", "file:///srv/specs/p%20101.yaml", None),
    ("C:\\specs\\p101.yaml", "file:///C:/specs/p101.yaml", None),
])
def test_artifact_uri(path, uri, base):
    assert sarif.artifact_uri(path) == (uri, base)


def test_fingerprint_is_stable_when_lines_move_and_changes_with_identity():
    result = sample_result()
    before = _by_rule(_log(result=result))["P-101", "torque-margin-continuous"]["partialFingerprints"]
    result["specs"][0]["outcomes"][0]["location"].update(line=40, column=7)
    result["specs"][0]["outcomes"][0]["message"] = "reworded"
    after = _by_rule(_log(result=result))["P-101", "torque-margin-continuous"]["partialFingerprints"]
    assert before == after
    result["specs"][0]["outcomes"][0]["location"]["path"] = "motor.peak_torque"
    moved = _by_rule(_log(result=result))["P-101", "torque-margin-continuous"]["partialFingerprints"]
    assert moved != before
    assert sarif.fingerprint("a", "b/c.yaml", "d") == sarif.fingerprint("a", "b\\c.yaml", "d")
    # parts are length-prefixed, so shifting text between them changes the hash
    assert sarif.fingerprint("ab", "c", "d") != sarif.fingerprint("a", "bc", "d")


def test_specs_that_failed_to_load_give_results_of_their_rule_ids():
    results = _log()["runs"][0]["results"]
    invalid = [(r["ruleId"], r["level"]) for r in results
               if r["locations"][0]["physicalLocation"]["artifactLocation"]["uri"] in ("specs_demo/p102.yaml",
                                                                                      "specs_demo/broken.yaml")]
    assert invalid == [("spec-schema", "error"), ("units-and-dimensions", "error"), ("yaml-syntax", "error"),
                       ("yaml-syntax", "error")]


def test_artifacts_list_each_spec_with_its_hash():
    run = _log()["runs"][0]
    assert [a["location"]["uri"] for a in run["artifacts"]][:1] == ["specs_demo/p101.yaml"]
    assert run["artifacts"][0]["hashes"]["sha-256"] == sample_result()["specs"][0]["sha256"]
    assert "hashes" not in run["artifacts"][3]  # unreadable: no hash
    for r in run["results"]:
        index = r["locations"][0]["physicalLocation"]["artifactLocation"]["index"]
        assert run["artifacts"][index]["location"]["uri"] == r["locations"][0]["physicalLocation"][
            "artifactLocation"]["uri"]


def test_no_remote_url_other_than_the_schema_identifier():
    text = sarif.render(sample_result(), rules=sample_rules())
    urls = set(re.findall(r"https?://[^\s\"]+", text))
    assert urls == {sarif.SARIF_SCHEMA_URI}


def test_an_empty_result_gives_a_valid_log_with_no_results():
    log = _log(result={"format_version": 1, "tool": {"name": "rulecheck", "version": "0.1.0"}, "specs": [],
                       "summary": {"specs": 0, "exit_code": 0}})
    assert _errors(log) == [] and log["runs"][0]["results"] == []


def test_non_finite_values_and_lone_surrogates_do_not_break_the_log():
    result = sample_result()
    result["specs"][0]["outcomes"][0]["values"]["margin"]["value"] = float("nan")
    result["specs"][0]["file"] = "specs_demo/p\udc80.yaml"
    text = sarif.render(result)
    text.encode("utf-8")
    log = json.loads(text)
    assert _errors(log) == []
    # an undecodable file-name byte keeps its value in the URI
    assert log["runs"][0]["artifacts"][0]["location"]["uri"] == "specs_demo/p%80.yaml"
