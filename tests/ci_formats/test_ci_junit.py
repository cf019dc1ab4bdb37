"""JUnit XML: one test case per drive train (spec), failing exactly when the spec fails the run at the
result's --fail-on level; parsed back with xml.etree.ElementTree and junitparser as a second reader;
hostile strings come back as the same text."""

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


def _case(root, file_part):
    cases = [c for c in root.iter("testcase") if file_part in c.get("file")]
    assert len(cases) == 1, [c.get("file") for c in root.iter("testcase")]
    return cases[0]


def _with_fail_on(level):
    result = sample_result()
    result["settings"]["fail_on"] = level
    return result


def test_document_declares_utf8_and_parses():
    text = junit.render(sample_result())
    assert text.startswith('<?xml version="1.0" encoding="UTF-8"?>\n<testsuites ')
    assert text.endswith("</testsuites>\n")
    assert _root().tag == "testsuites"


def test_one_test_case_per_drive_train():
    result = sample_result()
    root = _root(result)
    cases = list(root.iter("testcase"))
    assert [c.get("file") for c in cases] == [s["file"] for s in result["specs"]]
    assert len(root.findall("testsuite")) == 1
    assert cases[0].get("name").startswith("P-101: ")
    assert root.get("tests") == root.find("testsuite").get("tests") == "4"


def test_at_fail_on_error_only_error_findings_fail_and_the_rest_is_shown_as_the_terminal_shows_it():
    case = _case(_root(), "p101")
    failure = case.find("failure")
    assert failure.get("type") == "error"
    assert failure.get("message") == "1 finding at --fail-on error: torque-margin-continuous"
    body = failure.text.splitlines()
    assert body[0] == "error torque-margin-continuous:"
    assert "  required: 52.3 N*m" in body and "  limit: 1.1" in body
    assert "  at: motor.rated_torque (line 12, column 3)" in body
    assert any(line.startswith("  Safety-relevant") for line in body)
    assert case.get("line") == "12"
    out = case.find("system-out").text
    # the warning, the info finding and the safety rule that could not be evaluated: listed, not failing
    assert "warning drive-current-margin:" in out and "info supply-voltage-window:" in out
    assert "warning (not checked) pm-back-emf-uncontrolled:" in out
    assert "missing: motor.back_emf_constant, drive.dc_bus_trip" in out
    assert not list(_root().iter("skipped"))


def test_fail_on_warning_fails_the_warnings_and_the_unevaluable_safety_rule():
    case = _case(_root(_with_fail_on("warning")), "p101")
    failure = case.find("failure")
    assert failure.get("message") == ("3 findings at --fail-on warning: torque-margin-continuous, "
                                      "drive-current-margin, pm-back-emf-uncontrolled")
    assert "info supply-voltage-window:" in case.find("system-out").text
    assert "supply-voltage-window" not in failure.text


def test_an_info_finding_never_fails_at_the_default_level():
    result = sample_result()
    pump = result["specs"][0]
    pump["outcomes"] = [o for o in pump["outcomes"] if o["rule"] == "supply-voltage-window"]
    case = _case(_root(result), "p101")
    assert case.find("failure") is None and case.find("error") is None
    assert "info supply-voltage-window" in case.find("system-out").text


def test_a_finding_known_to_a_baseline_does_not_fail():
    result = sample_result()
    for o in result["specs"][0]["outcomes"]:
        o["baseline"] = True
    case = _case(_root(result), "p101")
    assert case.find("failure") is None
    assert "error (in baseline) torque-margin-continuous:" in case.find("system-out").text


def test_a_spec_that_did_not_load_is_an_error():
    root = _root()
    for part in ("p102", "broken"):
        case = _case(root, part)
        assert case.find("failure") is None
        assert case.find("error") is not None
    invalid = _case(root, "p102").find("error")
    assert invalid.get("type") == "invalid"
    assert "motor.rated_power: '7.5 kN' is a force, not a power (write e.g. '7.5 kW')" in invalid.get("message")


def test_counts_match_the_cases():
    root = _root()
    assert {k: root.get(k) for k in ("tests", "failures", "errors", "skipped")} == {
        "tests": "4", "failures": "2", "errors": "2", "skipped": "0"}


def test_hostile_strings_come_back_as_the_same_text():
    case = _case(_root(), "gate")
    assert case.get("file") == HOSTILE_PATH == case.get("classname")
    failure = case.find("failure")
    assert failure.get("message") == "1 finding at --fail-on error: holding-brake-vertical-load"
    # element text: an XML reader turns CR LF into LF, so the body is written with LF
    expected = _xml_safe(f"fix: fit a brake of at least 72 N·m {HOSTILE}").replace("\r\n", "\n")
    assert expected.splitlines()[0] in failure.text
    assert "]]>" in failure.text and "<b>&amp;</b>" in failure.text
    # printed to a CI log, no line of the document may start a workflow command
    assert not re.search(r"(?m)^[ \t]*::", junit.render(sample_result()))


def test_no_character_outside_xml_1_0_is_written():
    text = junit.render(sample_result())
    assert not re.search("[\x00-\x08\x0b\x0c\x0e-\x1f]", text)
    assert "\x85" in text and "\u2028" in text  # allowed in XML 1.0, kept


def test_second_reader_junitparser_agrees_on_counts():
    junitparser = pytest.importorskip("junitparser")
    xml = junitparser.JUnitXml.fromstring(junit.render(sample_result()))
    suites = list(xml)
    assert len(suites) == 1
    seen = {"tests": 0, "failures": 0, "errors": 0}
    for case in suites[0]:
        seen["tests"] += 1
        for item in case.result:
            seen[{junitparser.Failure: "failures", junitparser.Error: "errors"}[type(item)]] += 1
    assert seen == {"tests": 4, "failures": 2, "errors": 2}


def test_an_empty_result_gives_an_empty_suite():
    root = _root({"format_version": 1, "tool": {"name": "rulecheck", "version": "0.1.0"}, "specs": [],
                  "summary": {"specs": 0, "exit_code": 0}})
    assert root.get("tests") == "0" and list(root.iter("testcase")) == []
