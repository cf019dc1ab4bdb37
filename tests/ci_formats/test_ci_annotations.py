"""Workflow-command annotations: one line per finding whatever a spec or rule file holds, and each line,
decoded the way the runner decodes it, gives back the original file, title and message.

The runner's rules as the tests apply them: a line is a command when it starts with ``::``; the command
name runs to the first space, its properties to the first ``::`` after that, and the message is the
rest; properties are split at ``,`` and ``=``; then ``%0D``, ``%0A``, ``%3A``, ``%2C`` and last ``%25``
are decoded (the message decodes only ``%0D``, ``%0A`` and ``%25``)."""

from __future__ import annotations

import pytest

from rulecheck.report import annotations

from .sample import HOSTILE, HOSTILE_PATH, sample_result

# characters the runner cannot decode, shown as U+FFFD: C0/C1 controls except TAB, LF, CR; U+2028/2029
_UNDECODABLE = {chr(c) for c in [*range(0x00, 0x09), 0x0B, 0x0C, *range(0x0E, 0x20), *range(0x7F, 0xA0)]}
_UNDECODABLE |= {"\u2028", "\u2029"}


def _shown(text):
    return "".join("\ufffd" if ch in _UNDECODABLE else ch for ch in text)


def _unescape_message(text):
    return text.replace("%0D", "\r").replace("%0A", "\n").replace("%25", "%")


def _unescape_property(text):
    return _unescape_message(text.replace("%3A", ":").replace("%2C", ","))


def _parse(line):
    """Return (command, properties, message) of one annotation line, as the runner reads it."""
    assert line.startswith("::")
    command, rest = line[2:].split(" ", 1)
    end = rest.index("::")
    properties = {}
    for item in rest[:end].split(","):
        key, value = item.split("=", 1)
        properties[key] = _unescape_property(value)
    return command, properties, _unescape_message(rest[end + 2:])


def _findings(result, floor):
    rank = {"info": 0, "warning": 1, "error": 2}
    out = []
    for spec in result["specs"]:
        for o in spec["outcomes"]:
            if o["outcome"] == "fail":
                level = o["severity"]
            elif o["outcome"] == "not-checked":
                # a rule that could not run counts as an error; an unchecked safety rule as a warning
                level = "error" if o["severity"] == "error" else "warning" if o["safety"] else "info"
            else:
                continue
            if rank[level] >= rank[floor]:
                out.append((spec, o, level))
    return out


@pytest.mark.parametrize("floor", ["error", "warning", "info"])
def test_exactly_one_line_per_finding_at_or_above_the_floor(floor):
    result = sample_result()
    text = annotations.render(result, min_severity=floor)
    expected = _findings(result, floor)
    assert text.endswith("\n")
    # no line break of any kind inside a line: splitlines() knows every Unicode line boundary
    assert len(text.splitlines()) == len(text.split("\n")) - 1 == len(expected)
    commands = [_parse(line)[0] for line in text.splitlines()]
    assert commands == [{"error": "error", "warning": "warning", "info": "notice"}[lvl] for _, _, lvl in expected]


def test_counts_at_each_floor():
    """6 error-level fails; 2 warning fails and p101's unchecked safety rule; an info fail and an unchecked
    rule that is not safety-relevant."""
    result = sample_result()
    assert [len(annotations.render(result, min_severity=f).splitlines()) for f in ("error", "warning", "info")] == [
        6, 9, 11]


def test_a_rule_that_could_not_run_is_an_error_as_it_counts_toward_failure():
    """A rule error (a not-checked outcome of severity error) fails a run at error level: it is annotated so."""
    result = sample_result()
    target = next(o for o in result["specs"][1]["outcomes"] if o["rule"] == "ip-rating-outdoor")
    target["severity"] = "error"
    lines = [line for line in annotations.render(result, min_severity="error").splitlines() if "ip-rating" in line]
    assert len(lines) == 1 and lines[0].startswith("::error ")


def test_each_line_decodes_back_to_the_original_file_title_and_message():
    result = sample_result()
    lines = annotations.render(result, min_severity="info").splitlines()
    for line, (spec, o, _) in zip(lines, _findings(result, "info"), strict=True):
        _, props, message = _parse(line)
        assert props["file"] == _shown(spec["file"])
        tag = spec["tag"] or ""
        assert props["title"] == _shown(f"{tag} {o['rule']}: {o['title']}".strip())
        if o["location"]["line"]:
            assert props["line"] == str(o["location"]["line"]) and props["col"] == str(o["location"]["column"])
        else:
            assert "line" not in props and "col" not in props
        if o["outcome"] == "fail":
            assert _shown(o["message"]) in message
        else:
            assert "not checked: missing " + ", ".join(o["missing"]) in message


def test_injection_through_title_message_and_path_stays_inside_one_annotation():
    text = annotations.render(sample_result(), min_severity="error")
    brake = [line for line in text.splitlines() if "holding-brake-vertical-load" in line]
    assert len(brake) == 1
    command, props, message = _parse(brake[0])
    assert command == "error"
    assert set(props) == {"file", "line", "col", "title"}
    assert props["file"] == HOSTILE_PATH and props["line"] == "40"
    assert props["title"] == _shown(f"WG-2 <hoist> holding-brake-vertical-load: Holding brake sized for the "
                                    f"suspended gate: {HOSTILE}")
    assert _shown(f"brake torque 60 N·m < 1.5 × 48 N·m; note: {HOSTILE}") in message
    assert "Safety-relevant" in message
    # nothing from the spec starts a line, so no second command exists
    assert all(line.startswith(("::error ", "::warning ", "::notice ")) for line in text.splitlines())


@pytest.mark.parametrize(("raw", "message", "prop"), [
    ("a%b", "a%25b", "a%25b"),
    ("x\r\ny", "x%0D%0Ay", "x%0D%0Ay"),
    ("k::v,w", "k::v,w", "k%3A%3Av%2Cw"),
    ("%0A", "%250A", "%250A"),
    ("bell\x07 esc\x1b nel\x85 ls\u2028", "bell\ufffd esc\ufffd nel\ufffd ls\ufffd",
     "bell\ufffd esc\ufffd nel\ufffd ls\ufffd"),
])
def test_escaping_rules(raw, message, prop):
    assert annotations.escape_message(raw) == message
    assert annotations.escape_property(raw) == prop


def test_windows_separators_in_a_path_become_forward_slashes():
    result = sample_result()
    result["specs"][0]["file"] = "specs_demo\\p101.yaml"
    first = annotations.render(result).splitlines()[0]
    assert _parse(first)[1]["file"] == "specs_demo/p101.yaml"


def test_waived_passed_and_not_applicable_outcomes_give_no_annotation():
    text = annotations.render(sample_result(), min_severity="info")
    for rule in ("overspeed-mechanical-limit", "thermal-class-ambient", "gearbox-service-factor"):
        assert rule not in text


def test_unknown_floor_is_a_clear_error():
    with pytest.raises(ValueError, match="min_severity must be one of"):
        annotations.render(sample_result(), min_severity="fatal")


def test_empty_result_gives_no_output():
    assert annotations.render({"specs": []}) == ""


@pytest.mark.parametrize(("environ", "expected"), [
    ({"GITHUB_ACTIONS": "true"}, True),
    ({"GITHUB_ACTIONS": "True"}, True),
    ({"GITHUB_ACTIONS": "false"}, False),
    ({"GITHUB_ACTIONS": ""}, False),
    ({"CI": "true"}, False),
    ({}, False),
])
def test_detect_ci_annotations(environ, expected):
    assert annotations.detect_ci_annotations(environ) is expected


def test_runner_table_is_small_and_extendable():
    assert ("GITHUB_ACTIONS", "true") in annotations.RUNNERS
    assert all(len(row) == 2 for row in annotations.RUNNERS)
