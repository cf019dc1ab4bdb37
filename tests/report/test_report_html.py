"""The HTML report read back with html.parser: content, escaping, self-containment, cautions, order."""

from __future__ import annotations

import copy
import re

import pint
import pytest

from rulecheck.report import common, html

from . import sample
from .htmlscan import scan


def _render(result: dict, **kw) -> tuple[str, object]:
    text = html.render(result, **kw)
    return text, scan(text)


@pytest.mark.parametrize("name", ["conveyor", "servo", "hoist", "invalid", "hostile", "plant"])
def test_every_outcome_rule_and_value_is_shown(samples, name):
    text, page = _render(samples[name])
    body = page.all_text
    assert page.tag_names() >= {"html", "head", "body", "main", "section"}
    for spec in samples[name]["specs"]:
        for outcome in spec["outcomes"]:
            assert outcome["rule"] in body
            for key, value in common.value_items(outcome):
                assert f"{key}" in body and value in body, (outcome["rule"], key, value)


def test_computed_values_appear_with_units(samples):
    body = scan(html.render(samples["plant"])).all_text
    # the numbers as the sample result states them, shown with their units
    for expected in ["44.7 N·m", "47.8 N·m", "1455 r/min", "862 V", "6000 r/min", "16.4 kW", "328 kJ", "2500 kg",
                     "49.22 N·m", "0.184 kg·m²", "1.62 V·s/rad"]:
        assert expected in body, expected
    # margins read as ratios (as the messages state them), not as percentages
    assert "margin 1.069" in " ".join(body.split()) or "1.069" in body
    assert "106.9 %" not in body


def test_customary_units_follow_pint(samples):
    ureg = pint.UnitRegistry()
    body = scan(html.render(samples["conveyor"], units="customary")).all_text
    # pint's own definitions of lbf and ft (NIST SP 811 values) give the expected display
    required = ureg.Quantity(44.7, "N*m").to("lbf*ft").magnitude
    assert f"{required:.2f} lbf·ft" in body
    inertia = ureg.Quantity(0.184, "kg*m^2").to("lb*ft^2").magnitude
    assert f"{inertia:.3f} lb·ft²" in body
    assert "1455 r/min" in body  # shaft speed stays in r/min in both systems
    assert "US customary" in body


def test_identity_tool_and_rule_set_are_shown(samples):
    body = scan(html.render(samples["conveyor"])).all_text
    spec = samples["conveyor"]["specs"][0]
    for field in ("tag", "title", "spec_status", "file", "sha256"):
        assert spec[field] in body, field
    assert "rulecheck 0.1.0" in body
    assert sample.DIGEST in body
    assert "40 rules" in body


def test_finding_details_formula_basis_fix_limit(samples):
    body = " ".join(scan(html.render(samples["conveyor"])).all_text.split())
    assert "margin = T_cont(n) / (T_L / (i·η))" in body
    assert "IEC TS 60034-25, low-speed derating (from memory)" in body
    assert "M: from memory, not verified" in body
    assert "choose a motor with at least 49.2 N·m continuous" in body
    assert "limit 1.1" in body
    assert "motor.rated_torque (line 14, column 5)" in body


def test_waivers_and_not_checked_are_explicit(samples):
    body = " ".join(scan(html.render(samples["conveyor"])).all_text.split())
    assert "R. Okafor (electrical lead)" in body and "2027-06-30" in body
    assert "site transformer tap raised" in body
    assert "environment.altitude" in body and "environment.ambient_max" in body and "supply.phase_voltages" in body
    assert "Silence is not a pass" in body


def test_verdict_at_a_glance_uses_words_not_colour(samples):
    text, page = _render(samples["plant"])
    body = page.all_text
    for words in ("[X] FAIL", "[X] INVALID", "[!] WARNING", "[X] ERROR", "[!] WARNING", "[i] INFO", "[?] warning"):
        assert words in body, words
    assert "2 (2 safety-relevant)" in body
    # every badge carries a marker and a word, whatever its colour
    badges = re.findall(r'<span class="badge [^"]+">([^<]*)</span>', text)
    assert badges and all(re.match(r"\[(X|!|i|\?|W|ok|-)\]", b) for b in badges)


def test_index_is_sorted_worst_first_and_says_so(samples):
    text = html.render(samples["plant"])
    body = scan(text).all_text
    assert common.ORDER_STATEMENT in " ".join(body.split())
    index = text[text.index('<table class="index">'):text.index("</table>", text.index('<table class="index">'))]
    order = re.findall(r'<a href="#dt-\d+">([^<]+)</a>', index)
    assert order == ["H-1 — Wagon-tippler service hoist", "AX-3 — Bag-sealer jaw axis", "specs_demo/broken.yaml",
                     "CV-201 — Overburden belt conveyor, transfer tower 2"]
    # the drive-train sections follow the same order
    sections = re.findall(r'<h2 id="dt-(\d+)-h">', text)
    assert sections == ["1", "2", "3", "4"]


def test_single_spec_summary_names_it_and_its_deciding_findings(samples):
    text = html.render(samples["conveyor"])
    index = text[text.index('<table class="index">'):text.index("</table>", text.index('<table class="index">'))]
    spec = samples["conveyor"]["specs"][0]
    assert spec["tag"] in index
    deciding = [o for o in spec["outcomes"] if o["outcome"] == "fail" and o["severity"] in ("error", "warning")]
    assert deciding and all(common.plain(o["message"])[:40] in scan(index).all_text for o in deciding)


def test_hostile_strings_are_escaped_never_live(samples):
    text, page = _render(samples["hostile"])
    assert sample.HOSTILE_SCRIPT not in text
    assert '<img src=x' not in text
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in text
    assert sample.HOSTILE_SCRIPT in page.all_text  # shown as text, for the reviewer to see
    assert "script" not in page.tag_names() and "img" not in page.tag_names()
    for tag, attrs in page.tags:
        assert not any(name.startswith("on") for name in attrs), (tag, attrs)
        assert not any(v and "javascript:" in v.lower() for v in attrs.values())


def test_no_network_references_and_no_scripts(samples):
    for name, result in samples.items():
        text, page = _render(result)
        refs = page.resource_references()
        assert refs, "the page links its own sections and charts"
        for ref in refs:
            assert ref.startswith("#"), (name, ref)
        assert not page.has_css_import()
        assert "script" not in page.tag_names()
        assert not re.search(r"(src|href)\s*=\s*[\"']?\s*(https?:)?//", text, re.I)
        assert "http://" not in text and "https://" not in text or name == "hostile"


def test_hostile_link_text_is_not_a_link(samples):
    text = html.render(samples["hostile"])
    # the spec's "[link](http://example.invalid)" is plain text: no anchor points outside the page
    assert all(href.startswith("#") for href in re.findall(r'href="([^"]*)"', text))


@pytest.mark.parametrize("name", ["conveyor", "servo", "hoist", "invalid", "hostile", "plant"])
def test_cautions_in_every_report(samples, name):
    body = " ".join(scan(html.render(samples[name])).all_text.split())
    assert "Cautions" in body
    for words in ("not an approval", "authority having jurisdiction", "NEC Article 430", "IEC 60364", "IEC 60204-1",
                  "licensed engineer", "arc-flash"):
        assert words in body, words


def test_cautions_name_the_hazards_this_result_touches(samples):
    hoist = " ".join(scan(html.render(samples["hoist"])).all_text.split())
    assert "Suspended and overhauling loads" in hoist and "Nobody works under a suspended load" in hoist
    assert "Stored energy" in hoist
    assert "Permanent-magnet motors generate" not in hoist
    servo = " ".join(scan(html.render(samples["servo"])).all_text.split())
    assert "Permanent-magnet motors generate when turned" in servo and "lethal with the drive isolated" in servo
    assert "Overspeed" in servo
    assert "Suspended and overhauling loads" not in servo
    # the conveyor's holding-brake and PM rules are not applicable: no such hazard is claimed
    conveyor = " ".join(scan(html.render(samples["conveyor"])).all_text.split())
    assert "Suspended and overhauling loads" not in conveyor
    assert "Permanent-magnet motors generate" not in conveyor


def test_charts_are_inline_svg_with_text_equivalents(samples):
    text, page = _render(samples["servo"])
    assert text.count("<svg") == 2
    titles = re.findall(r'<title id="(dt1-[a-z_]+-title)">', text)
    assert sorted(titles) == ["dt1-back_emf-title", "dt1-torque_speed-title"]
    assert "DC-bus trip level 800 V" in page.all_text
    ids = re.findall(r'\bid="([^"]+)"', text)
    assert len(ids) == len(set(ids)), "element ids are unique across the page"


def test_chart_data_tables_sit_in_the_appendix_linked_from_their_chart(samples):
    text, _page = _render(samples["servo"])
    # each chart links to its data table; the tables come after every chart, in the drive train's appendix
    last_link = text.index('href="#dt-1-back_emf-data"')
    for key in ("torque_speed", "back_emf"):
        link = f'href="#dt-1-{key}-data"'
        assert text.count(link) == 1
        table = text.index(f'id="dt-1-{key}-data"')
        assert text.index(f'class="chart-block" id="dt-1-{key}"') < text.index(link) <= last_link < table
        assert text.index(f'id="dt-1-{key}-data"') < text.index("<summary>Passed (")
    assert text.count("<summary>Data shown in the chart: ") == 2


def test_charts_can_be_left_out(samples):
    text = html.render(samples["servo"], charts=False)
    assert "<svg" not in text and "Charts" not in scan(text).all_text


def test_bad_chart_data_is_reported_not_raised(samples):
    result = copy.deepcopy(samples["conveyor"])
    result["specs"][0]["charts"]["torque_speed"]["motor_continuous"] = [[0, "lots"], [1, 2]]
    result["specs"][0]["charts"]["duty"] = {"samples": [[0, 1, 2]]}
    body = " ".join(scan(html.render(result)).all_text.split())
    assert "The torque_speed chart could not be drawn: motor_continuous[0] is not a finite number" in body
    assert "The duty chart could not be drawn: the duty cycle has fewer than two samples" in body


def test_sparse_result_still_renders():
    text = html.render({"specs": [{"file": "a.yaml", "outcomes": [{"rule": "r1", "outcome": "fail"}]}, "junk"]})
    body = scan(text).all_text
    assert "r1" in body and "a.yaml" in body and "Cautions" in body


def test_render_is_deterministic(samples):
    assert html.render(samples["plant"]) == html.render(samples["plant"])


def test_unknown_units_system_is_refused(samples):
    with pytest.raises(ValueError, match="si"):
        html.render(samples["conveyor"], units="imperial")
