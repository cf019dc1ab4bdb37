"""Reader for a measured duty profile: a CSV file of time, speed and torque with units in the header.

The header names each column and its unit in brackets, in any order::

    time [s],speed [r/min],torque [N*m]

Units are read once per column with :func:`rulecheck.units.parse_quantity`, then each
column is scaled to SI with numpy. Lines starting with ``#`` and blank lines are
ignored. The file may come from a repository under review, so it is size-limited and
every bad row is reported as ``file:line: what is wrong``.
"""

from __future__ import annotations

import io
import os
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np

from rulecheck.files import read_head
from rulecheck.units import QuantityError, parse_quantity

__all__ = ["COLUMN_KINDS", "DutyProfile", "ProfileError", "read_profile_csv"]

COLUMN_KINDS = {"time": "time", "speed": "rotational_speed", "torque": "torque"}
MAX_FILE_BYTES = 256 * 1024 * 1024
_HEADER_HINT = "write a header such as: time [s],speed [r/min],torque [N*m]"
_HEADER_CELL = re.compile(r"^\s*([A-Za-z_][A-Za-z_ ]*?)\s*\[([^\[\]]+)\]\s*$")


class ProfileError(ValueError):
    """A duty-profile file that cannot be read; ``str()`` gives ``file:line: message``."""

    def __init__(self, path: str, line: int | None, message: str, hint: str = "") -> None:
        where = f"{path}:{line}" if line is not None else path
        super().__init__(f"{where}: {message}")
        self.path = path
        self.line = line
        self.message = message
        self.hint = hint


@dataclass(frozen=True)
class DutyProfile:
    """A measured profile in SI: time [s], motor shaft speed [rad/s], motor shaft torque [N*m]."""

    time: np.ndarray
    speed: np.ndarray
    torque: np.ndarray
    source: str = ""


def _content_lines(text: str) -> list[tuple[int, str]]:
    """(1-based line number, text) of every line that is not blank or a comment."""
    result = []
    for number, line in enumerate(text.splitlines(), start=1):
        stripped = line.strip()
        if stripped and not stripped.startswith("#"):
            result.append((number, line))
    return result


def _parse_header(path: str, number: int, line: str) -> tuple[list[str], list[float]]:
    names: list[str] = []
    scales: list[float] = []
    for cell in line.split(","):
        m = _HEADER_CELL.match(cell)
        if not m:
            raise ProfileError(
                path,
                number,
                f"header cell {cell.strip()!r} is not 'name [unit]'",
                _HEADER_HINT,
            )
        name, unit = m.group(1).strip().lower(), m.group(2).strip()
        if name not in COLUMN_KINDS:
            raise ProfileError(path, number, f"unknown column {name!r}; expected time, speed and torque")
        if name in names:
            raise ProfileError(path, number, f"column {name!r} appears twice")
        try:
            scales.append(parse_quantity(f"1 {unit}", COLUMN_KINDS[name]))
        except QuantityError as exc:
            raise ProfileError(path, number, f"column {name!r}: {exc.message}", exc.hint) from None
        names.append(name)
    missing = [n for n in COLUMN_KINDS if n not in names]
    if missing:
        raise ProfileError(path, number, f"missing column(s): {', '.join(missing)}")
    return names, scales


def _first_bad_row(path: str, rows: list[tuple[int, str]], width: int) -> ProfileError:
    """Find the row numpy refused and say why, with its line number."""
    for number, line in rows:
        cells = line.split(",")
        if len(cells) != width:
            hint = "decimal commas are not allowed; write 0.5, not 0,5" if len(cells) > width else ""
            return ProfileError(path, number, f"expected {width} values, found {len(cells)}", hint)
        for cell in cells:
            try:
                float(cell)
            except ValueError:
                return ProfileError(path, number, f"{cell.strip()!r} is not a number")
    return ProfileError(path, None, "the data rows could not be read")


def read_profile_csv(path: str | os.PathLike[str], max_bytes: int = MAX_FILE_BYTES) -> DutyProfile:
    """Return the duty profile in a CSV file, converted to SI (time [s], speed [rad/s], torque [N*m]).

    Parameters
    ----------
    path : the CSV file
    max_bytes : refuse files larger than this [bytes]

    Method: header units parsed once per column, columns read with ``numpy.loadtxt`` and scaled; on any
    failure the rows are scanned to name the first bad line. Checks: at least two rows, finite values,
    strictly increasing time.

    References
    ----------
    Common practice (file format of this program).
    """
    name = str(path)
    file_path = Path(path)
    try:  # regular files only, at most max_bytes: a spec may name /dev/zero or a FIFO
        data = read_head(file_path, max_bytes)
        if len(data) > max_bytes:
            raise ProfileError(name, None, f"file holds more than the limit of {max_bytes} bytes")
        text = data.decode("utf-8-sig")
    except ProfileError:
        raise
    except UnicodeDecodeError:
        raise ProfileError(name, None, "file is not UTF-8 text") from None
    except OSError as exc:
        raise ProfileError(name, None, f"cannot read file: {exc.strerror or exc}") from None
    data = _plain_rows(name, text)
    if data is not None:  # the usual file: no comments or blank lines among the rows, no failures
        return data
    lines = _content_lines(text)
    if not lines:
        raise ProfileError(name, None, "file has no header", _HEADER_HINT)
    header_number, header = lines[0]
    columns, scales = _parse_header(name, header_number, header)
    rows = lines[1:]
    if len(rows) < 2:
        raise ProfileError(name, header_number, "a duty profile needs at least two data rows")
    try:
        data = np.loadtxt(io.StringIO("\n".join(line for _, line in rows)), delimiter=",", dtype=float, ndmin=2)
    except ValueError:
        raise _first_bad_row(name, rows, len(columns)) from None
    return _checked(name, data, rows, columns, scales)


_BLANK_LINE = re.compile(r"\n[ \t\f\v]*(?:\n|$)")


def _plain_rows(name: str, text: str) -> DutyProfile | None:
    """Return the profile of a file whose rows follow the header with no comment, blank line or carriage
    return among them, read in one pass; None for any other file, or any problem (the line-by-line
    path then reads it and names the line)."""
    offset = 0
    while True:  # comments and blank lines before the header
        end = text.find("\n", offset)
        if end < 0:
            return None
        stripped = text[offset:end].strip()
        if stripped and not stripped.startswith("#"):
            break
        offset = end + 1
    body = text[end + 1:]
    if not body.strip() or "#" in body or "\r" in text or _BLANK_LINE.search("\n" + body.rstrip("\n")):
        return None
    try:
        columns, scales = _parse_header(name, 0, text[offset:end])
        data = np.loadtxt(io.StringIO(body), delimiter=",", dtype=float, ndmin=2)
        if data.shape[0] < 2:
            return None
        return _checked(name, data, None, columns, scales)
    except (ValueError, ProfileError):
        return None


def _checked(name: str, data: np.ndarray, rows: list[tuple[int, str]] | None, columns: list[str],
             scales: list[float]) -> DutyProfile:
    """Scale the columns to SI and check them; raise ProfileError naming the line (``rows`` None: the
    caller reads the file again line by line to name it)."""
    if data.shape[1] != len(columns):
        if rows is None:
            raise ValueError("width")
        raise _first_bad_row(name, rows, len(columns))
    data = data * np.asarray(scales)
    bad = np.flatnonzero(~np.all(np.isfinite(data), axis=1))
    if bad.size:
        if rows is None:
            raise ValueError("not finite")
        raise ProfileError(name, rows[bad[0]][0], "value is not a finite number (inf, nan or too large)")
    by_name = {column: data[:, k] for k, column in enumerate(columns)}
    steps = np.flatnonzero(np.diff(by_name["time"]) <= 0)
    if steps.size:
        if rows is None:
            raise ValueError("time")
        raise ProfileError(name, rows[steps[0] + 1][0], "time does not increase from the previous row")
    return DutyProfile(by_name["time"], by_name["speed"], by_name["torque"], name)
