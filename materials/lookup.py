"""A property's value at a condition, for every material of a :class:`ValueTable` at once (one material is a
table of one row).

The reading rules, written once:

* a material's lab rows alone where it has any (a lab's own measurement supersedes the catalog's generic value);
* where frequencies are stated, the rows at the stated frequency nearest the one asked (log scale, the lower of two
  equally near; 1 kHz when none is asked) plus the rows that state none;
* small-signal rows (no bias field) where the material has any;
* at one temperature the row of the more direct evidence (:data:`TIER`), then one that states no thickness (a
  general figure), else the thickest specimen (breakdown falls with thickness: the conservative one), then the
  first entered;
* piecewise-linear interpolation between temperatures; outside the data the end value is held and flagged
  (``extrapolated``), and the single-material :func:`value_at` refuses it unless asked;
* permittivity over temperature from a stated band of capacitance change (a class code's limits, e.g. −15 … +15 %
  against 25 °C over −55 … 125 °C) where the band is stronger evidence than the permittivity's own temperature
  curve: the 25 °C value, and anywhere else in the band's span that value at the band's lowest end (the band
  bounds the change at every temperature of its span, so this is the most the data guarantee); ``banded`` marks
  it.

DC-bias curves (:func:`bias_curves`) are read the same way at the temperature asked: the bias rows at the stated
temperature nearest to it, one row per field by evidence, and the small-signal value at that temperature as the
zero-field point.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from materials.errors import DataError
from materials.reading import (  # noqa: F401 - the column-wise reading, re-exported as the lookup's API
    CONFIDENCE, REFERENCE_FREQUENCY_HZ, REFERENCE_TEMPERATURE_K, TIER, BiasCurves, Curve, Lookup, Reader,
    bias_curves, fmt_field, fmt_temperature, outside_data_message, pick_rows,
    reference_values, row_sources)
from materials.records import MaterialData, StoredValue
from materials.table import ValueTable


# --- one material -------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class ValueAt:
    """A value at a condition (SI), its range, whether it was extrapolated, and the rows behind it."""

    property: str
    value: float
    low: float
    high: float
    extrapolated: bool = False
    rows: tuple[StoredValue, ...] = field(default_factory=tuple)
    covered: tuple[float, float] | None = None  # abscissa range of the data (K or V/m), None if a single value
    lent: bool = False   # the shape over temperature comes from weaker evidence, anchored to the stronger value
    banded: bool = False  # taken at the lowest end of a stated band of capacitance change over temperature

    @property
    def sources(self) -> list[str]:
        seen = []
        for r in self.rows:
            if r.source.key not in seen:
                seen.append(r.source.key)
        return seen

    @property
    def confidence(self) -> float:
        return min((CONFIDENCE.get(r.source.kind, 0.0) for r in self.rows), default=0.0)


def reader_of(material: MaterialData) -> tuple[Reader, list[StoredValue]]:
    """A one-material table of ``material`` and its rows in table order, prepared once per state of its values."""
    cache = material.cache()
    if "reader" not in cache:
        t = ValueTable.from_materials([material])
        cache["reader"] = (Reader(t), t.materials([0])[0].values)
    return cache["reader"]


def _stored(rows: list[StoredValue], *idx) -> tuple[StoredValue, ...]:
    return tuple(rows[int(i)] for i in idx if i >= 0)


def value_at(material: MaterialData, prop: str, *, temperature_K: float | None = None,
             field_V_per_m: float | None = None, frequency_Hz: float | None = None,
             extrapolate: bool = False) -> ValueAt:
    """The value of ``prop`` for ``material`` at a temperature (K) and, for a bias curve, a field (V/m).

    Read by the rules of this module (the same code that reads a whole store). Raises DataError if the property
    is missing or the condition lies outside the data and ``extrapolate`` is not asked for.
    """
    r, stored = reader_of(material)
    if field_V_per_m:
        return _bias_value_at(material, r, stored, prop, temperature_K, field_V_per_m, extrapolate)
    lk = r.at(prop, temperature_K, frequency_Hz=frequency_Hz)
    if not lk.present[0]:
        raise DataError(f"{material.key} has no {prop}")
    if lk.extrapolated[0] and not extrapolate and temperature_K is not None:
        raise DataError(outside_data_message(prop, lk.lo_x[0], lk.hi_x[0], temperature_K))
    covered = None if np.isnan(lk.lo_x[0]) else (float(lk.lo_x[0]), float(lk.hi_x[0]))
    return ValueAt(prop, float(lk.value[0]), float(lk.low[0]), float(lk.high[0]), bool(lk.extrapolated[0]),
                   _stored(stored, lk.used0[0], lk.used1[0], lk.shape0[0], lk.shape1[0]), covered, bool(lk.lent[0]),
                   bool(lk.banded[0]))


def _bias_value_at(material, r, stored, prop, temperature_K, e, extrapolate) -> ValueAt:
    if prop != "relative_permittivity":
        raise DataError(f"{material.key} has no {prop} under DC bias")
    bc = bias_at(material, temperature_K=temperature_K)
    if bc is None:
        raise DataError(f"{material.key} has no {prop} under DC bias")
    n = int(bc.n[0])
    xs = bc.fields[0, :n]
    first, top = xs[1], xs[-1]
    if e > top * (1 + 1e-9) and not extrapolate:
        raise DataError(outside_data_message(prop, first, top, e, fmt_field))
    j = int(np.clip(np.searchsorted(xs, e, side="right"), 1, n - 1))
    if e >= top:
        used = (bc.row[0, n - 1],)
    elif abs(xs[j - 1] - e) <= 1e-9 * top:
        used = (bc.row[0, j - 1],)
    else:
        used = (bc.row[0, j - 1], bc.row[0, j])

    def interp(a):
        return float(np.interp(e, xs, a[0, :n]))

    return ValueAt(prop, interp(bc.eps), interp(bc.low), interp(bc.high), bool(e > top * (1 + 1e-9)),
                   _stored(stored, *used), (float(first), float(top)))


def bias_at(material: MaterialData, *, temperature_K: float | None = None) -> BiasCurves | None:
    """The one-row :class:`BiasCurves` of ``material`` at ``temperature_K`` (25 °C if None); None if absent."""
    r, _ = reader_of(material)
    t = np.array([REFERENCE_TEMPERATURE_K if temperature_K is None else temperature_K])
    zero = r.at("relative_permittivity", t)
    if not zero.present[0]:
        return None
    bc = bias_curves(r, t, zero)
    return bc if bc.n[0] else None


def bias_curve(material: MaterialData, *, temperature_K: float | None = None):
    """(fields V/m, differential εr, rows) of the DC-bias curve, including the zero-field point; None if absent."""
    bc = bias_at(material, temperature_K=temperature_K)
    if bc is None:
        return None
    _, stored = reader_of(material)
    n = int(bc.n[0])
    return (bc.fields[0, :n].tolist(), bc.eps[0, :n].tolist(), list(_stored(stored, *bc.row[0, :n])))


def temperature_points(material: MaterialData, props) -> list[float]:
    """Every temperature (K) at which any of ``props`` has a row: the data points of the worst-case grid."""
    return sorted({r.temperature_K for p in props for r in material.rows(p) if r.temperature_K is not None})


def reference_value(material: MaterialData, prop: str) -> float | None:
    """The value used by ``--where`` filters: small-signal, nearest 25 °C and 1 kHz; None if missing."""
    try:
        return value_at(material, prop, extrapolate=True).value
    except DataError:
        return None
