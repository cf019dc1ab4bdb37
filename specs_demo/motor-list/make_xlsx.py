"""Write motor-list.xlsx from motor-list.csv (the same list as a spreadsheet, numbers as numbers).

Run from the repository root: python specs_demo/motor-list/make_xlsx.py
The workbook's dates are fixed so that the file only changes when the list does.
"""

from __future__ import annotations

import csv
import datetime as dt
import re
import sys
from pathlib import Path

import openpyxl
from openpyxl.styles import Font

HERE = Path(__file__).resolve().parent
NUMBER = re.compile(r"^-?\d+(\.\d+)?$")
FIXED = dt.datetime(2026, 1, 5, 8, 0, 0)


def cell(text: str) -> object:
    """Return a CSV cell as the spreadsheet holds it: numbers as numbers, empty cells empty."""
    if not text:
        return None
    if NUMBER.match(text):
        return int(text) if "." not in text else float(text)
    return text


def build(source: Path, target: Path) -> None:
    with open(source, newline="", encoding="utf-8") as handle:
        rows = list(csv.reader(handle))
    book = openpyxl.Workbook()
    sheet = book.active
    sheet.title = "Motor list"
    sheet.append(rows[0])
    for c in sheet[1]:
        c.font = Font(bold=True)
    for row in rows[1:]:
        sheet.append([cell(text) for text in row])
    sheet.freeze_panes = "B2"
    book.properties.creator = "Hollin Ridge electrical"
    book.properties.created = book.properties.modified = FIXED
    book.save(target)


if __name__ == "__main__":
    build(HERE / "motor-list.csv", Path(sys.argv[1]) if len(sys.argv) > 1 else HERE / "motor-list.xlsx")
