"""The design of every candidate (fixed layer, self-consistent size, or design field alone) and the energy models
it reads (linear, DC-bias curve, loop), for the evaluation engine (:mod:`ranking.engine`); arrays in and out.

The design field is ``E_d = E_bd·(−ln(1−p)·A_test/A)^(1/β)·(d/d0)^−n / margin``: the Weibull quantile at the
accepted failure probability, weakest-link scaled to the part's area (IEEE Std 930 / IEC 62539) and carried to the
layer's thickness by the thickness law of :mod:`materials.priors` (n = 0 where none applies).
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from materials.energy import EPSILON_0
from materials.sizing import size_columns

if TYPE_CHECKING:
    from ranking.engine import Inputs

#: Energy models, per material.
LINEAR, BIAS, LOOP, UPPER_BOUND = 0, 1, 2, 3
METHOD_NAMES = {LINEAR: "linear", BIAS: "bias-curve", LOOP: "loop", UPPER_BOUND: "linear-upper-bound"}
#: Relative tolerance of the comparisons that decide a verdict (a value at its limit passes).
TOL = 1e-9
#: A breakdown value measured on specimens of thickness d0 is used as measured for layers within this factor of d0;
#: beyond it (no thickness law is stored yet) the cell is flagged, and --strict refuses it.
THICKNESS_FACTOR = 3.0
#: Largest active area a sizing may return (1 km² of electrode, beyond any capacitor bank): a Weibull shape near 1
#: makes the self-consistent area grow without bound, and such a "size" is no answer.
MAX_AREA_M2 = 1e6


# --- energy along each material's model -----------------------------------------------------------------------


def energy_density(inp: Inputs, idx, e_V_per_m) -> np.ndarray:
    """Stored energy density (J/m³) of materials ``idx`` at fields ``e`` by their energy model: ``½·ε0·εr·E²``
    (linear, and the upper bound of a nonlinear material known only by εr), ``∫E dD`` along the DC-bias curve
    (exact for its piecewise-linear interpolant), or a loop's recoverable energy along its discharge branch up to the
    field (:func:`_loop_energy`)."""
    idx = np.asarray(idx, dtype=np.int64)
    e = np.asarray(e_V_per_m, dtype=float)
    k = inp.kind[idx]
    out = 0.5 * EPSILON_0 * inp.eps_v[idx] * e * e
    b = k == BIAS
    if b.any():
        out = np.where(b, inp.curves.energy(np.where(b, idx, 0), e), out)
    lp = k == LOOP
    if lp.any():
        out = np.where(lp, _loop_energy(inp.loops, np.where(lp, idx, 0), e), out)
    return out


def _loop_energy(loops, idx, e):
    """A loop profile read at fields ``e`` (one per row ``idx``): √u interpolated linearly between the stored
    fields (exact for a linear dielectric, u ∝ E²; one stored point gives the (E/E_loop)² scaling), held at the
    loop's largest field beyond it (the rule "above-loop" refuses such a design)."""
    idx, e = np.broadcast_arrays(np.asarray(idx, dtype=np.int64), np.asarray(e, dtype=float))
    f, s = loops.fields[idx], np.sqrt(np.maximum(loops.eps[idx], 0.0))
    last = np.maximum(loops.n[idx] - 1, 1)
    j = np.clip((f <= e[..., None]).sum(axis=-1) - 1, 0, last - 1)[..., None]
    f0, f1 = np.take_along_axis(f, j, -1)[..., 0], np.take_along_axis(f, j + 1, -1)[..., 0]
    s0, s1 = np.take_along_axis(s, j, -1)[..., 0], np.take_along_axis(s, j + 1, -1)[..., 0]
    with np.errstate(all="ignore"):
        w = np.clip(np.where(f1 > f0, (e - f0) / (f1 - f0), 1.0), 0.0, 1.0)
    return (s0 + w * (s1 - s0)) ** 2


def charge_density(inp: Inputs, idx, e_V_per_m) -> np.ndarray:
    """Displacement D (C/m²) at fields ``e``: ``ε0·εr·E``, or ``ε0·∫εr,diff de`` along a DC-bias curve."""
    idx = np.asarray(idx, dtype=np.int64)
    e = np.asarray(e_V_per_m, dtype=float)
    out = EPSILON_0 * inp.eps_v[idx] * e
    b = inp.kind[idx] == BIAS
    return np.where(b, inp.curves.charge(np.where(b, idx, 0), e), out) if b.any() else out


def small_signal_permittivity(inp: Inputs, idx, e_V_per_m) -> np.ndarray:
    """Differential εr at fields ``e`` (the worst small-signal εr for a material without a bias curve)."""
    idx = np.asarray(idx, dtype=np.int64)
    out = inp.eps_v[idx] * np.ones_like(np.asarray(e_V_per_m, dtype=float))
    b = inp.kind[idx] == BIAS
    return np.where(b, inp.curves.permittivity(np.where(b, idx, 0), e_V_per_m), out) if b.any() else out


#: Most series sections a target may allow for a layer thicker than can be made in one piece.
MAX_SECTIONS = 64


def _design(inp: Inputs, target, thickness_m, *, beta, test_area, seg, live, log_k=None) -> dict:
    """The design of every candidate for one Weibull shape and test area per row: a fixed layer (checked against
    its design field), a self-consistent size for the target energy, or the design field alone. ``log_k`` (per
    row) replaces the short-term constant ``ln K`` of ``E_d = K·A^(−1/β)`` by another law of that form (life).

    A material that can only be made up to a thickest single layer ``d_max`` (anodic oxides by their forming
    voltage, MLCC layers, film gauges) and whose design needs more is either refused ("thicker-than-made") or, where
    the target allows ``max_sections`` > 1, built as ``n`` equal sections in series: each of ``d/n`` at ``V/n``, so
    the field and the energy density are those of one layer of the total thickness, while the weakest link spans
    ``n`` times the area and the thickness law applies at the section thickness. ``n`` is the smallest count whose
    sections are made, found by re-solving the affected rows until it holds.
    """
    m = inp.reader.m
    n_sec = np.ones(m)
    des = _design_once(inp, target, thickness_m, beta=beta, test_area=test_area, seg=seg, live=live, n_sec=n_sec,
                       log_k=log_k)
    d_max = inp.d_max
    has_dmax = np.isfinite(d_max)
    allowed = int(min(max(int(getattr(target, "max_sections", 1) or 1), 1), MAX_SECTIONS))
    if thickness_m is None and allowed > 1 and has_dmax.any():
        for _ in range(8):
            with np.errstate(invalid="ignore"):
                need = np.where(has_dmax & np.isfinite(des["d"]), np.ceil(des["d"] / d_max * (1 - TOL)), 1.0)
            grow = live & (need > n_sec) & (need <= allowed)
            if not grow.any():
                break
            n_sec = np.where(grow, need, n_sec)
            new = _design_once(inp, target, thickness_m, beta=beta, test_area=test_area, seg=seg,
                               live=live & grow, n_sec=n_sec, log_k=log_k)
            des = {k: (np.where(grow, new[k], v) if isinstance(v, np.ndarray) and v.shape == (m,) else v)
                   for k, v in des.items()}
    with np.errstate(invalid="ignore"):
        layer = des["d"] / n_sec
        des["thicker-than-made"] = has_dmax & (layer > d_max * (1 + TOL))
    des.update(sections=n_sec, layer=layer)
    return des


def _design_once(inp: Inputs, target, thickness_m, *, beta, test_area, seg, live, n_sec, log_k=None) -> dict:
    """:func:`_design` for a given number of series sections per row."""
    m = inp.reader.m
    everyone = inp.everyone
    no = np.zeros(m, dtype=bool)
    out = {"thinner-than-made": no, "over-design-field": no, "no-size": no, "area-impractical": no}
    V, p, margin = float(target.voltage_V), float(target.failure_probability), float(target.margin)
    d_min, energy_J, area_t = inp.d_min, target.energy_J, target.area_m2
    has_seg, has_dmin = np.isfinite(seg), np.isfinite(d_min)
    its = np.zeros(m, dtype=np.int64)
    # The thickness law E = E0·(d/d0)^−n (materials.priors): n = 0 where no law applies.
    has_law = inp.has_law
    nn = np.where(has_law, inp.law_n, 0.0)
    log_d0 = np.where(has_law, np.log(np.where(has_law, inp.test_thickness, 1.0)), 0.0)
    log_v = np.log(V)
    with np.errstate(all="ignore"):
        if log_k is None:
            log_k = np.log(inp.ebd_v) + (np.log(-np.log1p(-p)) + np.log(test_area)) / beta - np.log(margin)
        # n series sections: the weakest link spans n·A, and the thickness law reads the section, d/n.
        log_n = np.log(n_sec)
        log_k = log_k - log_n / beta + nn * log_n

        def e_design(area, d):
            return np.exp(log_k - np.log(np.where(has_seg, seg, area)) / beta - nn * (np.log(d) - log_d0))

        def breakdown_limited(area):
            """d = V/E_design(A, d), solved for d: (1 − n)·ln d = ln V − ln K + ln A/β − n·ln d0."""
            link = np.where(has_seg, seg, area)
            return np.exp((log_v - log_k + np.log(link) / beta - nn * log_d0) / (1.0 - nn))

        if thickness_m is not None:
            d = np.broadcast_to(np.asarray(thickness_m, dtype=float), (m,)).copy()
            out["thinner-than-made"] = has_dmin & (d < d_min * (1 - TOL))
            e_op = V / d
            u_op = energy_density(inp, everyone, e_op)
            if area_t is None and energy_J is not None:
                area = energy_J / u_op / d
            else:
                area = np.full(m, np.nan if area_t is None else float(area_t))
            ed = e_design(np.where(np.isfinite(area), area, test_area), d)
            out["over-design-field"] = e_op > ed * (1 + TOL)
        elif energy_J is not None:
            rows = np.flatnonzero(live)
            d, area, ed = np.full(m, np.nan), np.full(m, np.nan), np.full(m, np.nan)
            converged = np.zeros(m, dtype=bool)
            if rows.size:
                # the law folds into an effective shape and constant: d ∝ A^(1/(β(1−n)))
                b_eff = beta * (1.0 - nn)
                log_k_eff = log_v - (log_v - log_k - nn * log_d0) / (1.0 - nn)
                sol = size_columns(
                    energy_J=energy_J, voltage_V=V, log_k=log_k_eff[rows], shape=b_eff[rows],
                    relative_permittivity=_first_guess_eps(inp, rows), nonlinear=inp.kind[rows] != LINEAR,
                    energy_density=lambda idx, e: energy_density(inp, rows[idx], e), segment_area_m2=seg[rows],
                    min_thickness_m=d_min[rows])
                d[rows], area[rows] = sol["thickness_m"], sol["area_m2"]
                ed[rows] = e_design(area, d)[rows]
                its[rows], converged[rows] = sol["iterations"], sol["converged"]
            e_op = V / d
            u_op = energy_density(inp, everyone, e_op)
            out["no-size"] = ~(converged & np.isfinite(d) & (d > 0) & np.isfinite(area) & (area > 0)
                               & np.isfinite(u_op) & (u_op > 0))
            out["area-impractical"] = ~out["no-size"] & (area > MAX_AREA_M2)
        else:
            area = np.full(m, np.nan if area_t is None else float(area_t))
            a_ref = np.where(np.isfinite(area), area, test_area)
            d = breakdown_limited(a_ref)
            d = np.where(has_dmin & (d < d_min), d_min, d)
            ed = e_design(a_ref, d)
            e_op = V / d
            u_op = energy_density(inp, everyone, e_op)
        # log_k_d: the design constant of the whole part (E_d = exp(log_k_d − ln A/β)); scale_d: the Weibull scale
        # carried to the layer (the section) thickness.
        shift = nn * (np.log(d) - log_d0)
        scale_d = inp.ebd_v * np.exp(-(shift - nn * log_n))
    out.update(d=d, area=area, ed=ed, e_op=e_op, u_op=u_op, its=its, log_k=log_k, log_k_d=log_k - shift,
               scale_d=scale_d)
    return out


def _first_guess_eps(inp: Inputs, idx) -> np.ndarray:
    """The εr of the linear first guess of a sizing: the small-signal εr, or a loop's effective εr."""
    eps = inp.eps_v[idx].copy()
    lp = inp.kind[idx] == LOOP
    with np.errstate(all="ignore"):
        eff = 2.0 * inp.loop_value[idx] / (EPSILON_0 * inp.loop_field[idx] ** 2)
    return np.where(lp, eff, eps)
