"""``rulecheck check LIST --map MAP``: a motor list's rows checked as specs, findings at row and column, no
files written; and a folder walk that does not take a column mapping for a spec."""

from __future__ import annotations

import csv
import json
import shutil
from pathlib import Path

from .conftest import MOTOR_LIST, ROOT, run_cli

LIST_CSV = MOTOR_LIST / "motor-list.csv"
LIST_XLSX = MOTOR_LIST / "motor-list.xlsx"
MAP = MOTOR_LIST / "motor-list.map"


def _headings() -> list[str]:
    with open(LIST_CSV, newline="", encoding="utf-8") as handle:
        return next(csv.reader(handle))


def test_the_demo_list_checks_row_by_row_without_writing_files(tmp_path: Path) -> None:
    before = sorted(p.name for p in MOTOR_LIST.iterdir())
    for listed in (LIST_XLSX, LIST_CSV):
        proc = run_cli("check", "--no-cache", "-f", "json", str(listed), "--map", str(MAP))
        assert proc.returncode in (0, 1), proc.stderr
        specs = json.loads(proc.stdout)["specs"]
        with open(LIST_CSV, newline="", encoding="utf-8") as handle:
            tags = [r["Tag"] for r in csv.DictReader(handle)]
        assert [s["tag"] for s in specs] == tags and [s["row"] for s in specs] == list(range(2, 23))
        assert {s["file"] for s in specs} == {str(listed)}  # as given
        assert all(s["status"] == "checked" for s in specs)
        # HR-CR-210 (row 6) is a 110 kW IE3 motor: below IE4, the minimum for 75–200 kW 2/4/6-pole motors
        # (Commission Regulation (EU) 2019/1781, Annex I, from 1 July 2023); the finding is at the list's
        # "IE class" cell
        row6 = next(s for s in specs if s["row"] == 6)
        found = next(o for o in row6["outcomes"] if o["rule"] == "efficiency-class" and o["outcome"] == "fail")
        assert found["location"]["line"] == 6
        assert found["location"]["column"] == _headings().index("IE class") + 1
    assert sorted(p.name for p in MOTOR_LIST.iterdir()) == before
    proc = run_cli("check", "--no-cache", str(LIST_CSV), "--map", str(MAP))
    assert f"{LIST_CSV}:6:{_headings().index('IE class') + 1}: warning efficiency-class" in proc.stdout


def test_a_bad_cell_is_a_finding_at_its_row_and_column(tmp_path: Path) -> None:
    rows = LIST_CSV.read_text(encoding="utf-8").splitlines()
    cells = rows[3].split(",")
    power = _headings().index("Power kW")
    cells[power] = "eleven"
    rows[3] = ",".join(cells)
    listed = tmp_path / "list.csv"
    listed.write_text("\n".join(rows) + "\n", encoding="utf-8")
    proc = run_cli("check", "--no-cache", "-f", "json", str(listed), "--map", str(MAP))
    assert proc.returncode == 1, proc.stderr
    specs = json.loads(proc.stdout)["specs"]
    assert len(specs) == 21
    bad = next(s for s in specs if s["row"] == 4)
    assert bad["status"] == "invalid"
    errors = [o for o in bad["outcomes"] if o["outcome"] == "fail" and o["severity"] == "error"]
    assert any(o["location"]["path"] == "motor.rated_power" and o["location"]["line"] == 4
               and o["location"]["column"] == power + 1 for o in errors), errors
    assert all(s["status"] == "checked" for s in specs if s["row"] != 4)


def test_a_list_needs_a_mapping_and_a_mapping_needs_a_list(tmp_path: Path) -> None:
    proc = run_cli("check", str(LIST_CSV))
    assert proc.returncode == 2 and "--map" in proc.stderr
    proc = run_cli("check", str(ROOT / "specs_demo" / "cv-110-incline-conveyor.yaml"), "--map", str(MAP))
    assert proc.returncode == 2 and "motor list" in proc.stderr
    broken = tmp_path / "broken.map"
    broken.write_text("columns: {}\n", encoding="utf-8")
    proc = run_cli("check", str(LIST_CSV), "--map", str(broken))
    assert proc.returncode == 2 and "columns" in proc.stderr


def test_a_folder_walk_does_not_take_a_column_mapping_for_a_spec(tmp_path: Path) -> None:
    shutil.copy(ROOT / "specs_demo" / "cv-110-incline-conveyor.yaml", tmp_path / "cv.yaml")
    shutil.copy(MAP, tmp_path / "motor-list-map.yaml")
    (tmp_path / "no-format.yaml").write_text("tag: X-1\nmotor: {kind: induction}\n", encoding="utf-8")
    proc = run_cli("check", "--no-cache", "-f", "json", str(tmp_path))
    files = sorted(Path(s["file"]).name for s in json.loads(proc.stdout)["specs"])
    # the mapping is left out; a file that lacks 'format:' but is no mapping is still checked (and refused)
    assert files == ["cv.yaml", "no-format.yaml"]
