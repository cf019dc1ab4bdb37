"""Load cases (``cases:`` in a spec): every rule runs on each case, findings name their case, identical
findings merge, the worst case decides the verdict; validation, SARIF, baselines, waivers and ``--set``.

The base spec is the flawed-corpus belt f45 (hand calculation in its opening comment): loaded, the steady
regeneration needs a 20.09 kW resistor (1.2 × 16.74 kW) where 7.5 kW is fitted; empty (3 t) it needs 5.02 kW.
"""

from __future__ import annotations

import datetime as dt
import json
from pathlib import Path
from typing import Any

import pytest

from rulecheck import check
from rulecheck.check import CheckContext
from rulecheck.config import Config
from rulecheck.report.mail import text_body
from rulecheck.report.sarif import fingerprint
from rulecheck.run import prepare
from tests.cli.conftest import DEMO, ROOT, run_cli

F45 = ROOT / "tests" / "corpus" / "flawed" / "f45-declining-belt-resistor-sized-empty.yaml"
TEXT = F45.read_text(encoding="utf-8")
BASE = TEXT[:TEXT.index("\ncases:")] + "\n"  # the same belt without its cases
CASES = TEXT[TEXT.index("\ncases:"):]
REGEN = "regen-braking-energy"


@pytest.fixture(scope="module")
def ctx() -> CheckContext:
    return prepare(Config(), [], dt.date(2026, 6, 1), "si", None).context


def _check(ctx: CheckContext, tmp: Path, text: str, name: str = "s.yaml") -> dict[str, Any]:
    path = tmp / name
    path.write_text(text, encoding="utf-8")
    return check.check_file(path, ctx)


def _of(spec: dict[str, Any], rule: str) -> list[dict[str, Any]]:
    return [o for o in spec["outcomes"] if o["rule"] == rule]


def _line_of(text: str, needle: str) -> int:
    return next(i for i, line in enumerate(text.splitlines(), 1) if needle in line)


# --- a spec without cases is as before ----------------------------------------------------------------------


def test_one_case_that_changes_nothing_gives_the_spec_own_result(ctx: CheckContext, tmp_path: Path) -> None:
    """One case without overrides: every finding is the same as without cases (merged, no case named)."""
    plain = _check(ctx, tmp_path, BASE, "a.yaml")
    one = _check(ctx, tmp_path, BASE + "\ncases:\n  only: {title: as written}\n", "b.yaml")
    assert "cases" not in plain and all("case" not in o for o in plain["outcomes"])
    assert one["cases"] == [{"name": "only", "title": "as written", "verdict": plain["verdict"], "derived": {}}]
    for key in ("outcomes", "derived", "counts", "verdict", "requirements"):
        assert json.dumps(one[key], sort_keys=True).replace("b.yaml", "a.yaml") == json.dumps(plain[key],
                                                                                              sort_keys=True), key


def test_demo_results_name_no_case() -> None:
    proc = run_cli("check", str(DEMO), "-f", "json", "--no-cache")
    result = json.loads(proc.stdout)
    assert all("cases" not in s for s in result["specs"])
    assert all("case" not in o for s in result["specs"] for o in s["outcomes"])


# --- per-case findings, merging, the verdict -----------------------------------------------------------------


def test_only_the_loaded_case_fails_and_decides_the_verdict(ctx: CheckContext, tmp_path: Path) -> None:
    spec = _check(ctx, tmp_path, TEXT)
    regen = {o.get("case"): o for o in _of(spec, REGEN)}
    assert set(regen) == {"loaded", "empty"}
    assert regen["loaded"]["outcome"] == "fail" and regen["loaded"]["severity"] == "error"
    # hand values (f45): 1.2 × 16.74 kW loaded; 1.2 × 4.185 kW empty
    assert regen["loaded"]["values"]["p_req"]["value"] == pytest.approx(20090, rel=0.02)
    assert regen["empty"]["outcome"] == "pass"
    assert regen["empty"]["values"]["p_req"]["value"] == pytest.approx(5022, rel=0.02)
    assert [(c["name"], c["verdict"]) for c in spec["cases"]] == [("loaded", "fail"), ("empty", "pass")]
    assert spec["verdict"] == "fail" and spec["counts"]["error"] == 1
    # the case-specific derived values sit in each case; the shared ones once
    assert spec["cases"][0]["derived"]["train.braking_power_mean"]["value"] == pytest.approx(16740, rel=0.01)
    assert spec["cases"][1]["derived"]["train.braking_power_mean"]["value"] == pytest.approx(4185, rel=0.01)
    assert "train.braking_power_mean" not in spec["derived"] and "motor.rated_torque" in spec["derived"]


def test_identical_outcomes_merge_into_one_finding_without_a_case(ctx: CheckContext, tmp_path: Path) -> None:
    spec = _check(ctx, tmp_path, TEXT)
    by_rule: dict[str, list[Any]] = {}
    for o in spec["outcomes"]:
        by_rule.setdefault(o["rule"], []).append(o.get("case"))
    for rule, found in by_rule.items():  # one finding for every case, or one per case
        assert found == [None] or sorted(found) == ["empty", "loaded"], (rule, found)
    assert by_rule["supply-voltage-frequency"] == [None]  # the supply is the same in both cases
    assert sorted(by_rule["torque-margin-continuous"]) == ["empty", "loaded"]  # the load torque is not


def test_worst_case_decides_in_any_order_and_a_sound_pair_passes(ctx: CheckContext, tmp_path: Path) -> None:
    swapped = BASE + "\ncases:\n  empty: {load: {mass: 3000 kg}}\n  loaded: {}\n"
    spec = _check(ctx, tmp_path, swapped)
    assert spec["verdict"] == "fail" and [c["verdict"] for c in spec["cases"]] == ["pass", "fail"]
    # the requirements table gives each rule's worst case, whatever the order of the cases: the loaded belt's
    # braking torque at the motor, 9375 N × 0.25 m × 0.96 ÷ 19 = 118.4 N·m (f45), not the empty belt's 29.6 N·m
    rows = {r["rule"]: r for r in spec["requirements"]}
    assert rows["torque-margin-continuous"]["case"] == "loaded"
    assert rows["torque-margin-continuous"]["needed"]["value"] == pytest.approx(118.4, rel=0.005)
    assert rows["regen-braking-energy"]["case"] == "loaded" and rows["regen-braking-energy"]["outcome"] == "fail"
    # every line of a rule from the same case: the largest resistance is the loaded case's, the smaller one
    # (the f45 loaded case's peak 21.57 kW: 760² ÷ 21 568 W = 26.78 Ω, as the tool reports it)
    r_max = next(r for r in spec["requirements"] if r["item"] == "braking resistance (largest)")
    assert r_max["case"] == "loaded" and r_max["needed"]["value"] == pytest.approx(26.78, rel=0.005)
    both_light = BASE + "\ncases:\n  empty: {load: {mass: 3000 kg}}\n  half: {load: {mass: 4000 kg}}\n"
    spec = _check(ctx, tmp_path, both_light)
    # 4 t: 4000 × 9.80665 × 0.07967 × 2.0 × 0.96 × 0.93 × 1.2 = 6.70 kW ≤ 7.5 kW
    assert spec["verdict"] != "fail", [o["message"] for o in spec["outcomes"] if o["outcome"] == "fail"]
    assert {o.get("case") for o in _of(spec, REGEN)} == {"empty", "half"}


def test_duty_lists_and_aliases_in_cases(ctx: CheckContext, tmp_path: Path) -> None:
    """A case may reuse a block through a YAML alias; a list field is replaced whole."""
    text = BASE.replace("  mass: 12000 kg\n", "  mass: &full 12000 kg\n") + (
        "\ncases:\n  loaded: {load: &same {mass: *full}}\n  again: {load: *same}\n")
    spec = _check(ctx, tmp_path, text)
    assert spec["status"] == "checked"
    assert all(o.get("case") is None for o in spec["outcomes"])  # the same load twice: nothing differs
    assert [c["verdict"] for c in spec["cases"]] == ["fail", "fail"]


# --- validation --------------------------------------------------------------------------------------------


def test_an_override_is_validated_like_the_file_at_its_line(ctx: CheckContext, tmp_path: Path) -> None:
    text = BASE + "\ncases:\n  loaded: {}\n  empty:\n    load:\n      mass: 3000 kW\n"
    spec = _check(ctx, tmp_path, text)
    assert spec["status"] == "invalid"
    bad = [o for o in spec["outcomes"] if o["rule"] == "units-and-dimensions" and o["outcome"] == "fail"]
    assert bad and bad[0]["location"]["path"] == "cases.empty.load.mass"
    assert bad[0]["location"]["line"] == _line_of(text, "mass: 3000 kW") and bad[0]["location"]["column"] == 13
    # the loaded case, which does not use the bad value, is still checked and still fails; the empty case's rules
    # that depend on it are not checked, naming the override as written (to correct, not a field to give)
    regen = {o.get("case"): o for o in _of(spec, REGEN)}
    assert regen["loaded"]["outcome"] == "fail" and regen["empty"]["outcome"] == "not-checked"
    assert "depends on cases.empty.load.mass, which failed validation" in regen["empty"]["message"]
    assert "load.mass" not in [i["path"] for i in (spec.get("to_give") or {}).get("inputs", [])]


@pytest.mark.parametrize(("override", "words"), [
    ("{mass: -3 kg}", "must be greater than zero"),
    ("{model: hoist}", "model"),
    ("{masss: 3 t}", "masss"),
    ("{reeving: 40}", "40"),
])
def test_bad_overrides_are_refused(ctx: CheckContext, tmp_path: Path, override: str, words: str) -> None:
    text = BASE + f"\ncases:\n  empty:\n    load: {override}\n"
    spec = _check(ctx, tmp_path, text)
    errors = [o for o in spec["outcomes"] if o["outcome"] == "fail" and o["severity"] == "error"
              and o["rule"] in ("spec-schema", "units-and-dimensions")]
    assert errors, spec["outcomes"]
    assert words in errors[0]["message"]
    assert errors[0]["location"]["path"].startswith("cases.empty.load")
    assert errors[0]["location"]["line"] == _line_of(text, "    load: {")


def test_more_than_sixteen_cases_are_refused(ctx: CheckContext, tmp_path: Path) -> None:
    many = "".join(f"  c{i}: {{load: {{mass: {1000 + i} kg}}}}\n" for i in range(17))
    spec = _check(ctx, tmp_path, BASE + "\ncases:\n" + many)
    assert spec["status"] == "invalid"
    refused = [o for o in spec["outcomes"] if o["rule"] == "spec-schema" and o["outcome"] == "fail"]
    assert refused and refused[0]["location"]["path"] == "cases" and "16" in refused[0]["message"]
    assert "cases" not in spec  # not run case by case: the spec is checked as written


@pytest.mark.parametrize("name", ["Loaded", "1st", "a" * 33, "full load"])
def test_a_bad_case_name_is_refused_at_its_line(ctx: CheckContext, tmp_path: Path, name: str) -> None:
    text = BASE + f"\ncases:\n  '{name}': {{load: {{mass: 3000 kg}}}}\n"
    spec = _check(ctx, tmp_path, text)
    assert spec["status"] == "invalid"
    refused = [o for o in spec["outcomes"] if o["rule"] == "spec-schema" and o["outcome"] == "fail"]
    assert refused, spec["outcomes"]
    assert refused[0]["location"]["line"] == _line_of(text, f"'{name}'")


def test_a_case_needs_the_spec_load_section(ctx: CheckContext, tmp_path: Path) -> None:
    no_load = BASE[:BASE.index("\nload:")] + BASE[BASE.index("\nenvironment:"):]
    text = no_load + "\ncases:\n  empty: {load: {mass: 3000 kg}}\n"
    spec = _check(ctx, tmp_path, text)
    refused = [o for o in spec["outcomes"] if o["rule"] == "spec-schema" and o["outcome"] == "fail"]
    assert [o["location"]["path"] for o in refused] == ["cases.empty.load"]
    assert "no load section" in refused[0]["message"]


def test_the_command_line_shows_cases_and_exits_1() -> None:
    proc = run_cli("check", str(F45), "--no-cache")
    assert proc.returncode == 1
    assert f"error {REGEN} [case loaded]: braking resistor rating 7.5 kW is below 20.09 kW" in proc.stdout
    assert "load cases (the worst decides): loaded fail, empty pass" in proc.stdout
    shown = run_cli("check", str(F45), "--no-cache", "--show-derived").stdout
    # each case's own derived values under its name (hand values of f45: 16.74 kW loaded, 4.185 kW empty)
    empty = shown.split("derived values of KB-CV-742 in case empty:", 1)[1]
    assert "train.braking_power_mean = 4.185 kW" in empty
    assert "train.braking_power_mean = 16.74 kW" in shown.split("in case loaded:", 1)[1].split("in case empty:")[0]


# --- reports ------------------------------------------------------------------------------------------------


def test_sarif_fingerprints_name_the_case_only_when_set(tmp_path: Path) -> None:
    # without a case the hash is the one of rule, file and path (as before load cases: pinned from that code)
    assert fingerprint("torque-peak", "specs/a.yaml", "motor.peak_torque") == fingerprint(
        "torque-peak", "specs/a.yaml", "motor.peak_torque", None)
    assert fingerprint("torque-peak", "specs/a.yaml", "motor.peak_torque") == _PINNED
    assert fingerprint("torque-peak", "specs/a.yaml", "motor.peak_torque", "loaded") != _PINNED
    out = tmp_path / "r.sarif"
    run_cli("check", str(F45), "--no-cache", "-f", "sarif", "-o", str(out))
    results = json.loads(out.read_text(encoding="utf-8"))["runs"][0]["results"]
    regen = [r for r in results if r["ruleId"] == REGEN]
    assert len(regen) == 1 and regen[0]["properties"]["case"] == "loaded"
    assert "[case loaded]" in regen[0]["message"]["text"]


# the hash the code before load cases gave for this finding (computed with that code; SARIF consumers keep it)
_PINNED = "b544eab14be85ff0e2d529ecd8721c97929fbd241df9065c763b93524502a873"


def test_markdown_junit_annotations_and_html_show_the_case(tmp_path: Path) -> None:
    md, junit, html = tmp_path / "r.md", tmp_path / "r.xml", tmp_path / "r.html"
    proc = run_cli("check", str(F45), "--no-cache", "-f", "annotations", "--report", f"markdown={md}",
                   "--report", f"junit={junit}", "--report", f"html={html}")
    assert f"{REGEN} [case loaded]" in proc.stdout
    assert "\\[case loaded\\]" in md.read_text(encoding="utf-8")
    assert f"{REGEN} [case loaded]" in junit.read_text(encoding="utf-8")
    page = html.read_text(encoding="utf-8")
    assert "[case loaded]" in page and "Load cases (the worst decides the verdict)" in page
    json_out = tmp_path / "r.json"
    run_cli("check", str(F45), "--no-cache", "-f", "json", "-o", str(json_out))
    body = text_body(json.loads(json_out.read_text(encoding="utf-8")))
    assert f"{REGEN} [case loaded]" in body and "load cases (the worst decides): loaded fail, empty pass" in body


# --- baselines, waivers, --set -----------------------------------------------------------------------------


def test_a_baseline_keys_findings_with_their_case(tmp_path: Path) -> None:
    spec = tmp_path / "s.yaml"
    spec.write_text(TEXT, encoding="utf-8")
    assert run_cli("baseline", "s.yaml", "--no-cache", cwd=tmp_path).returncode == 0
    base = tmp_path / ".rulecheck-baseline.json"
    entries = json.loads(base.read_text(encoding="utf-8"))["findings"]
    assert [e.get("case") for e in entries if e["rule"] == REGEN] == ["loaded"]
    proc = run_cli("check", "s.yaml", "--no-cache", "--baseline", str(base), cwd=tmp_path)
    assert proc.returncode == 0 and " known, 0 new, 0 fixed" in proc.stderr
    known = json.loads(run_cli("check", "s.yaml", "--no-cache", "--baseline", str(base), "-f", "json",
                               cwd=tmp_path).stdout)["specs"][0]
    assert known["verdict"] != "fail" and [c["verdict"] for c in known["cases"]] == [known["verdict"]] * 2
    # a smaller resistor: now the empty case fails too (1.2 × 4.185 kW = 5.02 kW > 4 kW), a new finding
    spec.write_text(TEXT.replace("power: 7.5 kW", "power: 4 kW"), encoding="utf-8")
    proc = run_cli("check", "s.yaml", "--no-cache", "--baseline", str(base), cwd=tmp_path)
    assert proc.returncode == 1 and "1 new" in proc.stderr, proc.stderr


_WAIVER = ("\nwaivers:\n  - {{rule: regen-braking-energy, reason: temporary resistor until the AFE arrives, "
           "approved_by: J. Doe, expires: '2099-01-01'{case}}}\n")


def test_a_waiver_may_name_a_case(ctx: CheckContext, tmp_path: Path) -> None:
    spec = _check(ctx, tmp_path, TEXT + _WAIVER.format(case=", case: loaded"))
    assert {o.get("case"): o["outcome"] for o in _of(spec, REGEN)} == {"loaded": "waived", "empty": "pass"}
    assert spec["verdict"] != "fail" and not _of(spec, "waiver-check")
    # a waiver of every case waives the case that fails and is not stale
    spec = _check(ctx, tmp_path, TEXT + _WAIVER.format(case=""))
    assert {o.get("case"): o["outcome"] for o in _of(spec, REGEN)}["loaded"] == "waived"
    assert not _of(spec, "waiver-check")
    # waiving the case that passes waives nothing and is itself a finding
    spec = _check(ctx, tmp_path, TEXT + _WAIVER.format(case=", case: empty"))
    assert spec["verdict"] == "fail"
    stale = _of(spec, "waiver-check")
    assert len(stale) == 1 and "not needed" in stale[0]["message"] and "pass" in stale[0]["message"]
    # a case the spec does not declare
    spec = _check(ctx, tmp_path, TEXT + _WAIVER.format(case=", case: half"))
    stale = _of(spec, "waiver-check")
    assert len(stale) == 1 and "load case 'half'" in stale[0]["message"]
    assert stale[0]["location"]["path"] == "waivers[0].case"


def test_set_reaches_every_case_that_does_not_give_the_field(tmp_path: Path) -> None:
    """--set load.mass=20000 kg changes the loaded case (which keeps the spec's mass); the empty case gives its own
    mass, which wins. Loaded: 20 000 × 9.80665 × 0.07967 × 2.0 × 0.96 × 0.93 × 1.2 = 33.48 kW."""
    proc = run_cli("check", str(F45), "--no-cache", "-f", "json", "--set", "load.mass=20000 kg")
    spec = json.loads(proc.stdout)["specs"][0]
    regen = {o.get("case"): o for o in _of(spec, REGEN)}
    assert regen["loaded"]["values"]["p_req"]["value"] == pytest.approx(33480, rel=0.02)
    assert regen["empty"]["values"]["p_req"]["value"] == pytest.approx(5022, rel=0.02)
    assert spec["overrides"] == [{"path": "load.mass", "value": "20000 kg", "was": "12000 kg"}]


@pytest.mark.parametrize(("cases", "path", "words"), [
    ("{1: {load: {mass: 3000 kg}}}", "cases.1", "does not have the expected form"),
    ("{a: null}", "cases.a", "expected a mapping"),
    ("{a: [1]}", "cases.a", "expected a mapping"),
    ("{a: {load: null}}", "cases.a.load", "expected a mapping"),
    ("{a: {load: {duty: []}}}", "cases.a.load.duty", "at least 1"),
    ("{a: {title: 5}}", "cases.a.title", "expected a quoted text"),
    ("null", "cases", "expected a mapping"),
])
def test_malformed_cases_are_refused_at_their_path(ctx: CheckContext, tmp_path: Path, cases: str, path: str,
                                                   words: str) -> None:
    spec = _check(ctx, tmp_path, BASE + f"\ncases: {cases}\n")
    assert spec["status"] == "invalid"
    refused = [o for o in spec["outcomes"] if o["rule"] == "spec-schema" and o["outcome"] == "fail"]
    assert [(o["location"]["path"], words in o["message"]) for o in refused] == [(path, True)], refused
    assert not _of(spec, "internal-error")
