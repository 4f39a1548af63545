"""Service conditions of a part, column-wise over every candidate, for the evaluation engine: ripple heating (the
hot spot, the margin to thermal runaway) and life (the design field for a service life, the B-life reached).

Heat (:func:`hot_spots`). The part's capacitance is the target's, or ``2·W/V²`` for a target energy; its losses
over the ripple spectrum are ``Σ I_k²·(R_s + tan δ(f_k, θ)/(ω_k·C))`` (:mod:`materials.thermal`) with each
material's loss tangent read at each harmonic's frequency and at the temperature, and the hot spot is the lowest
steady state of ``θ = θ_amb + R_th·P(θ)``. The margin to runaway is Semenov's ``1/(e·a·R_th·P0)``: the factor by
which the ripple power at ambient may grow before no steady state is left, with ``a = d ln P/dθ`` at the hot spot.
The worst case of every other property is then taken over ``tmin … max(tmax, hot spot)``: the part is designed at
its hot spot.

Life (:func:`life_log_k`, :func:`b_life_at`). A stored short-term breakdown value is a ramp test: Weibull scale
α, shape β, reached in the ramp time ``t_r = α/R``. Under the inverse power law ``L ∝ E^−n`` with cumulative
exposure (Starr & Endicott 1961; :func:`materials.life.ramp_to_constant`) the constant-field life is Weibull with
shape ``β/(n+1)`` and scale ``η(E) = t_r·(α_A/α)/(n+1)·(α_A/E)^n``, ``α_A = α·(A_test/A)^(1/β)`` being the ramp
scale of the part's area (weakest link). The field at which the fraction p has failed after the life L is then

    ``E_L = α_A·[t_r·(α_A/α)·q^((n+1)/β) / (L·(n+1))]^(1/n)``,  ``q = −ln(1−p)``,

which falls with area as ``A^(−1/β_L)``, ``β_L = β·n/(n+1)``: the same form as the short-term design field, so the
self-consistent sizing solves it unchanged. n is the material's stored ``life_exponent``, else its family's stated
prior range (:mod:`materials.priors`); the ramp time is the short-time test's 10 s to 20 s (IEC 60243-1). Both are
assumptions the Monte Carlo draws over. Temperature enters through the short-term breakdown at the hot spot.
"""

from __future__ import annotations

import math

import numpy as np

#: Width (K) of the hot-spot search above ambient, and the points of each material's loss table over it.
SPAN_K = 300.0
GRID = 121
#: Materials per pass of the hot-spot search (its scan holds rows × 2049 temperatures × harmonics at once).
CHUNK = 512
#: A loss tangent stored within this factor of a harmonic's frequency counts as read at that frequency.
FREQUENCY_FACTOR = 2.0


def hot_spots(r, target) -> dict:
    """Hot spot, losses and margin to runaway of every material of a :class:`materials.reading.Reader` (arrays).

    Returns a dict of arrays: ``temperature_K`` (NaN without a steady state), ``power_W`` at the hot spot,
    ``power_ambient_W``, ``steady``, ``runaway_margin`` (inf where the losses do not rise with temperature),
    ``tan_delta`` (the largest over the harmonics at the hot spot), ``has_loss``, ``loss_rows`` (the rows read, per
    harmonic, at ambient), ``loss_frequency_off`` (a harmonic read from a loss tangent stored at another
    frequency, or at none stated), ``loss_outside`` (the hot spot outside the loss data's temperatures: held at
    their end; or a loss tangent stated at no temperature), ``capacitance_F``, ``ambient_K``.
    """
    m = r.m
    amb = float(target.ambient_or_tmax_K)
    cur = np.array([i for i, _ in target.ripple], dtype=float)
    freq = np.array([f for _, f in target.ripple], dtype=float)
    cap = np.full(m, float(target.capacitance_or_energy_F))
    grid_t = amb + np.linspace(0.0, SPAN_K, GRID)
    tabs, rows = [], []
    has = np.ones(m, dtype=bool)
    off = np.zeros(m, dtype=bool)
    lo_x, hi_x = np.full(m, -np.inf), np.full(m, np.inf)
    everyone = np.arange(m)
    for f in freq.tolist():
        at_amb = r.lookup("loss_tangent", everyone, np.full(m, amb), frequency_Hz=f)
        tab = np.repeat(at_amb.value[:, None], GRID, axis=1)
        # a loss tangent over temperature is read on the whole grid; one stated at a single temperature (or none)
        # is the same everywhere (lending a weaker curve's shape included: read on the grid too)
        curve = r.curve("loss_tangent", f)
        vary = np.flatnonzero((curve.n > 1) | at_amb.lent)
        if vary.size:
            lk = r.lookup("loss_tangent", np.repeat(vary, GRID), np.tile(grid_t, vary.size), frequency_Hz=f)
            tab[vary] = lk.value.reshape(vary.size, GRID)
        tabs.append(tab)
        has &= curve.has
        used = at_amb.used0
        rows.append(used)
        f_row = np.where(used >= 0, r.t.frequency_Hz[np.maximum(used, 0)], np.nan)
        with np.errstate(invalid="ignore", divide="ignore"):
            off |= ~(np.abs(np.log(f_row / f)) <= math.log(FREQUENCY_FACTOR))
        # a loss tangent stated at no temperature counts as outside its data at any hot spot
        lo_x = np.where(np.isnan(at_amb.lo_x), np.inf, np.fmax(lo_x, at_amb.lo_x))
        hi_x = np.fmin(hi_x, at_amb.hi_x)
    tab = np.stack(tabs, axis=-1) if tabs else np.zeros((m, GRID, 0))
    tab = np.where(np.isfinite(tab), tab, 0.0)
    step = SPAN_K / (GRID - 1)

    rth, rs = float(target.thermal_resistance_K_per_W), float(target.series_resistance_ohm)
    # Losses that do not change with temperature have the closed form θ = θ_amb + R_th·P (no runaway); the rest
    # are searched, a chunk at a time.
    flat = np.all(tab == tab[:, :1, :], axis=(1, 2)) if tab.size else np.ones(m, dtype=bool)
    theta, power, p0 = np.full(m, np.nan), np.full(m, np.nan), np.full(m, np.nan)
    steady, margin, tand_hot = np.ones(m, dtype=bool), np.full(m, np.inf), np.zeros(m)
    if flat.any():
        from materials.thermal import ripple_losses

        k = np.flatnonzero(flat)
        p0[k] = ripple_losses(currents_A_rms=cur, frequencies_Hz=freq, capacitance_F=cap[k], esr_ohm=rs,
                              tan_delta=tab[k, 0, :])
        power[k], theta[k] = p0[k], amb + rth * p0[k]
        tand_hot[k] = tab[k, 0, :].max(axis=-1) if freq.size else 0.0
    rest = np.flatnonzero(~flat)
    for i in range(0, rest.size, CHUNK):
        k = rest[i:i + CHUNK]
        theta[k], power[k], steady[k], p0[k], margin[k], tand_hot[k] = _heat(
            tab[k], cap[k], amb=amb, step=step, cur=cur, freq=freq, rth=rth, rs=rs)
    return {"temperature_K": theta, "power_W": power,
            "power_ambient_W": p0, "steady": steady, "runaway_margin": margin, "tan_delta": tand_hot,
            "has_loss": has, "loss_rows": rows, "loss_frequency_off": off & has,
            "loss_outside": has & ~((lo_x <= amb + 1e-9) & (np.where(steady, theta, amb) <= hi_x + 1e-9)),
            "capacitance_F": cap, "ambient_K": amb}


def _heat(tab, cap, *, amb, step, cur, freq, rth, rs):
    """Hot spot, its losses, losses at ambient, steadiness, margin to runaway and the largest tan δ at the hot spot of
    the rows of one chunk, whose loss tables ``tab`` are (rows, GRID, harmonics) from ``amb`` in steps ``step``."""
    from materials.thermal import hot_spot, ripple_losses

    m = tab.shape[0]

    def tan_delta(_f, theta):
        th = np.asarray(theta, dtype=float)
        th = th[..., 0] if th.ndim >= 2 else th
        pos = np.clip((th - amb) / step, 0.0, GRID - 1.0)
        i0 = np.minimum(np.floor(pos).astype(np.int64), GRID - 2)
        w = (pos - i0)[..., None]
        mi = np.arange(m).reshape((m,) + (1,) * (th.ndim - 1))
        return tab[mi, i0] * (1.0 - w) + tab[mi, i0 + 1] * w

    common = dict(currents_A_rms=cur, frequencies_Hz=freq, capacitance_F=cap, esr_ohm=rs, tan_delta=tan_delta)
    hs = hot_spot(ambient_K=amb, rth_K_per_W=rth, max_temperature_K=amb + SPAN_K, **common)
    theta = np.atleast_1d(np.asarray(hs.temperature_K, dtype=float))
    steady = np.atleast_1d(np.asarray(hs.steady, dtype=bool))
    p0 = np.atleast_1d(ripple_losses(temperature_K=np.full(m, amb), **common))
    at = np.where(steady, theta, amb)
    # the growth rate over one step of the loss table either side (a finer difference would read the slope of
    # one linear piece of the table rather than the growth of the losses)
    p_up = np.atleast_1d(ripple_losses(temperature_K=at + step, **common))
    p_dn = np.atleast_1d(ripple_losses(temperature_K=np.maximum(at - step, amb), **common))
    with np.errstate(all="ignore"):
        a = np.log(p_up / p_dn) / (at + step - np.maximum(at - step, amb))
        margin = np.where(a > 1e-12, 1.0 / (math.e * a * rth * p0), np.inf)
    margin = np.where(steady, margin, 0.0)
    tand_hot = tan_delta(freq, at[:, None]).max(axis=-1) if freq.size else np.zeros(m)
    return theta, np.atleast_1d(np.asarray(hs.power_W, dtype=float)), steady, p0, margin, tand_hot


def life_exponents(r, families, *, stored=None) -> dict:
    """Every material's life exponent: the stored ``life_exponent`` (found), else its family's prior (typical,
    low, high); NaN for families without a life law. Returns arrays ``n``, ``n_lo``, ``n_hi``, ``found``, and
    ``source`` (prior source keys) and the lookup ``lk``."""
    from materials.priors import life_priors

    lk = r.at("life_exponent") if stored is None else stored
    typ, lo, hi, src = life_priors(families)
    found = lk.present & np.isfinite(lk.value) & (lk.value > 0)
    return {"n": np.where(found, lk.value, typ), "n_lo": np.where(found, lk.value, lo),
            "n_hi": np.where(found, lk.value, hi), "found": found, "source": src, "lk": lk}


def life_log_k(*, ebd_V_per_m, beta, test_area_m2, n, ramp_time_s, life_s, fraction, margin):
    """The constant ``ln K_L`` and shape ``β_L`` of the life design field ``E_L = K_L·A^(−1/β_L)`` (module
    docstring), divided by the margin like the short-term design field."""
    b, nn = np.asarray(beta, dtype=float), np.asarray(n, dtype=float)
    with np.errstate(all="ignore"):
        q = -math.log1p(-float(fraction))
        log_k = (np.log(ebd_V_per_m) + (nn + 1.0) / nn * np.log(test_area_m2) / b
                 + (np.log(ramp_time_s) + (nn + 1.0) / b * math.log(q) - math.log(life_s) - np.log(nn + 1.0)) / nn
                 - math.log(margin))
        return log_k, b * nn / (nn + 1.0)


def b_life_at(*, field_V_per_m, scale_V_per_m, beta, test_area_m2, area_m2, n, ramp_time_s, fraction):
    """Time (s) by which the fraction p of parts of area A has failed at a constant field (module docstring):
    ``η(E)·q^((n+1)/β)``, ``η(E) = t_r·(α_A/α)/(n+1)·(α_A/E)^n``; ``scale`` is α at the layer's thickness."""
    b, nn = np.asarray(beta, dtype=float), np.asarray(n, dtype=float)
    with np.errstate(all="ignore"):
        log_ratio = (np.log(test_area_m2) - np.log(area_m2)) / b            # ln(α_A/α)
        log_alpha_a = np.log(scale_V_per_m) + log_ratio
        q = -math.log1p(-float(fraction))
        return np.exp(np.log(ramp_time_s) + log_ratio - np.log(nn + 1.0)
                      + nn * (log_alpha_a - np.log(field_V_per_m)) + (nn + 1.0) / b * math.log(q))


def design_for_service(inp, target, thickness_m, *, beta, test_area, seg, live, end: int | None = None) -> dict:
    """The design of every candidate (:func:`ranking.design._design`) that also holds a service life: where the
    life design field ``E_L`` lies below the short-term one at the short-term design, the design for ``E_L`` is
    taken instead (it is then the larger part, and holds both). ``end`` 0 or 1 takes the pessimistic or
    optimistic end of the assumed exponent and ramp time (the Monte Carlo's range), None the typical values.

    Adds to the design: ``life_has`` (a life law applies), ``life_binds``, ``life_n``, ``ramp_time``, ``e_life``
    (the life design field at the design), and the rules ``life-short`` (a fixed layer runs above ``E_L``) and
    ``life-no-size`` (``β_L`` too low for a self-consistent size).
    """
    from materials.priors import RAMP_TIME
    from ranking.design import TOL, _design

    des = _design(inp, target, thickness_m, beta=beta, test_area=test_area, seg=seg, live=live)
    life = inp.parts.get("life")
    if target.life_s is None or life is None:
        return des
    n = life["n"] if end is None else life["n_lo" if end == 0 else "n_hi"]
    t_r = RAMP_TIME.typical if end is None else (RAMP_TIME.low if end == 0 else RAMP_TIME.high)
    has = np.isfinite(n) & (n > 0)
    log_k_l, beta_l = life_log_k(ebd_V_per_m=inp.ebd_v, beta=beta, test_area_m2=test_area, n=n, ramp_time_s=t_r,
                                 life_s=target.life_s, fraction=target.life_fraction, margin=target.margin)
    nn = np.where(inp.has_law, inp.law_n, 0.0)
    has_seg = np.isfinite(seg)
    sizing = thickness_m is None and target.energy_J is not None
    no_size = has & sizing & ~has_seg & ~(beta_l * (1.0 - nn) > 1.0)
    with np.errstate(all="ignore"):
        log_d0 = np.where(inp.has_law, np.log(np.where(inp.has_law, inp.test_thickness, 1.0)), 0.0)

        def e_life(area, d, n_sec):
            """E_L at a design; n series sections span n·A and the thickness law reads d/n (as the design)."""
            link = np.where(has_seg, seg, np.where(np.isfinite(area), area, test_area))
            log_n = np.log(n_sec)
            return np.exp(log_k_l - (np.log(link) + log_n) / beta_l - nn * (np.log(d) - log_n - log_d0))

        ones = np.ones(n.shape)
        short = e_life(des["area"], des["d"], des.get("sections", ones))
        out = dict(des)
        if thickness_m is not None:
            out["life-short"] = has & (des["e_op"] > short * (1 + TOL))
            binds = has & (short < des["ed"])
            out["ed"] = np.where(binds, short, des["ed"])
        else:
            lf = _design(inp, target, thickness_m, beta=np.where(has, beta_l, beta), test_area=test_area, seg=seg,
                         live=live & has & ~no_size, log_k=np.where(has, log_k_l, des["log_k"]))
            binds = has & ~no_size & (short < des["ed"] * (1 - TOL))
            for k in ("d", "area", "e_op", "u_op", "its", "no-size", "area-impractical", "thicker-than-made",
                      "sections", "layer"):
                if k in des:
                    out[k] = np.where(binds, lf[k], des[k])
            log_n = np.log(out.get("sections", ones))
            shift = nn * (np.log(out["d"]) - log_d0)
            out["scale_d"], out["log_k_d"] = inp.ebd_v * np.exp(-(shift - nn * log_n)), des["log_k"] - shift
            out["ed"] = np.where(binds, e_life(out["area"], out["d"], out.get("sections", ones)), des["ed"])
            out["life-short"] = np.zeros(n.shape, dtype=bool)
        out.update({"life-no-size": no_size, "life_has": has, "life_binds": binds, "life_n": n,
                    "ramp_time": np.full(n.shape, t_r),
                    "e_life": e_life(out["area"], out["d"], out.get("sections", ones))})
    return out
