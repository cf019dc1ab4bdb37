"""JUnit XML: parsed back with xml.etree.ElementTree (and junitparser as a second reader when installed);
counts per suite and in total match the outcomes; hostile strings come back as the same text."""

from __future__ import annotations

import re
import xml.etree.ElementTree as ET

import pytest

from rulecheck.report import junit

from .sample import HOSTILE, HOSTILE_PATH, sample_result

# Characters outside XML 1.0's Char production (W3C XML 1.0, 5th ed., section 2.2), which no XML document
# can carry: written here independently of the renderer's own table.
_NOT_XML_CHARS = {chr(c) for c in range(0x20) if c not in (0x09, 0x0A, 0x0D)} | {"\ufffe", "\uffff"}


def _xml_safe(text):
    return "".join(ch for ch in text if ch not in _NOT_XML_CHARS and not 0xD800 <= ord(ch) <= 0xDFFF)


def _root(result=None):
    return ET.fromstring(junit.render(result or sample_result()).encode("utf-8"))


def _expected_counts(spec):
    counts = {"tests": 0, "failures": 0, "errors": 0, "skipped": 0}
    for o in spec["outcomes"]:
        counts["tests"] += 1
        if o["outcome"] == "fail":
            counts["errors" if o["rule"] in ("yaml-syntax", "spec-schema", "units-and-dimensions") else "failures"] += 1
        elif o["outcome"] in ("not-checked", "not-applicable", "waived"):
            counts["skipped"] += 1
    return counts


def test_document_declares_utf8_and_parses():
    text = junit.render(sample_result())
    assert text.startswith('<?xml version="1.0" encoding="UTF-8"?>\n<testsuites ')
    assert text.endswith("</testsuites>\n")
    assert _root().tag == "testsuites"


def test_one_suite_per_spec_named_by_tag_or_file():
    root = _root()
    assert [s.get("name") for s in root.findall("testsuite")] == ["P-101", "WG-2 <hoist>", "P-102",
                                                                  "specs_demo/broken.yaml"]


def test_counts_per_suite_and_in_total_match_the_outcomes():
    result = sample_result()
    root = _root(result)
    totals = {"tests": 0, "failures": 0, "errors": 0, "skipped": 0}
    for spec, suite in zip(result["specs"], root.findall("testsuite"), strict=True):
        expected = _expected_counts(spec)
        assert {k: int(suite.get(k)) for k in expected} == expected
        # the attributes agree with the elements actually written
        assert len(suite.findall("testcase")) == expected["tests"]
        assert len(suite.findall("testcase/failure")) == expected["failures"]
        assert len(suite.findall("testcase/error")) == expected["errors"]
        assert len(suite.findall("testcase/skipped")) == expected["skipped"]
        for key in totals:
            totals[key] += expected[key]
    assert {k: int(root.get(k)) for k in totals} == totals == {"tests": 15, "failures": 5, "errors": 4,
                                                               "skipped": 4}


def test_testcase_attributes_and_failure_body():
    suite = _root().find("testsuite[@name='P-101']")
    case = suite.find("testcase[@name='torque-margin-continuous']")
    assert case.get("classname") == "P-101" and case.get("file") == "specs_demo/p101.yaml" and case.get("line") == "12"
    failure = case.find("failure")
    assert failure.get("type") == "error"
    assert failure.get("message").startswith("required 52.3 N·m exceeds")
    body = failure.text.splitlines()
    assert "required: 52.3 N*m" in body and "limit: 1.1" in body
    assert "at: motor.rated_torque (line 12, column 3)" in body
    assert any(line.startswith("Safety-relevant") for line in body)
    assert case.find("skipped") is None
    passed = suite.find("testcase[@name='thermal-class-ambient']")
    assert list(passed) == []


def test_skipped_outcomes_say_why():
    suite = _root().find("testsuite[@name='P-101']")
    skip = suite.find("testcase[@name='pm-back-emf-uncontrolled']/skipped")
    assert skip.get("message") == ("not checked: missing motor.back_emf_constant, drive.dc_bus_trip "
                                   "(safety-relevant rule)")
    assert suite.find("testcase[@name='gearbox-service-factor']/skipped").get("message") == (
        "not applicable: direct drive: no gearbox")
    waived = _root().find("testsuite[@name='WG-2 <hoist>']/testcase[@name='overspeed-mechanical-limit']/skipped")
    assert waived.get("message") == _xml_safe(f"waived: drum re-rated by its maker, letter WG-17 {HOSTILE}")
    assert "approved by R. Okafor, weir engineer; expires 2027-06-30" in waived.text


def test_load_problems_of_an_invalid_spec_are_errors():
    suite = _root().find("testsuite[@name='P-102']")
    errors = suite.findall("testcase/error")
    assert [e.get("type") for e in errors] == ["spec-schema", "units-and-dimensions"]
    assert errors[1].get("message") == "motor.rated_power: '7.5 kN' is a force, not a power (write e.g. '7.5 kW')"
    assert suite.find("testcase/failure") is None


def test_hostile_strings_come_back_as_the_same_text():
    suite = _root().find("testsuite[@name='WG-2 <hoist>']")
    case = suite.find("testcase[@name='holding-brake-vertical-load']")
    assert case.get("classname") == "WG-2 <hoist>"
    assert case.get("file") == HOSTILE_PATH
    failure = case.find("failure")
    # attributes keep CR, LF and tab exactly (written as character references)
    assert failure.get("message") == _xml_safe(f"brake torque 60 N·m < 1.5 × 48 N·m; note: {HOSTILE}")
    # element text: an XML reader turns CR LF into LF, so the body is written with LF
    expected = _xml_safe(f"fix: fit a brake of at least 72 N·m {HOSTILE}").replace("\r\n", "\n")
    assert expected in failure.text
    assert "]]>" in failure.text and "<b>&amp;</b>" in failure.text
    properties = {p.get("name"): p.get("value") for p in suite.findall("properties/property")}
    assert properties["title"] == _xml_safe(f"Gate hoist west {HOSTILE}")


def test_no_character_outside_xml_1_0_is_written():
    text = junit.render(sample_result())
    assert not re.search("[\x00-\x08\x0b\x0c\x0e-\x1f]", text)
    assert "\x85" in text and "\u2028" in text  # allowed in XML 1.0, kept


def test_repeated_rule_in_one_spec_gets_distinct_names_when_paths_differ():
    result = sample_result()
    extra = dict(result["specs"][0]["outcomes"][1], location={"path": "drive.overload_current", "line": 22,
                                                              "column": 3})
    result["specs"][0]["outcomes"].insert(2, extra)
    names = [c.get("name") for c in _root(result).find("testsuite[@name='P-101']").findall("testcase")]
    assert "drive-current-margin [drive.rated_current]" in names
    assert "drive-current-margin [drive.overload_current]" in names


def test_second_reader_junitparser_agrees_on_counts():
    junitparser = pytest.importorskip("junitparser")
    xml = junitparser.JUnitXml.fromstring(junit.render(sample_result()))
    suites = list(xml)
    assert [s.name for s in suites] == ["P-101", "WG-2 <hoist>", "P-102", "specs_demo/broken.yaml"]
    seen = {"tests": 0, "failures": 0, "errors": 0, "skipped": 0}
    for suite in suites:
        for case in suite:
            seen["tests"] += 1
            for item in case.result:
                kind = {junitparser.Failure: "failures", junitparser.Error: "errors",
                        junitparser.Skipped: "skipped"}[type(item)]
                seen[kind] += 1
    assert seen == {"tests": 15, "failures": 5, "errors": 4, "skipped": 4}
    hoist = suites[1]
    brake = next(c for c in hoist if c.name == "holding-brake-vertical-load")
    assert brake.result[0].message == _xml_safe(f"brake torque 60 N·m < 1.5 × 48 N·m; note: {HOSTILE}")


def test_an_empty_result_gives_an_empty_testsuites_element():
    root = _root({"format_version": 1, "tool": {"name": "rulecheck", "version": "0.1.0"}, "specs": [],
                  "summary": {"specs": 0, "exit_code": 0}})
    assert root.get("tests") == "0" and list(root) == []
