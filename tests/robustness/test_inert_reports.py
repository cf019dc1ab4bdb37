"""Reports are inert: markup, links, workflow commands and control characters from a spec or a rule file reach
every output format only escaped."""

from __future__ import annotations

import json
import re
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

from rulecheck.report import jsonout
from tests.robustness.conftest import assert_no_traceback, run_cli
from tests.robustness.hostile import rule
from tests.robustness.specs import CONVEYOR

# Each piece is a different way out of a report: HTML markup, an attribute break-out, a Markdown link with a
# script URL, a forged workflow command on a line of its own, a terminal escape sequence and a bell.
SCRIPT = "<script>alert(1)</script>"
IMG = '"><img src=x onerror=alert(1)>'
LINK = "[click](javascript:alert(1))"
FORGED = "::error file=x::forged"
PAYLOAD = f"{SCRIPT} {IMG} {LINK}\n{FORGED}\r\n{FORGED} \x1b[31mred\x1b[0m \x07 \x00"
YAML_PAYLOAD = json.dumps(PAYLOAD)  # a JSON string is a valid YAML double-quoted scalar

FORMATS = ("text", "json", "sarif", "junit", "markdown", "html", "annotations")


@pytest.fixture(scope="module")
def outputs(tmp_path_factory: pytest.TempPathFactory) -> dict[str, str]:
    root = tmp_path_factory.mktemp("inert")
    specs = root / "specs"
    (specs / ".git").mkdir(parents=True)
    hostile = CONVEYOR.replace("title: Grit conveyor 2, inlet works", f"title: {YAML_PAYLOAD}")
    hostile = hostile.replace("tag: CV-210", f"tag: {YAML_PAYLOAD}")
    hostile += f"x-notes: {YAML_PAYLOAD}\n"
    (specs / "hostile.yaml").write_text(hostile, encoding="utf-8")
    rules = root / "rules"
    rules.mkdir()
    message = PAYLOAD.replace("\x00", "") + " {{ from_power }}"
    text = rule(message="MESSAGE", when="deviation >= 0").replace("MESSAGE", json.dumps(message)[1:-1])
    (rules / "hostile-rule.yaml").write_text(text, encoding="utf-8")
    out = {}
    for fmt in FORMATS:
        proc = run_cli("check", str(specs), "--rules", str(rules), "--format", fmt, "--today", "2026-06-01")
        assert_no_traceback(proc)
        assert proc.returncode == 1, (fmt, proc.stderr[-2000:])
        out[fmt] = proc.stdout
    return out


def _no_raw_controls(text: str) -> None:
    assert not re.search("[\x00-\x08\x0b\x0c\x0e-\x1f\x7f]", text), repr(re.findall("[\x00-\x1f].{0,20}", text)[:3])


def _no_forged_command(text: str) -> None:
    for line in re.split(r"\r\n|\r|\n", text):
        assert not line.lstrip().startswith("::error file=x"), line[:200]


def test_payload_reached_the_reports(outputs: dict[str, str]) -> None:
    """The test means something only if the hostile text is in the result at all."""
    result = jsonout.load(outputs["json"])
    (spec,) = result["specs"]
    assert spec["title"] and SCRIPT in spec["title"]
    assert any(SCRIPT in o["message"] and o["rule"] == "hostile-rule" for o in spec["outcomes"])


def test_text_report_has_no_terminal_escapes_or_forged_commands(outputs: dict[str, str]) -> None:
    _no_raw_controls(outputs["text"])
    _no_forged_command(outputs["text"])


@pytest.mark.parametrize("fmt", ["json", "sarif"])
def test_json_formats_carry_the_text_escaped(fmt: str, outputs: dict[str, str]) -> None:
    _no_raw_controls(outputs[fmt])
    _no_forged_command(outputs[fmt])
    json.loads(outputs[fmt])


def test_junit_is_well_formed_xml_without_markup_from_the_spec(outputs: dict[str, str]) -> None:
    _no_raw_controls(outputs["junit"])
    tree = ET.fromstring(outputs["junit"].encode("utf-8"))
    assert not any(el.tag in ("script", "img") for el in tree.iter())
    _no_forged_command(outputs["junit"])
    texts = "".join(el.text or "" for el in tree.iter())
    assert FORGED in texts  # the reader still gets the text as written, only the raw line is defused


def test_markdown_has_no_live_markup_or_links(outputs: dict[str, str]) -> None:
    md = outputs["markdown"]
    _no_raw_controls(md)
    _no_forged_command(md)
    assert "<script" not in md.lower() and "<img" not in md.lower()
    assert "](javascript:" not in md.replace(" ", "").lower()


def test_html_has_no_script_or_event_handler_from_the_spec(outputs: dict[str, str]) -> None:
    html = outputs["html"]
    _no_raw_controls(html)
    assert "<script>alert" not in html and "<img src=x" not in html
    assert 'href="javascript:' not in html.lower()
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in html


def test_annotations_are_one_line_each_and_never_forged(outputs: dict[str, str]) -> None:
    lines = outputs["annotations"].splitlines()
    assert lines and all(line.startswith(("::error ", "::warning ", "::notice ")) for line in lines)
    _no_forged_command(outputs["annotations"])
    _no_raw_controls(outputs["annotations"])
    assert not any(line.startswith("::error file=x") for line in lines)


def test_html_written_by_the_library_escapes_too(outputs: dict[str, str], tmp_path: Path) -> None:
    from rulecheck.report import html

    page = html.render(jsonout.load(outputs["json"]), units="si", charts=False)
    assert "<script>alert" not in page and "<img src=x" not in page
