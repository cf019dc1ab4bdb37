"""``rulecheck check LIST.xlsx --map MAP``: the rows of a motor list checked as specs, without writing files.

Each row becomes a spec as ``rulecheck import`` makes it (:func:`importer.import_rows`), written to the run's
temporary folder (as standard input is) and checked like any spec; its findings are then shown at the list's
row and column (``motor-list.xlsx:7:6``): the cell the value came from, or the row's first cell for a value
from the mapping's defaults. A row with a bad cell is still checked: the cell's text stands at its field, so
the check reports it where the list has it.
"""

from __future__ import annotations

import os
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import yaml

from rulecheck.authoring.importer import ImportError_, RowResult, _put, import_rows, read_mapping

__all__ = ["LIST_SUFFIXES", "ListRow", "expand_lists", "is_list", "place"]

LIST_SUFFIXES = (".csv", ".xlsx", ".xlsm")


def is_list(path: str) -> bool:
    """Return whether ``path`` names a motor list (a CSV or XLSX file)."""
    return path.lower().endswith(LIST_SUFFIXES) and os.path.isfile(path)


@dataclass(frozen=True)
class ListRow:
    """Where a row's spec came from: the list (as given), its row, and each field's column number."""

    list_name: str
    row: int
    columns: dict[str, int | None] = field(default_factory=dict)  # spec key path → column number (None: defaults)

    def column(self, path: str) -> int | None:
        """Return the column of the cell a spec path came from (None: the mapping's defaults or not known)."""
        probe = path
        while probe:
            if probe in self.columns:
                return self.columns[probe]
            cut = max(probe.rfind("."), probe.rfind("["))
            probe = probe[:cut] if cut > 0 else ""
        return None


def _text(row: RowResult) -> str:
    """Return a row's spec text; a row with bad cells gets their text at their fields, for the check to report."""
    if row.text is not None:
        return row.text
    data: dict[str, Any] = {}
    flat = _flatten(row.partial)
    for error in row.errors:
        if error.field and error.value is not None:
            flat[error.field] = error.value if isinstance(error.value, str) else str(error.value)
    if "format" not in flat:
        flat = {"format": 1, **flat}
    for path, value in flat.items():
        _put(data, path, value)
    return f"# row {row.row} of {Path(row.file).name}\n" + yaml.safe_dump(data, sort_keys=False, allow_unicode=True)


def _flatten(data: Any, prefix: str = "") -> dict[str, Any]:
    if not isinstance(data, dict):
        return {prefix: data} if prefix else {}
    out: dict[str, Any] = {}
    for key, value in data.items():
        out.update(_flatten(value, f"{prefix}.{key}" if prefix else str(key)))
    return out


def expand_lists(paths: list[str], folder: Path,
                 mapping_file: str) -> tuple[list[str], dict[str, str], dict[str, ListRow]]:
    """Return ``paths`` with each motor list replaced by a folder of its rows' specs (in ``folder``), the name
    each row's spec is shown under (the list as given), and where each row came from (by spec file).

    Raises :class:`ImportError_` for an unusable mapping or list, or a row that cannot be read at all."""
    mapping = read_mapping(mapping_file)
    out: list[str] = []
    names: dict[str, str] = {}
    rows: dict[str, ListRow] = {}
    for i, raw in enumerate(paths):
        if not is_list(raw):
            out.append(raw)
            continue
        target = folder / f"list-{i}"
        target.mkdir(parents=True)
        for row in import_rows(raw, mapping):
            unusable = [e for e in row.errors if not e.field]
            if unusable:
                raise ImportError_("; ".join(str(e) for e in unusable))
            spec = target / f"row-{row.row:07d}.yaml"
            spec.write_text(_text(row), encoding="utf-8")
            names[str(spec)] = raw
            columns: dict[str, int | None] = {p: (row.columns.get(h) if h != "defaults" else None)
                                              for p, (_n, h) in row.origins.items()}
            for error in row.errors:
                if error.field and error.column is not None:
                    columns[error.field] = row.columns.get(error.column)
            rows[str(spec)] = ListRow(raw, row.row, columns)
        out.append(str(target))
    return out, names, rows


def place(spec: dict[str, Any], row: ListRow) -> dict[str, Any]:
    """Return a row's spec result with its findings at the list's row and column, and the row number."""
    outcomes = []
    for o in spec.get("outcomes", []):
        loc = o.get("location")
        if loc and loc.get("line") is not None:
            path = loc.get("path") or ""
            o = {**o, "location": {"path": path, "line": row.row, "column": row.column(path)}}
        outcomes.append(o)
    return {**spec, "file": row.list_name, "row": row.row, "outcomes": outcomes}
