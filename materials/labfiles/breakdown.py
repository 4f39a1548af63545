"""Breakdown series files: one breakdown (or test-stop) field per specimen, censored flags, thicknesses."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import numpy as np

from materials.errors import InputError
from materials.labfiles.columns import _cell_error, _Column, _no_rows, _open, _positive, _rows, _unit_scale
from materials.labfiles.header import BREAKDOWN_KEYS, Conditions
from materials.labfiles.source import _Lines
from materials.properties import PROPERTIES

#: Fewest specimens in a breakdown series (a fit needs at least two failures; three specimens is the least
#: that says anything about scatter).
MIN_SPECIMENS = 3
_BREAKDOWN_COLUMNS = {"field", "voltage", "thickness", "censored"}
_BREAKDOWN_TEXT_COLUMNS = {"specimen", "id", "note"}
_FIELD_RANGE = (PROPERTIES["breakdown_field"].low, PROPERTIES["breakdown_field"].high)


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
        if not lo <= x <= hi or "_" in cell or not cell.isascii():
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
        raise _no_rows(path, hline)
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

