"""The property map: relative permittivity against breakdown field on log–log axes, with lines of constant
energy density ½·ε0·εr·E²."""

from __future__ import annotations

import math

import numpy as np

from materials.errors import DataError
from materials.numfmt import fmt_celsius, fmt_number
from ranking.charts.common import (
    EPSILON_0,
    J_PER_M3_PER_J_PER_CM3,
    V_PER_M_PER_V_PER_UM,
    new_figure,
    plain_log_axis,
)

# Beyond this many materials the map draws the ones not highlighted as one artist (one marker set, one legend
# entry), not one per material: thousands of separate error-bar artists take minutes to draw.
MAP_SINGLE_ARTISTS = 200


def _map_point(m, temperature_K):
    from materials.lookup import value_at

    eps = value_at(m, "relative_permittivity", temperature_K=temperature_K, extrapolate=True)
    ebd = value_at(m, "breakdown_field", temperature_K=temperature_K, extrapolate=True)
    return eps, ebd


def _nice_levels(lo: float, hi: float) -> list[float]:
    """Energy densities (J/cm³) spanning ``lo``…``hi``: decades, with 3s between them over a narrow span."""
    out = []
    mants = (1, 3) if math.log10(hi / lo) <= 4 else (1,)
    for exp in range(math.floor(math.log10(lo)) - 1, math.ceil(math.log10(hi)) + 2):
        for mant in mants:
            v = mant * 10.0 ** exp
            if lo <= v <= hi:
                out.append(v)
    return out


def _fmt_level(u: float) -> str:
    return f"{fmt_number(u, 6)} J/cm³"


def _eps_for(u_J_per_cm3, e_V_per_um):
    """εr that holds ``u`` J/cm³ at ``e`` V/µm: ``εr = 2U/(ε0·E²)``."""
    return 2.0 * u_J_per_cm3 * J_PER_M3_PER_J_PER_CM3 / (EPSILON_0 * (np.asarray(e_V_per_um) * V_PER_M_PER_V_PER_UM)
                                                          ** 2)


def _label_level(ax, u, *, x0, x1, y0, y1):
    """Write ``u`` J/cm³ on its line, just inside the top edge where the line enters there, else the left edge."""
    y_top = y1 / 1.5
    x_top = math.sqrt(2.0 * u * J_PER_M3_PER_J_PER_CM3 / (EPSILON_0 * y_top)) / V_PER_M_PER_V_PER_UM
    if x0 * 1.05 < x_top < x1 / 1.3:
        x, y = x_top, y_top
    else:
        x = x0 * 1.08
        y = float(_eps_for(u, x))
        if not y0 * 1.3 < y < y1 / 1.3:
            return
    # Rotate the text to the line's slope on screen (−2 in log–log, whatever the aspect).
    p0 = ax.transData.transform((x, y))
    p1 = ax.transData.transform((x * 1.2, float(_eps_for(u, x * 1.2))))
    angle = math.degrees(math.atan2(p1[1] - p0[1], p1[0] - p0[0]))
    ax.text(x, y, _fmt_level(u), fontsize=7, color="0.35", rotation=angle, rotation_mode="anchor", ha="left",
            va="bottom", zorder=2, clip_on=True)


def map_chart(materials, *, highlight=(), temperature_K: float | None = None, labels=None,
              highlight_label: str = "highlighted"):
    """Relative permittivity against breakdown field on log–log axes, with lines of constant energy density.

    Each material is a marker at its small-signal εr and breakdown field (reference condition, or
    ``temperature_K``) with its value range as error bars. The grey lines are ``U = ½·ε0·εr·E²`` held constant,
    i.e. ``εr = 2U/(ε0·E²)``: straight lines of slope −2 on these axes, labelled in J/cm³. Materials in
    ``highlight`` (keys) are drawn filled and black; the rest open and grey (as one marker set, gid
    ``materials:others``, beyond MAP_SINGLE_ARTISTS materials). Materials lacking either property are left out and
    listed in the figure's ``skipped`` attribute.

    Args:
        materials: :class:`~materials.records.MaterialData` list.
        highlight: keys to emphasise (the shortlist).
        highlight_label: legend entry of the emphasised materials.
        temperature_K: condition of the values (default: the reference, about 25 °C).
        labels: True to write every material's key beside its marker, False for none, None (default) for
            every key up to 20 materials and only the highlighted ones beyond.

    Returns:
        The figure; ``fig.skipped`` lists ``(key, reason)``.
    """
    fig, ax = new_figure(7.5, 5.5)
    highlight = set(highlight)
    pts, skipped = [], []
    for m in materials:
        try:
            eps, ebd = _map_point(m, temperature_K)
        except DataError as exc:
            skipped.append((m.key, str(exc)))
            continue
        pts.append((m, eps, ebd))
    ax.set_xscale("log")
    ax.set_yscale("log")
    ax.set_xlabel("breakdown field $E_{bd}$ (V/µm)")
    ax.set_ylabel("relative permittivity $ε_r$ (dimensionless)")
    where = "at about 25 °C" if temperature_K is None else f"at {fmt_celsius(temperature_K, 6)}"
    ax.set_title(f"Permittivity and breakdown field {where}", loc="left", fontsize=11)
    if not pts:
        ax.text(0.5, 0.5, "no material has both εr and a breakdown field", transform=ax.transAxes,
                ha="center", va="center")
        fig.skipped = skipped
        return fig
    e = np.array([p[2].value for p in pts]) / V_PER_M_PER_V_PER_UM
    e_lo = np.array([p[2].low for p in pts]) / V_PER_M_PER_V_PER_UM
    e_hi = np.array([p[2].high for p in pts]) / V_PER_M_PER_V_PER_UM
    r = np.array([p[1].value for p in pts])
    r_lo = np.array([p[1].low for p in pts])
    r_hi = np.array([p[1].high for p in pts])
    x0, x1 = e_lo.min() / 2.0, e_hi.max() * 2.0
    y0, y1 = max(r_lo.min() / 2.0, 0.5), r_hi.max() * 3.0
    ax.set_xlim(x0, x1)
    ax.set_ylim(y0, y1)

    # Constant-energy lines: U spans what the corners of the visible box can hold.
    def u_of(eps_r, e_v_per_um):
        return 0.5 * EPSILON_0 * eps_r * (e_v_per_um * V_PER_M_PER_V_PER_UM) ** 2 / J_PER_M3_PER_J_PER_CM3

    levels = _nice_levels(u_of(y0, x0) * 1.01, u_of(y1, x1) / 1.01)
    xs = np.geomspace(x0, x1, 200)
    for k, u in enumerate(levels):
        ys = _eps_for(u, xs)
        (line,) = ax.plot(xs, ys, color="0.7", linewidth=0.8, linestyle="-", zorder=1,
                          label="constant energy density ½·ε0·εr·E²" if k == 0 else None)
        line.set_gid(f"energy-line:{u:g}")
        line.energy_J_per_cm3 = u
        _label_level(ax, u, x0=x0, x1=x1, y0=y0, y1=y1)
    if labels is None:
        labels = True if len(pts) <= 20 else "highlight"
    legend_done = {True: False, False: False}
    grouped = len(pts) > MAP_SINGLE_ARTISTS
    if grouped:
        rest = np.array([m.key not in highlight for m, *_ in pts])
        cont = ax.errorbar(
            e[rest], r[rest], xerr=[e[rest] - e_lo[rest], e_hi[rest] - e[rest]],
            yerr=[r[rest] - r_lo[rest], r_hi[rest] - r[rest]], fmt="s", markersize=4, color="0.45",
            markerfacecolor="white", ecolor="0.75", elinewidth=0.6, capsize=0, zorder=3,
            label=f"other ({int(rest.sum())})" if highlight else f"material ({int(rest.sum())})")
        cont.lines[0].set_gid("materials:others")
        legend_done[False] = True
    for i, (m, *_rest) in enumerate(pts):
        hi = m.key in highlight
        if grouped and not hi:
            continue
        cont = ax.errorbar(
            e[i], r[i], xerr=[[e[i] - e_lo[i]], [e_hi[i] - e[i]]], yerr=[[r[i] - r_lo[i]], [r_hi[i] - r[i]]],
            fmt="o" if hi else "s", markersize=6 if hi else 5, color="black" if hi else "0.45",
            markerfacecolor="black" if hi else "white", ecolor="black" if hi else "0.6", elinewidth=0.8,
            capsize=2, zorder=4 if hi else 3,
            label=None if legend_done[hi] else (highlight_label if hi else ("other" if highlight else "material")))
        legend_done[hi] = True
        cont.lines[0].set_gid(f"material:{m.key}")
        if labels is True or (labels == "highlight" and hi):
            ax.annotate(m.key, (e[i], r[i]), xytext=(4, 4), textcoords="offset points", fontsize=7,
                        color="black" if hi else "0.3", zorder=5)
    plain_log_axis(ax.xaxis, x0, x1)
    plain_log_axis(ax.yaxis, y0, y1)
    ax.grid(True, which="major", color="0.9", linewidth=0.5)
    fig.legend(loc="outside lower center", ncols=3, fontsize=8, frameon=False)
    fig.skipped = skipped
    return fig
