"""Value lookups for every material of a :class:`ValueTable` at once: :mod:`materials.lookup` as numpy.

The same reading as :func:`materials.lookup.value_at` on the small-signal temperature curve: a material's lab
rows alone where it has any; the stated frequency nearest the one asked (log scale, the lower of two equally
near) plus rows stating none; small-signal rows where there are any; at one temperature the row of the more
direct evidence, then no thickness stated, then the thickest, then the first entered; piecewise-linear between
temperatures with the ends held outside the data (flagged). ``tests/test_columnar.py`` holds the two to each
other.
"""

from __future__ import annotations

import numpy as np

from materials.lookup import REFERENCE_TEMPERATURE_K, TIER
from materials.table import ValueTable


class Curve:
    """One property's rows of every material, prepared for interpolation over temperature.

    ``xs``/``row`` are ``(M, K)``: the temperatures of each material's points (+inf padding) and the row behind
    each (the row trusted at that temperature, by :func:`materials.lookup._best`'s order); ``unstated`` is the row
    used when no temperature applies; ``has`` whether the material holds the property at all.
    """

    def __init__(self, t: ValueTable, rows: np.ndarray, mat: np.ndarray, m: int, tier: np.ndarray):
        temp = t.temperature_K[rows]
        thick = t.thickness_m[rows]
        key_t = np.where(np.isnan(temp), np.inf, temp)
        # _best: lower tier, then no thickness stated, then the thickest, then the first id.
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
        self.k = k
        slot = np.arange(pm.size) - np.searchsorted(pm, pm)
        self.xs = np.full((m, k), np.inf)
        self.row = np.full((m, k), -1, dtype=np.int64)
        self.xs[pm, slot] = pt
        self.row[pm, slot] = pr
        # Unstated: the best row without a temperature, or the best of all rows if every row states one.
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


class Lookup:
    """Values at temperatures, for query materials ``q`` at temperatures ``x`` (NaN: no temperature asked)."""

    def __init__(self, t: ValueTable, curve: Curve, q: np.ndarray, x: np.ndarray):
        val, lo_r, hi_r = t.value, _filled(t.low, t.value), _filled(t.high, t.value)
        n = curve.n[q]
        pts = n > 0
        x = np.where(np.isnan(x) & pts, REFERENCE_TEMPERATURE_K, x)
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
            y0, y1 = col[np.maximum(r0, 0)], col[np.maximum(r1, 0)]
            with np.errstate(invalid="ignore", divide="ignore"):
                mid = y0 + (y1 - y0) * (xq - x0) / (x1 - x0)
            out = np.where(below, col[np.maximum(r_first, 0)], np.where(above, col[np.maximum(r_last, 0)], mid))
            return np.where(pts, out, col[np.maximum(u, 0)])

        self.value, self.low, self.high = interp(val), interp(lo_r), interp(hi_r)
        tol = 1e-9 * np.maximum(1.0, np.abs(np.where(pts, hi_x, 0.0)))
        self.extrapolated = pts & ((xq < lo_x - tol) | (xq > hi_x + tol))
        # The rows behind the answer: the bracketing pair inside the data, one row at a point or an end.
        i = np.clip(cnt - 1, 0, last)
        at_point = np.abs(xs[idx, i] - xq) <= tol
        single = ~inside | at_point
        self.used0 = np.where(pts, rows[idx, i], u)
        self.used1 = np.where(pts & ~single, rows[idx, np.minimum(i + 1, last)], -1)
        self.present = curve.has[q]


def pick_rows(t: ValueTable, rows: np.ndarray, mat: np.ndarray, m: int, lab_row: np.ndarray,
              frequency_Hz: float | None) -> np.ndarray:
    """The rows a temperature lookup reads (as materials.lookup._temperature_curve): a material's lab rows alone
    where it has any; then, where frequencies are stated, those at the stated frequency nearest the one asked
    (log scale, the lower of two equally near) plus the rows that state none; then the small-signal rows (no
    bias field) where the material has any."""
    rm = mat[rows]
    has_lab = np.bincount(rm[lab_row[rows]], minlength=m) > 0
    rows = rows[~has_lab[rm] | lab_row[rows]]
    rows = _nearest_frequency(t, rows, mat, m, frequency_Hz)
    e = t.field_V_per_m[rows]
    small = np.isnan(e) | (e == 0)
    if small.all():
        return rows
    has_small = np.bincount(mat[rows][small], minlength=m) > 0
    return rows[small | ~has_small[mat[rows]]]


def _nearest_frequency(t: ValueTable, rows, mat, m, frequency_Hz):
    import math

    from materials.lookup import REFERENCE_FREQUENCY_HZ

    rm = mat[rows]
    f = t.frequency_Hz[rows]
    stated = ~np.isnan(f) & (f != 0)  # as the per-material code, a zero frequency counts as not stated
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


def _filled(a, fallback):
    return np.where(np.isnan(a), fallback, a)


def row_sources(t: ValueTable) -> tuple[np.ndarray, np.ndarray]:
    """Per row: whether its source is a lab's, and its source's evidence tier (materials.lookup.TIER)."""
    if not t.source.size:
        return np.zeros(0, bool), np.zeros(0, np.int64)
    lab = np.array([k == "lab" for k in t.source_kinds], dtype=bool)
    tier = np.array([TIER.get(k, 9) for k in t.source_kinds], dtype=np.int64)
    return lab[t.source], tier[t.source]


def distinct_temperatures(t: ValueTable, rows: np.ndarray, mat: np.ndarray, m: int) -> np.ndarray:
    """Per material, how many distinct temperatures ``rows`` (of one property, in table order) state."""
    rows = rows[~np.isnan(t.temperature_K[rows])]
    rm, rt = mat[rows], t.temperature_K[rows]
    new = np.ones(rows.size, dtype=bool)
    new[1:] = (rm[1:] != rm[:-1]) | (rt[1:] != rt[:-1])  # table order: by material, then temperature
    return np.bincount(rm[new], minlength=m)


def reference_values(t: ValueTable, props) -> dict[str, np.ndarray]:
    """Each material's reference value of each of ``props`` (small-signal, nearest 25 °C and 1 kHz, SI): what
    :func:`materials.lookup.reference_value` gives, NaN where the material lacks the property."""
    m = len(t)
    mat = t.material_of_row
    active = ~t.retired
    lab_row, tier = row_sources(t)
    out = {}
    everyone = np.arange(m)
    for prop in props:
        c = t.code(prop)
        rows = np.flatnonzero(active & (t.prop == c)) if c >= 0 else np.zeros(0, np.int64)
        rows = pick_rows(t, rows, mat, m, lab_row, None)
        if rows.size:
            lk = Lookup(t, Curve(t, rows, mat[rows], m, tier), everyone, np.full(m, np.nan))
            out[prop] = np.where(lk.present, lk.value, np.nan)
        else:
            out[prop] = np.full(m, np.nan)
    return out
