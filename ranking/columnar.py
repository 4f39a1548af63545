"""The shortlist's criteria for thousands of materials at once, column-wise over a :class:`ValueTable`.

The same rules as :func:`ranking.criteria.evaluate` and the lookups of :mod:`materials.lookup`, written as numpy
over every material of a table. They cover the common case: a linear dielectric whose values are small-signal
(no DC-bias rows), come from no lab set (lab rows supersede the catalog's) and state no frequency, with no
``capacitance_change`` rows and positive inputs to the sizing. Every other material is marked ``slow`` and left to
the per-material code. Numbers agree with the per-material path to rounding (``tests/test_columnar.py``).

Only numbers and verdicts come out of here (criteria with their ranges, whether a hard constraint fails); the
words that explain a verdict (reasons, binding constraint, sources) are written by the per-material code for the
rows that are shown.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from materials.lookup import CONFIDENCE, REFERENCE_TEMPERATURE_K, TIER
from materials.table import ValueTable

EPSILON_0 = 8.8541878188e-12  # F/m, as materials.energy
_NAN = float("nan")
# A material with more temperature points than this per property goes to the per-material path.
MAX_POINTS = 64


@dataclass
class Columns:
    """Verdicts and criteria of every material of a table for one target (arrays of length M)."""

    slow: np.ndarray                    # True: left to the per-material path (numbers below meaningless)
    ok: np.ndarray                      # passes every hard constraint (where not slow)
    values: dict[str, np.ndarray] = field(default_factory=dict)   # NaN = criterion missing
    low: dict[str, np.ndarray] = field(default_factory=dict)
    high: dict[str, np.ndarray] = field(default_factory=dict)


class _Curve:
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


class _Lookup:
    """Values at temperatures, for query materials ``q`` at temperatures ``x`` (NaN: no temperature asked)."""

    def __init__(self, t: ValueTable, curve: _Curve, q: np.ndarray, x: np.ndarray):
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


def _filled(a, fallback):
    return np.where(np.isnan(a), fallback, a)


def _eligible(t: ValueTable, active: np.ndarray, mat: np.ndarray) -> np.ndarray:
    """Materials the column-wise rules cover (see the module docstring); the rest are ``slow``."""
    m = len(t)
    bad_row = active & (((~np.isnan(t.field_V_per_m)) & (t.field_V_per_m != 0)) | ~np.isnan(t.frequency_Hz))
    lab = np.array([k == "lab" for k in t.source_kinds], dtype=bool)
    if lab.size:
        bad_row |= active & lab[t.source]
    cc = t.code("capacitance_change")
    if cc >= 0:
        bad_row |= active & (t.prop == cc)
    slow = np.bincount(mat[bad_row], minlength=m) > 0
    slow |= np.array([r != "linear" for r in t.responses], dtype=bool)
    return ~slow


def evaluate_columns(t: ValueTable, target, *, thickness_m: float | None = None) -> Columns:
    """Every material's verdict and criteria for ``target`` (see :func:`ranking.criteria.evaluate`)."""
    from ranking.ceiling import DEFAULT_TEST_AREA_M2, DEFAULT_WEIBULL_SHAPE

    m = len(t)
    mat = t.material_of_row
    active = np.array([r is None for r in t.retired_at], dtype=bool) if t.retired_at else np.zeros(0, bool)
    elig = _eligible(t, active, mat)
    tier_of_source = np.array([TIER.get(k, 9) for k in t.source_kinds] or [9], dtype=np.int64)
    conf_of_source = np.array([CONFIDENCE.get(k, 0.0) for k in t.source_kinds] or [0.0])
    tier = tier_of_source[t.source] if t.source.size else np.zeros(0, np.int64)
    conf_row = conf_of_source[t.source] if t.source.size else np.zeros(0)
    use = active & elig[mat] if mat.size else np.zeros(0, bool)

    def curve(prop):
        c = t.code(prop)
        rows = np.flatnonzero(use & (t.prop == c)) if c >= 0 else np.zeros(0, np.int64)
        return _Curve(t, rows, mat[rows], m, tier)

    cv = {p: curve(p) for p in ("relative_permittivity", "breakdown_field", "loss_tangent", "weibull_shape",
                                "max_temperature", "min_temperature", "min_thickness", "density", "self_healing")}
    for c in cv.values():
        if c.k > MAX_POINTS:
            elig &= c.n <= MAX_POINTS
    slow = ~elig
    ok = elig.copy()
    everyone = np.arange(m)
    nan_x = np.full(m, np.nan)
    if target.families:
        ok &= np.array([f in target.families for f in t.families], dtype=bool)
    # Rated temperature range.
    for prop, need, worse in (("max_temperature", target.tmax_K, lambda r, x: r < x - 1e-6),
                              ("min_temperature", target.tmin_K, lambda r, x: r > x + 1e-6)):
        lk = _Lookup(t, cv[prop], everyone, nan_x)
        ok &= lk.present & ~worse(lk.value, need)
    eps_c, ebd_c = cv["relative_permittivity"], cv["breakdown_field"]
    ok &= eps_c.has & ebd_c.has
    # The worst-case grid: both ends of the range and every eps / breakdown / loss point strictly inside.
    pts_m, pts_t = [], []
    for c in (eps_c, ebd_c, cv["loss_tangent"]):
        mm, kk = np.nonzero(np.isfinite(c.xs))
        tt = c.xs[mm, kk]
        inner = (tt > target.tmin_K) & (tt < target.tmax_K)
        pts_m.append(mm[inner])
        pts_t.append(tt[inner])
    gm = np.concatenate(pts_m + [everyone, everyone])
    gt = np.concatenate(pts_t + [np.full(m, float(target.tmin_K)), np.full(m, float(target.tmax_K))])
    order = np.lexsort((gt, gm))
    gm, gt = gm[order], gt[order]
    keep = np.ones(gm.size, dtype=bool)
    keep[1:] = (gm[1:] != gm[:-1]) | (gt[1:] != gt[:-1])
    gm, gt = gm[keep], gt[keep]
    gslot = np.arange(gm.size) - np.searchsorted(gm, gm)
    kg = int(gslot.max()) + 1 if gslot.size else 1
    valid = np.zeros((m, kg), dtype=bool)
    valid[gm, gslot] = True
    eps_g, ebd_g = _Lookup(t, eps_c, gm, gt), _Lookup(t, ebd_c, gm, gt)

    def grid(a, pad):
        out = np.full((m, kg), pad, dtype=np.asarray(a).dtype)
        out[gm, gslot] = a
        return out

    grid_t = grid(gt, np.nan)
    e_eps = grid(eps_g.value, np.inf)
    e_ebd = grid(ebd_g.value, np.inf)
    i_eps, i_ebd = np.argmin(e_eps, axis=1), np.argmin(e_ebd, axis=1)
    cell = np.full((m, kg), -1, dtype=np.int64)
    cell[gm, gslot] = np.arange(gm.size)
    c_eps, c_ebd = cell[everyone, i_eps], cell[everyone, i_ebd]
    t_eps, t_ebd = grid_t[everyone, i_eps], grid_t[everyone, i_ebd]
    eps_v, eps_lo, eps_hi = eps_g.value[c_eps], eps_g.low[c_eps], eps_g.high[c_eps]
    ebd_v, ebd_lo, ebd_hi = ebd_g.value[c_ebd], ebd_g.low[c_ebd], ebd_g.high[c_ebd]
    # Weibull shape at the worst breakdown temperature, and the test area of the breakdown rows used there.
    sh = _Lookup(t, cv["weibull_shape"], everyone, t_ebd)
    beta = np.where(sh.present, sh.value, DEFAULT_WEIBULL_SHAPE)
    u0, u1 = ebd_g.used0[c_ebd], ebd_g.used1[c_ebd]
    a0 = t.area_m2[np.maximum(u0, 0)]
    a1 = np.where(u1 >= 0, t.area_m2[np.maximum(u1, 0)], np.nan)
    a0 = np.where(u0 >= 0, a0, np.nan)
    test_area = np.where(np.isfinite(a0) & (a0 != 0), a0, np.where(np.isfinite(a1) & (a1 != 0), a1, np.nan))
    if not target.assume_defaults:
        ok &= sh.present & np.isfinite(test_area)
    test_area = np.where(np.isfinite(test_area), test_area, DEFAULT_TEST_AREA_M2)
    thick = _Lookup(t, cv["min_thickness"], everyone, nan_x)
    d_min = np.where(thick.present, thick.value, np.nan)
    dens = _Lookup(t, cv["density"], everyone, nan_x)
    density = np.where(dens.present, dens.value, np.nan)
    heal = _Lookup(t, cv["self_healing"], everyone, nan_x)
    heals = heal.present & (heal.value >= 0.5)
    # Inputs the sizing refuses (it raises) are left to the per-material path, which reports them the same way.
    odd = ok & ~((eps_v > 0) & (ebd_v > 0) & (beta > 1) & (test_area > 0) & ~(d_min <= 0) & ~(density <= 0))
    slow |= odd
    ok &= ~odd
    V, p, margin = float(target.voltage_V), float(target.failure_probability), float(target.margin)
    seg_area = target.segment_area_m2
    seg = np.where(heals, float(seg_area), np.nan) if seg_area else np.full(m, np.nan)
    has_seg = np.isfinite(seg)
    has_dmin = np.isfinite(d_min)
    with np.errstate(all="ignore"):
        def u_at(e):
            return 0.5 * EPSILON_0 * eps_v * e * e

        def e_design(area):
            ar = np.where(has_seg, seg, area)
            return ebd_v * np.power(-np.log1p(-p) * test_area / ar, 1.0 / beta) / margin

        area_t = target.area_m2
        if thickness_m is not None:
            d = np.full(m, float(thickness_m))
            ok &= ~(has_dmin & (d < d_min * (1 - 1e-9)))
            e_op = V / d
            u_op = u_at(e_op)
            if area_t is None and target.energy_J is not None:
                area = target.energy_J / u_op / d
            else:
                area = np.full(m, np.nan if area_t is None else float(area_t))
            ed = e_design(np.where(np.isfinite(area), area, test_area))
            ok &= ~(e_op > ed * (1 + 1e-9))
        elif target.energy_J is not None:
            energy = float(target.energy_J)
            log_k = np.log(ebd_v) + (np.log(-np.log1p(-p)) + np.log(test_area)) / beta - np.log(margin)
            log_c = np.log(2.0 * energy / (EPSILON_0 * eps_v * V ** 2))
            d_seg = V / np.exp(log_k - np.log(seg) / beta)
            log_area = (log_c + np.log(V) - log_k) * beta / (beta - 1.0)
            d = np.where(has_seg, d_seg, np.exp(log_area - log_c))
            d = np.where(has_dmin & (d < d_min), d_min, d)
            area = np.exp(log_c) * d
            e_op = V / d
            u_op = u_at(e_op)
        else:
            area = np.full(m, np.nan if area_t is None else float(area_t))
            ed = e_design(np.where(np.isfinite(area), area, test_area))
            d = V / ed
            d = np.where(has_dmin & (d < d_min), d_min, d)
            e_op = V / d
            u_op = u_at(e_op)
        if target.energy_density_J_per_m3 is not None:
            ok &= ~(u_op < target.energy_density_J_per_m3 * (1 - 1e-9))
        f_eps_lo = np.where(eps_v != 0, eps_lo / eps_v, 1.0)
        f_eps_hi = np.where(eps_v != 0, eps_hi / eps_v, 1.0)
        f_e_lo = np.where(ebd_v != 0, (ebd_lo / ebd_v) ** 2, 1.0)
        f_e_hi = np.where(ebd_v != 0, (ebd_hi / ebd_v) ** 2, 1.0)
        at_min = has_dmin & (d <= d_min * (1 + 1e-9))
        f_e_lo = np.where(at_min, np.minimum(1.0, f_e_lo), f_e_lo)
        f_e_hi = np.where(at_min, 1.0, f_e_hi)
        out = Columns(slow=slow, ok=ok & ~slow)
        e_lo = u_op * np.minimum(1.0, f_eps_lo * f_e_lo)
        e_hi = u_op * np.maximum(1.0, f_eps_hi * f_e_hi)
        out.values["energy"], out.low["energy"], out.high["energy"] = u_op, e_lo, e_hi
        w = target.energy_J if target.energy_J is not None else 1.0
        vol = w / u_op
        out.values["volume"], out.low["volume"], out.high["volume"] = vol, w / e_hi, w / e_lo
        out.values["mass"] = vol * density
        out.low["mass"], out.high["mass"] = (w / e_hi) * density, (w / e_lo) * density
        # Loss: the largest tan δ over the grid (first of equals, as max() does).
        ls = _Lookup(t, cv["loss_tangent"], gm, gt)
        e_loss = grid(ls.value, -np.inf)
        c_loss = cell[everyone, np.argmax(e_loss, axis=1)]
        has_loss = cv["loss_tangent"].has
        nan = np.full(m, np.nan)
        out.values["loss"] = np.where(has_loss, ls.value[c_loss], nan)
        out.low["loss"] = np.where(has_loss, ls.low[c_loss], nan)
        out.high["loss"] = np.where(has_loss, ls.high[c_loss], nan)
        if target.max_loss_tangent is not None:
            ok_loss = has_loss & ~(out.values["loss"] > target.max_loss_tangent)
            out.ok &= ok_loss
        # Drift over temperature (no bias curve in this path).
        ref = _Lookup(t, eps_c, everyone, np.full(m, REFERENCE_TEMPERATURE_K))
        dev = grid(np.abs(eps_g.value / ref.value[gm] - 1), -np.inf)
        d_t = dev.max(axis=1)
        out.values["drift"] = np.where(eps_c.n >= 2, 1 - (1 - d_t) * (1 - 0.0), nan)
        out.values["healing"] = np.where(heal.present, heals.astype(float), 0.0)
        # Confidence: mean evidence score of the rows behind εr and breakdown on the grid, and behind β.
        total = np.zeros(m)
        count = np.zeros(m)
        for lk in (eps_g, ebd_g):
            for used in (lk.used0, lk.used1):
                hit = used >= 0
                np.add.at(total, gm[hit], conf_row[used[hit]])
                np.add.at(count, gm[hit], 1.0)
        for used in (sh.used0, sh.used1):
            hit = sh.present & (used >= 0)
            total[hit] += conf_row[used[hit]]
            count[hit] += 1.0
        out.values["confidence"] = np.where(count > 0, total / np.where(count > 0, count, 1.0), 0.0)
        for name in ("drift", "healing", "confidence"):
            out.low[name] = out.high[name] = out.values[name]
    out.ok &= ~out.slow
    return out
