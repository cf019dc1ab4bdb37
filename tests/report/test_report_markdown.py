"""The Markdown pull-request comment: structure, order, and escaping of everything from a spec."""

from __future__ import annotations

import re

import pytest
from hypothesis import given
from hypothesis import strategies as st

from rulecheck.report import markdown

from . import sample

CELL_SPLIT = re.compile(r"(?<!\\)\|")
CODE_SPAN = re.compile(r"`[^`]*`")


def _table_rows(text: str) -> list[list[str]]:
    rows = [line for line in text.splitlines() if line.startswith("|")]
    return [[c.strip() for c in CELL_SPLIT.split(line)[1:-1]] for line in rows]


def test_summary_table_has_one_row_per_spec_worst_first(samples):
    text = markdown.render(samples["plant"])
    assert text.startswith("### Drive-train rule check: 4 drive trains: 2 fail, 1 invalid, 1 warning\n")
    rows = _table_rows(text)
    assert rows[0] == ["Verdict", "Drive train", "Errors", "Warnings", "Info", "Not checked", "Waived", "File"]
    assert rows[1][0] == "---"
    body = rows[2:]
    assert len(body) == 4 and all(len(r) == 8 for r in body)
    assert [r[1] for r in body] == ["H-1 — Wagon-tippler service hoist",
                                    "AX-3 — Bag-sealer jaw axis", "specs\\_demo/broken.yaml",
                                    "CV-201 — Overburden belt conveyor, transfer tower 2"]
    assert [r[0] for r in body] == ["**\\[X\\] FAIL**", "**\\[X\\] FAIL**", "**\\[X\\] INVALID**",
                                    "**\\[!\\] WARNING**"]
    assert body[0][2] == "2 (2 safety)"


def test_failures_and_not_checked_are_listed_passes_are_not(samples):
    text = markdown.render(samples["plant"])
    for rule in ("holding-brake-vertical", "regen-braking-energy", "pm-uncontrolled-generation", "inertia-ratio",
                 "yaml-syntax", "torque-margin-continuous", "altitude-ambient-derating", "supply-unbalance"):
        assert f"`{rule}`" in text, rule
    for rule in ("torque-rms-duty-cycle", "pm-back-emf-headroom", "mechanical-max-speed"):
        assert rule not in text, rule
    assert "needs `environment.altitude`, `environment.ambient_max`" in text
    assert "values: required 44.7 N·m; capability 47.8 N·m; speed 1455 r/min; margin 1.069; limit 1.1" in text
    assert "fix: choose a motor with at least 49.2 N·m continuous" in text


def test_cautions_footer(samples):
    text = markdown.render(samples["servo"])
    assert "Screening aid, not an approval" in text and "authority having jurisdiction" in text
    assert "Permanent-magnet motors generate when turned" in text


def test_hostile_title_cannot_break_the_table_or_inject(samples):
    text = markdown.render(samples["hostile"])
    rows = _table_rows(text)
    assert all(len(r) == 8 for r in rows[2:])
    outside_code = CODE_SPAN.sub("", text).replace("<sub>", "").replace("</sub>", "")
    assert "<" not in outside_code and ">" not in outside_code.replace("\n> ", "\n")
    assert "&lt;script&gt;alert(1)&lt;/script&gt;" in text
    assert "\\*bold\\*" in text and "\\_x\\_" in text and "\\[link\\]" in text and "\\`code\\`" in text
    assert "http\\://example.invalid" in text  # no bare URL for an autolink
    assert "@\u200breviewer" in text and "@reviewer" not in text
    # a code span holding the hostile path cannot close early
    assert "`load.\"><img src=x onerror=alert(2)> (line 2, column 1)`" in text


@given(st.text(max_size=200))
def test_escape_leaves_no_live_markup(text):
    out = markdown.escape(text)
    assert "\n" not in out and "\r" not in out
    assert "<" not in out and ">" not in out
    unescaped = re.sub(r"\\.", "", out)
    for ch in "|*_[]`~":
        assert ch not in unescaped, (text, out)


@given(st.text(max_size=100))
def test_code_span_never_closes_early(text):
    out = markdown.code(text, in_table=True)
    assert out == "—" or (out.startswith("`") and out.endswith("`") and out.count("`") == 2)
    assert not CELL_SPLIT.search(out)


@pytest.mark.parametrize("count,listed", [(150, 150), (1000, None)])
def test_comment_stays_under_the_size_limit(count, listed):
    specs = []
    for i in range(count):
        s = sample.conveyor()
        s["tag"] = f"CV-{i:03d}"
        s["file"] = f"specs_demo/cv{i:03d}.yaml"
        s["outcomes"][0]["message"] = "long message " * 30
        specs.append(s)
    text = markdown.render(sample.result(*specs))
    assert len(text) <= markdown.MAX_LENGTH
    assert re.search(r"Details of \d+ more drive trains left out for length; see the HTML report", text)
    rows = len(_table_rows(text)) - 2
    if listed:
        assert rows == listed  # the summary keeps every drive train while it fits
    else:
        assert 100 < rows < count
        assert f"{count - rows} more drive trains not listed (the least severe)" in text
