"""Reading a property's value for every material of a :class:`ValueTable` at once: the evidence order, the
temperature curves, DC-bias curves and the rows behind each answer. :mod:`materials.lookup` is the same reading
for one material; see its docstring for the rules.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from materials.table import ValueTable

# When several rows give a property at the same condition, the more direct evidence wins.
TIER = {"lab": 0, "standard": 1, "handbook": 2, "paper": 3, "web": 4, "common-practice": 5, "recollection": 6,
        "invented": 7}
# Scores per source kind for the data-confidence criterion (1 = measured or standardised, 0 = demo data).
CONFIDENCE = {"lab": 1.0, "standard": 1.0, "handbook": 0.9, "paper": 0.85, "web": 0.7, "common-practice": 0.6,
              "recollection": 0.35, "invented": 0.1}
REFERENCE_TEMPERATURE_K = 298.15
REFERENCE_FREQUENCY_HZ = 1e3


def fmt_temperature(t_K: float) -> str:
    from materials.numfmt import fmt_celsius

    return fmt_celsius(t_K)


def fmt_field(e_V_per_m: float) -> str:
    from materials.numfmt import fmt_number

    return f"{fmt_number(e_V_per_m / 1e6)} V/µm"


def outside_data_message(prop: str, lo, hi, x, what=fmt_temperature) -> str:
    """The words for a value asked outside the conditions its data cover."""
    return (f"{prop} is known only over {what(lo)}…{what(hi)}; {what(x)} is outside the data "
            "(--extrapolate holds the end value, flagged)")


# --- column-wise reading ------------------------------------------------------------------------------------


class Curve:
    """One property's rows of every material, prepared for interpolation over temperature.

    ``xs``/``row`` are ``(M, K)``: the temperatures of each material's points (+inf padding) and the row behind
    each (the row trusted at that temperature); ``unstated`` is the row used when no temperature applies (the best
    row stating none, or the best of all rows if every row states one); ``has`` whether the material holds the
    property at all; ``tier`` the strongest evidence tier among its rows that state a temperature.
    """

    def __init__(self, t: ValueTable, rows: np.ndarray, mat: np.ndarray, m: int, tier: np.ndarray):
        temp = t.temperature_K[rows]
        thick = t.thickness_m[rows]
        key_t = np.where(np.isnan(temp), np.inf, temp)
        order = np.lexsort((t.ids[rows], -np.nan_to_num(thick, nan=0.0), ~np.isnan(thick), tier[rows],
                            key_t, mat))
        rs, ms, ts = rows[order], mat[order], key_t[order]
        self.has = np.zeros(m, dtype=bool)
        self.has[ms] = True
        first = np.ones(rs.size, dtype=bool)
        first[1:] = (ms[1:] != ms[:-1]) | (ts[1:] != ts[:-1])
        stated = first & np.isfinite(ts)
        pm, pt, pr = ms[stated], ts[stated], rs[stated]
        self.n = np.bincount(pm, minlength=m)
        k = max(1, int(self.n.max()) if pm.size else 1)
        slot = np.arange(pm.size) - np.searchsorted(pm, pm)
        self.xs = np.full((m, k), np.inf)
        self.row = np.full((m, k), -1, dtype=np.int64)
        self.xs[pm, slot] = pt
        self.row[pm, slot] = pr
        # the strongest evidence among the rows that state a temperature (the tier of the curve's shape)
        self.tier = np.full(m, np.iinfo(np.int64).max)
        np.minimum.at(self.tier, pm, tier[pr])
        self.unstated = np.full(m, -1, dtype=np.int64)
        uns = first & ~np.isfinite(ts)
        self.unstated[ms[uns]] = rs[uns]
        need = self.has & (self.unstated < 0)
        if need.any():
            order2 = np.lexsort((t.ids[rows], -np.nan_to_num(thick, nan=0.0), ~np.isnan(thick), tier[rows], mat))
            r2, m2 = rows[order2], mat[order2]
            f2 = np.ones(r2.size, dtype=bool)
            f2[1:] = m2[1:] != m2[:-1]
            best_all = np.full(m, -1, dtype=np.int64)
            best_all[m2[f2]] = r2[f2]
            self.unstated[need] = best_all[need]


def _tolerance(end: np.ndarray) -> np.ndarray:
    """How far a condition may lie beyond the data's end ``end`` and still count as at it (rounding only)."""
    return 1e-9 * np.maximum(1.0, np.abs(end))


class Lookup:
    """Values of a :class:`Curve` for query materials ``q`` at temperatures ``x`` (NaN: none asked, read at 25 °C
    where the data state temperatures). ``used0``/``used1`` are the rows behind each answer (-1: none).

    With a ``weak`` curve and a ``lend`` mask (per material), a material whose strongest evidence states fewer than
    two temperatures takes the *shape* of its weaker curve anchored to the strongest value:
    ``v(T) = v_strong(T_a) · v_weak(T)/v_weak(T_a)``, with ``T_a`` the strong value's temperature (25 °C when it
    states none). ``lent`` marks those answers; ``shape0``/``shape1`` are the weaker rows that lent the shape.
    """

    def __init__(self, t: ValueTable, curve: Curve, q: np.ndarray, x: np.ndarray, *, weak: Curve | None = None,
                 lend: np.ndarray | None = None):
        self._read(t, curve, q, x)
        self.lent = np.zeros(q.size, dtype=bool)
        self.banded = np.zeros(q.size, dtype=bool)
        self.shape0 = self.shape1 = np.full(q.size, -1, dtype=np.int64)
        if weak is None or lend is None or not lend[q].any():
            return
        k = np.flatnonzero(lend[q])
        qk = q[k]
        anchor = np.where(curve.n[qk] > 0, curve.xs[qk, 0], REFERENCE_TEMPERATURE_K)
        at_x, at_a = _Read(t, weak, qk, x[k]), _Read(t, weak, qk, anchor)
        with np.errstate(all="ignore"):
            ratio = at_x.value / at_a.value
        ok = np.isfinite(ratio) & (at_a.value != 0)
        k, ratio, qk = k[ok], ratio[ok], qk[ok]
        base = _Read(t, curve, qk, anchor[ok])
        self.value[k], self.low[k], self.high[k] = base.value * ratio, base.low * ratio, base.high * ratio
        self.extrapolated[k] = at_x.extrapolated[ok]
        self.lo_x[k], self.hi_x[k] = weak.xs[qk, 0], weak.xs[qk, np.maximum(weak.n[qk] - 1, 0)]
        self.used0[k], self.used1[k] = base.used0, -1
        self.shape0, self.shape1 = self.shape0.copy(), self.shape1.copy()
        self.shape0[k], self.shape1[k] = at_x.used0[ok], at_x.used1[ok]
        self.lent[k] = True

    def within_band(self, t: ValueTable, curve: Curve, band: Band, q: np.ndarray, x: np.ndarray):
        """Answers of the materials whose stated band of capacitance change is stronger evidence than the shape
        of their permittivity over temperature (``band.applies``): the value at 25 °C, and anywhere else in the
        band's span that value times ``1 + band.worst`` (the band bounds the change at every temperature of its
        span, not only at its ends; its lowest end is taken). Beyond the span the answer is extrapolated."""
        k = np.flatnonzero(band.applies[q])
        if not k.size:
            return
        qk, xk = q[k], x[k]
        anchor = _Read(t, curve, qk, np.full(k.size, REFERENCE_TEMPERATURE_K))
        at_ref = np.isnan(xk) | (np.abs(xk - REFERENCE_TEMPERATURE_K) <= 1e-6)
        f = np.where(at_ref, 1.0, 1.0 + band.worst[qk])
        self.value[k], self.low[k], self.high[k] = anchor.value * f, anchor.low * f, anchor.high * f
        lo_x, hi_x = band.lo_x[qk], band.hi_x[qk]
        tol = _tolerance(hi_x)
        self.extrapolated[k] = ~np.isnan(xk) & ((xk < lo_x - tol) | (xk > hi_x + tol))
        self.lo_x[k], self.hi_x[k] = lo_x, hi_x
        self.used0[k], self.used1[k] = anchor.used0, anchor.used1
        self.shape0, self.shape1 = self.shape0.copy(), self.shape1.copy()
        self.shape0[k], self.shape1[k] = np.where(at_ref, -1, band.row[qk]), -1
        self.lent[k] = False
        self.banded[k] = ~at_ref

    def _read_single(self, curve: Curve, q, x, pts, val, lo_r, hi_r):
        """:meth:`_read` where no material states more than one temperature (the common case of most properties):
        the row at that temperature, or the unstated row; the same answers without the interpolation."""
        x0, u = curve.xs[q, 0], curve.unstated[q]
        used = np.where(pts, curve.row[q, 0], u)
        self.value, self.low, self.high = val[used], lo_r[used], hi_r[used]
        xq = np.where(pts, x, 0.0)
        tol = _tolerance(np.where(pts, x0, 0.0))
        self.extrapolated = pts & ((xq < x0 - tol) | (xq > x0 + tol))
        self.lo_x, self.hi_x, self.x = np.where(pts, x0, np.nan), np.where(pts, x0, np.nan), xq
        self.used0, self.used1 = used, np.full(q.size, -1, dtype=np.int64)
        self.present = curve.has[q]

    def _read(self, t: ValueTable, curve: Curve, q: np.ndarray, x: np.ndarray):
        # one NaN row past the end, so that "no row" (-1) indexes a NaN even in a table without values
        val, lo_r, hi_r = t.padded()
        n = curve.n[q]
        pts = n > 0
        x = np.where(np.isnan(x) & pts, REFERENCE_TEMPERATURE_K, x)
        if curve.xs.shape[1] == 1:
            return self._read_single(curve, q, x, pts, val, lo_r, hi_r)
        xs = curve.xs[q]
        rows = curve.row[q]
        idx = np.arange(q.size)
        last = np.maximum(n - 1, 0)
        lo_x, hi_x = xs[:, 0], xs[idx, last]
        xq = np.where(pts, x, 0.0)
        cnt = (xs <= xq[:, None]).sum(axis=1)
        j = np.clip(cnt, 1, np.maximum(last, 1))
        r0, r1 = rows[idx, j - 1], rows[idx, np.minimum(j, last)]
        x0, x1 = xs[idx, j - 1], xs[idx, np.minimum(j, last)]
        below, above = xq <= lo_x, xq >= hi_x
        inside = pts & ~below & ~above
        r_first, r_last = rows[:, 0], rows[idx, last]
        u = curve.unstated[q]

        def interp(col):
            y0, y1 = col[r0], col[r1]
            with np.errstate(invalid="ignore", divide="ignore"):
                mid = y0 + (y1 - y0) * (xq - x0) / (x1 - x0)
            out = np.where(below, col[r_first], np.where(above, col[r_last], mid))
            return np.where(pts, out, col[u])

        self.value, self.low, self.high = interp(val), interp(lo_r), interp(hi_r)
        tol = _tolerance(np.where(pts, hi_x, 0.0))
        self.extrapolated = pts & ((xq < lo_x - tol) | (xq > hi_x + tol))
        self.lo_x, self.hi_x, self.x = np.where(pts, lo_x, np.nan), np.where(pts, hi_x, np.nan), xq
        i = np.clip(cnt - 1, 0, last)
        at_point = np.abs(xs[idx, i] - xq) <= tol
        single = ~inside | at_point
        self.used0 = np.where(pts, rows[idx, i], u)
        self.used1 = np.where(pts & ~single, rows[idx, np.minimum(i + 1, last)], -1)
        self.present = curve.has[q]


class _Read(Lookup):
    """A plain read of one curve (no lending)."""

    def __init__(self, t: ValueTable, curve: Curve, q: np.ndarray, x: np.ndarray):
        self._read(t, curve, q, np.asarray(x, dtype=float))


def pick_rows(t: ValueTable, rows: np.ndarray, mat: np.ndarray, m: int, frequency_Hz: float | None) -> np.ndarray:
    """The rows a temperature lookup reads (see the module docstring): the nearest stated frequency plus rows
    stating none; small-signal rows where the material has any."""
    rows = _nearest_frequency(t, rows, mat, m, frequency_Hz)
    e = t.field_V_per_m[rows]
    small = np.isnan(e) | (e == 0)
    if small.all():
        return rows
    has_small = np.bincount(mat[rows][small], minlength=m) > 0
    return rows[small | ~has_small[mat[rows]]]


def _nearest_frequency(t: ValueTable, rows, mat, m, frequency_Hz):
    rm = mat[rows]
    f = t.frequency_Hz[rows]
    stated = ~np.isnan(f) & (f != 0)  # a zero frequency counts as not stated
    if not stated.any():
        return rows
    want = frequency_Hz or REFERENCE_FREQUENCY_HZ
    freqs = np.unique(f[stated])
    dist = np.array([abs(math.log(x / want)) for x in freqs.tolist()])
    rank = np.empty(freqs.size, dtype=np.int64)
    rank[np.lexsort((freqs, dist))] = np.arange(freqs.size)
    r_of = np.full(rows.size, np.iinfo(np.int64).max)
    r_of[stated] = rank[np.searchsorted(freqs, f[stated])]
    best = np.full(m, np.iinfo(np.int64).max)
    np.minimum.at(best, rm, r_of)
    return rows[~stated | (r_of == best[rm])]


def row_sources(t: ValueTable) -> tuple[np.ndarray, np.ndarray]:
    """Per row: whether its source is a lab's, and its source's evidence tier (:data:`TIER`)."""
    if not t.source.size:
        return np.zeros(0, bool), np.zeros(0, np.int64)
    lab = np.array([k == "lab" for k in t.source_kinds], dtype=bool)
    tier = np.array([TIER.get(k, 9) for k in t.source_kinds], dtype=np.int64)
    return lab[t.source], tier[t.source]


@dataclass
class Band:
    """Per material (length M), the stated band of its capacitance change against 25 °C over temperature (the
    ``capacitance_change`` rows that state a temperature and no bias field, of the strongest evidence it holds):
    the lowest change the band allows (``worst``, a fraction) and the row stating it, the span of temperatures it
    covers (25 °C, its reference, included), and whether it applies to the permittivity (``applies``: it is
    stronger evidence than whatever gives the material's permittivity a shape over temperature)."""

    worst: np.ndarray
    row: np.ndarray
    lo_x: np.ndarray
    hi_x: np.ndarray
    applies: np.ndarray


def _band(r: Reader, frequency_Hz: float | None) -> Band:
    t, m, none = r.t, r.m, np.iinfo(np.int64).max
    rows = r.rows_of("capacitance_change")
    temp, e = t.temperature_K[rows], t.field_V_per_m[rows]
    rows = rows[np.isfinite(temp) & (np.isnan(e) | (e == 0))]
    rm = r.mat[rows]
    tier = np.full(m, none)
    np.minimum.at(tier, rm, r.tier[rows])
    rows = rows[r.tier[rows] == tier[rm]]
    rm, temp, low = r.mat[rows], t.temperature_K[rows], t.padded()[1][rows]
    o = np.lexsort((rows, low, rm))
    first = np.ones(o.size, dtype=bool)
    first[1:] = rm[o][1:] != rm[o][:-1]
    worst, row = np.full(m, np.nan), np.full(m, -1, dtype=np.int64)
    worst[rm[o][first]], row[rm[o][first]] = low[o][first], rows[o][first]
    lo_x, hi_x = np.full(m, REFERENCE_TEMPERATURE_K), np.full(m, REFERENCE_TEMPERATURE_K)
    np.minimum.at(lo_x, rm, temp)
    np.maximum.at(hi_x, rm, temp)
    # the tier of the evidence that shapes the permittivity over temperature: a curve of the strongest rows, else
    # a weaker curve that lends its shape, else none
    strong, weak, lend = r.curves("relative_permittivity", frequency_Hz)
    shape_tier = np.where(strong.n >= 2, strong.tier, np.where(lend, weak.tier, none))
    applies = (row >= 0) & (tier < shape_tier) & strong.has & (worst > -1)
    return Band(worst=worst, row=row, lo_x=lo_x, hi_x=hi_x, applies=applies)


class Reader:
    """A table prepared for lookups: active rows, their material, lab flag and evidence tier, computed once."""

    def __init__(self, t: ValueTable):
        self.t = t
        self.m = len(t)
        self.mat = t.material_of_row
        self.active = ~t.retired
        self.lab_row, self.tier = row_sources(t)
        self._curves: dict = {}

    def without(self, rows: np.ndarray) -> Reader:
        """The same table read as if the rows masked by ``rows`` (a boolean mask over the table) were not there."""
        other = Reader.__new__(Reader)
        other.t, other.m, other.mat = self.t, self.m, self.mat
        other.active = self.active & ~rows
        other.lab_row, other.tier = self.lab_row, self.tier
        other._curves = {}
        return other

    def rows_of(self, prop: str, mask: np.ndarray | None = None) -> np.ndarray:
        c = self.t.code(prop)
        if c < 0:
            return np.zeros(0, np.int64)
        sel = self.active & (self.t.prop == c)
        return np.flatnonzero(sel if mask is None else sel & mask[self.mat])

    def curves(self, prop: str, frequency_Hz: float | None = None) -> tuple[Curve, Curve, np.ndarray]:
        """The small-signal temperature curves of ``prop`` for every material, prepared once per frequency: the
        curve of the strongest evidence each material holds, the curve of its weaker rows, and whether the weaker
        curve lends its shape (the strongest evidence states fewer than two temperatures, the weaker two or more)."""
        key = (prop, frequency_Hz)
        if key not in self._curves:
            rows = pick_rows(self.t, self.rows_of(prop), self.mat, self.m, frequency_Hz)
            rm = self.mat[rows]
            best = np.full(self.m, np.iinfo(np.int64).max)
            np.minimum.at(best, rm, self.tier[rows])
            strong = self.tier[rows] == best[rm]
            c_strong = Curve(self.t, rows[strong], rm[strong], self.m, self.tier)
            c_weak = Curve(self.t, rows[~strong], rm[~strong], self.m, self.tier)
            lend = (c_strong.n < 2) & (c_weak.n >= 2)
            self._curves[key] = (c_strong, c_weak, lend)
        return self._curves[key]

    def curve(self, prop: str, frequency_Hz: float | None = None) -> Curve:
        """The curve of the strongest evidence each material holds for ``prop``."""
        return self.curves(prop, frequency_Hz)[0]

    def band(self, frequency_Hz: float | None = None) -> Band:
        """Every material's stated band of capacitance change over temperature (:class:`Band`), prepared once."""
        key = ("band", frequency_Hz)
        if key not in self._curves:
            self._curves[key] = _band(self, frequency_Hz)
        return self._curves[key]

    def lookup(self, prop: str, q: np.ndarray, x: np.ndarray, *, frequency_Hz: float | None = None) -> Lookup:
        """``prop`` of materials ``q`` at temperatures ``x`` by the evidence order (see :class:`Lookup`); the
        permittivity of a material whose stated band of capacitance change is the stronger evidence of its
        behaviour over temperature within that band (:meth:`Lookup.within_band`)."""
        strong, weak, lend = self.curves(prop, frequency_Hz)
        lk = Lookup(self.t, strong, q, x, weak=weak, lend=lend)
        if prop == "relative_permittivity":
            lk.within_band(self.t, strong, self.band(frequency_Hz), q, np.asarray(x, dtype=float))
        return lk

    def at(self, prop: str, temperature_K=None, *, frequency_Hz: float | None = None,
           materials: np.ndarray | None = None) -> Lookup:
        """``prop`` of ``materials`` (all by default) at ``temperature_K`` (one or one per material; None: 25 °C
        where temperatures are stated, else the unstated value)."""
        q = np.arange(self.m) if materials is None else np.asarray(materials, dtype=np.int64)
        x = np.broadcast_to(np.asarray(np.nan if temperature_K is None else temperature_K, dtype=float),
                            q.shape).copy()
        return self.lookup(prop, q, x, frequency_Hz=frequency_Hz)


@dataclass
class BiasCurves:
    """DC-bias curves of every material, padded: ``fields``/``eps``/``low``/``high``/``row`` are ``(M, K)`` with
    the zero-field point in column 0 and ``n`` points per material (``n == 0``: no bias data). Padding repeats the
    last point. ``temperature_K`` is the temperature of the bias rows used (NaN: not stated)."""

    n: np.ndarray
    fields: np.ndarray
    eps: np.ndarray
    low: np.ndarray
    high: np.ndarray
    row: np.ndarray
    temperature_K: np.ndarray

    @property
    def has(self) -> np.ndarray:
        return self.n > 0


def bias_curves(r: Reader, temperature_K: np.ndarray, zero: Lookup, *, prop: str = "relative_permittivity",
                scale: bool = True) -> BiasCurves:
    """Every material's DC-bias curve at ``temperature_K`` (per material), with ``zero`` — the small-signal
    permittivity at that temperature — as its zero-field point.

    The bias rows come from the stated temperature nearest the one asked. Measured at another temperature, the
    whole curve is scaled by ``εr(T)/εr(T_bias)`` (small-signal values): class 2 ceramics keep the shape of their
    bias curve while its level follows the temperature characteristic, so the curve is never spliced onto a zero
    point from another temperature.

    With ``prop="recoverable_energy_density"`` (and a zero ``zero``, ``scale=False``) the same reading gives each
    material's loop profile: the recoverable energy up to each stored field."""
    t, m = r.t, r.m
    code = t.code(prop)
    sel = r.active & (t.prop == code) & np.isfinite(t.field_V_per_m) & (t.field_V_per_m != 0) if code >= 0 else None
    rows = np.flatnonzero(sel) if sel is not None else np.zeros(0, np.int64)
    want = np.where(np.isnan(temperature_K), REFERENCE_TEMPERATURE_K, temperature_K)
    rm, rt = r.mat[rows], t.temperature_K[rows]
    # Bias data at several temperatures (an unstated one counts as one): the stated temperature nearest the one
    # asked, the lower of two equally near.
    key_t = np.where(np.isnan(rt), np.inf, rt)
    o = np.lexsort((key_t, rm))
    new = np.ones(o.size, dtype=bool)
    new[1:] = (rm[o][1:] != rm[o][:-1]) | (key_t[o][1:] != key_t[o][:-1])
    n_temps = np.bincount(rm[o][new], minlength=m)
    dist = np.where(np.isnan(rt), np.inf, np.abs(rt - want[rm]))
    o = np.lexsort((key_t, dist, rm))
    first = np.ones(o.size, dtype=bool)
    first[1:] = rm[o][1:] != rm[o][:-1]
    chosen = np.full(m, np.nan)
    chosen[rm[o][first]] = rt[o][first]
    keep = (n_temps[rm] <= 1) | (rt == chosen[rm])
    rows, rm = rows[keep], rm[keep]
    # One row per field: the more direct evidence, then the first in table order.
    e = t.field_V_per_m[rows]
    o = np.lexsort((rows, r.tier[rows], e, rm))
    rows, rm, e = rows[o], rm[o], e[o]
    first = np.ones(rows.size, dtype=bool)
    first[1:] = (rm[1:] != rm[:-1]) | (e[1:] != e[:-1])
    rows, rm = rows[first], rm[first]
    n_b = np.bincount(rm, minlength=m)
    k = int(n_b.max()) + 1 if rows.size else 1
    slot = np.arange(rows.size) - np.searchsorted(rm, rm) + 1
    has = n_b > 0
    fields = np.zeros((m, k))
    eps = np.repeat(zero.value[:, None], k, axis=1)
    low = np.repeat(zero.low[:, None], k, axis=1)
    high = np.repeat(zero.high[:, None], k, axis=1)
    row = np.full((m, k), -1, dtype=np.int64)
    row[:, 0] = zero.used0
    fields[rm, slot] = t.field_V_per_m[rows]
    eps[rm, slot] = t.value[rows]
    low[rm, slot] = t.padded()[1][rows]
    high[rm, slot] = t.padded()[2][rows]
    row[rm, slot] = rows
    n = np.where(has, n_b + 1, 0)
    # pad with the last point so that every column past n holds the curve's end
    last = np.maximum(n - 1, 0)
    pad = np.arange(k)[None, :] >= n[:, None]
    pr, pc = np.nonzero(pad)
    for a in (fields, eps, low, high, row):
        a[pr, pc] = a[pr, last[pr]]
    used_t = np.full(m, np.nan)
    used_t[rm] = t.temperature_K[rows]
    if scale:
        at_bias = r.at(prop, np.where(np.isnan(used_t), REFERENCE_TEMPERATURE_K, used_t))
        with np.errstate(all="ignore"):
            ratio = zero.value / at_bias.value
        ratio = np.where(has & np.isfinite(ratio) & (ratio > 0), ratio, 1.0)
        for a in (eps, low, high):
            a[:, 1:] *= ratio[:, None]
    return BiasCurves(n=n, fields=fields, eps=eps, low=low, high=high, row=row, temperature_K=used_t)


def reference_values(t: ValueTable, props) -> dict[str, np.ndarray]:
    """Each material's reference value of each of ``props`` (small-signal, nearest 25 °C and 1 kHz, SI), NaN
    where the material lacks the property: what ``--where`` filters and listings compare."""
    r = Reader(t)
    out = {}
    for prop in props:
        lk = r.at(prop)
        out[prop] = np.where(lk.present, lk.value, np.nan)
    return out
