"""A property's value at a condition, from the rows a material holds.

Piecewise-linear interpolation over temperature (and over DC-bias field for a bias curve). Asking outside the
range the data cover is refused unless extrapolation is asked for; then the end value is held and the answer is
flagged. The answer carries the rows (and so the sources) it came from.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field

from materials.errors import DataError
from materials.records import MaterialData, StoredValue

# When several rows give a property at the same condition, the more direct evidence wins.
TIER = {"lab": 0, "standard": 1, "handbook": 2, "paper": 3, "web": 4, "common-practice": 5, "recollection": 6,
        "invented": 7}
# Scores per source kind for the data-confidence criterion (1 = measured or standardised, 0 = demo data).
CONFIDENCE = {"lab": 1.0, "standard": 1.0, "handbook": 0.9, "paper": 0.85, "web": 0.7, "common-practice": 0.6,
              "recollection": 0.35, "invented": 0.1}
REFERENCE_TEMPERATURE_K = 298.15
REFERENCE_FREQUENCY_HZ = 1e3


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


def _best(rows: list[StoredValue]) -> StoredValue:
    """The row to trust among rows at one condition: the more direct evidence first; then a row that states no
    thickness (a general figure), else the thickest specimen (breakdown falls with thickness, so the conservative
    one); then the first entered."""
    return min(rows, key=lambda r: (TIER.get(r.source.kind, 9), r.thickness_m is not None, -(r.thickness_m or 0.0),
                                    r.id))


def _pick_frequency(rows: list[StoredValue], frequency_Hz: float | None) -> list[StoredValue]:
    """Rows at the stated frequency nearest (on a log scale) to the one asked; unstated only if nothing else."""
    stated = [r for r in rows if r.frequency_Hz]
    if not stated:
        return rows
    want = frequency_Hz or REFERENCE_FREQUENCY_HZ
    best = min({r.frequency_Hz for r in stated}, key=lambda f: (abs(math.log(f / want)), f))
    return [r for r in stated if r.frequency_Hz == best] + [r for r in rows if not r.frequency_Hz]


def _interp(xs, ys, x):
    """np.interp for short lists (ends held), in plain Python: a curve has a handful of points."""
    import bisect

    if x <= xs[0]:
        return float(ys[0])
    if x >= xs[-1]:
        return float(ys[-1])
    j = bisect.bisect_right(xs, x)
    x0, x1 = xs[j - 1], xs[j]
    return float(ys[j - 1] + (ys[j] - ys[j - 1]) * (x - x0) / (x1 - x0))


class _Curve:
    """Rows of one property prepared once for interpolation over ``attr``; rows without it are one unstated point."""

    __slots__ = ("rows", "attr", "with_x", "unstated", "xs", "pts", "vals", "lows", "highs")

    def __init__(self, rows: list[StoredValue], attr: str):
        self.rows, self.attr = rows, attr
        self.with_x = [r for r in rows if getattr(r, attr) is not None]
        pool = [r for r in rows if getattr(r, attr) is None] or rows
        self.unstated = _best(pool)
        by_x: dict[float, list[StoredValue]] = {}
        for r in self.with_x:
            by_x.setdefault(getattr(r, attr), []).append(r)
        self.xs = sorted(by_x)
        self.pts = [_best(by_x[k]) for k in self.xs]
        self.vals = [p.value for p in self.pts]
        self.lows = [p.low if p.low is not None else p.value for p in self.pts]
        self.highs = [p.high if p.high is not None else p.value for p in self.pts]

    def at(self, x: float | None, *, prop: str, extrapolate: bool, what) -> ValueAt:
        if not self.with_x or x is None:
            if x is None and self.with_x and self.attr == "temperature_K":
                return self.at(REFERENCE_TEMPERATURE_K, prop=prop, extrapolate=True, what=what)
            r = self.unstated
            return ValueAt(prop, r.value, r.low if r.low is not None else r.value,
                           r.high if r.high is not None else r.value, False, (r,), None)
        xs, pts = self.xs, self.pts
        lo_x, hi_x = xs[0], xs[-1]
        tol = 1e-9 * max(1.0, abs(hi_x))
        outside = x < lo_x - tol or x > hi_x + tol
        if outside and not extrapolate:
            raise DataError(f"{prop} is known only over {what(lo_x)}…{what(hi_x)}; {what(x)} is outside the data "
                            "(ask for extrapolation to hold the end value)")
        # The rows that bracket x are the evidence for the answer.
        i = max(0, min(len(xs) - 1, sum(1 for k in xs if k <= x) - 1))
        used = (pts[i],) if (x <= lo_x or x >= hi_x or abs(xs[i] - x) <= tol) else (pts[i], pts[i + 1])
        return ValueAt(prop, _interp(xs, self.vals, x), _interp(xs, self.lows, x), _interp(xs, self.highs, x),
                       bool(outside), used, (lo_x, hi_x))


def _curve(rows: list[StoredValue], attr: str, x: float | None, *, prop: str, extrapolate: bool,
           what) -> ValueAt:
    """Interpolate ``rows`` over ``attr`` at ``x``; rows without the attribute count as one unstated point."""
    return _Curve(rows, attr).at(x, prop=prop, extrapolate=extrapolate, what=what)


def _fmt_T(t):
    return f"{t - 273.15:g} °C"


def _fmt_E(e):
    return f"{e / 1e6:g} V/µm"


def small_signal_rows(rows: list[StoredValue]) -> list[StoredValue]:
    """Rows with no bias field (or zero): the small-signal value."""
    return [r for r in rows if not r.field_V_per_m]


def value_at(material: MaterialData, prop: str, *, temperature_K: float | None = None,
             field_V_per_m: float | None = None, frequency_Hz: float | None = None,
             extrapolate: bool = False) -> ValueAt:
    """The value of ``prop`` for ``material`` at a temperature (K) and, for a bias curve, a field (V/m).

    Lab rows, where there are any, stand alone: a lab's own measurement of its own material supersedes the
    catalog's generic value. Raises DataError if the property is missing or the condition is outside the data.
    """
    if not field_V_per_m:
        curve = _temperature_curve(material, prop, frequency_Hz)
        if curve is None:
            raise DataError(f"{material.key} has no {prop}")
        return curve.at(temperature_K, prop=prop, extrapolate=extrapolate, what=_fmt_T)
    rows = material.rows(prop)
    if not rows:
        raise DataError(f"{material.key} has no {prop}")
    lab = [r for r in rows if r.source.kind == "lab"]
    rows = lab or rows
    rows = _pick_frequency(rows, frequency_Hz)
    if field_V_per_m:
        bias = [r for r in rows if r.field_V_per_m is not None]
        if not bias:
            raise DataError(f"{material.key} has no {prop} under DC bias")
        temps = {r.temperature_K for r in bias}
        if len(temps) > 1:
            want = temperature_K or REFERENCE_TEMPERATURE_K
            near = min((t for t in temps if t is not None), key=lambda t: abs(t - want))
            bias = [r for r in bias if r.temperature_K == near]
        first = min(r.field_V_per_m for r in bias)
        small = small_signal_rows(rows)
        if 0 < field_V_per_m < first and small:
            # Below the first bias point the curve runs to the small-signal value at zero field, which is data.
            zero = value_at(material, prop, temperature_K=temperature_K, frequency_Hz=frequency_Hz,
                            extrapolate=extrapolate)
            end = _best([r for r in bias if r.field_V_per_m == first])
            w = field_V_per_m / first

            def lerp(a, b):
                return a + (b - a) * w

            return ValueAt(prop, lerp(zero.value, end.value),
                           lerp(zero.low, end.low if end.low is not None else end.value),
                           lerp(zero.high, end.high if end.high is not None else end.value), zero.extrapolated,
                           zero.rows + (end,), (0.0, max(r.field_V_per_m for r in bias)))
        return _curve(bias, "field_V_per_m", field_V_per_m, prop=prop, extrapolate=extrapolate, what=_fmt_E)
    rows = small_signal_rows(rows) or rows
    return _curve(rows, "temperature_K", temperature_K, prop=prop, extrapolate=extrapolate, what=_fmt_T)


def _temperature_curve(material: MaterialData, prop: str, frequency_Hz: float | None) -> _Curve | None:
    """The small-signal temperature curve of ``prop``, prepared once per material, property and frequency."""
    cache = material.cache()
    key = ("T", prop, frequency_Hz)
    if key not in cache:
        rows = material.rows(prop)
        if rows:
            rows = [r for r in rows if r.source.kind == "lab"] or rows
            rows = _pick_frequency(rows, frequency_Hz)
            rows = small_signal_rows(rows) or rows
        cache[key] = _Curve(rows, "temperature_K") if rows else None
    return cache[key]


def bias_curve(material: MaterialData, *, temperature_K: float | None = None):
    """(fields V/m, differential εr, rows) of the DC-bias curve, including the zero-field point; None if absent."""
    rows = [r for r in material.rows("relative_permittivity") if r.field_V_per_m]
    if not rows:
        return None
    temps = {r.temperature_K for r in rows}
    if len(temps) > 1:
        want = temperature_K or REFERENCE_TEMPERATURE_K
        near = min((t for t in temps if t is not None), key=lambda t: abs(t - want))
        rows = [r for r in rows if r.temperature_K == near]
    by_e: dict[float, StoredValue] = {}
    for r in rows:
        if r.field_V_per_m not in by_e or TIER.get(r.source.kind, 9) < TIER.get(by_e[r.field_V_per_m].source.kind, 9):
            by_e[r.field_V_per_m] = r
    zero = value_at(material, "relative_permittivity", temperature_K=temperature_K, extrapolate=True)
    fields = [0.0] + sorted(by_e)
    eps = [zero.value] + [by_e[e].value for e in sorted(by_e)]
    return fields, eps, list(zero.rows) + [by_e[e] for e in sorted(by_e)]


def temperature_points(material: MaterialData, props) -> list[float]:
    """Every temperature (K) at which any of ``props`` has a row: the data points of the worst-case grid."""
    return sorted({r.temperature_K for p in props for r in material.rows(p) if r.temperature_K is not None})


def reference_value(material: MaterialData, prop: str) -> float | None:
    """The value used by ``--where`` filters: small-signal, nearest 25 °C and 1 kHz; None if missing."""
    try:
        return value_at(material, prop, extrapolate=True).value
    except DataError:
        return None
