"""The whole corpus in one folder beside two valid specs, through ``python -m rulecheck check``: every file is
reported, the good files keep their normal findings, exit code 1, no traceback, in text and in JSON."""

from __future__ import annotations

import json
from pathlib import Path

import pytest

from rulecheck.report import jsonout
from tests.robustness.conftest import assert_no_traceback, run_cli
from tests.robustness.corpus import huge_file, static_cases, truncations
from tests.robustness.specs import VALID


@pytest.fixture(scope="module")
def corpus_dir(tmp_path_factory: pytest.TempPathFactory) -> Path:
    folder = tmp_path_factory.mktemp("corpus")
    (folder / ".git").mkdir()  # stop the configuration search here: the run uses no configuration
    for case in static_cases():
        (folder / case.name).write_bytes(case.data)
    (folder / "huge.yaml").write_bytes(huge_file())
    for cut, data in list(truncations(step=97))[1:]:
        (folder / f"cut-{cut:05d}.yaml").write_bytes(data)
    for name, text in VALID.items():
        (folder / name).write_text(text, encoding="utf-8")
    return folder


@pytest.fixture(scope="module")
def json_run(corpus_dir: Path) -> tuple[int, dict, str]:
    proc = run_cli("check", str(corpus_dir), "--format", "json", "--today", "2026-06-01", timeout=120)
    assert_no_traceback(proc)
    return proc.returncode, jsonout.load(proc.stdout), proc.stderr


def _alone(corpus_dir: Path, name: str, tmp_path: Path) -> dict:
    one = tmp_path / "one"
    (one / ".git").mkdir(parents=True)
    (one / name).write_bytes((corpus_dir / name).read_bytes())
    proc = run_cli("check", str(one), "--format", "json", "--today", "2026-06-01")
    assert_no_traceback(proc)
    return jsonout.load(proc.stdout)["specs"][0]


def test_json_run_reports_every_file_and_fails(json_run: tuple[int, dict, str], corpus_dir: Path) -> None:
    code, result, _stderr = json_run
    assert code == 1 and result["summary"]["exit_code"] == 1
    reported = {Path(s["file"]).name: s for s in result["specs"]}
    on_disk = {p.name for p in corpus_dir.glob("*.yaml")}
    assert set(reported) == on_disk
    for name, spec in reported.items():
        assert not any(o["rule"] == "internal-error" for o in spec["outcomes"]), name
        if name in VALID or name.startswith("cut-"):
            continue  # a spec cut at a line end may be a valid, shorter spec
        errors = [o for o in spec["outcomes"] if o["outcome"] == "fail" and o["severity"] == "error"]
        assert errors and spec["verdict"] == "invalid", name
        assert all(o["message"].strip() for o in errors), name


def test_errors_carry_the_line_where_it_is_known(json_run: tuple[int, dict, str]) -> None:
    _code, result, _stderr = json_run
    by_name = {Path(s["file"]).name: s for s in result["specs"]}
    for case in static_cases():
        if case.line is None:
            continue
        lines = [o["location"]["line"] for o in by_name[case.name]["outcomes"] if o["outcome"] == "fail"]
        assert case.line in lines, (case.name, lines)


def test_good_specs_keep_their_normal_findings(json_run: tuple[int, dict, str], corpus_dir: Path,
                                               tmp_path: Path) -> None:
    _code, result, _stderr = json_run
    by_name = {Path(s["file"]).name: s for s in result["specs"]}
    for name in VALID:
        spec = by_name[name]
        assert spec["status"] == "checked"
        alone = _alone(corpus_dir, name, tmp_path / name)
        strip = [(o["rule"], o["outcome"], o["severity"], o["message"]) for o in spec["outcomes"]]
        assert strip == [(o["rule"], o["outcome"], o["severity"], o["message"]) for o in alone["outcomes"]]
    pump = [o for o in by_name["p-305.yaml"]["outcomes"] if o["rule"] == "nameplate-power-torque-speed"]
    assert pump[0]["outcome"] == "fail" and pump[0]["severity"] == "warning"  # 3.6 % off, see specs.py


def test_text_run_names_every_bad_file_with_its_position(corpus_dir: Path) -> None:
    proc = run_cli("check", str(corpus_dir), "--today", "2026-06-01", timeout=120)
    assert_no_traceback(proc)
    assert proc.returncode == 1
    out = proc.stdout
    for case in static_cases():
        if case.line is not None:
            assert f"{case.name}:{case.line}:" in out, case.name
        else:
            assert case.name in out, case.name
    assert "huge.yaml" in out and "more than the limit" in out


def test_json_output_is_parseable_as_plain_json_too(json_run: tuple[int, dict, str]) -> None:
    _code, result, _stderr = json_run
    json.dumps(result, allow_nan=False)
