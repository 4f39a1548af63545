"""Lab data files: breakdown series, polarisation loops and flat value tables (CSV). Pure parsing, SI out.

Our own formats (DESIGN.md, "Lab files"). A file is UTF-8 text: an optional block of ``# key: value`` comment
lines at the top, one column-header row, then data rows. A column's unit goes in square brackets::

    # label: film-A 25C
    # thickness: 3.1 um
    # area: 1 cm^2
    # temperature: 25 degC
    field [V/um],censored
    642.0,0
    655.5,1

Breakdown series: ``field [UNIT]`` or ``voltage [UNIT]`` (with ``thickness [UNIT]`` per specimen, or one
thickness for the set), optional ``censored`` (0/1; 1 = the test stopped without breakdown), optional per-specimen
``thickness [UNIT]``; text columns ``specimen``, ``id`` and ``note`` are kept out of the numbers.
Loops: ``field [UNIT]`` and ``polarization [UNIT]`` (or ``polarisation``) in measured order; ``time``, ``index``
and ``point`` columns are ignored.

Header keys: ``label``, ``thickness``, ``area`` (breakdown only), ``temperature``, ``ramp`` (breakdown only),
``waveform`` (dc/ac, breakdown only), ``frequency`` (loops only), ``operator``, ``lab``, ``date`` (ISO 8601),
``kind`` (``lab``, or ``invented`` for demo data), ``citation`` and ``note``. A bare number in the header takes the
default unit of the matching CLI option (µm, cm², °C, V/s, Hz); options given on the command line win over the
header. A ``#`` line that is not ``# key: value`` (a single word before the colon) is a free comment.

Files are read line by line (large files are streamed) while their SHA-256 is computed. Every problem raises one
:class:`~materials.errors.InputError` naming the file, the line and the column.
"""

from __future__ import annotations

import csv
import datetime as dt
import hashlib
import math
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable, Iterator

import numpy as np

from materials.errors import InputError, UnitError
from materials.properties import PROPERTIES
from materials.units import parse_option, to_si

#: Fewest specimens in a breakdown series (a fit needs at least two failures; three specimens is the least
#: that says anything about scatter).
MIN_SPECIMENS = 3
#: Fewest samples in a loop.
MIN_LOOP_POINTS = 5
#: A loop must come back, after its peak, to at most this fraction of its peak field ("toward zero").
RETURN_FRACTION = 0.2
#: Largest plausible polarisation magnitude, C/m² (200 µC/cm²; the strongest ferroelectrics saturate below it).
MAX_POLARIZATION_C_PER_M2 = 2.0
#: Files are read (hashed, decoded, and reported to the progress callback) in blocks of this many bytes.
BLOCK_BYTES = 1 << 20

_HEADER_LINE = re.compile(r"^#\s*([A-Za-z_][A-Za-z0-9_-]*)\s*:\s*(.*?)\s*$")
_COLUMN = re.compile(r"^([^\[\]]*?)\s*(?:\[([^\[\]]*)\])?$")
_NUMBER_WITH_UNIT = re.compile(r"^[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?\s*([A-Za-zµμ°%/].*)$")
_DECIMAL_COMMA = re.compile(r"^[-+]?\d+,\d+$")

# header key -> (CLI option kind for quantities, or None for text)
_QUANTITY_KEYS = {"thickness": "thickness", "area": "electrode_area", "temperature": "temperature",
                  "ramp": "ramp", "frequency": "frequency"}
_TEXT_KEYS = ("label", "waveform", "operator", "lab", "date", "kind", "citation", "note")
BREAKDOWN_KEYS = ("label", "thickness", "area", "temperature", "ramp", "waveform", "operator", "lab", "date",
                  "kind", "citation", "note")
LOOP_KEYS = ("label", "thickness", "temperature", "frequency", "operator", "lab", "date", "kind", "citation",
             "note")
IMPORT_KINDS = ("lab", "invented")
WAVEFORMS = ("dc", "ac")

# condition -> SI field name in Conditions
_SI_NAME = {"thickness": "thickness_m", "area": "area_m2", "temperature": "temperature_K",
            "ramp": "ramp_V_per_s", "frequency": "frequency_Hz"}
# plausible ranges of set conditions, SI (wide: they catch unit slips)
_CONDITION_RANGE = {"thickness": (1e-9, 1e-2, "m"), "area": (1e-12, 10.0, "m²"),
                    "temperature": (1.0, 2300.0, "K"), "ramp": (1e-6, 1e13, "V/s"),
                    "frequency": (1e-6, 1e10, "Hz")}


@dataclass
class Conditions:
    """Test conditions and provenance of one file (SI), from options and the header block."""

    label: str = ""
    thickness_m: float | None = None
    area_m2: float | None = None
    temperature_K: float | None = None
    ramp_V_per_s: float | None = None
    frequency_Hz: float | None = None
    waveform: str = "dc"
    operator: str = ""
    lab: str = ""
    date: str = ""
    kind: str = "lab"
    citation: str = ""
    note: str = ""
    #: where each condition came from: "option" or "header line N"
    origin: dict[str, str] = field(default_factory=dict)


@dataclass
class BreakdownFile:
    """A parsed breakdown series: one field per specimen (V/m), censored flags, optional thickness (m)."""

    path: str
    sha256: str
    conditions: Conditions
    fields_V_per_m: np.ndarray
    censored: np.ndarray
    thickness_m: np.ndarray | None = None

    @property
    def n(self) -> int:
        return int(self.fields_V_per_m.size)

    @property
    def n_censored(self) -> int:
        return int(self.censored.sum())


@dataclass
class LoopFile:
    """A parsed polarisation–field loop in measured order: fields (V/m) and polarisations (C/m²)."""

    path: str
    sha256: str
    conditions: Conditions
    fields_V_per_m: np.ndarray
    polarization_C_per_m2: np.ndarray

    @property
    def n(self) -> int:
        return int(self.fields_V_per_m.size)


@dataclass(frozen=True)
class _Column:
    name: str        # canonical name
    heading: str     # as written
    unit: str | None
    index: int       # 0-based
    scale: float = 1.0  # SI = cell * scale


class _Lines:
    """The lines of a file decoded as UTF-8 one at a time, with the line number and a running SHA-256."""

    def __init__(self, path, on_progress: Callable[[int], None] | None = None):
        self.path = str(path)
        self.line = 0
        self.bytes = 0
        self._sha = hashlib.sha256()
        self._on_progress = on_progress

    def __iter__(self) -> Iterator[str]:
        # Blocks of 1 MiB are hashed and decoded whole (much faster than line by line); only complete lines are
        # decoded, so a multi-byte character split across blocks is never cut.
        try:
            f = open(self.path, "rb")
        except OSError as exc:
            raise InputError(f"cannot read the file: {exc.strerror or exc}", file=self.path) from None
        carry = b""
        with f:
            while True:
                block = f.read(BLOCK_BYTES)
                if block:
                    self._sha.update(block)
                    self.bytes += len(block)
                    data = carry + block
                    cut = data.rfind(b"\n") + 1
                    chunk, carry = data[:cut], data[cut:]
                else:
                    chunk, carry = carry, b""
                if chunk:
                    yield from self._decoded(chunk)
                if self._on_progress is not None:
                    self._on_progress(self.bytes)
                if not block:
                    return

    def _decoded(self, chunk: bytes) -> Iterator[str]:
        try:
            text = chunk.decode("utf-8")
        except UnicodeDecodeError as exc:
            start = chunk.rfind(b"\n", 0, exc.start) + 1
            col = len(chunk[start:exc.start].decode("utf-8", "replace")) + 1
            raise InputError(f"not UTF-8 text: byte 0x{chunk[exc.start]:02x} at column {col} (save the file as "
                             "UTF-8)", file=self.path, line=self.line + chunk.count(b"\n", 0, exc.start) + 1
                             ) from None
        parts = text.split("\n")
        last = parts.pop()  # "" when the chunk ends with a newline
        if self.line == 0 and parts and parts[0].startswith("\ufeff"):
            parts[0] = parts[0][1:]
        for part in parts:
            self.line += 1
            yield part + "\n"
        if last:
            self.line += 1
            yield last[1:] if self.line == 1 and last.startswith("\ufeff") else last

    @property
    def sha256(self) -> str:
        return self._sha.hexdigest()

    def error(self, message: str, *, line: int | None = None, field: str | None = None) -> InputError:
        return InputError(message, file=self.path, line=self.line if line is None else line, field=field)


def in_file(exc: InputError, path, *, prefix: str = "", keep_field: bool = True) -> InputError:
    """The error ``exc`` of a pure computation, located in the file ``path`` (message not repeated)."""
    msg = str(exc)
    if exc.field and msg.startswith(f"field '{exc.field}': "):
        msg = msg[len(f"field '{exc.field}': "):]
    return InputError(prefix + msg, file=str(path), line=exc.line, field=exc.field if keep_field else None)


# --- header block and column row ---------------------------------------------------------------------------------

def _split(lines: _Lines, allowed_keys) -> tuple[dict[str, tuple[str, int]], str, int, Iterator[str]]:
    """Read the ``# key: value`` block and the column-header row; return (header, header row, its line, rest)."""
    it = iter(lines)
    header: dict[str, tuple[str, int]] = {}
    for text in it:
        stripped = text.strip()
        if not stripped:
            continue
        if stripped.startswith("#"):
            m = _HEADER_LINE.match(stripped)
            if not m:
                continue  # a free comment
            key, value = m.group(1).lower(), m.group(2)
            if key not in allowed_keys:
                raise lines.error(f"unknown header key '{key}' (known: {', '.join(allowed_keys)})", field=key)
            if key in header:
                raise lines.error(f"header key '{key}' given twice (lines {header[key][1]} and {lines.line})",
                                  field=key)
            header[key] = (value, lines.line)
            continue
        return header, text, lines.line, it
    if lines.line == 0:
        raise InputError("the file is empty", file=lines.path)
    raise InputError("no column-header row (the file holds only comments or blank lines)", file=lines.path,
                     line=lines.line)


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
    except Exception:
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


def _header_row_cells(header_row: str) -> list[str]:
    return next(csv.reader([header_row], delimiter=_delimiter(header_row)))


# --- conditions -------------------------------------------------------------------------------------------------

def _strip_prefix(message: str, name: str) -> str:
    prefix = f"{name}: "
    return message[len(prefix):] if message.startswith(prefix) else message


def parse_condition(key: str, text) -> float:
    """A set condition (thickness, area, temperature, ramp, frequency) in SI, range-checked.

    A bare number takes the CLI option's default unit (µm, cm², °C, V/s, Hz). Raises UnitError/InputError with a
    message that does not name the file (the caller adds where it came from).
    """
    kind = _QUANTITY_KEYS[key]
    try:
        value = parse_option(text, kind, name=key)
    except UnitError as exc:
        raise UnitError(_strip_prefix(str(exc), key)) from None
    lo, hi, unit = _CONDITION_RANGE[key]
    if key != "temperature" and value <= 0:
        raise InputError(f"{key} must be positive, got '{text}'")
    if not lo <= value <= hi:
        raise InputError(f"{key} '{text}' = {value:g} {unit} is outside the plausible range {lo:g}…{hi:g} {unit}"
                         " (a unit slip?)")
    return value


def _text_condition(key: str, value: str) -> str:
    value = str(value).strip()
    if key == "kind":
        if value not in IMPORT_KINDS:
            raise InputError(f"kind '{value}' is not one of {', '.join(IMPORT_KINDS)} (invented = demo data only)")
    elif key == "waveform":
        value = value.lower()
        if value not in WAVEFORMS:
            raise InputError(f"waveform '{value}' is not dc or ac")
    elif key == "date":
        try:
            (dt.datetime.fromisoformat(value) if "T" in value or " " in value else dt.date.fromisoformat(value))
        except ValueError:
            raise InputError(f"date '{value}' is not an ISO 8601 date (YYYY-MM-DD)") from None
    elif key == "label":
        if not value:
            raise InputError("label is empty")
        if len(value) > 400:
            raise InputError("label is longer than 400 characters")
    return value


def _conditions(path: str, header: dict[str, tuple[str, int]], overrides: dict | None) -> Conditions:
    """Merge options (already SI, or text) over the header block."""
    cond = Conditions(label=Path(path).stem)
    overrides = {k: v for k, v in (overrides or {}).items() if v is not None and v != ""}
    for key in set(header) | set(overrides):
        if key in overrides:
            value, where, line = overrides[key], "option", None
        else:
            value, line = header[key]
            where = f"header line {line}"
        try:
            if key in _QUANTITY_KEYS:
                if key in overrides and isinstance(value, (int, float)):
                    parsed = float(value)  # options arrive parsed by the CLI
                else:
                    parsed = parse_condition(key, value)
                setattr(cond, _SI_NAME[key], parsed)
            elif key in _TEXT_KEYS:
                setattr(cond, key, _text_condition(key, value))
            else:
                raise InputError(f"unknown condition '{key}'")
        except InputError as exc:
            if line is None:
                raise InputError(str(exc), field=f"--{key}") from None
            raise InputError(str(exc), file=path, line=line, field=key) from None
        cond.origin[key] = where
    return cond


def _open(path: str, keys, overrides, on_progress):
    """Start reading a data file: (lines, conditions, columns, header row, its line, remaining lines)."""
    lines = _Lines(path, on_progress)
    header, header_row, hline, rest = _split(lines, keys)
    cond = _conditions(path, header, overrides)
    cols = _columns(_header_row_cells(header_row), lines, hline)
    return lines, cond, cols, header_row, hline, rest


# --- breakdown series -------------------------------------------------------------------------------------------

_BREAKDOWN_COLUMNS = {"field", "voltage", "thickness", "censored"}
_BREAKDOWN_TEXT_COLUMNS = {"specimen", "id", "note"}
_FIELD_RANGE = (PROPERTIES["breakdown_field"].low, PROPERTIES["breakdown_field"].high)


def read_breakdown(path, overrides: dict | None = None, *,
                   on_progress: Callable[[int], None] | None = None) -> BreakdownFile:
    """Read a breakdown series: fields at breakdown (V/m), censored flags and per-specimen thickness (m).

    Args:
        path: the CSV file.
        overrides: conditions from the command line (``thickness``, ``area``, ``temperature``, ``ramp`` as SI
            floats; ``waveform``, ``operator``, ``lab``, ``date``, ``kind``, ``label`` as text); they win over the
            file's header block.
        on_progress: called now and then with the number of bytes read so far.

    Raises:
        InputError: naming file, line and column, for any problem of encoding, layout, units or values.
    """
    path = str(path)
    lines, cond, cols, header_row, hline, rest = _open(path, BREAKDOWN_KEYS, overrides, on_progress)
    by_name = {}
    for name, unit, heading, idx in cols:
        if name not in _BREAKDOWN_COLUMNS | _BREAKDOWN_TEXT_COLUMNS:
            raise lines.error(f"unknown column '{heading}' (a breakdown series has field [UNIT] or voltage [UNIT], "
                              "and optional thickness [UNIT], censored)", line=hline, field=heading)
        by_name[name] = (unit, heading, idx)
    if "field" in by_name and "voltage" in by_name:
        raise lines.error("ambiguous: both a 'field' and a 'voltage' column; keep one", line=hline,
                          field=by_name["voltage"][1])
    if "field" not in by_name and "voltage" not in by_name:
        raise lines.error("no 'field [UNIT]' or 'voltage [UNIT]' column", line=hline, field="field")
    spec = {"field": ("V/m", "field [V/um]"), "voltage": ("V", "voltage [kV]"), "thickness": ("m", "thickness [um]")}
    columns = {}
    for name, (unit, heading, idx) in by_name.items():
        if name in spec:
            si, example = spec[name]
            scale = _unit_scale(unit, si, what=example, heading=heading, lines=lines, line=hline)
            columns[name] = _Column(name, heading, unit, idx, scale)
        elif name == "censored":
            if unit is not None:
                raise lines.error("the 'censored' column takes 0 or 1 and no unit", line=hline, field=heading)
            columns[name] = _Column(name, heading, None, idx)
    if "voltage" in columns and "thickness" not in columns and cond.thickness_m is None:
        raise lines.error("a 'voltage' column needs a 'thickness [UNIT]' column, a '# thickness:' header line or "
                          "--thickness", line=hline, field=columns["voltage"].heading)

    main = columns.get("field") or columns["voltage"]
    thick = columns.get("thickness")
    cens = columns.get("censored")
    values, flags, thicknesses = [], [], []
    set_d = cond.thickness_m
    mi, mscale, per_volt = main.index, main.scale, main.name == "voltage"
    ci = cens.index if cens is not None else None
    lo, hi = _FIELD_RANGE
    # the common case stays on a short path; anything odd goes to the checks that say what is wrong
    for cells in _rows(rest, header_row, lines, len(cols)):
        cell = cells[mi]
        try:
            x = float(cell) * mscale
        except ValueError:
            raise _cell_error(cell, main, lines) from None
        if thick is not None:
            d = _positive(cells[thick.index], thick, lines) * thick.scale
            if not 1e-9 <= d <= 1e-2:
                raise lines.error(f"thickness {cells[thick.index].strip()} {thick.unit} is outside the plausible "
                                  f"range 1 nm…10 mm (a unit slip?) (column {thick.index + 1})", field=thick.heading)
            thicknesses.append(d)
        else:
            d = set_d
        if per_volt:
            x = x / d
        if not lo <= x <= hi or "_" in cell:
            _refuse_field(cell, x, main, lines)
        values.append(x)
        if ci is not None:
            c = cells[ci]
            if c == "0" or c == "1":
                flags.append(c == "1")
            elif c.strip() in ("0", "1"):
                flags.append(c.strip() == "1")
            else:
                raise lines.error(f"censored must be 0 or 1, got '{c.strip()}' (column {ci + 1})",
                                  field=cens.heading)
    if not values:
        raise InputError("the file has column headings but no data rows", file=path, line=hline)
    fields = np.asarray(values, dtype=float)
    censored = np.asarray(flags, dtype=bool) if cens is not None else np.zeros(fields.size, dtype=bool)
    if fields.size < MIN_SPECIMENS:
        raise InputError(f"a breakdown series needs at least {MIN_SPECIMENS} specimens, the file has {fields.size}",
                         file=path, line=lines.line)
    if int((~censored).sum()) < 2:
        raise InputError(f"a Weibull fit needs at least 2 specimens that broke down; {int(censored.sum())} of "
                         f"{fields.size} are censored", file=path, line=lines.line,
                         field=cens.heading if cens else None)
    thickness = np.asarray(thicknesses, dtype=float) if thick is not None else None
    if cond.thickness_m is None and thickness is not None:
        cond.thickness_m = float(thickness.mean())
        cond.origin["thickness"] = "mean of the thickness column"
    return BreakdownFile(path=path, sha256=lines.sha256, conditions=cond, fields_V_per_m=fields,
                         censored=censored, thickness_m=thickness)


def _refuse_field(cell: str, x: float, col: _Column, lines: _Lines) -> None:
    """Raise the error for a field cell that failed the quick check (``x`` is its field in V/m)."""
    _positive(cell, col, lines)
    shown = f"{x / 1e6:g} V/µm"
    raise lines.error(f"breakdown field {shown} is outside the plausible range {_FIELD_RANGE[0] / 1e6:g}…"
                      f"{_FIELD_RANGE[1] / 1e6:g} V/µm (a unit slip?) (column {col.index + 1})", field=col.heading)


def _number(cell: str, col: _Column, lines: _Lines) -> float:
    try:
        v = float(cell)
    except ValueError:
        raise _cell_error(cell, col, lines) from None
    if not math.isfinite(v) or "_" in cell:
        raise lines.error(f"not a finite number: '{cell.strip()}' (column {col.index + 1})", field=col.heading)
    return v


def _positive(cell: str, col: _Column, lines: _Lines) -> float:
    v = _number(cell, col, lines)
    if v <= 0:
        what = "zero" if v == 0 else "negative"
        raise lines.error(f"{col.name} must be positive, got {what} '{cell.strip()}' (column {col.index + 1})",
                          field=col.heading)
    return v


# --- polarisation loops -----------------------------------------------------------------------------------------

_LOOP_IGNORED = {"time", "index", "point"}


def read_loop(path, overrides: dict | None = None, *,
              on_progress: Callable[[int], None] | None = None) -> LoopFile:
    """Read a polarisation–field loop in measured order: fields (V/m) and polarisations (C/m²).

    The loop must come back after its peak field to at most :data:`RETURN_FRACTION` of the peak (a charging ramp
    alone is not a loop), and its values must be plausible (|P| ≤ 2 C/m², peak field 0.1…5000 V/µm).

    Args:
        path: the CSV file.
        overrides: conditions from the command line (``thickness``, ``temperature``, ``frequency`` as SI floats;
            text conditions as text); they win over the header block.
        on_progress: called now and then with the number of bytes read so far.
    """
    path = str(path)
    lines, cond, cols, header_row, hline, rest = _open(path, LOOP_KEYS, overrides, on_progress)
    columns = {}
    for name, unit, heading, idx in cols:
        if name == "polarisation":
            name = "polarization"
        if name in _LOOP_IGNORED:
            continue
        if name not in ("field", "polarization"):
            raise lines.error(f"unknown column '{heading}' (a loop has field [UNIT] and polarization [UNIT])",
                              line=hline, field=heading)
        if name in columns:
            raise lines.error(f"duplicated column '{name}' (columns {columns[name].index + 1} and {idx + 1})",
                              line=hline, field=heading)
        si, example = {"field": ("V/m", "field [kV/cm]"), "polarization": ("C/m2", "polarization [uC/cm^2]")}[name]
        columns[name] = _Column(name, heading, unit, idx,
                                _unit_scale(unit, si, what=example, heading=heading, lines=lines, line=hline))
    for need in ("field", "polarization"):
        if need not in columns:
            raise lines.error(f"no '{need} [UNIT]' column", line=hline, field=need)
    fc, pc = columns["field"], columns["polarization"]
    es, ps, row_lines = [], [], []
    for cells in _rows(rest, header_row, lines, len(cols)):
        e = _number(cells[fc.index], fc, lines) * fc.scale
        p = _number(cells[pc.index], pc, lines) * pc.scale
        if abs(e) > _FIELD_RANGE[1]:
            raise lines.error(f"field {e / 1e6:g} V/µm is beyond any dielectric's breakdown (a unit slip?) "
                              f"(column {fc.index + 1})", field=fc.heading)
        if abs(p) > MAX_POLARIZATION_C_PER_M2:
            raise lines.error(f"polarization {p * 100:g} µC/cm² is beyond the plausible "
                              f"{MAX_POLARIZATION_C_PER_M2 * 100:g} µC/cm² (a unit slip?) (column {pc.index + 1})",
                              field=pc.heading)
        es.append(e)
        ps.append(p)
        row_lines.append(lines.line)
    if not es:
        raise InputError("the file has column headings but no data rows", file=path, line=hline)
    if len(es) < MIN_LOOP_POINTS:
        raise InputError(f"a loop needs at least {MIN_LOOP_POINTS} samples, the file has {len(es)}", file=path,
                         line=lines.line)
    e_arr, p_arr = np.asarray(es, dtype=float), np.asarray(ps, dtype=float)
    mag = np.abs(e_arr)
    peak_i = int(np.argmax(mag))
    peak = float(mag[peak_i])
    if peak < _FIELD_RANGE[0]:
        raise InputError(f"the loop's largest field is {peak / 1e6:g} V/µm, implausibly low for a loop "
                         f"(a unit slip?)", file=path, line=row_lines[peak_i], field=fc.heading)
    after = float(mag[peak_i:].min())
    if after > RETURN_FRACTION * peak:
        raise InputError(f"the loop never returns toward zero field: after its peak of {peak / 1e6:g} V/µm (line "
                         f"{row_lines[peak_i]}) the field stays at or above {after / 1e6:g} V/µm; measure the "
                         "discharge branch too", file=path, line=row_lines[-1], field=fc.heading)
    return LoopFile(path=path, sha256=lines.sha256, conditions=cond, fields_V_per_m=e_arr,
                    polarization_C_per_m2=p_arr)


# --- flat value tables for `holdoff add` ------------------------------------------------------------------------

_VALUE_TABLE_TEXT = ("material", "name", "family", "form", "description", "response", "property", "unit",
                     "source", "note")
_VALUE_TABLE_NUMBERS = ("value", "low", "high")
_VALUE_TABLE_CONDITIONS = ("temperature", "frequency", "field", "thickness", "area")
_CONDITION_EXAMPLE_UNIT = {"temperature": "degC", "frequency": "Hz", "field": "V/um", "thickness": "um",
                           "area": "cm^2"}


def read_value_table(path, sources: dict) -> list:
    """Material records from a flat CSV, one row per value, validated like the catalog's TOML.

    Columns: ``material`` (key), ``name`` and ``family`` (on the material's first row at least; repeated values
    must agree), optional ``form``, ``description``, ``response``; ``property``, ``value``, optional ``low``,
    ``high``; the value's unit either in the heading (``value [V/um]``, for a file of one dimension) or in a
    ``unit`` column per row (not both); conditions with their unit in the heading (``temperature [degC]``,
    ``frequency [kHz]``, ``field [V/um]``, ``thickness [um]``, ``area [cm^2]``); ``source`` (a key of
    ``sources``); ``note``. Empty cells mean "not stated".

    Returns:
        A list of :class:`materials.records.MaterialRec` (origin ``user``), in file order.
    """
    from materials.catalog_io import SLUG, _FieldError, _value_rec, _VALUE_KEYS
    from materials.properties import FAMILIES, RESPONSES
    from materials.records import MaterialRec

    path = str(path)
    lines = _Lines(path)
    header, header_row, hline, rest = _split(lines, ("note",))
    cols = _columns(_header_row_cells(header_row), lines, hline)
    by_name: dict[str, tuple[str | None, str, int]] = {}
    known = set(_VALUE_TABLE_TEXT) | set(_VALUE_TABLE_NUMBERS) | set(_VALUE_TABLE_CONDITIONS)
    for name, unit, heading, idx in cols:
        if name not in known:
            raise lines.error(f"unknown column '{heading}' (known: {', '.join(sorted(known))})", line=hline,
                              field=heading)
        if name in _VALUE_TABLE_TEXT and unit is not None:
            raise lines.error(f"column '{name}' takes no unit", line=hline, field=heading)
        if name in _VALUE_TABLE_CONDITIONS and unit is None:
            raise lines.error(f"condition column '{name}' needs its unit in brackets, e.g. '{name} "
                              f"[{_CONDITION_EXAMPLE_UNIT[name]}]'", line=hline, field=heading)
        by_name[name] = (unit, heading, idx)
    for need in ("material", "property", "value", "source"):
        if need not in by_name:
            raise lines.error(f"no '{need}' column", line=hline, field=need)
    value_unit = by_name["value"][0]
    if "unit" in by_name and value_unit is not None:
        raise lines.error("ambiguous units: the value's unit is in its heading and in a 'unit' column; keep one",
                          line=hline, field=by_name["value"][1])
    for f in ("low", "high"):
        if f in by_name and by_name[f][0] != value_unit and by_name[f][0] is not None:
            raise lines.error(f"mixed units: '{by_name[f][1]}' and '{by_name['value'][1]}' differ; low and high "
                              "take the value's unit", line=hline, field=by_name[f][1])

    records: dict[str, MaterialRec] = {}
    seen_lines: dict[tuple, int] = {}
    for cells in _rows(rest, header_row, lines, len(cols)):
        row = {name: cells[idx].strip() for name, (_, _, idx) in by_name.items()}
        line = lines.line
        key = row["material"]
        if not SLUG.match(key):
            raise lines.error(f"material key '{key}' is not a lower-case slug", field="material")
        rec = records.get(key)
        if rec is None:
            for f in ("name", "family"):
                if not row.get(f):
                    raise lines.error(f"the first row of material '{key}' needs its {f}", field=f)
            if row["family"] not in FAMILIES:
                raise lines.error(f"family '{row['family']}' is not one of {', '.join(FAMILIES)}", field="family")
            response = row.get("response") or "linear"
            if response not in RESPONSES:
                raise lines.error(f"response '{response}' is not linear or nonlinear", field="response")
            rec = MaterialRec(key=key, name=row["name"], family=row["family"], form=row.get("form", ""),
                              description=row.get("description", ""), origin="user", response=response)
            records[key] = rec
        else:
            for f in ("name", "family", "form", "description", "response"):
                if row.get(f) and row[f] != getattr(rec, f):
                    raise lines.error(f"{f} '{row[f]}' disagrees with '{getattr(rec, f)}' given earlier for "
                                      f"material '{key}'", field=f)
        body = {"property": row["property"], "source": row["source"]}
        unit = value_unit if value_unit is not None else row.get("unit", "")
        if unit:
            body["unit"] = unit
        for f in _VALUE_TABLE_NUMBERS:
            if row.get(f):
                col = _Column(f, by_name[f][1], unit or None, by_name[f][2])
                body[f] = _number(row[f], col, lines)
        if row.get("note"):
            body["note"] = row["note"]
        for f in _VALUE_TABLE_CONDITIONS:
            if row.get(f):
                cunit, heading, idx = by_name[f]
                _number(row[f], _Column(f, heading, cunit, idx), lines)
                body[f] = f"{row[f]} {cunit}"
        try:
            v = _value_rec(body, family=rec.family, sources=sources, allowed=_VALUE_KEYS)
        except _FieldError as exc:
            heading = by_name.get(exc.field, (None, exc.field))[1]
            raise InputError(exc.message.replace("sources.toml", "the store or a sources.toml given"),
                             file=path, line=line, field=heading) from None
        ident = (key,) + v.identity() + (v.source,)
        if ident in seen_lines:
            raise InputError(f"duplicates the value on line {seen_lines[ident]} (same material, property, "
                             "conditions and source)", file=path, line=line, field="property")
        seen_lines[ident] = line
        rec.values.append(v)
    if not records:
        raise InputError("the file has column headings but no data rows", file=path, line=hline)
    return list(records.values())
