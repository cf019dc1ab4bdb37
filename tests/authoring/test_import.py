"""``rulecheck import``: motor lists (CSV and XLSX) to validated spec files, with errors per cell."""

from __future__ import annotations

import csv
import json
import math
import zipfile
from pathlib import Path

import openpyxl
import pytest
import yaml

from rulecheck.authoring.importer import ImportError_, import_rows, read_mapping, safe_file_name, write_rows

from .conftest import MOTOR_LIST, problems

LIST_CSV = MOTOR_LIST / "motor-list.csv"
LIST_XLSX = MOTOR_LIST / "motor-list.xlsx"
MAP = MOTOR_LIST / "motor-list.map"

SMALL_MAP = """\
columns:
  "Tag": tag
  "Starter": {field: drive.kind, values: {VSD: inverter, DOL: direct-on-line}}
  "Power kW": {field: motor.rated_power, unit: kW}
  "Speed rpm": {field: motor.rated_speed, unit: r/min}
  "Poles": motor.poles
  "Eff %": {field: motor.efficiency, unit: "%"}
defaults: {motor.kind: induction, load.model: conveyor}
"""


def _write(folder: Path, name: str, text: str) -> Path:
    path = folder / name
    path.write_text(text, encoding="utf-8")
    return path


def test_demo_list_imports_to_specs_that_validate(tmp_path: Path) -> None:
    mapping = read_mapping(MAP)
    rows = import_rows(LIST_CSV, mapping)
    with open(LIST_CSV, newline="", encoding="utf-8") as handle:
        source = list(csv.DictReader(handle))
    assert len(rows) == len(source) == 21
    assert [r.errors for r in rows] == [[]] * 21
    for row, line in zip(rows, source, strict=True):
        assert problems(row.text) == []
        assert row.tag == line["Tag"] and row.file_name == f"{line['Tag']}.yaml"
        # the values are the list's, with the mapping's units
        assert row.data["motor"]["rated_power"] == f"{float(line['Power kW']):g} kW"
        assert row.data["motor"]["rated_speed"] == f"{float(line['Speed rpm']):g} r/min"
        assert row.data["drive"]["kind"] == {"VSD": "inverter", "DOL": "direct-on-line", "SS": "soft-starter"}[
            line["Starter"]]
        # where each value came from: the spreadsheet row (header is row 1) and the column heading
        assert row.origins["motor.rated_power"] == (row.row, "Power kW") and row.origins["tag"] == (row.row, "Tag")
        assert row.origins["supply.voltage"] == (row.row, "defaults")
    assert [r.row for r in rows] == list(range(2, 23))
    # the nameplates are consistent: I = P / (√3 · V · η · cos φ) within 1.5 % (rounded list values)
    for line in source:
        current = float(line["Power kW"]) * 1000 / (math.sqrt(3) * 400 * float(line["Eff %"]) / 100 * float(line["PF"]))
        assert current == pytest.approx(float(line["FLC A"]), rel=0.015), line["Tag"]
    written = write_rows(rows, tmp_path)
    assert sorted(p.name for p in written) == sorted(f"{line['Tag']}.yaml" for line in source)


def test_xlsx_and_csv_give_the_same_specs(tmp_path: Path) -> None:
    mapping = read_mapping(MAP)
    from_csv = import_rows(LIST_CSV, mapping)
    from_xlsx = import_rows(LIST_XLSX, mapping)
    assert [r.data for r in from_xlsx] == [r.data for r in from_csv]
    assert [r.row for r in from_xlsx] == [r.row for r in from_csv]


def test_committed_workbook_is_the_scripts_output(tmp_path: Path) -> None:
    import importlib.util

    spec = importlib.util.spec_from_file_location("make_xlsx", MOTOR_LIST / "make_xlsx.py")
    module = importlib.util.module_from_spec(spec)
    spec.loader.exec_module(module)
    fresh = tmp_path / "fresh.xlsx"
    module.build(LIST_CSV, fresh)

    def cells(path: Path) -> list[tuple]:
        book = openpyxl.load_workbook(path, read_only=True)
        try:
            return [tuple(row) for row in book["Motor list"].iter_rows(values_only=True)]
        finally:
            book.close()

    assert cells(fresh) == cells(LIST_XLSX)


def test_bad_cells_give_row_and_column_errors_and_a_failing_row_writes_nothing(tmp_path: Path, cli) -> None:
    listed = _write(tmp_path, "list.csv", (
        "Tag,Starter,Power kW,Speed rpm,Poles,Eff %\n"
        "CV-1,VSD,15,1470,4,92.1\n"
        "CV-2,VFD,15,fast,5,92.1\n"           # three bad cells, one good
        "CV-3,DOL,7,5,1465,4,90.4\n"           # a decimal comma splits the row: more cells than headings
        "CV-4,DOL,-7.5,1465,4,190\n"           # negative power and an efficiency over 100 % (schema ranges)
        "CV-5,DOL,7.5,1465,4,90.4\n"
        ",,,,,\n"                              # a blank row is skipped
        "CV-1,DOL,7.5,1465,4,90.4\n"))         # the same tag again
    mapping = _write(tmp_path, "map.yaml", SMALL_MAP)
    out = tmp_path / "specs"
    proc = cli("import", str(listed), "--map", str(mapping), "-o", str(out))
    assert proc.returncode == 2
    lines = [line for line in proc.stderr.splitlines() if ": row " in line]
    by_row = {}
    for line in lines:
        by_row.setdefault(int(line.split(": row ")[1].split(",")[0].split(":")[0]), []).append(line)
    assert sorted(by_row) == [3, 4, 5, 8]
    assert len(by_row[4]) == 1 and "heading row has 6" in by_row[4][0] and "decimal comma" in by_row[4][0]
    assert len(by_row[3]) == 3
    assert any("column 'Starter' (drive.kind)" in e and "expected one of" in e and "'VFD'" in e for e in by_row[3])
    assert any("column 'Speed rpm' (motor.rated_speed)" in e and "'fast'" in e for e in by_row[3])
    assert any("column 'Poles' (motor.poles)" in e and "multiple of 2" in e for e in by_row[3])
    assert any("column 'Power kW' (motor.rated_power)" in e and "greater than zero" in e for e in by_row[5])
    assert any("column 'Eff %' (motor.efficiency)" in e and "above 100 %" in e for e in by_row[5])
    assert any("column 'Tag' (tag)" in e and "also in row 2" in e for e in by_row[8])
    assert sorted(p.name for p in out.iterdir()) == ["CV-1.yaml", "CV-5.yaml"]
    assert "6 rows: 2 spec files written" in proc.stderr and "4 rows not imported" in proc.stderr
    # the first CV-1 is the one written
    assert "row 2" in (out / "CV-1.yaml").read_text(encoding="utf-8").splitlines()[0]


def test_decimal_comma_only_when_the_mapping_says_so(tmp_path: Path) -> None:
    listed = _write(tmp_path, "list.csv", "Tag;Starter;Power kW;Speed rpm;Poles;Eff %\nP-1;DOL;7,5;1465;4;90,4\n")
    plain = read_mapping(_write(tmp_path, "map.yaml", SMALL_MAP))
    rows = import_rows(listed, plain)  # the delimiter ';' is sniffed
    messages = [e.message for e in rows[0].errors]
    assert len(messages) == 2 and all("decimal comma" in m and "decimal_comma: true" in m for m in messages)
    comma = read_mapping(_write(tmp_path, "comma.yaml", SMALL_MAP + "decimal_comma: true\n"))
    rows = import_rows(listed, comma)
    assert rows[0].errors == []
    assert rows[0].data["motor"]["rated_power"] == "7.5 kW" and rows[0].data["motor"]["efficiency"] == "90.4 %"


def test_units_in_cells_and_missing_units(tmp_path: Path) -> None:
    mapping_text = SMALL_MAP.replace('{field: motor.rated_power, unit: kW}', "motor.rated_power")
    mapping = read_mapping(_write(tmp_path, "map.yaml", mapping_text))
    listed = _write(tmp_path, "list.csv", "Tag,Starter,Power kW,Speed rpm,Poles,Eff %\n"
                                          "A-1,DOL,7.5 kW,1465,4,90\nA-2,DOL,10 hp_mech,1465,4,90\n"
                                          "A-3,DOL,7.5,1465,4,90\nA-4,DOL,7.5 N*m,1465,4,90\n")
    rows = import_rows(listed, mapping)
    assert rows[0].errors == [] and rows[0].data["motor"]["rated_power"] == "7.5 kW"
    assert rows[1].errors == [] and rows[1].data["motor"]["rated_power"] == "10 hp_mech"
    assert "has no unit" in rows[2].errors[0].message and "unit:" in rows[2].errors[0].message
    assert "expected power" in rows[3].errors[0].message


def test_the_mapping_is_checked_with_its_positions(tmp_path: Path) -> None:
    cases = {
        "columns:\n  Tag: tag\n  Power: motor.rated_pwr\n": ("map.yaml:3:10", "did you mean 'motor.rated_power'"),
        "columns:\n  Tag: tag\n  Power: {field: motor.rated_power, unit: N*m}\n": ("map.yaml:3:43", "power"),
        "columns:\n  Tag: tag\n  Poles: {field: motor.poles, unit: kW}\n": ("map.yaml:3:37", "takes no unit"),
        "columns:\n  Power: motor.rated_power\n": ("map.yaml:2:3", "no column gives the tag"),
        "colums:\n  Tag: tag\n": ("map.yaml:1:1", "did you mean 'columns'"),
        "columns:\n  Tag: tag\n  Duty: load.duty\n": ("map.yaml:3:9", "is a list"),
        "columns:\n  Tag: tag\ndecimal_comma: true\ndelimiter: ','\n": ("map.yaml:4:12", "decimal commas"),
        "columns: [a, b]\n": ("map.yaml:1:10", "needs 'columns'"),
        "columns:\n  Tag: tag\n  Tag: title\n": ("map.yaml:3:3", "duplicate"),
    }
    for text, (where, words) in cases.items():
        path = _write(tmp_path, "map.yaml", text)
        with pytest.raises(ImportError_) as caught:
            read_mapping(path)
        message = str(caught.value)
        assert message.startswith(str(path.parent / where)) or where.split(":")[0] in message, message
        assert words in message, message
        assert f"{path}:{where.split(':', 1)[1]}" in message, message


def test_lists_that_cannot_be_read(tmp_path: Path, cli) -> None:
    mapping = _write(tmp_path, "map.yaml", SMALL_MAP)
    missing = _write(tmp_path, "list.csv", "Tag,Starter,Power,Speed rpm,Poles,Eff %\nA-1,DOL,7.5,1465,4,90\n")
    proc = cli("import", str(missing), "--map", str(mapping), "-o", str(tmp_path / "out"))
    assert proc.returncode == 2 and "no column 'Power kW'" in proc.stderr and "did you mean 'Power'" in proc.stderr
    assert not (tmp_path / "out").exists()
    latin = tmp_path / "latin.csv"
    latin.write_bytes("Tag,Starter,Power kW,Speed rpm,Poles,Eff %\nA-1,DOL,7.5,1465,4,90\nB-\xe9,DOL,1,1,4,9\n"
                      .encode("latin-1"))
    proc = cli("import", str(latin), "--map", str(mapping), "-o", str(tmp_path / "out"))
    assert proc.returncode == 2 and "not utf-8" in proc.stderr and "encoding: cp1252" in proc.stderr
    fake = _write(tmp_path, "list.xlsx", "not a workbook")
    proc = cli("import", str(fake), "--map", str(mapping), "-o", str(tmp_path / "out"))
    assert proc.returncode == 2 and "not an XLSX workbook" in proc.stderr
    other = _write(tmp_path, "list.ods", "x")
    proc = cli("import", str(other), "--map", str(mapping), "-o", str(tmp_path / "out"))
    assert proc.returncode == 2 and ".csv or .xlsx" in proc.stderr
    proc = cli("import", str(tmp_path / "absent.csv"), "--map", str(mapping), "-o", str(tmp_path / "out"))
    assert proc.returncode == 2 and "cannot read the list" in proc.stderr


def test_a_workbook_that_unpacks_too_far_is_refused(tmp_path: Path, monkeypatch) -> None:
    from rulecheck.authoring import importer

    bomb = tmp_path / "list.xlsx"
    with zipfile.ZipFile(bomb, "w", compression=zipfile.ZIP_DEFLATED) as archive:
        archive.writestr("xl/worksheets/sheet1.xml", b"\0" * (2 * 1024 * 1024))
    monkeypatch.setattr(importer, "MAX_UNPACKED", 1024 * 1024)
    with pytest.raises(ImportError_, match="unpacks to more than"):
        import_rows(bomb, read_mapping(_write(tmp_path, "map.yaml", SMALL_MAP)))


def test_xlsx_cells_keep_their_types_and_rows(tmp_path: Path) -> None:
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Drives"
    sheet.append(["Motor list, Hollin Ridge water works"])  # a title row above the headings
    sheet.append(["Tag", "Starter", "Power kW", "Speed rpm", "Poles", "Eff %"])
    sheet.append([101, "VSD", 7.5, 1465, 4.0, 90.4])  # a numeric tag, a pole count stored as 4.0
    sheet.append(["P-2", "DOL", "=1/0", 1465, 4, 90])  # a formula with no cached value reads as empty
    path = tmp_path / "list.xlsx"
    book.save(path)
    mapping = read_mapping(_write(tmp_path, "map.yaml", SMALL_MAP + "sheet: Drives\nheader_row: 2\n"))
    rows = import_rows(path, mapping)
    assert [r.row for r in rows] == [3, 4]
    assert rows[0].errors == [] and rows[0].data["tag"] == "101" and rows[0].data["motor"]["poles"] == 4
    assert rows[1].errors == [] and "rated_power" not in rows[1].data["motor"]
    wrong = read_mapping(_write(tmp_path, "wrong.yaml", SMALL_MAP + "sheet: Pumps\n"))
    with pytest.raises(ImportError_, match="no sheet 'Pumps'"):
        import_rows(path, wrong)


def test_safe_file_names() -> None:
    assert safe_file_name("HR-CV-111") == "HR-CV-111.yaml"
    assert safe_file_name("area 2/P-101") == "area-2-P-101.yaml"
    assert safe_file_name("../../etc/passwd") == "etc-passwd.yaml"
    assert safe_file_name("CON") == "CON_.yaml"
    assert safe_file_name("...") is None


def test_existing_files_are_kept_unless_forced(tmp_path: Path, cli) -> None:
    out = tmp_path / "specs"
    first = cli("import", str(LIST_CSV), "--map", str(MAP), "-o", str(out))
    assert first.returncode == 0, first.stderr
    assert "21 rows: 21 spec files written" in first.stderr
    again = cli("import", str(LIST_CSV), "--map", str(MAP), "-o", str(out))
    assert again.returncode == 2 and again.stderr.count("use --force") == 21
    forced = cli("import", str(LIST_XLSX), "--map", str(MAP), "-o", str(out), "--force")
    assert forced.returncode == 0
    dry = cli("import", str(LIST_CSV), "--map", str(MAP), "-o", str(tmp_path / "dry"), "--dry-run")
    assert dry.returncode == 0 and "21 rows valid" in dry.stderr and not (tmp_path / "dry").exists()
    # the imported specs are checked like any other
    check = cli("check", str(out), "--format", "json", "--no-cache")
    result = json.loads(check.stdout)
    assert len(result["specs"]) == 21 and all(s["status"] == "checked" for s in result["specs"])
    assert yaml.safe_load((out / "HW-P-101.yaml").read_text(encoding="utf-8"))["load"] == {
        "model": "quadratic", "pump_type": "centrifugal"}
