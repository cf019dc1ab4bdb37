"""The requirements table: each drive train's needs as the rules computed them, carried in the JSON result."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import jsonschema

from rulecheck.report import html, text
from rulecheck.result import requirements_of

from .htmlscan import scan

ROOT = Path(__file__).resolve().parents[2]


def _q(value, unit, kind):
    return {"value": value, "unit": unit, "kind": kind}


def _gearbox(outcome="fail"):
    # 3987 N·m nominal × SF_app 1.5 = 5980 N·m needed; 4500 N·m rated: 4500 / 5980 = 0.7525 (hand calculation)
    return {"rule": "gearbox-service-factor", "outcome": outcome, "severity": "error", "safety": True,
            "values": {"t2_nom": _q(3986.86, "N*m", "torque"), "sf_app": _q(1.5, "1", "ratio"),
                       "t2_req": _q(5980.29, "N*m", "torque"), "t2_rated": _q(4500.0, "N*m", "torque"),
                       "margin": _q(0.752473, "1", "ratio")},
            "limit": _q(5980.29, "N*m", "torque")}


def test_a_line_carries_need_rating_margin_and_limit():
    (row,) = requirements_of([_gearbox()])
    assert row["rule"] == "gearbox-service-factor" and row["outcome"] == "fail" and row["sense"] == "at-least"
    assert row["needed"]["value"] == 5980.29 and row["rating"]["value"] == 4500.0
    assert row["margin"]["value"] == 0.752473  # the rule's own margin, not recomputed
    assert row["limit"] == _q(5980.29, "N*m", "torque")


def test_a_missing_margin_is_rating_over_need_and_at_most_reads_limit_over_value():
    drop = {"rule": "cable-voltage-drop", "outcome": "pass", "severity": "warning", "safety": False,
            "values": {"drop": _q(0.0268, "1", "fraction"), "limit": _q(0.05, "1", "fraction")}, "limit": None}
    (row,) = requirements_of([drop])
    assert row["sense"] == "at-most"
    assert abs(row["margin"]["value"] - 0.05 / 0.0268) < 1e-5  # 1.866: the drop may grow 1.87-fold


def test_nothing_needed_or_not_checked_gives_no_line():
    # no regeneration: the rule reports 0 W for a resistor that is not needed; an unchecked rule gives nothing
    regen = {"rule": "regen-braking-energy", "outcome": "pass", "severity": "error", "safety": True,
             "values": {"e_bus": _q(0.0, "J", "energy"), "p_req": _q(0.0, "W", "power")}}
    assert requirements_of([regen, {**_gearbox(), "outcome": "not-checked"}]) == []


def test_html_and_terminal_show_the_table():
    spec = {"file": "a.yaml", "tag": "CV-1", "status": "checked", "verdict": "fail", "outcomes": [_gearbox()],
            "requirements": requirements_of([_gearbox()])}
    body = " ".join(scan(html.render({"specs": [spec]})).all_text.split())
    assert "gearbox rated torque with service factor 5980 N·m 4500 N·m 0.7525" in body
    lines = text.requirement_lines(spec)
    assert lines[0] == "a.yaml: what CV-1 needs:"
    assert "5980 N·m" in lines[2] and "4500 N·m" in lines[2] and "0.7525" in lines[2] and "fail" in lines[2]


def test_demo_json_carries_requirements_and_meets_the_schema(tmp_path):
    proc = subprocess.run([sys.executable, "-m", "rulecheck", "check", "specs_demo/cv-120-stacker-conveyor.yaml",
                           "--format", "json", "--no-cache"], cwd=ROOT, capture_output=True, text=True)
    result = json.loads(proc.stdout)
    schema = json.loads((ROOT / "rulecheck/schemas/result.schema.json").read_text(encoding="utf-8"))
    jsonschema.validate(result, schema)
    rows = {r["rule"]: r for r in result["specs"][0]["requirements"]}
    gear = rows["gearbox-service-factor"]
    assert round(gear["needed"]["value"]) == 5980 and gear["rating"]["value"] == 4500
    cont = rows["torque-margin-continuous"]
    assert cont["at"]["unit"] == "r/min" and cont["limit"]["value"] == 1.1
    proc2 = subprocess.run([sys.executable, "-m", "rulecheck", "check", "specs_demo/cv-120-stacker-conveyor.yaml",
                            "--requirements", "--no-cache"], cwd=ROOT, capture_output=True, text=True)
    assert "what HR-CV-120 needs:" in proc2.stdout and "Traceback" not in proc2.stderr
