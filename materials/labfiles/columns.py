"""The column-header row of a lab file (names, units in brackets) and its data rows (CSV cells, numbers)."""

from __future__ import annotations

import csv
import math
import re
from dataclasses import dataclass
from typing import Iterator

from materials.errors import InputError, UnitError
from materials.labfiles.header import _conditions, _split
from materials.labfiles.source import _Lines
from materials.units import to_si

_COLUMN = re.compile(r"^([^\[\]]*?)\s*(?:\[([^\[\]]*)\])?$")
_NUMBER_WITH_UNIT = re.compile(r"^[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?\s*([A-Za-zµμ°%/].*)$")
_DECIMAL_COMMA = re.compile(r"^[-+]?\d+,\d+$")


@dataclass(frozen=True)
class _Column:
    name: str        # canonical name
    heading: str     # as written
    unit: str | None
    index: int       # 0-based
    scale: float = 1.0  # SI = cell * scale


def _delimiter(header_row: str) -> str:
    if "\t" in header_row:
        return "\t"
    if ";" in header_row and "," not in header_row:
        return ";"
    return ","


def _columns(cells: list[str], lines: _Lines, line: int) -> list[tuple[str, str | None, str, int]]:
    """(canonical name, unit or None, heading, index) per column; unreadable or repeated headings refused."""
    out, seen = [], {}
    for i, heading in enumerate(cells):
        h = heading.strip()
        if not h:
            if all(not c.strip() for c in cells[i:]):
                break  # trailing separators
            raise lines.error(f"column {i + 1} has no heading", line=line, field=f"column {i + 1}")
        if h.count("[") > 1 or h.count("]") > 1:
            raise lines.error(f"ambiguous unit: more than one [unit] in '{h}' (column {i + 1})", line=line,
                              field=h)
        m = _COLUMN.match(h)
        if not m or ("[" in h and m.group(2) is None):
            raise lines.error(f"cannot read column heading '{h}' (expected NAME or NAME [UNIT], column {i + 1})",
                              line=line, field=h)
        name = m.group(1).strip().lower()
        unit = m.group(2).strip() if m.group(2) is not None else None
        if unit == "":
            raise lines.error(f"empty unit brackets in '{h}' (column {i + 1})", line=line, field=h)
        if name in seen:
            raise lines.error(f"duplicated column '{name}' (columns {seen[name] + 1} and {i + 1})", line=line,
                              field=h)
        seen[name] = i
        out.append((name, unit, h, i))
    return out


def _unit_scale(unit: str | None, si: str, *, what: str, heading: str, lines: _Lines, line: int) -> float:
    if unit is None:
        raise lines.error(f"column '{heading}' has no unit: write it in brackets, e.g. '{what}'", line=line,
                          field=heading)
    try:
        scale = to_si(1.0, unit, si)
        offset = to_si(0.0, unit, si)
    except UnitError as exc:
        raise lines.error(f"{exc} (column '{heading}')", line=line, field=heading) from None
    if offset != 0.0:
        raise lines.error(f"unit '{unit}' has an offset; use an absolute unit", line=line, field=heading)
    return scale


def _is_unit(text: str) -> bool:
    """Whether pint reads ``text`` as a unit (only asked on the error path, so the registry loads only then)."""
    from materials.units import registry

    try:
        registry().Unit(text.replace("µ", "u").replace("μ", "u").replace("^", "**"))
    except Exception:  # noqa: BLE001 - pint raises many kinds of error for text that is not a unit; all mean "no"
        return False
    return True


def _cell_error(cell: str, col: _Column, lines: _Lines) -> InputError:
    c = cell.strip()
    if not c:
        why = "empty cell"
    elif _NUMBER_WITH_UNIT.match(c) and _is_unit(_NUMBER_WITH_UNIT.match(c).group(1)):
        why = (f"mixed units: the cell '{c}' carries its own unit, but the column's unit is "
               f"{col.unit or 'given in its heading'}; write numbers only")
    elif _DECIMAL_COMMA.match(c):
        why = f"not a number: '{c}' (a decimal comma? use a point)"
    else:
        why = f"not a number: '{c}'"
    return lines.error(f"{why} (column {col.index + 1})", field=col.heading)


def _rows(rest: Iterator[str], header_row: str, lines: _Lines, ncols: int) -> Iterator[list[str]]:
    """Data rows as cell lists (blank rows skipped; a '#' line inside the data refused)."""
    delim = _delimiter(header_row)

    def data_lines():
        for text in rest:
            if "#" in text and text.lstrip().startswith("#"):
                raise lines.error("a '#' line after the column headings (two files joined together?)")
            yield text

    reader = csv.reader(data_lines(), delimiter=delim)
    while True:
        try:
            cells = next(reader)
        except StopIteration:
            return
        except csv.Error as exc:
            raise lines.error(f"not readable as CSV: {exc}") from None
        if len(cells) != ncols or not cells[0].strip():
            if all(not c.strip() for c in cells):
                continue  # a blank row
            if len(cells) > ncols and all(not c.strip() for c in cells[ncols:]):
                cells = cells[:ncols]
            elif len(cells) != ncols:
                raise lines.error(f"the row has {len(cells)} cells but there are {ncols} columns")
        yield cells


def _no_rows(path: str, line: int) -> InputError:
    """The error for a file that stops after its column headings."""
    return InputError("the file has column headings but no data rows", file=path, line=line)


def _header_row_cells(header_row: str) -> list[str]:
    return next(csv.reader([header_row], delimiter=_delimiter(header_row)))

def _number(cell: str, col: _Column, lines: _Lines) -> float:
    try:
        v = float(cell)
    except ValueError:
        raise _cell_error(cell, col, lines) from None
    if not math.isfinite(v) or "_" in cell or not cell.isascii():  # float() also reads "1_0" and "１２"
        raise lines.error(f"not a finite number: '{cell.strip()}' (column {col.index + 1})", field=col.heading)
    return v


def _positive(cell: str, col: _Column, lines: _Lines) -> float:
    v = _number(cell, col, lines)
    if v <= 0:
        what = "zero" if v == 0 else "negative"
        raise lines.error(f"{col.name} must be positive, got {what} '{cell.strip()}' (column {col.index + 1})",
                          field=col.heading)
    return v


def _open(path: str, keys, overrides, on_progress):
    """Start reading a data file: (lines, conditions, columns, header row, its line, remaining lines)."""
    lines = _Lines(path, on_progress)
    header, header_row, hline, rest = _split(lines, keys)
    cond = _conditions(path, header, overrides)
    cols = _columns(_header_row_cells(header_row), lines, hline)
    return lines, cond, cols, header_row, hline, rest

