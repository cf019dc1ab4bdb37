"""``rulecheck import``: a plant motor list (CSV or XLSX, one row per drive) to spec files.

A mapping file says which column feeds which spec field, in which unit, and what the list's own words
mean (``VSD`` → ``inverter``); ``defaults`` fill fields the list does not have. Each row becomes one
spec, validated with the same schema and unit checks as ``rulecheck check``; a row with a bad cell gets
one error per cell (file, row, column heading, what was expected) and writes nothing, the other rows
are still written.

Every row's result keeps its spec text and, per spec key path, the (row, column) it came from, so a
check of the list itself can point its findings at cells.

Mapping file::

    columns:
      "Tag": tag
      "Power kW": {field: motor.rated_power, unit: kW}
      "Starter": {field: drive.kind, values: {VSD: inverter, DOL: direct-on-line}}
    defaults: {motor.kind: induction, supply.voltage: 400 V}
    decimal_comma: false        # true: '7,5' is 7.5 (then the delimiter is not a comma)
    delimiter: ";"              # CSV; sniffed when absent
    encoding: utf-8             # CSV
    sheet: Motor list           # XLSX; the first sheet when absent
    header_row: 1               # the row of column headings
"""

from __future__ import annotations

import csv
import difflib
import io
import math
import os
import re
import zipfile
from collections.abc import Iterator
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import yaml

from rulecheck import units
from rulecheck.files import write_atomic
from rulecheck.load import Document, LoadError, load_text
from rulecheck.schema import check_structure, read_quantities

__all__ = ["ColumnMap", "ImportError_", "Mapping", "RowResult", "import_rows", "read_mapping", "safe_file_name",
           "write_rows"]

MAX_BYTES = 16 * 1024 * 1024  # a motor list of thousands of drives is a few MB
MAX_UNPACKED = 256 * 1024 * 1024  # an XLSX is a zip: bound what it unpacks to
MAX_ROWS = 10_000
MAX_COLUMNS = 256
MAX_CELL = 1_000  # characters

_MAP_KEYS = ("columns", "defaults", "decimal_comma", "delimiter", "encoding", "sheet", "header_row")
_COLUMN_KEYS = ("field", "unit", "values")
_RESERVED = {"con", "prn", "aux", "nul", *(f"com{i}" for i in range(1, 10)), *(f"lpt{i}" for i in range(1, 10))}
_DECIMAL_COMMA = re.compile(r"^[+-]?\d+,\d+$")
_NUMBER = re.compile(r"^[+-]?(\d+(\.\d*)?|\.\d+)([eE][+-]?\d+)?$")
_TRUE = {"yes", "y", "true", "1", "x", "ja", "oui"}
_FALSE = {"no", "n", "false", "0", "-"}


class ImportError_(Exception):  # noqa: N801 - not the builtin ImportError
    """A mapping or list that cannot be used at all (nothing is written); the message has file:line:column."""


@dataclass(frozen=True)
class ColumnMap:
    """How one column of the list feeds one spec field."""

    heading: str
    field: str
    unit: str | None = None
    values: dict[str, Any] = field(default_factory=dict)  # the list's words (case-insensitive) → spec values
    words: tuple[str, ...] = ()  # the list's words as the mapping writes them


@dataclass
class Mapping:
    """A mapping file, read and checked."""

    file: str
    columns: list[ColumnMap]
    defaults: dict[str, Any] = field(default_factory=dict)
    decimal_comma: bool = False
    delimiter: str | None = None
    encoding: str = "utf-8"
    sheet: str | None = None
    header_row: int = 1


@dataclass(frozen=True)
class CellError:
    """One thing wrong with a row: where (file, row, column heading) and what was expected."""

    file: str
    row: int
    column: str | None
    field: str | None
    message: str
    value: Any = None  # the cell as the list holds it (None when the error is not about one cell)

    def __str__(self) -> str:
        where = f"{self.file}: row {self.row}"
        if self.column is not None:
            where += f", column '{self.column}'"
        if self.field:
            where += f" ({self.field})"
        return f"{where}: {self.message}"


@dataclass
class RowResult:
    """One row: its spec (text and data) if it is valid, where each spec value came from, and its errors."""

    row: int
    file: str = ""  # the list
    tag: str | None = None
    data: dict[str, Any] = field(default_factory=dict)
    text: str | None = None
    origins: dict[str, tuple[int, str]] = field(default_factory=dict)  # key path → (row, column heading)
    errors: list[CellError] = field(default_factory=list)
    file_name: str | None = None
    columns: dict[str, int] = field(default_factory=dict)  # column heading → column number (1 = first)
    partial: dict[str, Any] = field(default_factory=dict)  # a row with errors: the values its good cells give


# ---------------------------------------------------------------------------------------------- mapping


def _fields() -> dict[str, dict[str, Any]]:
    from rulecheck.authoring.fields import schema_fields

    return schema_fields()


def _map_error(doc: Document, path: str, message: str, at_key: bool = False) -> ImportError_:
    pos = doc.key_positions.get(path) if at_key else None
    pos = pos or doc.position(path)
    where = f"{doc.file}:{pos.line}:{pos.column}" if pos else doc.file
    return ImportError_(f"{where}: {message}")


def _field_path(doc: Document, where: str, value: Any) -> str:
    fields = _fields()
    if not isinstance(value, str) or value not in fields:
        close = difflib.get_close_matches(str(value), list(fields), n=1, cutoff=0.6)
        hint = (f"; did you mean '{close[0]}'?" if close
                else " (the field paths are listed by 'rulecheck schema --markdown')")
        raise _map_error(doc, where, f"{value!r} is not a spec field{hint}")
    if fields[value].get("type") == "array":
        raise _map_error(doc, where, f"'{value}' is a list; a column gives one value")
    return value


def _column(doc: Document, heading: str, entry: Any) -> ColumnMap:
    where = f"columns.{heading}"
    if isinstance(entry, str):
        entry = {"field": entry}
    if not isinstance(entry, dict):
        raise _map_error(doc, where, "give the spec field, or a mapping with 'field' (and 'unit', 'values')")
    unknown = [k for k in entry if k not in _COLUMN_KEYS]
    if unknown:
        raise _map_error(doc, f"{where}.{unknown[0]}", f"unknown key '{unknown[0]}' (known: {', '.join(_COLUMN_KEYS)})",
                         at_key=True)
    path = _field_path(doc, f"{where}.field" if "field" in entry else where, entry.get("field"))
    node = _fields()[path]
    unit = entry.get("unit")
    if unit is not None:
        kind_name = node.get("x-dimension")
        if not kind_name:
            raise _map_error(doc, f"{where}.unit", f"'{path}' is not a quantity; it takes no unit")
        try:
            units.parse_quantity(f"1 {unit}", kind_name)
        except units.QuantityError as exc:
            raise _map_error(doc, f"{where}.unit", f"unit {unit!r} for {path}: {exc.message}; "
                             f"{units.KINDS[kind_name].description}") from None
    values = entry.get("values") or {}
    if not isinstance(values, dict):
        raise _map_error(doc, f"{where}.values", "give the list's words and the spec values they mean, "
                         "e.g. {VSD: inverter}")
    return ColumnMap(heading, path, None if unit is None else str(unit),
                     {str(k).strip().casefold(): v for k, v in values.items()}, tuple(str(k) for k in values))


def read_mapping(path: str | os.PathLike[str]) -> Mapping:
    """Return the mapping file at ``path``; raise :class:`ImportError_` (with file:line:column) if it is unusable."""
    name = os.fspath(path)
    try:
        doc = load_text(Path(path).read_bytes(), name)
    except OSError as exc:
        raise ImportError_(f"{name}: cannot read the mapping file: {exc.strerror or exc}") from None
    except LoadError as exc:
        raise ImportError_(f"{name}:{exc.line or 1}:{exc.column or 1}: {exc.message}") from None
    data = doc.data
    unknown = [k for k in data if k not in _MAP_KEYS and not str(k).startswith("x-")]
    if unknown:
        close = difflib.get_close_matches(str(unknown[0]), _MAP_KEYS, n=1)
        raise _map_error(doc, str(unknown[0]), f"unknown key '{unknown[0]}'" + (f"; did you mean '{close[0]}'?" if close
                         else f" (known: {', '.join(_MAP_KEYS)})"), at_key=True)
    columns = data.get("columns")
    if not isinstance(columns, dict) or not columns:
        raise _map_error(doc, "columns" if "columns" in data else "", "the mapping needs 'columns': column heading "
                         "→ spec field, e.g. \"Power kW\": {field: motor.rated_power, unit: kW}")
    mapped = [_column(doc, str(heading), entry) for heading, entry in columns.items()]
    defaults = data.get("defaults") or {}
    if not isinstance(defaults, dict):
        raise _map_error(doc, "defaults", "give spec fields and their values, e.g. {supply.voltage: 400 V}")
    for key in defaults:
        _field_path(doc, f"defaults.{key}", key)
    if "tag" not in {c.field for c in mapped} and "tag" not in defaults:
        raise _map_error(doc, "columns", "no column gives the tag (the file name of each spec): map one to 'tag'")
    return Mapping(name, mapped, dict(defaults), *_options(doc, data))


def _options(doc: Document, data: dict[str, Any]) -> tuple[bool, str | None, str, str | None, int]:
    comma = data.get("decimal_comma", False)
    if not isinstance(comma, bool):
        raise _map_error(doc, "decimal_comma", "write true or false")
    delimiter = data.get("delimiter")
    if delimiter is not None and (not isinstance(delimiter, str) or len(delimiter) != 1):
        raise _map_error(doc, "delimiter", "give one character, e.g. ';'")
    if comma and delimiter == ",":
        raise _map_error(doc, "delimiter", "a list with decimal commas cannot use the comma as delimiter")
    encoding = data.get("encoding", "utf-8")
    try:
        "".encode(str(encoding))
    except LookupError:
        raise _map_error(doc, "encoding", f"unknown encoding {encoding!r} (e.g. utf-8, cp1252)") from None
    sheet = data.get("sheet")
    header = data.get("header_row", 1)
    if not isinstance(header, int) or isinstance(header, bool) or not 1 <= header <= 100:
        raise _map_error(doc, "header_row", "give the row number of the column headings (1 to 100)")
    return comma, delimiter, str(encoding), None if sheet is None else str(sheet), header


# ---------------------------------------------------------------------------------------------- reading


def _read_bytes(path: Path) -> bytes:
    try:
        with open(path, "rb") as handle:
            data = handle.read(MAX_BYTES + 1)
    except OSError as exc:
        raise ImportError_(f"{path}: cannot read the list: {exc.strerror or exc}") from None
    if len(data) > MAX_BYTES:
        raise ImportError_(f"{path}: the list is larger than {MAX_BYTES // (1024 * 1024)} MiB")
    return data


def _csv_rows(path: Path, mapping: Mapping) -> Iterator[tuple[int, list[Any]]]:
    data = _read_bytes(path)
    try:
        text = data.decode("utf-8-sig" if mapping.encoding.lower().replace("_", "-") in ("utf-8", "utf8")
                           else mapping.encoding)
    except UnicodeDecodeError as exc:
        raise ImportError_(f"{path}: byte {exc.start + 1} is not {mapping.encoding}: save the list as UTF-8 CSV, "
                           "or name its encoding in the mapping (encoding: cp1252)") from None
    delimiter = mapping.delimiter or _sniff(text, mapping.decimal_comma)
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=delimiter)
    try:
        for record in reader:
            yield reader.line_num, list(record)
    except csv.Error as exc:
        raise ImportError_(f"{path}: line {reader.line_num}: {exc}") from None


def _sniff(text: str, decimal_comma: bool) -> str:
    sample = text[:65536]
    candidates = ";\t|" if decimal_comma else ",;\t|"
    try:
        return csv.Sniffer().sniff(sample, delimiters=candidates).delimiter
    except csv.Error:
        return ";" if decimal_comma else ","


def _xlsx_rows(path: Path, mapping: Mapping) -> Iterator[tuple[int, list[Any]]]:
    data = _read_bytes(path)
    try:
        with zipfile.ZipFile(io.BytesIO(data)) as archive:
            unpacked = sum(info.file_size for info in archive.infolist())
    except zipfile.BadZipFile:
        raise ImportError_(f"{path}: not an XLSX workbook (a zip archive); save the list as .xlsx or .csv") from None
    if unpacked > MAX_UNPACKED:
        raise ImportError_(f"{path}: the workbook unpacks to more than {MAX_UNPACKED // (1024 * 1024)} MiB")
    import openpyxl

    try:
        book = openpyxl.load_workbook(io.BytesIO(data), read_only=True, data_only=True)
    except Exception as exc:  # openpyxl raises many kinds for a damaged workbook
        raise ImportError_(f"{path}: cannot read the workbook ({type(exc).__name__}: {exc})") from None
    try:
        if mapping.sheet is not None and mapping.sheet not in book.sheetnames:
            raise ImportError_(f"{path}: no sheet {mapping.sheet!r} (sheets: {', '.join(book.sheetnames)})")
        sheet = book[mapping.sheet] if mapping.sheet is not None else book.worksheets[0]
        for number, values in enumerate(sheet.iter_rows(max_col=MAX_COLUMNS + 1, values_only=True), start=1):
            cells = list(values)
            while cells and cells[-1] is None:
                cells.pop()  # a read-only sheet pads each row to the columns asked for
            yield number, cells
    finally:
        book.close()


def _table(path: Path, mapping: Mapping) -> tuple[list[str], Iterator[tuple[int, list[Any]]]]:
    """Return the column headings and the data rows (spreadsheet row number, cells) of the list."""
    suffix = path.suffix.lower()
    if suffix == ".csv":
        rows = _csv_rows(path, mapping)
    elif suffix in (".xlsx", ".xlsm"):
        rows = _xlsx_rows(path, mapping)
    else:
        raise ImportError_(f"{path}: a motor list is a .csv or .xlsx file")
    for number, cells in rows:
        if len(cells) > MAX_COLUMNS:
            raise ImportError_(f"{path}: row {number} has more than {MAX_COLUMNS} columns")
        if number == mapping.header_row:
            return [_heading(c) for c in cells], rows
    raise ImportError_(f"{path}: no heading row {mapping.header_row}: the list is empty")


def _heading(cell: Any) -> str:
    return " ".join(str(cell).split()) if cell is not None else ""


# ---------------------------------------------------------------------------------------------- cells


class _Bad(Exception):
    """A cell that cannot become its field's value: the message says what was expected."""


def _text(cell: Any) -> str:
    if isinstance(cell, float) and cell.is_integer():
        return str(int(cell))
    return str(cell).strip()


def _number(cell: Any, decimal_comma: bool) -> float | None:
    """Return a cell as a number, or None when it is not one."""
    if isinstance(cell, bool):
        return None
    if isinstance(cell, (int, float)):
        return float(cell)
    text = str(cell).strip()
    if _DECIMAL_COMMA.match(text):
        if not decimal_comma:
            raise _Bad(f"{text!r} has a decimal comma; set 'decimal_comma: true' in the mapping if the list uses it")
        text = text.replace(",", ".")
    return float(text) if _NUMBER.match(text) else None


def _number_text(number: float) -> str:
    """Return a number at its full precision, as short as it reads back (45.0 → '45', 93.9 → '93.9')."""
    return str(int(number)) if number.is_integer() and abs(number) < 1e15 else repr(number)


def _quantity(cell: Any, column: ColumnMap, kind_name: str, decimal_comma: bool) -> Any:
    kind = units.KINDS[kind_name]
    unit = column.unit
    number = _number(cell, decimal_comma)
    if number is not None:
        if not math.isfinite(number):
            raise _Bad(f"{_text(cell)!r} is not a finite number")
        if unit is None and kind_name != "fraction":
            raise _Bad(f"the number {_text(cell)} has no unit: give the column's unit in the mapping "
                       f"(unit: ...), {kind.description}")
        value: Any = number if unit is None else f"{_number_text(number)} {unit}"
    else:
        value = _text(cell)
        if _DECIMAL_COMMA.match(value.split(" ")[0]) and decimal_comma:
            value = value.replace(",", ".", 1)
    try:
        units.parse_quantity(value, kind_name)
    except units.QuantityError as exc:
        expected = kind.description.split(";")[0] + (f" in {unit}" if unit else "")
        raise _Bad(f"expected {expected}, e.g. {kind.example.split()[0] if unit else kind.example}; "
                   f"got {_text(cell)!r} ({exc.message})") from None
    return value


def _choice(cell: Any, column: ColumnMap, node: dict[str, Any]) -> Any:
    word = _text(cell)
    value = column.values.get(word.casefold(), word)
    for option in node["enum"]:
        if str(option).casefold() == str(value).casefold():
            return option
    words = f" (or the list's words: {', '.join(column.words)})" if column.words else ""
    raise _Bad(f"expected one of: {', '.join(str(o) for o in node['enum'])}{words}; got {word!r}")


def _cell_value(cell: Any, column: ColumnMap, decimal_comma: bool) -> Any:
    """Return the spec value of a non-empty cell; raise :class:`_Bad`."""
    node = _fields()[column.field]
    if isinstance(cell, str) and len(cell) > MAX_CELL:
        raise _Bad(f"the cell has more than {MAX_CELL} characters")
    if column.values and "enum" not in node:
        cell = column.values.get(_text(cell).casefold(), cell)
    if "x-dimension" in node:
        return _quantity(cell, column, node["x-dimension"], decimal_comma)
    if "enum" in node:
        return _choice(cell, column, node)
    kind = node.get("type")
    if kind == "boolean":
        word = _text(cell).casefold()
        if isinstance(cell, bool):
            return cell
        if word in _TRUE or word in _FALSE:
            return word in _TRUE
        raise _Bad(f"expected yes or no (true/false); got {_text(cell)!r}")
    if kind in ("integer", "number"):
        number = _number(cell, decimal_comma)
        if number is None or not math.isfinite(number):
            raise _Bad(f"expected {'a whole number' if kind == 'integer' else 'a number'}; got {_text(cell)!r}")
        if kind == "integer":
            if not number.is_integer():
                raise _Bad(f"expected a whole number; got {_text(cell)!r}")
            return int(number)
        return number
    if not isinstance(cell, (str, int, float)) or isinstance(cell, bool):
        raise _Bad(f"expected text; got {type(cell).__name__} {cell!s}")
    return _text(cell)


# ---------------------------------------------------------------------------------------------- rows


def _put(data: dict[str, Any], path: str, value: Any) -> None:
    node = data
    parts = path.split(".")
    for part in parts[:-1]:
        node = node.setdefault(part, {})
    node[parts[-1]] = value


def _ordered(flat: dict[str, Any]) -> dict[str, Any]:
    """Return the nested spec of ``flat`` (path → value), keys in the schema's order."""
    order = {p: i for i, p in enumerate(_fields())}
    data: dict[str, Any] = {"format": 1}
    for path in sorted(flat, key=lambda p: order.get(p, len(order))):
        _put(data, path, flat[path])
    return data


def safe_file_name(tag: str) -> str | None:
    """Return a file name for a tag: letters, digits, '.', '_' and '-' only, never hidden or a device name."""
    name = re.sub(r"[^A-Za-z0-9._-]+", "-", tag).strip(".-")[:64]
    if not name:
        return None
    if name.split(".")[0].casefold() in _RESERVED:
        name = f"{name}_"
    return f"{name}.yaml"


def _row(number: int, cells: list[Any], positions: dict[str, Any], mapping: Mapping, list_name: str,
         map_name: str) -> RowResult:
    result = RowResult(number, list_name)
    result.columns = {c.heading: positions[c.heading] + 1 for c in mapping.columns}
    extra = [c for c in cells[len(positions["*"]):] if c is not None and str(c).strip()]
    if extra:
        result.errors.append(CellError(list_name, number, None, None,
                                       f"the row has {len(positions['*']) + len(extra)} or more cells but the heading "
                                       f"row has {len(positions['*'])}: a comma inside a value (a decimal comma?) "
                                       "splits it; quote the value or use another delimiter"))
        return result
    flat: dict[str, Any] = {}
    for key, value in mapping.defaults.items():
        flat[key] = value
        result.origins[key] = (number, "defaults")
    for column in mapping.columns:
        index = positions[column.heading]
        cell = cells[index] if index < len(cells) else None
        if cell is None or (isinstance(cell, str) and not cell.strip()):
            continue
        try:
            flat[column.field] = _cell_value(cell, column, mapping.decimal_comma)
        except _Bad as exc:
            result.errors.append(CellError(list_name, number, column.heading, column.field, str(exc), cell))
            continue
        result.origins[column.field] = (number, column.heading)
    tag = flat.get("tag")
    result.tag = tag if isinstance(tag, str) else None
    result.data = _ordered(flat)  # with a bad cell left out: the other cells are still checked
    header = f"# {result.tag or 'spec'}: imported from {Path(list_name).name}, row {number}, by 'rulecheck import' " \
             f"(mapping {Path(map_name).name}).\n"
    result.text = header + yaml.safe_dump(result.data, sort_keys=False, allow_unicode=True, width=120)
    _validate(result, list_name)
    return result


def _validate(result: RowResult, list_name: str) -> None:
    """Validate a row's spec as ``rulecheck check`` does (schema and units); errors point at the cells."""
    assert result.text is not None
    try:
        doc = load_text(result.text, f"{list_name} row {result.row}")
    except LoadError as exc:
        result.errors.append(CellError(list_name, result.row, None, None, exc.message))
        return
    quantities, unit_problems = read_quantities(doc)
    bad = {e.field for e in result.errors if e.field}
    for problem in check_structure(doc) + unit_problems:
        if problem.severity != "error" or any(f == problem.path or f.startswith(problem.path + ".") for f in bad):
            continue  # a bad cell's field (or the section it leaves without a required key) is reported once
        origin = _origin(result.origins, problem.path)
        heading = origin[1] if origin else None
        message = problem.message.removeprefix(f"{problem.path}: ") + (f" ({problem.hint})" if problem.hint else "")
        if origin is None:
            message += "; map a column to it or give it under 'defaults' in the mapping"
        result.errors.append(CellError(list_name, result.row, heading, problem.path or None, message))
    if result.tag is not None and safe_file_name(result.tag) is None:
        result.errors.append(CellError(list_name, result.row, _origin(result.origins, "tag")[1]
                                       if _origin(result.origins, "tag") else None, "tag",
                                       f"the tag {result.tag!r} gives no file name"))
    if result.errors:
        result.text = None
        result.partial, result.data = result.data, {}


def _origin(origins: dict[str, tuple[int, str]], path: str) -> tuple[int, str] | None:
    probe = path
    while probe:
        if probe in origins:
            return origins[probe]
        cut = max(probe.rfind("."), probe.rfind("["))
        probe = probe[:cut] if cut > 0 else ""
    return None


def import_rows(list_path: str | os.PathLike[str], mapping: Mapping) -> list[RowResult]:
    """Return every data row of the list as a :class:`RowResult` (spec text, origins, or errors)."""
    path = Path(list_path)
    headings, rows = _table(path, mapping)
    positions: dict[str, Any] = {"*": headings}
    folded = {h.casefold(): i for i, h in reversed(list(enumerate(headings))) if h}
    for column in mapping.columns:
        index = folded.get(" ".join(column.heading.split()).casefold())
        if index is None:
            close = difflib.get_close_matches(column.heading, [h for h in headings if h], n=1)
            known = ", ".join(h for h in headings if h)
            raise ImportError_(f"{path}: no column '{column.heading}' (mapping {mapping.file})"
                               + (f"; did you mean '{close[0]}'?" if close else
                                  f"; the headings in row {mapping.header_row} are: {known}"))
        positions[column.heading] = index
    results: list[RowResult] = []
    seen: dict[str, int] = {}
    for number, cells in rows:
        if all(c is None or (isinstance(c, str) and not c.strip()) for c in cells):
            continue
        if len(results) >= MAX_ROWS:
            raise ImportError_(f"{path}: more than {MAX_ROWS} rows; split the list")
        result = _row(number, cells, positions, mapping, str(list_path), mapping.file)
        name = safe_file_name(result.tag) if result.tag else None
        if result.text is not None and name is not None:
            key = name.casefold()
            if key in seen:
                origin = _origin(result.origins, "tag")
                result.errors.append(CellError(str(list_path), number, origin[1] if origin else None, "tag",
                                               f"the tag {result.tag!r} (file {name}) is also in row {seen[key]}"))
                result.text, result.partial, result.data = None, result.data, {}
            else:
                seen[key] = number
                result.file_name = name
        results.append(result)
    return results


def write_rows(results: list[RowResult], out_dir: str | os.PathLike[str], force: bool = False) -> list[Path]:
    """Write each valid row's spec to ``out_dir`` (atomically); a file already there is an error on its row
    unless ``force``. Return the files written."""
    folder = Path(out_dir)
    try:
        folder.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise ImportError_(f"{folder}: cannot create the folder: {exc.strerror or exc}") from None
    written = []
    for result in results:
        if result.text is None or result.file_name is None:
            continue
        target = folder / result.file_name
        if (target.exists() or target.is_symlink()) and not force:
            result.errors.append(CellError(result.file, result.row, None, None,
                                           f"{target} exists; use --force to overwrite it"))
            continue
        try:
            write_atomic(target, result.text.encode("utf-8"))
        except OSError as exc:
            raise ImportError_(f"{target}: cannot write: {exc.strerror or exc}") from None
        written.append(target)
    return written
