"""Endurance (time-to-failure) files: one unit per row, its time to failure or to the end of the test, its stress
(voltage or field) and optionally its temperature and a censored flag."""

from __future__ import annotations

from dataclasses import dataclass
from typing import Callable

import numpy as np

from materials.errors import InputError, UnitError
from materials.labfiles.columns import _Column, _no_rows, _number, _open, _positive, _rows, _unit_scale
from materials.labfiles.header import _CONDITION_RANGE, ENDURANCE_KEYS, Conditions
from materials.units import to_si

#: Fewest units in an endurance set (a life-stress fit needs failures at two stress levels at least).
MIN_UNITS = 4
_STRESS = {"voltage": ("V", "voltage [V]"), "field": ("V/m", "field [V/um]")}
_TEXT_COLUMNS = {"specimen", "id", "note"}
_KNOWN = {"time", "voltage", "field", "temperature", "censored"} | _TEXT_COLUMNS


@dataclass
class EnduranceFile:
    """A parsed endurance set: times (s), stresses (V, or V/m for a field), temperatures (K) or None, censored."""

    path: str
    sha256: str
    conditions: Conditions
    stress_kind: str              # "voltage" or "field"
    times_s: np.ndarray
    stress: np.ndarray
    censored: np.ndarray
    temperatures_K: np.ndarray | None = None

    @property
    def n(self) -> int:
        return int(self.times_s.size)

    @property
    def n_censored(self) -> int:
        return int(self.censored.sum())

    def fit_temperatures(self) -> np.ndarray | None:
        """Per-unit temperatures for the fit: the column when the units ran at 2 or more temperatures, else None
        (one temperature adds no Arrhenius term)."""
        t = self.temperatures_K
        return t if t is not None and np.unique(t).size > 1 else None


def read_endurance(path, overrides: dict | None = None, *,
                   on_progress: Callable[[int], None] | None = None) -> EnduranceFile:
    """Read an endurance set: ``time [UNIT]``, ``voltage [UNIT]`` or ``field [UNIT]``, optional
    ``temperature [UNIT]`` (°C allowed) and ``censored`` (0/1: 1 = still working when the test stopped).

    A set temperature (header ``# temperature:`` or ``--temp``) stands for every unit when there is no temperature
    column. Raises :class:`InputError` naming file, line and column for any problem.
    """
    path = str(path)
    lines, cond, cols, header_row, hline, rest = _open(path, ENDURANCE_KEYS, overrides, on_progress)
    by_name = {}
    for name, unit, heading, idx in cols:
        if name not in _KNOWN:
            raise lines.error(f"unknown column '{heading}' (an endurance set has time [UNIT], voltage [UNIT] or "
                              "field [UNIT], and optional temperature [UNIT], censored)", line=hline, field=heading)
        by_name[name] = (unit, heading, idx)
    if "time" not in by_name:
        raise lines.error("no 'time [UNIT]' column", line=hline, field="time")
    kinds = [k for k in _STRESS if k in by_name]
    if len(kinds) != 1:
        raise lines.error("give one stress column: 'voltage [UNIT]' or 'field [UNIT]'" if not kinds else
                          "ambiguous: both a 'voltage' and a 'field' column; keep one", line=hline,
                          field=by_name[kinds[-1]][1] if kinds else "voltage")
    kind = kinds[0]
    col = {}
    for name, (si, example) in {"time": ("s", "time [h]"), kind: _STRESS[kind]}.items():
        unit, heading, idx = by_name[name]
        col[name] = _Column(name, heading, unit, idx, _unit_scale(unit, si, what=example, heading=heading,
                                                                 lines=lines, line=hline))
    t_col = None
    if "temperature" in by_name:
        unit, heading, idx = by_name["temperature"]
        if unit is None:
            raise lines.error(f"column '{heading}' has no unit: write it in brackets, e.g. 'temperature [degC]'",
                              line=hline, field=heading)
        try:
            offset = to_si(0.0, unit, "K")
            t_col = _Column("temperature", heading, unit, idx, to_si(1.0, unit, "K") - offset)
        except UnitError as exc:
            raise lines.error(f"{exc} (column '{heading}')", line=hline, field=heading) from None
    c_col = None
    if "censored" in by_name:
        unit, heading, idx = by_name["censored"]
        if unit is not None:
            raise lines.error("the 'censored' column takes 0 or 1 and no unit", line=hline, field=heading)
        c_col = _Column("censored", heading, None, idx)
    times, stresses, temps, flags = [], [], [], []
    t_lo, t_hi, _ = _CONDITION_RANGE["temperature"]
    for cells in _rows(rest, header_row, lines, len(cols)):
        times.append(_positive(cells[col["time"].index], col["time"], lines) * col["time"].scale)
        stresses.append(_positive(cells[col[kind].index], col[kind], lines) * col[kind].scale)
        if t_col is not None:
            v = _number(cells[t_col.index], t_col, lines) * t_col.scale + offset
            if not t_lo <= v <= t_hi:
                raise lines.error(f"temperature {cells[t_col.index].strip()} {t_col.unit} is outside the plausible "
                                  f"range {t_lo:g}…{t_hi:g} K (column {t_col.index + 1})", field=t_col.heading)
            temps.append(v)
        if c_col is not None:
            c = cells[c_col.index].strip()
            if c not in ("0", "1"):
                raise lines.error(f"censored must be 0 or 1, got '{c}' (column {c_col.index + 1})",
                                  field=c_col.heading)
            flags.append(c == "1")
    if not times:
        raise _no_rows(path, hline)
    t = np.asarray(times, dtype=float)
    s = np.asarray(stresses, dtype=float)
    cens = np.asarray(flags, dtype=bool) if c_col is not None else np.zeros(t.size, dtype=bool)
    if t.size < MIN_UNITS:
        raise InputError(f"an endurance set needs at least {MIN_UNITS} units, the file has {t.size}", file=path,
                         line=lines.line)
    failed = ~cens
    if np.unique(s[failed]).size < 2:
        raise InputError("a life-stress fit needs failures at 2 or more stress levels; this file has failures at "
                         f"{np.unique(s[failed]).size}", file=path, line=lines.line, field=col[kind].heading)
    temperatures = np.asarray(temps, dtype=float) if t_col is not None else None
    if temperatures is None and cond.temperature_K is not None:
        temperatures = np.full(t.size, cond.temperature_K)
    elif temperatures is not None and cond.temperature_K is None and np.unique(temperatures).size == 1:
        cond.temperature_K = float(temperatures[0])
        cond.origin["temperature"] = "the temperature column"
    if kind == "voltage" and cond.thickness_m is None:
        cond.origin.setdefault("thickness", "not stated: the life exponent is in voltage")
    return EnduranceFile(path=path, sha256=lines.sha256, conditions=cond, stress_kind=kind, times_s=t, stress=s,
                         censored=cens, temperatures_K=temperatures)
