"""The evaluation engine: every rule of a shortlist, a ceiling and a sizing, written once, over arrays.

Input is a :class:`materials.table.ValueTable` (the store's values as columns); one material is a table of one row.
Three steps, each column-wise over every material:

1. :func:`worst_inputs` — the worst case over a temperature range, on a grid of both ends plus every permittivity,
   breakdown or loss data point in between: the lowest permittivity and the lowest breakdown field (even where
   they fall at different temperatures: conservative), the Weibull shape at the worst breakdown temperature, the
   test electrode area of the breakdown rows used, the largest loss tangent, the rated range, the thinnest layer,
   density, self-healing, the thickness law, and the energy model (linear ``½·ε0·εr·E²``, ``∫E dD`` along a
   DC-bias curve, or a loop's recoverable energy).
2. :func:`evaluate` — the design (:mod:`ranking.design`: fixed layer, self-consistent sizing for an energy, or the
   design field alone), the criteria of :mod:`ranking.criteria` and the hard constraints. Each constraint is a
   rule with a reason code (:mod:`ranking.reasons`); a candidate's bad data becomes its own reason, never an error
   of the run.
3. :func:`ranking.explain.explain` — one candidate's words (reasons, binding constraint, flags, sources, design)
   from the arrays.

The design field is ``E_d = E_bd·(−ln(1−p)·A_test/A)^(1/β)·(d/d0)^−n / margin`` (the Weibull quantile at the
accepted failure probability, weakest-link scaled from the test area to the part's area, IEEE Std 930 / IEC 62539,
and carried to the layer's thickness by the thickness law).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

from materials.energy import EPSILON_0, CurveSet
from materials.reading import CONFIDENCE, REFERENCE_TEMPERATURE_K, Lookup, Reader, bias_curves
from materials.priors import (COLD_HOLD_EXCLUDED, LAW_FACTOR, LIQUID_TEST_GAP, NO_AREA_LAW, TEST_AREA, shape_priors,
                              thickness_exponents)
from materials.sizing import failure_probability
from materials.table import ValueTable
from ranking.design import (  # noqa: F401 - the design rules and energy models, re-exported
    BIAS, LINEAR, LOOP, MAX_AREA_M2, METHOD_NAMES, THICKNESS_FACTOR, TOL, UPPER_BOUND, _design, charge_density,
    energy_density, small_signal_permittivity)
from ranking.service import b_life_at, design_for_service


@dataclass
class Inputs:
    """Worst-case inputs of every material of a table over ``tmin_K…tmax_K`` (arrays of length M)."""

    reader: Reader
    tmin_K: float
    tmax_K: float
    parts: dict = field(default_factory=dict)

    def __getattr__(self, name):
        try:
            return self.__dict__["parts"][name]
        except KeyError:
            raise AttributeError(name) from None


def worst_inputs(table: ValueTable | Reader, *, tmin_K: float, tmax_K: float, frequency_Hz: float | None = None,
                 assume_defaults: bool = False) -> Inputs:
    """The worst case of every material over the range (see the module docstring). ``tmax_K`` may be one per
    material (a hot spot above the target's range)."""
    r = table if isinstance(table, Reader) else Reader(table)
    t, m, mat = r.t, r.m, r.mat
    everyone = np.arange(m)
    P: dict = {}
    top = np.broadcast_to(np.asarray(tmax_K, dtype=float), (m,))
    # The grid: both ends and every εr / breakdown / loss point strictly inside (any of their rows counts).
    pts_m, pts_t = [everyone, everyone], [np.full(m, float(tmin_K)), top.copy()]
    for prop in ("relative_permittivity", "breakdown_field", "loss_tangent"):
        rows = r.rows_of(prop)
        tt = t.temperature_K[rows]
        inner = (tt > tmin_K) & (tt < top[mat[rows]])
        pts_m.append(mat[rows][inner])
        pts_t.append(tt[inner])
    gm, gt = np.concatenate(pts_m), np.concatenate(pts_t)
    order = np.lexsort((gt, gm))
    gm, gt = gm[order], gt[order]
    keep = np.ones(gm.size, dtype=bool)
    keep[1:] = (gm[1:] != gm[:-1]) | (gt[1:] != gt[:-1])
    gm, gt = gm[keep], gt[keep]
    g_start = np.searchsorted(gm, np.arange(m + 1))
    gslot = np.arange(gm.size) - g_start[gm]
    kg = int(gslot.max()) + 1 if gslot.size else 1
    cell = np.full((m, kg), -1, dtype=np.int64)
    cell[gm, gslot] = np.arange(gm.size)

    def grid(a, pad):
        out = np.full((m, kg), pad, dtype=float)
        out[gm, gslot] = a
        return out

    eps_g = r.lookup("relative_permittivity", gm, gt)
    ebd_g = r.lookup("breakdown_field", gm, gt)
    # Breakdown below the coldest temperature measured: held at its coldest value, which the fall of breakdown
    # strength with rising temperature makes a lower bound (materials.priors.COLD_HOLD); any other value outside its
    # data is an extrapolation.
    solid = ~np.isin(np.asarray(t.families, dtype=object), COLD_HOLD_EXCLUDED)
    with np.errstate(invalid="ignore"):
        cold = ebd_g.extrapolated & (gt < ebd_g.lo_x) & solid[gm]
    grid_t = grid(gt, np.nan)
    i_eps = np.argmin(grid(eps_g.value, np.inf), axis=1)
    i_ebd = np.argmin(grid(ebd_g.value, np.inf), axis=1)
    c_eps, c_ebd = cell[everyone, i_eps], cell[everyone, i_ebd]
    t_eps, t_ebd = grid_t[everyone, i_eps], grid_t[everyone, i_ebd]
    sh = r.at("weibull_shape", t_ebd)
    prior_typ, prior_lo, prior_hi = shape_priors(t.families)
    law_n, law_src = thickness_exponents(t.families, np.where(sh.present, sh.value, prior_typ))
    # a thickness exponent stored for the material (with its source) comes before the family's law
    tx = r.at("thickness_exponent")
    if tx.present.any():
        law_n = np.where(tx.present, tx.value, law_n)
        law_src = np.where(tx.present, np.array([t.source_keys[t.source[int(u)]] if u >= 0 else "" for u in tx.used0],
                                                dtype=object), np.asarray(law_src, dtype=object))
    u0, u1 = ebd_g.used0[c_ebd], ebd_g.used1[c_ebd]
    d0 = np.fmax(np.where(u0 >= 0, t.thickness_m[np.maximum(u0, 0)], np.nan),
                 np.where(u1 >= 0, t.thickness_m[np.maximum(u1, 0)], np.nan))
    # A liquid's figure without its gap is taken at the quality-test gap (assumed), so the stressed-volume law and
    # its flags apply at any other gap.
    gap_assumed = np.array([f == "liquid" for f in t.families], dtype=bool) & ~np.isfinite(d0)
    d0 = np.where(gap_assumed, LIQUID_TEST_GAP.typical, d0)
    a0 = np.where(u0 >= 0, t.area_m2[np.maximum(u0, 0)], np.nan)
    a1 = np.where(u1 >= 0, t.area_m2[np.maximum(u1, 0)], np.nan)
    test_area = np.where(np.isfinite(a0) & (a0 != 0), a0, np.where(np.isfinite(a1) & (a1 != 0), a1, np.nan))
    area_found = np.isfinite(test_area)
    thick, dens, heal = r.at("min_thickness"), r.at("density"), r.at("self_healing")
    thickmax = r.at("max_thickness")
    ls = r.lookup("loss_tangent", gm, gt, frequency_Hz=frequency_Hz)
    c_loss = cell[everyone, np.argmax(grid(ls.value, -np.inf), axis=1)]
    # Energy models: a DC-bias curve at the worst-permittivity temperature; else a nonlinear material's loop.
    eps_at_worst = _Pick(eps_g, c_eps)
    bias = bias_curves(r, t_eps, eps_at_worst)
    t_loop, loop_lo, loop_hi = _worst_loop_temperature(r, tmin_K, top)
    loops = bias_curves(r, t_loop, _Zero(m), prop="recoverable_energy_density", scale=False)
    nonlinear = np.array([x != "linear" for x in t.responses], dtype=bool)
    kind = np.where(bias.has, BIAS, np.where(nonlinear, np.where(loops.has, LOOP, UPPER_BOUND), LINEAR))
    tol = 1e-6
    loop_out = (kind == LOOP) & np.isfinite(loop_lo) & ((tmin_K < loop_lo - tol) | (top > loop_hi + tol))
    # Capacitance drift over temperature: an εr curve, else stated capacitance changes inside the range.
    small = r.rows_of("relative_permittivity")
    small = small[np.isnan(t.field_V_per_m[small]) | (t.field_V_per_m[small] == 0)]
    n_eps_temps = _count_temperatures(t, small, mat, m)
    ref = r.at("relative_permittivity", REFERENCE_TEMPERATURE_K)
    with np.errstate(all="ignore"):
        d_t_eps = grid(np.abs(eps_g.value / ref.value[gm] - 1), -np.inf).max(axis=1)
    cc = r.rows_of("capacitance_change")
    ct, ce = t.temperature_K[cc], t.field_V_per_m[cc]
    cc = cc[np.isfinite(ct) & (ct >= tmin_K - 1e-6) & (ct <= top[mat[cc]] + 1e-6) & (np.isnan(ce) | (ce == 0))]
    d_t_cc = np.full(m, -np.inf)
    np.maximum.at(d_t_cc, mat[cc], np.abs(t.value[cc]))
    P.update(
        everyone=everyone, gm=gm, gt=gt, g_start=g_start, cell=cell, eps_g=eps_g, ebd_g=ebd_g, c_eps=c_eps,
        c_ebd=c_ebd, t_eps=t_eps, t_ebd=t_ebd, eps_v=eps_g.value[c_eps], eps_lo=eps_g.low[c_eps],
        eps_hi=eps_g.high[c_eps], ebd_v=ebd_g.value[c_ebd], ebd_lo=ebd_g.low[c_ebd], ebd_hi=ebd_g.high[c_ebd],
        eps_has=r.curve("relative_permittivity").has, ebd_has=r.curve("breakdown_field").has,
        extrapolated=(np.bincount(gm[eps_g.extrapolated | (ebd_g.extrapolated & ~cold)], minlength=m) > 0)
        | loop_out, loop_out=loop_out, t_loop=t_loop, loop_lo=loop_lo, loop_hi=loop_hi,
        held_cold=np.bincount(gm[cold], minlength=m) > 0, cold=cold, test_thickness=d0,
        law_n=law_n, law_source=law_src, has_law=np.isfinite(law_n) & np.isfinite(d0), gap_assumed=gap_assumed,
        lent=np.bincount(gm[eps_g.lent | ebd_g.lent], minlength=m) > 0,
        banded=np.bincount(gm[eps_g.banded], minlength=m) > 0,
        sh=sh, shape_found=sh.present, beta=np.where(sh.present, sh.value, prior_typ),
        beta_lo=np.where(sh.present, sh.value, prior_lo), beta_hi=np.where(sh.present, sh.value, prior_hi),
        test_area=np.where(area_found, test_area, TEST_AREA.typical), area_found=area_found,
        test_area_lo=np.where(area_found, test_area, TEST_AREA.low),
        test_area_hi=np.where(area_found, test_area, TEST_AREA.high),
        thick=thick, d_min=np.where(thick.present, thick.value, np.nan),
        thickmax=thickmax, d_max=np.where(thickmax.present, thickmax.value, np.nan),
        dens=dens, density=np.where(dens.present, dens.value, np.nan),
        heal=heal, heals=heal.present & (heal.value >= 0.5),
        rated={p: r.at(p) for p in ("max_temperature", "min_temperature")},
        ls=ls, c_loss=c_loss, has_loss=r.curve("loss_tangent", frequency_Hz).has,
        bias=bias, curves=CurveSet(bias.fields, bias.eps, bias.n), loops=loops,
        loop_field=np.where(loops.has, loops.fields[everyone, np.maximum(loops.n - 1, 0)], np.nan),
        loop_value=np.where(loops.has, loops.eps[everyone, np.maximum(loops.n - 1, 0)], np.nan), kind=kind,
        n_eps_temps=n_eps_temps, ref=ref, d_t_eps=d_t_eps, cc_rows=cc, d_t_cc=d_t_cc,
        assume_defaults=assume_defaults, frequency_Hz=frequency_Hz,
        no_area_law=np.array([f in NO_AREA_LAW for f in t.families], dtype=bool))
    return Inputs(reader=r, tmin_K=tmin_K, tmax_K=tmax_K, parts=P)


def inputs_for(table: ValueTable | Reader, target) -> Inputs:
    """:func:`worst_inputs` for a target: over ``tmin … max(tmax, hot spot)`` when a ripple current heats the
    part, with the hot spot (:func:`ranking.service.hot_spots`) and the life exponents
    (:func:`ranking.service.life_exponents`) of every material among the parts (``heat``, ``life``)."""
    from ranking import service

    r = table if isinstance(table, Reader) else Reader(table)
    heat = service.hot_spots(r, target) if target.ripple else None
    top = target.tmax_K if heat is None else np.fmax(target.tmax_K, np.where(heat["steady"], heat["temperature_K"],
                                                                             target.tmax_K))
    inp = worst_inputs(r, tmin_K=target.tmin_K, tmax_K=top, frequency_Hz=target.frequency_Hz,
                       assume_defaults=target.assume_defaults)
    inp.parts["built_for"] = target
    inp.parts["heat"] = heat
    inp.parts["life"] = service.life_exponents(r, r.t.families) if target.life_s is not None else None
    return inp


def _worst_loop_temperature(r: Reader, tmin_K: float, tmax_K: float):
    """Per material, the temperature of the loop data to use over ``tmin_K…tmax_K`` and the span of temperatures
    its loops state (NaN where none is stated).

    Loops measured at several temperatures: the weakest of those inside the range — the lowest recoverable energy
    per squared field at its largest field, ``u_max/E_max²`` — else the stated temperature nearest the range."""
    t, m = r.t, r.m
    tmax_K = np.broadcast_to(np.asarray(tmax_K, dtype=float), (m,))
    code = t.code("recoverable_energy_density")
    t_loop, lo, hi = np.full(m, np.nan), np.full(m, np.nan), np.full(m, np.nan)
    if code < 0:
        return t_loop, lo, hi
    rows = np.flatnonzero(r.active & (t.prop == code) & np.isfinite(t.field_V_per_m) & (t.field_V_per_m > 0)
                          & np.isfinite(t.temperature_K))
    if not rows.size:
        return t_loop, lo, hi
    rm, rt, e, u = r.mat[rows], t.temperature_K[rows], t.field_V_per_m[rows], t.value[rows]
    np.fmin.at(lo, rm, rt)
    np.fmax.at(hi, rm, rt)
    # the largest field of each (material, temperature), and its energy
    o = np.lexsort((e, rt, rm))
    rm, rt, e, u = rm[o], rt[o], e[o], u[o]
    last = np.ones(rm.size, dtype=bool)
    last[:-1] = (rm[1:] != rm[:-1]) | (rt[1:] != rt[:-1])
    rm, rt, metric = rm[last], rt[last], u[last] / (e[last] * e[last])
    tol = 1e-6
    top = tmax_K[rm]
    inside = (rt >= tmin_K - tol) & (rt <= top + tol)
    gap = np.where(inside, 0.0, np.minimum(np.abs(rt - tmin_K), np.abs(rt - top)))
    # inside the range the weakest loop first; else the nearest temperature
    o = np.lexsort((rt, np.where(inside, metric, 0.0), gap, rm))
    first = np.ones(o.size, dtype=bool)
    first[1:] = rm[o][1:] != rm[o][:-1]
    t_loop[rm[o][first]] = rt[o][first]
    return t_loop, lo, hi


class _Zero:
    """A zero-valued point with no row behind it (the origin of a loop profile)."""

    def __init__(self, m: int):
        self.value = self.low = self.high = np.zeros(m)
        self.used0 = self.used1 = np.full(m, -1, dtype=np.int64)


class _Pick:
    """A lookup's answers at chosen cells, shaped like a :class:`Lookup` (for the zero-field point of a curve)."""

    def __init__(self, lk: Lookup, cells: np.ndarray):
        self.value, self.low, self.high = lk.value[cells], lk.low[cells], lk.high[cells]
        self.used0, self.used1 = lk.used0[cells], lk.used1[cells]


def _count_temperatures(t, rows, mat, m):
    rows = rows[~np.isnan(t.temperature_K[rows])]
    if not rows.size:
        return np.zeros(m, dtype=np.int64)
    o = np.lexsort((t.temperature_K[rows], mat[rows]))
    rm, rt = mat[rows][o], t.temperature_K[rows][o]
    new = np.ones(rm.size, dtype=bool)
    new[1:] = (rm[1:] != rm[:-1]) | (rt[1:] != rt[:-1])
    return np.bincount(rm[new], minlength=m)


# --- the verdict -----------------------------------------------------------------------------------------------

#: The rules, in the order a candidate meets them. Within a stage every failing rule is a reason; a later stage is
#: not reached by a candidate that fails an earlier one (its numbers would rest on what failed).
STAGES = (
    ("family",),
    ("rated-missing-max", "rated-outside-max", "rated-missing-min", "rated-outside-min",
     "permittivity-missing", "breakdown-missing", "nonlinear-no-data"),
    ("shape-missing", "life-exponent-missing"),
    ("test-area-missing",),
    ("value-invalid",),
    ("heat-unknown", "thermal-runaway", "hot-spot-over-rating"),
    ("shape-too-low", "life-no-size"),
    ("thinner-than-made", "thicker-than-made"),
    ("over-design-field", "no-size", "area-impractical", "above-loop", "life-short"),
    ("outside-data",),
    ("energy-short", "loss-over", "loss-missing"),
)


@dataclass
class Columns:
    """Verdicts and criteria of every material of a table for one target (arrays of length M)."""

    ok: np.ndarray
    fails: dict[str, np.ndarray]
    values: dict[str, np.ndarray] = field(default_factory=dict)   # NaN = criterion missing
    low: dict[str, np.ndarray] = field(default_factory=dict)
    high: dict[str, np.ndarray] = field(default_factory=dict)
    parts: dict = field(default_factory=dict, repr=False)

    def __len__(self) -> int:
        return self.ok.size

    def own(self, i: int) -> tuple[Columns, int]:
        """The columns that hold the whole answer of material ``i`` (its inputs and design as well as its verdict)
        and its index there: these, or for a material whose breakdown specimens :func:`evaluate` chose again, the
        second pass's."""
        redo = self.parts.get("redo")
        if redo is not None and redo[0][i] >= 0:
            return redo[1], int(redo[0][i])
        return self, i


def evaluate(table: ValueTable | Inputs, target, *, thickness_m=None) -> Columns:
    """Every material's verdict and criteria for ``target`` (a :class:`ranking.target.Target`); ``thickness_m``
    fixes the layer: one thickness for all, or one per material (a stack's layers).

    Breakdown measured on specimens of several thicknesses (same evidence, same temperature): the design is made
    once, then again from the specimens nearest the layer it needs, so that the thickness law carries the value
    the shortest way (never a 58 µm figure to a 5 µm layer when a 5 µm one is stored)."""
    inp = table if isinstance(table, Inputs) else inputs_for(table, target)
    cols = _evaluate(inp, target, thickness_m)
    if inp.parts.get("built_for") is target:
        drop = _farther_specimens(inp.reader, cols.parts["layer"])
        # only when a row the answer read is set aside: otherwise the second pass would read the same rows
        lk = inp.ebd_g
        read = np.concatenate([lk.used0, lk.used1, lk.shape0, lk.shape1])
        if drop[read[read >= 0]].any():
            r = inp.reader
            again = np.zeros(r.m, dtype=bool)
            again[r.mat[drop]] = True
            if again.all():
                return _evaluate(inputs_for(r.without(drop), target), target, thickness_m)
            # Only the materials with a row set aside are read again, as a table of their own: each material's
            # answer rests on its own rows, so the others keep their first answers.
            idx = np.flatnonzero(again)
            sub, rows = r.t.subset(idx)
            layer = thickness_m if np.ndim(thickness_m) == 0 else np.asarray(thickness_m)[idx]
            redo = _evaluate(inputs_for(Reader(sub).without(~r.active[rows] | drop[rows]), target), target, layer)
            cols = _splice(cols, redo, idx)
    return cols


def _splice(first: Columns, redo: Columns, idx: np.ndarray) -> Columns:
    """``first`` with the per-material arrays of the materials ``idx`` from ``redo`` (their answers, in that
    order); ``redo`` is kept whole for their words (:meth:`Columns.own`)."""
    m = len(first)
    where = np.full(m, -1, dtype=np.int64)
    where[idx] = np.arange(idx.size)

    def pick(a, b):
        if isinstance(a, np.ndarray) and isinstance(b, np.ndarray) and a.ndim and a.shape[0] == m \
                and b.shape == (idx.size,) + a.shape[1:]:
            out = a.copy()
            out[idx] = b
            return out
        return a

    out = Columns(ok=pick(first.ok, redo.ok), fails={k: pick(v, redo.fails[k]) for k, v in first.fails.items()},
                  **{name: {k: pick(v, getattr(redo, name)[k]) for k, v in getattr(first, name).items()}
                     for name in ("values", "low", "high")},
                  parts={k: pick(v, redo.parts.get(k)) for k, v in first.parts.items()})
    out.parts["redo"] = (where, redo)
    return out


def _farther_specimens(r: Reader, layer: np.ndarray) -> np.ndarray:
    """A mask of the breakdown rows to set aside: among rows of one material, evidence tier and temperature that
    state specimen thicknesses, all but the one nearest ``layer`` (per material; in log thickness)."""
    t = r.t
    out = np.zeros(t.value.size, dtype=bool)
    rows = r.rows_of("breakdown_field")
    th = t.thickness_m[rows]
    mat = r.mat[rows]
    with np.errstate(invalid="ignore", divide="ignore"):
        ok = np.isfinite(th) & (th > 0) & np.isfinite(layer[mat]) & (layer[mat] > 0)
        rows, th, mat = rows[ok], th[ok], mat[ok]
        if rows.size < 2:
            return out
        dist = np.abs(np.log(th / layer[mat]))
    temp = t.temperature_K[rows]
    tkey = np.where(np.isnan(temp), -1.0, temp)
    tier = r.tier[rows]
    o = np.lexsort((dist, tkey, tier, mat))
    rows, dist, tkey, tier, mat = rows[o], dist[o], tkey[o], tier[o], mat[o]
    start = np.ones(rows.size, dtype=bool)
    start[1:] = (mat[1:] != mat[:-1]) | (tier[1:] != tier[:-1]) | (tkey[1:] != tkey[:-1])
    group = np.cumsum(start) - 1
    nearest = dist[start][group]
    out[rows[dist > nearest + 1e-9]] = True
    return out


def _evaluate(inp: Inputs, target, thickness_m) -> Columns:
    t, m = inp.reader.t, inp.reader.m
    everyone = inp.everyone
    fails: dict[str, np.ndarray] = {}
    no = np.zeros(m, dtype=bool)
    fails["family"] = (~np.array([f in target.families for f in t.families], dtype=bool)
                       if target.families else no)
    for prop, need, side in (("max_temperature", target.tmax_K, "max"), ("min_temperature", target.tmin_K, "min")):
        lk = inp.rated[prop]
        fails[f"rated-missing-{side}"] = ~lk.present
        worse = lk.value < need - 1e-6 if side == "max" else lk.value > need + 1e-6
        fails[f"rated-outside-{side}"] = lk.present & worse
    fails["permittivity-missing"] = ~inp.eps_has
    fails["breakdown-missing"] = ~inp.ebd_has
    fails["nonlinear-no-data"] = inp.kind == UPPER_BOUND
    fails["shape-missing"] = ~inp.shape_found & (not target.assume_defaults)
    fails["test-area-missing"] = ~inp.area_found & (not target.assume_defaults)
    lf = inp.parts.get("life")
    fails["life-exponent-missing"] = (np.isfinite(lf["n"]) & ~lf["found"] & (not target.assume_defaults)
                                      if lf is not None else no)
    eps_v, ebd_v, beta, test_area = inp.eps_v, inp.ebd_v, inp.beta, inp.test_area
    d_min, density = inp.d_min, inp.density
    fails["value-invalid"] = ~((eps_v > 0) & (ebd_v > 0) & (beta > 0) & (test_area > 0) & ~(d_min <= 0)
                               & ~(density <= 0) & np.isfinite(eps_v) & np.isfinite(ebd_v))
    seg = np.where(inp.heals, float(target.segment_area_m2), np.nan) if target.segment_area_m2 else np.full(m, np.nan)
    has_seg, has_dmin = np.isfinite(seg), np.isfinite(d_min)
    # The weakest-link area of each design: a segment, the test area itself for a gas (never area-scaled), else the
    # part's area (NaN here).
    def links(a_test):
        return np.where(has_seg, seg, np.where(inp.no_area_law, a_test, np.nan))

    link_fixed = links(test_area)
    energy_J = target.energy_J
    sizing = thickness_m is None and energy_J is not None
    has_law = inp.has_law
    beta_eff = beta * (1.0 - np.where(has_law, inp.law_n, 0.0))   # a thickness law weakens the self-consistency
    fails["shape-too-low"] = (beta_eff <= 1) & sizing & ~np.isfinite(link_fixed)
    live = inp.eps_has & inp.ebd_has & ~fails["value-invalid"] & ~fails["shape-too-low"] & (inp.kind != UPPER_BOUND)
    heat, life = inp.parts.get("heat"), inp.parts.get("life")
    fails.update(_heat_fails(inp, heat, no))
    des = design_for_service(inp, target, thickness_m, beta=beta, test_area=test_area, seg=link_fixed, live=live)
    d, area, ed, e_op, u_op, its, log_k = (des[k] for k in ("d", "area", "ed", "e_op", "u_op", "its", "log_k"))
    scale_d = des["scale_d"]
    for code in ("thinner-than-made", "over-design-field", "no-size", "area-impractical", "thicker-than-made",
                 "life-short", "life-no-size"):
        fails[code] = des.get(code, no)
    sections, layer_d = des["sections"], des["layer"]
    with np.errstate(invalid="ignore"):
        fails["above-loop"] = (inp.kind == LOOP) & (e_op > inp.loop_field * (1 + TOL))
        d0 = inp.test_thickness
        factor = np.where(has_law, LAW_FACTOR, THICKNESS_FACTOR)
        thick_out = np.isfinite(d0) & ((layer_d > factor * d0) | (layer_d < d0 / factor))
        scaled = has_law & (np.abs(np.log(layer_d / d0)) > 1e-6)
    # Outside the temperatures of its data, or beyond the thickness a law may carry it, a value is refused unless
    # the target extrapolates (then it is used, held at the end of its data, and flagged).
    fails["outside-data"] = (inp.extrapolated | thick_out) & (not getattr(target, "extrapolate", False))
    # An assumed Weibull shape or test area is a range: the design at its pessimistic and optimistic ends bounds
    # the energy, so the Monte Carlo prices the assumption.
    # A life rests on a stated ramp time and, without a stored exponent, on the family's prior: assumptions too.
    assumed = ~inp.shape_found | ~inp.area_found | (des["life_has"] if life is not None else no)
    u_ends = []
    if assumed.any():
        for end_i, (b, a) in enumerate(((inp.beta_lo, inp.test_area_lo), (inp.beta_hi, inp.test_area_hi))):
            end = design_for_service(inp, target, thickness_m, beta=np.where(assumed, b, beta),
                                     test_area=np.where(assumed, a, test_area),
                                     seg=links(np.where(assumed, a, test_area)), live=live & assumed & (b > 1),
                                     end=end_i)
            u_ends.append(np.where(assumed & np.isfinite(end["u_op"]), end["u_op"], u_op))
    with np.errstate(all="ignore"):
        fails["energy-short"] = (u_op < target.energy_density_J_per_m3 * (1 - TOL)
                                 if target.energy_density_J_per_m3 is not None else no)
        # Energy and its range from the permittivity and breakdown ranges (u ∝ εr·E² on the linear part).
        f_eps_lo = np.where(eps_v != 0, inp.eps_lo / eps_v, 1.0)
        f_eps_hi = np.where(eps_v != 0, inp.eps_hi / eps_v, 1.0)
        f_e_lo = np.where(ebd_v != 0, (inp.ebd_lo / ebd_v) ** 2, 1.0)
        f_e_hi = np.where(ebd_v != 0, (inp.ebd_hi / ebd_v) ** 2, 1.0)
        layer = has_dmin & (d <= d_min * (1 + TOL))
        f_e_lo = np.where(layer, np.minimum(1.0, f_e_lo), f_e_lo)
        f_e_hi = np.where(layer, 1.0, f_e_hi)   # the field is set by the layer, not by breakdown
        out = Columns(ok=np.ones(m, dtype=bool), fails=fails)
        u_lo = np.minimum.reduce([u_op, *u_ends]) if u_ends else u_op
        u_hi = np.maximum.reduce([u_op, *u_ends]) if u_ends else u_op
        e_lo = u_lo * np.minimum(1.0, f_eps_lo * f_e_lo)
        e_hi = u_hi * np.maximum(1.0, f_eps_hi * f_e_hi)
        out.values["energy"], out.low["energy"], out.high["energy"] = u_op, e_lo, e_hi
        w = energy_J if energy_J is not None else 1.0
        vol = w / u_op
        out.values["volume"], out.low["volume"], out.high["volume"] = vol, w / e_hi, w / e_lo
        out.values["mass"] = vol * density
        out.low["mass"], out.high["mass"] = (w / e_hi) * density, (w / e_lo) * density
        # Loss: the largest tan δ over the grid (first of equals).
        ls, c_loss, has_loss = inp.ls, inp.c_loss, inp.has_loss
        out.values["loss"] = np.where(has_loss, ls.value[c_loss], np.nan)
        out.low["loss"] = np.where(has_loss, ls.low[c_loss], np.nan)
        out.high["loss"] = np.where(has_loss, ls.high[c_loss], np.nan)
        limit = target.max_loss_tangent
        fails["loss-over"] = has_loss & (out.values["loss"] > limit) if limit is not None else no
        fails["loss-missing"] = ~has_loss if limit is not None else no
        # Drift over temperature and under bias.
        d_t = np.where(inp.n_eps_temps >= 2, inp.d_t_eps, np.where(np.isfinite(inp.d_t_cc), inp.d_t_cc, np.nan))
        bias = inp.kind == BIAS
        d_b = np.zeros(m)
        if bias.any():
            dd = charge_density(inp, everyone, e_op)
            d_b = np.where(bias, np.abs(dd / (EPSILON_0 * inp.bias.eps[:, 0] * e_op) - 1), 0.0)
        out.values["drift"] = np.where(np.isnan(d_t) & ~bias, np.nan, 1 - (1 - np.nan_to_num(d_t)) * (1 - d_b))
        out.values["healing"] = np.where(inp.heal.present, inp.heals.astype(float), 0.0)
        out.values["confidence"] = _confidence(inp)
        for name in ("drift", "healing", "confidence"):
            out.low[name] = out.high[name] = out.values[name]
        link = np.where(inp.no_area_law & ~has_seg, link_fixed, np.where(has_seg, seg, area) * sections)
        fail = failure_probability(e_op, scale_V_per_m=scale_d, shape=beta, test_area_m2=test_area, area_m2=link)
        at_min = has_dmin & (d <= d_min * (1 + TOL)) & (thickness_m is None)
    bad = np.zeros(m, dtype=bool)
    for stage in STAGES:
        for code in stage:
            bad |= fails[code]
    out.ok = ~bad
    out.parts = dict(inputs=inp, target=target, thick_out=thick_out, scaled=scaled, scale_d=scale_d,
                     log_k_d=des["log_k_d"], thickness_m=thickness_m, seg=seg,
                     has_seg=has_seg, d=d, area=area, ed=ed, e_op=e_op, u_op=u_op, at_min=at_min, d_t=d_t, d_b=d_b,
                     fail=fail, iterations=its, log_k=log_k, sections=sections, layer=layer_d, heat=heat,
                     life=life,
                     **{k: des[k] for k in ("life_has", "life_binds", "life_n", "ramp_time", "e_life") if k in des})
    if life is not None:
        with np.errstate(all="ignore"):
            out.parts["b_life"] = b_life_at(field_V_per_m=e_op, scale_V_per_m=scale_d, beta=beta,
                                            test_area_m2=test_area, area_m2=link, n=des["life_n"],
                                            ramp_time_s=des["ramp_time"], fraction=target.life_fraction)
    return out


def _heat_fails(inp: Inputs, heat, no) -> dict:
    """The heat rules: no loss tangent to heat by, no steady hot spot, a hot spot above the rated maximum."""
    if heat is None:
        return {"heat-unknown": no, "thermal-runaway": no, "hot-spot-over-rating": no}
    rated = inp.rated["max_temperature"]
    with np.errstate(invalid="ignore"):
        over = heat["steady"] & rated.present & (heat["temperature_K"] > rated.value + 1e-6)
    return {"heat-unknown": ~heat["has_loss"], "thermal-runaway": heat["has_loss"] & ~heat["steady"],
            "hot-spot-over-rating": heat["has_loss"] & over}


def _confidence(inp: Inputs) -> np.ndarray:
    """Mean evidence score of the rows behind εr and breakdown at every grid point, and behind β."""
    t, m = inp.reader.t, inp.reader.m
    conf_row = np.array([CONFIDENCE.get(k, 0.0) for k in t.source_kinds])[t.source] if t.source.size else np.zeros(0)
    total, count = np.zeros(m), np.zeros(m)
    gm = inp.gm
    for lk in (inp.eps_g, inp.ebd_g):
        for used in (lk.used0, lk.used1, lk.shape0, lk.shape1):
            hit = used >= 0
            np.add.at(total, gm[hit], conf_row[used[hit]])
            np.add.at(count, gm[hit], 1.0)
    sh = inp.sh
    for used in (sh.used0, sh.used1):
        hit = sh.present & (used >= 0)
        total[hit] += conf_row[used[hit]]
        count[hit] += 1.0
    return np.where(count > 0, total / np.where(count > 0, count, 1.0), 0.0)
