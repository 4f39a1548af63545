"""Weibull probability plots of breakdown sets: ``ln(−ln(1−F))`` against ``ln E``, fitted lines, bounds."""

from __future__ import annotations

import numpy as np

from materials.errors import InputError
from materials.numfmt import fmt_number
from ranking.charts.common import V_PER_M_PER_V_PER_UM, new_figure, plain_log_axis, style, thin


def _weibull_y(p):
    return np.log(-np.log1p(-np.asarray(p, dtype=float)))


def _as_set(item, i):
    """Normalise one breakdown set: a dict, a (label, fields[, censored]) tuple or a bare array of fields."""
    if isinstance(item, dict):
        d = dict(item)
    elif isinstance(item, (tuple, list)) and item and isinstance(item[0], str):
        d = {"label": item[0], "fields": item[1], "censored": item[2] if len(item) > 2 else None}
    else:
        d = {"fields": item}
    d.setdefault("label", f"set {i + 1}")
    d.setdefault("censored", None)
    return d


def weibull_chart(sets, *, confidence: float = 0.9):
    """Weibull probability plot of breakdown sets: ``ln(−ln(1−F))`` against ``ln E``, fitted lines, bounds.

    Failures are placed at Bernard's median ranks (Johnson's adjusted ranks with censoring, see
    :func:`materials.breakdown.plotting_positions`); each set's maximum-likelihood line
    (:func:`materials.breakdown.fit_weibull`, IEEE Std 930) is drawn with its two-sided Fisher-matrix confidence
    band on the quantiles. The x axis is logarithmic in V/µm (so it is linear in ln E); the right-hand axis reads
    the failure probability in percent.

    Args:
        sets: a list whose items are dicts ``{"label", "fields" (V/m), "censored" (optional booleans),
            "fit" (optional WeibullFit)}``, ``(label, fields[, censored])`` tuples, or bare arrays of fields.
        confidence: confidence level of the bands when a fit is computed here.

    Returns:
        The figure; ``fig.fits`` maps label to the WeibullFit used.
    """
    from materials.breakdown import fit_weibull, plotting_positions

    items = [_as_set(s, i) for i, s in enumerate(sets)]
    if not items:
        raise InputError("Weibull chart needs at least one breakdown set")
    fig, ax = new_figure(7.0, 5.0)
    fits = {}
    e_all = []
    for i, d in enumerate(items):
        fields = np.asarray(d["fields"], dtype=float)
        fit = d.get("fit") or fit_weibull(fields, d["censored"], confidence=confidence)
        fits[d["label"]] = fit
        x, f = plotting_positions(fields, d["censored"])
        st = style(i)
        xe = x / V_PER_M_PER_V_PER_UM
        e_all.append(xe)
        k = thin(xe.size)
        (pts,) = ax.plot(xe[k], _weibull_y(f[k]), linestyle="none", marker=st["marker"], color=st["color"],
                         markerfacecolor="white" if i % 2 else st["color"], markersize=5,
                         label=f"{d['label']} (n = {fit.n}" + (f", {fit.n_censored} censored)" if fit.n_censored
                                                                 else ")"))
        pts.set_gid(f"data:{d['label']}")
        p = np.geomspace(max(1e-3, f.min() / 3), min(0.999, 1 - (1 - f.max()) / 3), 80)
        q = np.asarray(fit.quantile(p)) / V_PER_M_PER_V_PER_UM
        (line,) = ax.plot(q, _weibull_y(p), color=st["color"], linestyle=st["linestyle"], linewidth=1.1,
                          label=f"fit: α = {fmt_number(fit.scale / V_PER_M_PER_V_PER_UM)} V/µm, "
                                f"β = {fmt_number(fit.shape, 3)}")
        line.set_gid(f"fit:{d['label']}")
        lo, hi = fit.quantile_bounds(p)
        lo, hi = np.asarray(lo) / V_PER_M_PER_V_PER_UM, np.asarray(hi) / V_PER_M_PER_V_PER_UM
        band = ax.fill_betweenx(_weibull_y(p), lo, hi, color="0.85", alpha=0.6, linewidth=0, zorder=0,
                                label=f"{fit.confidence:.0%} bounds" if i == 0 else None)
        band.set_gid(f"band:{d['label']}")
    ax.set_xscale("log")
    lo_e, hi_e = ax.get_xlim()
    plain_log_axis(ax.xaxis, lo_e, hi_e)
    ax.set_xlabel("breakdown field E (V/µm), logarithmic: x = ln E")
    ax.set_ylabel("ln(−ln(1 − F))")
    ax.set_title("Weibull plot of breakdown fields", loc="left", fontsize=11)
    # A right-hand axis in percent failed is how breakdown engineers read these plots.
    ticks = np.array([0.01, 0.05, 0.1, 0.2, 0.5, 0.632, 0.9, 0.99])
    sec = ax.secondary_yaxis("right", functions=(_from_weibull_y, _weibull_y_safe))
    sec.set_ylabel("failure probability F (%)")
    sec.set_yticks(ticks, labels=[fmt_number(t * 100, 3) for t in ticks])
    ax.axhline(0.0, color="0.75", linewidth=0.6, linestyle=":")
    ax.grid(True, which="both", color="0.92", linewidth=0.5)
    ax.legend(fontsize=7, loc="upper left")
    fig.fits = fits
    return fig


def _from_weibull_y(y):
    return -np.expm1(-np.exp(np.asarray(y, dtype=float)))


def _weibull_y_safe(p):
    p = np.clip(np.asarray(p, dtype=float), 1e-12, 1 - 1e-12)
    return np.log(-np.log1p(-p))
