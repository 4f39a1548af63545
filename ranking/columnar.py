"""The shortlist's criteria for thousands of materials at once, column-wise over a :class:`ValueTable`.

The same rules as :func:`ranking.criteria.evaluate` and the lookups of :mod:`materials.lookup`, written as numpy
over every material of a table. They cover the common case: a linear dielectric whose values are small-signal
(no DC-bias rows), with no ``capacitance_change`` rows and positive inputs to the sizing. Lab rows supersede
the catalog's and the stated frequency nearest the one asked is read, as in the per-material lookups. Every
other material is marked ``slow`` and left to the per-material code.

:func:`evaluate_columns` gives every material's verdict and criteria as arrays (what ranking and the Monte Carlo
need); :func:`explain` writes one material's words (reasons, binding constraint, flags, sources, design) from
the same arrays, for the rows a shortlist shows. Both agree with the per-material path (``tests/test_columnar.py``:
verdicts, words and sources exactly, numbers to rounding).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from materials.lookup import CONFIDENCE, REFERENCE_TEMPERATURE_K
from materials.lookup_columns import Curve as _Curve, Lookup as _Lookup, distinct_temperatures, row_sources
from materials.lookup_columns import pick_rows as _pick_rows
from materials.table import ValueTable

EPSILON_0 = 8.8541878188e-12  # F/m, as materials.energy
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
    parts: dict = field(default_factory=dict, repr=False)           # what explain() reads


def _eligible(t: ValueTable, active: np.ndarray, mat: np.ndarray) -> np.ndarray:
    """Materials the column-wise rules cover (see the module docstring); the rest are ``slow``.

    So are materials with more than MAX_POINTS temperatures in one property: the arrays here are padded to the
    longest curve, which a dense sweep stored as values would make huge.
    """
    m = len(t)
    dense = np.zeros(m, dtype=bool)
    for code in range(len(t.prop_names)):
        dense |= distinct_temperatures(t, np.flatnonzero(active & (t.prop == code)), mat, m) > MAX_POINTS
    bad_row = active & (~np.isnan(t.field_V_per_m)) & (t.field_V_per_m != 0)
    cc = t.code("capacitance_change")
    if cc >= 0:
        bad_row |= active & (t.prop == cc)
    slow = np.bincount(mat[bad_row], minlength=m) > 0
    slow |= np.array([r != "linear" for r in t.responses], dtype=bool)
    return ~(slow | dense)


def evaluate_columns(t: ValueTable, target, *, thickness_m: float | None = None) -> Columns:
    """Every material's verdict and criteria for ``target`` (see :func:`ranking.criteria.evaluate`)."""
    from ranking.ceiling import DEFAULT_TEST_AREA_M2, DEFAULT_WEIBULL_SHAPE

    m = len(t)
    if not t.value.size:  # materials without a single value: the per-material path names what is missing
        return Columns(slow=np.ones(m, dtype=bool), ok=np.zeros(m, dtype=bool),
                       values={n: np.full(m, np.nan) for n in CRITERIA_NAMES},
                       low={n: np.full(m, np.nan) for n in CRITERIA_NAMES},
                       high={n: np.full(m, np.nan) for n in CRITERIA_NAMES})
    mat = t.material_of_row
    active = ~t.retired
    elig = _eligible(t, active, mat)
    lab_row, tier = row_sources(t)
    conf_row = np.array([CONFIDENCE.get(k, 0.0) for k in t.source_kinds])[t.source]
    use = active & elig[mat]

    def rows_of(prop):
        c = t.code(prop)
        return np.flatnonzero(use & (t.prop == c)) if c >= 0 else np.zeros(0, np.int64)

    def curve(prop, frequency_Hz=None):
        rows = _pick_rows(t, rows_of(prop), mat, m, lab_row, frequency_Hz)
        return _Curve(t, rows, mat[rows], m, tier)

    cv = {p: curve(p) for p in ("relative_permittivity", "breakdown_field", "weibull_shape", "max_temperature",
                                "min_temperature", "min_thickness", "density", "self_healing")}
    cv["loss_tangent"] = curve("loss_tangent", target.frequency_Hz)
    slow = ~elig
    ok = elig.copy()
    everyone = np.arange(m)
    nan_x = np.full(m, np.nan)
    fam_ok = np.array([f in target.families for f in t.families], dtype=bool) if target.families else None
    if fam_ok is not None:
        ok &= fam_ok
    # Rated temperature range.
    rated = {p: _Lookup(t, cv[p], everyone, nan_x) for p in ("max_temperature", "min_temperature")}
    for prop, need, worse in (("max_temperature", target.tmax_K, lambda r, x: r < x - 1e-6),
                              ("min_temperature", target.tmin_K, lambda r, x: r > x + 1e-6)):
        ok &= rated[prop].present & ~worse(rated[prop].value, need)
    eps_c, ebd_c = cv["relative_permittivity"], cv["breakdown_field"]
    ok &= eps_c.has & ebd_c.has
    # The worst-case grid: both ends of the range and every eps / breakdown / loss point strictly inside.
    # (All of the three properties' rows count here, lab or not and at any frequency, as in temperature_grid.)
    pts_m, pts_t = [], []
    for prop in ("relative_permittivity", "breakdown_field", "loss_tangent"):
        rows = rows_of(prop)
        tt = t.temperature_K[rows]
        inner = (tt > target.tmin_K) & (tt < target.tmax_K)
        pts_m.append(mat[rows][inner])
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
    found_area = np.isfinite(test_area)
    test_area = np.where(found_area, test_area, DEFAULT_TEST_AREA_M2)
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
            ed = np.exp(log_k - np.log(np.where(has_seg, seg, area)) / beta)
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
        n_temps = distinct_temperatures(t, rows_of("relative_permittivity"), mat, m)
        out.values["drift"] = np.where(n_temps >= 2, 1 - (1 - d_t) * (1 - 0.0), nan)
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
    with np.errstate(all="ignore"):
        # Short-term failure probability of the part's area at the operating field (criteria._failure_probability).
        link = np.where(has_seg, seg, area)
        scale_part = ebd_v * np.power(test_area / link, 1.0 / beta)
        fail = 1.0 - np.exp(-((e_op / scale_part) ** beta))
    out.parts = dict(
        table=t, target=target, thickness_m=thickness_m, fam_ok=fam_ok,
        rated=rated, eps_has=eps_c.has, ebd_has=ebd_c.has, sh=sh, beta=beta, test_area=test_area,
        area_found=found_area, extrapolated=np.bincount(gm[eps_g.extrapolated | ebd_g.extrapolated], minlength=m) > 0,
        thick=thick, d_min=d_min, dens=dens, heal=heal, has_seg=has_seg, seg=seg, d=d, area=area, ed=ed, e_op=e_op,
        u_op=u_op, t_eps=t_eps, t_ebd=t_ebd, eps_v=eps_v, ebd_v=ebd_v, c_eps=c_eps, c_ebd=c_ebd, c_loss=c_loss,
        has_loss=has_loss, eps_g=eps_g, ebd_g=ebd_g, ls=ls, ref=ref, n_temps=n_temps, d_t=d_t, fail=fail,
        g_start=np.searchsorted(gm, np.arange(m + 1)))
    return out


class _Rows:
    """A lookup's arrays, indexed one material at a time (as Python lists, or arrays read item by item)."""

    __slots__ = ("value", "present", "used0", "used1", "extrapolated")

    def __init__(self, lk: _Lookup, wrap):
        for name in self.__slots__:
            setattr(self, name, wrap(getattr(lk, name)))


class _Items:
    """An array read one item at a time as a Python number (cheaper than converting it whole for a few reads)."""

    __slots__ = ("a",)

    def __init__(self, a: np.ndarray):
        self.a = a

    def __getitem__(self, i):
        return self.a[i].item()


def _view(cols: Columns, wrap) -> dict:
    out = {}
    for k, v in cols.parts.items():
        if isinstance(v, np.ndarray):
            v = wrap(v)
        elif isinstance(v, _Lookup):
            v = _Rows(v, wrap)
        elif isinstance(v, dict):
            v = {kk: _Rows(vv, wrap) if isinstance(vv, _Lookup) else vv for kk, vv in v.items()}
        out[k] = v
    out["source"] = wrap(cols.parts["table"].source)
    for name in ("values", "low", "high"):
        out[name] = {k: wrap(v) for k, v in getattr(cols, name).items()}
    return out


def prepare_explain(cols: Columns) -> None:
    """Convert the columns to Python lists once, before explaining many materials."""
    if "_plain" not in cols.parts:
        cols.parts["_plain"] = _view(cols, lambda a: a.tolist())


def _parts(cols: Columns) -> dict:
    if "_plain" in cols.parts:
        return cols.parts["_plain"]
    if "_items" not in cols.parts:
        cols.parts["_items"] = _view(cols, _Items)
    return cols.parts["_items"]


def _c(t_K: float) -> str:
    return f"{t_K - 273.15:g} °C"


def explain(cols: Columns, i: int):
    """The :class:`ranking.criteria.Evaluation` of material ``i`` (not slow), words included, from the columns.

    Mirrors :func:`ranking.criteria.evaluate` step by step: the same reasons in the same order, the same binding
    constraint, flags, sources and design details.
    """
    from ranking.criteria import Evaluation, layer_limited

    P = _parts(cols)
    t, target, thickness_m = P["table"], P["target"], P["thickness_m"]
    keys, kinds_of, source = t.source_keys, t.source_kinds, P["source"]
    ev = Evaluation(key=t.keys[i], name=t.names[i], family=t.families[i], thickness_m=thickness_m)

    def src(*rows):
        out = []
        for r in rows:
            if r >= 0:
                k = keys[source[r]]
                if k not in out:
                    out.append(k)
        return out

    def add(name, *rows):
        lst = ev.sources.setdefault(name, [])
        lst.extend(k for k in src(*rows) if k not in lst)

    if P["fam_ok"] is not None and not P["fam_ok"][i]:
        ev.reasons.append(f"family {ev.family} not among the target's ({', '.join(target.families)})")
        return ev
    for prop, need, worse in (("max_temperature", target.tmax_K, lambda r, x: r < x - 1e-6),
                              ("min_temperature", target.tmin_K, lambda r, x: r > x + 1e-6)):
        lk = P["rated"][prop]
        if not lk.present[i]:
            ev.reasons.append(f"{prop} missing: rated temperature range not stated")
            continue
        rated = lk.value[i]
        if worse(rated, need):
            ev.reasons.append(f"rated to {_c(rated)} ({prop.split('_')[0]}); target needs {_c(need)}")
        ev.details[prop + "_K"] = rated
    for prop, has in (("relative_permittivity", P["eps_has"]), ("breakdown_field", P["ebd_has"])):
        if not has[i]:
            ev.reasons.append(f"{prop} missing")
    if ev.reasons:
        return ev
    sh = P["sh"]
    if not sh.present[i] and not target.assume_defaults:
        ev.reasons.append("weibull_shape missing: breakdown cannot be scaled to the part's area "
                          "(allow common-practice defaults to take β = 10)")
        return ev
    if not P["area_found"][i] and not target.assume_defaults:
        ev.reasons.append("breakdown test electrode area not stated: cannot scale to the part's area "
                          "(allow common-practice defaults to take 1 cm²)")
        return ev
    if P["extrapolated"][i]:
        ev.flags.append("extrapolated")
    if not sh.present[i]:
        ev.flags.append("assumed-shape")
    if not P["area_found"][i]:
        ev.flags.append("assumed-test-area")
    eps_g, ebd_g, c_eps, c_ebd = P["eps_g"], P["ebd_g"], P["c_eps"][i], P["c_ebd"][i]
    eps_rows = (eps_g.used0[c_eps], eps_g.used1[c_eps])
    ebd_rows = (ebd_g.used0[c_ebd], ebd_g.used1[c_ebd])
    beta_rows = (sh.used0[i], sh.used1[i]) if sh.present[i] else ()
    add("energy", *eps_rows, *ebd_rows, *beta_rows)
    has_dmin = P["thick"].present[i]
    d_min = P["d_min"][i] if has_dmin else None
    if has_dmin:
        add("volume", P["thick"].used0[i], P["thick"].used1[i])
    if P["dens"].present[i]:
        add("mass", P["dens"].used0[i], P["dens"].used1[i])
    seg = bool(P["has_seg"][i])
    if seg:
        ev.flags.append("segment-scaled")
    V, p = target.voltage_V, target.failure_probability
    d, ed, e_op, u_op = (P[k][i] for k in ("d", "ed", "e_op", "u_op"))
    area = P["area"][i] if P["area"][i] == P["area"][i] else None
    t_ebd, beta, test_area, ebd_v = P["t_ebd"][i], P["beta"][i], P["test_area"][i], P["ebd_v"][i]
    if thickness_m is not None:
        if d_min is not None and d < d_min * (1 - 1e-9):
            ev.reasons.append(f"{d * 1e6:g} µm is thinner than the thinnest layer made ({d_min * 1e6:g} µm)")
            return ev
        if e_op > ed * (1 + 1e-9):
            ev.reasons.append(f"{d * 1e6:g} µm at {V:g} V runs at {e_op / 1e6:.4g} V/µm, above the design field "
                              f"{ed / 1e6:.4g} V/µm (breakdown at {_c(t_ebd)}, β {beta:.3g}, p {p:g})")
            return ev
        ev.binding = f"fixed layer {d * 1e6:g} µm: {e_op / ed:.0%} of the design field"
    elif target.energy_J is None and area is None:
        ev.flags.append("no-area-scaling")
    layer_limited(ev, target, d=d, d_min=d_min, ed=ed, e_op=e_op, u_op=u_op, t_ebd=t_ebd, ebd=ebd_v,
                  thickness_m=thickness_m)
    for name in CRITERIA_NAMES:
        v = P["values"][name][i]
        if v == v:
            ev.values[name], ev.low[name], ev.high[name] = v, P["low"][name][i], P["high"][name][i]
        else:
            ev.missing.append(name)
    add("volume", *eps_rows, *ebd_rows)
    ev.details.update(thickness_m=d, area_m2=area, design_field_V_per_m=ed, operating_field_V_per_m=e_op,
                      worst_eps_K=P["t_eps"][i], worst_breakdown_K=t_ebd, weibull_shape=beta,
                      test_area_m2=test_area)
    if thickness_m is None and area is not None:
        ev.details["failure_probability"] = P["fail"][i]
    if P["has_loss"][i]:
        ls, c_loss = P["ls"], P["c_loss"][i]
        add("loss", ls.used0[c_loss], ls.used1[c_loss])
        if target.max_loss_tangent is not None and ev.values["loss"] > target.max_loss_tangent:
            ev.reasons.append(f"loss tangent {ev.values['loss']:.3g} above the limit {target.max_loss_tangent:.3g}")
    elif target.max_loss_tangent is not None:
        ev.reasons.append("loss_tangent missing (the target limits it)")
    cells = range(int(P["g_start"][i]), int(P["g_start"][i + 1]))
    if P["n_temps"][i] >= 2:
        ref = P["ref"]
        add("drift", ref.used0[i], ref.used1[i], *[r for c in cells for r in (eps_g.used0[c], eps_g.used1[c])])
        ev.details["drift_temperature"], ev.details["drift_bias"] = P["d_t"][i], 0.0
    heal = P["heal"]
    if heal.present[i]:
        add("healing", heal.used0[i], heal.used1[i])
    else:
        ev.flags.append("self-healing not stated")
    kinds = {kinds_of[source[r]] for c in cells for g in (eps_g, ebd_g) for r in (g.used0[c], g.used1[c]) if r >= 0}
    kinds |= {kinds_of[source[r]] for r in beta_rows if r >= 0}
    for flag in ("recollection", "invented"):
        if flag in kinds:
            ev.flags.append(flag)
    return ev


CRITERIA_NAMES = ("energy", "volume", "mass", "loss", "drift", "healing", "confidence")
