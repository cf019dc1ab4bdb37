"""Nothing is skipped or overwritten without a word: links and upper-case suffixes in a folder walk, a report
file that is a spec, a set of reports of which one cannot be written, a device named as a spec."""

from __future__ import annotations

import os
import shutil
from pathlib import Path

from rulecheck.run.discovery import collect_specs
from tests.robustness.conftest import ROOT, assert_no_traceback, run_cli

DEMO = ROOT / "specs_demo"


def test_the_walk_takes_upper_case_suffixes_and_links_inside_and_says_what_it_skips(tmp_path: Path) -> None:
    specs, outside = tmp_path / "specs", tmp_path / "outside"
    specs.mkdir()
    outside.mkdir()
    shutil.copy(DEMO / "cv-110-incline-conveyor.yaml", specs / "CV-110.YAML")
    shutil.copy(DEMO / "p-210-raw-water-pump.yaml", specs / "P-210.Yml")
    shutil.copy(DEMO / "f-610-dryer-exhaust-fan.yaml", outside / "f-610.yaml")
    (specs / "sub").mkdir()
    os.symlink("../CV-110.YAML", specs / "sub" / "same-spec.yaml")  # inside: the same file, taken once
    os.symlink(outside / "f-610.yaml", specs / "f-610.yaml")  # leads out of the folder
    os.symlink(outside, specs / "more")  # a folder link
    notes: list[str] = []
    found = collect_specs([str(specs)], notes)
    assert sorted(p.name for p in found) == ["CV-110.YAML", "P-210.Yml"]
    assert any("f-610.yaml: skipped" in n and "leads out" in n for n in notes), notes
    assert any("more: skipped" in n and "folder" in n for n in notes), notes
    proc = run_cli("check", str(specs), "--no-cache")
    assert_no_traceback(proc)
    assert "2 specs checked" in proc.stdout and "f-610.yaml: skipped" in proc.stderr, proc.stderr


def test_a_report_file_that_is_a_spec_is_refused(tmp_path: Path) -> None:
    shutil.copytree(DEMO, tmp_path / "specs", ignore=shutil.ignore_patterns("motor-list"))
    spec = tmp_path / "specs" / "cv-110-incline-conveyor.yaml"
    before = spec.read_bytes()
    proc = run_cli("check", str(tmp_path / "specs"), "-f", "json", "-o", str(spec), "--no-cache")
    assert_no_traceback(proc)
    assert proc.returncode == 2 and "one of the specs being checked" in proc.stderr
    assert spec.read_bytes() == before


def test_reports_are_written_all_or_none(tmp_path: Path) -> None:
    spec = str(DEMO / "cv-110-incline-conveyor.yaml")
    good = tmp_path / "good.json"
    for extra in (["--report", f"html={tmp_path / 'missing' / 'r.html'}"],  # rendered whole
                  ["-f", "text", "-o", str(tmp_path / "missing" / "r.txt")]):  # streamed
        proc = run_cli("check", spec, "-f", "json", "-o", str(good), *extra, "--no-cache")
        assert_no_traceback(proc)
        assert proc.returncode == 2 and "missing" in proc.stderr, proc.stderr
        assert not good.exists()
        assert not [p for p in tmp_path.iterdir() if p.name.startswith(".")]  # no temporary file left


def test_a_device_named_as_a_spec_is_refused() -> None:
    proc = run_cli("check", "/dev/zero", timeout=30)
    assert_no_traceback(proc)
    assert proc.returncode == 2 and "character device" in proc.stderr


def test_a_waiver_naming_an_alias_of_a_disabled_rule_is_a_warning_not_an_internal_error(tmp_path: Path) -> None:
    from tests.robustness.hostile import rule
    from tests.robustness.specs import CONVEYOR

    project = tmp_path / "project"
    (project / ".git").mkdir(parents=True)
    (project / "rules").mkdir()
    (project / "rules" / "hostile-rule.yaml").write_text(
        rule().replace("title: Rated", "aliases: [old-nameplate-rule]\ntitle: Rated", 1), encoding="utf-8")
    (project / ".rulecheck.yaml").write_text("rule_paths: [rules]\ndisable: [hostile-rule]\n", encoding="utf-8")
    waiver = ("waivers:\n  - {rule: old-nameplate-rule, reason: checked at FAT, approved_by: J. Doe, "
              "expires: 2099-01-01}\n")
    (project / "cv-210.yaml").write_text(CONVEYOR + waiver, encoding="utf-8")
    proc = run_cli("check", str(project / "cv-210.yaml"), "--no-cache", "-f", "json")
    assert_no_traceback(proc)
    import json

    outcomes = json.loads(proc.stdout)["specs"][0]["outcomes"]
    assert not [o for o in outcomes if o["rule"] == "internal-error"], outcomes
    assert any(o["rule"] == "waiver-check" and "which this run does not check" in o["message"] for o in outcomes)
