"""Polarisation–field loop files: field and polarisation samples in measured order."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import numpy as np

from materials.errors import InputError
from materials.labfiles.breakdown import _FIELD_RANGE
from materials.labfiles.columns import _Column, _no_rows, _number, _open, _rows, _unit_scale
from materials.labfiles.header import LOOP_KEYS, Conditions

#: Fewest samples in a loop.
MIN_LOOP_POINTS = 5
#: A loop must come back, after its peak, to at most this fraction of its peak field ("toward zero").
RETURN_FRACTION = 0.2
#: Largest plausible polarisation magnitude, C/m² (200 µC/cm²; the strongest ferroelectrics saturate below it).
MAX_POLARIZATION_C_PER_M2 = 2.0
_LOOP_IGNORED = {"time", "index", "point"}


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
        raise _no_rows(path, hline)
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
