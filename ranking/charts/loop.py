"""Polarisation–field loops with the recovered and lost energy densities shaded and printed."""

from __future__ import annotations

import numpy as np

from materials.errors import InputError
from materials.numfmt import fmt_number
from ranking.charts.common import new_figure, thin


def _branches(field, pol):
    """Indices of the charging branch (E rising from its last zero to E max) and the discharge branch (E max
    down to the next zero crossing), in measured order."""
    e = np.asarray(field, dtype=float)
    imax = int(np.argmax(e))
    start = imax
    while start > 0 and e[start - 1] < e[start] and e[start - 1] > 0:
        start -= 1
    if start > 0 and e[start - 1] <= 0 < e[start]:
        start -= 1
    end = imax
    while end < e.size - 1 and e[end + 1] > 0 and e[end + 1] <= e[end]:
        end += 1
    if end < e.size - 1 and e[end + 1] <= 0:
        end += 1
    return np.arange(start, imax + 1), np.arange(imax, end + 1)


def _zero_end(e, p, idx):
    """The branch's points, with its far end moved to E = 0 by linear interpolation if it crosses zero."""
    ee, pp = e[idx].copy(), p[idx].copy()
    for k in (0, -1):
        j = 1 if k == 0 else -2
        if ee.size > 1 and ee[k] < 0 <= ee[j]:
            w = ee[j] / (ee[j] - ee[k])
            pp[k] = pp[j] + w * (pp[k] - pp[j])
            ee[k] = 0.0
    return ee, pp


def loop_chart(field, polarization, *, title: str | None = None):
    """A polarisation–field loop with the recovered and lost energy densities shaded and printed.

    Recovered energy is the area between the discharge branch (E max back to E = 0) and the polarisation axis,
    ``∫E dP``; lost energy is the area between the charging and the discharge branch. The figures printed come
    from :func:`materials.energy.loop_energies`.

    Args:
        field: field, V/m, in measured order.
        polarization: polarisation, C/m², in measured order.
        title: optional title (e.g. the file name).

    Returns:
        The figure; ``fig.energies`` is the LoopEnergies shown.
    """
    from matplotlib.patches import Polygon

    from materials.energy import loop_energies

    e = np.asarray(field, dtype=float)
    p = np.asarray(polarization, dtype=float)
    if e.shape != p.shape or e.size < 3:
        raise InputError("a loop needs matching field and polarisation arrays of at least 3 points")
    en = loop_energies(e, p)
    ek = e / 1e5         # V/m -> kV/cm
    pu = p * 1e2         # C/m² -> µC/cm²
    fig, ax = new_figure(7.0, 5.0)
    charge, discharge = _branches(e, p)
    ce, cp = _zero_end(ek, pu, charge)
    de, dp = _zero_end(ek, pu, discharge)
    ce, cp = ce[thin(ce.size)], cp[thin(cp.size)]
    de, dp = de[thin(de.size)], dp[thin(dp.size)]
    rec = Polygon(np.column_stack([np.r_[de, 0.0, 0.0], np.r_[dp, dp[-1], dp[0]]]), closed=True,
                  facecolor="0.8", edgecolor="none", hatch="", zorder=1, label="recovered")
    rec.set_gid("recovered")
    ax.add_patch(rec)
    lost = Polygon(np.column_stack([np.r_[ce, de[1:], 0.0], np.r_[cp, dp[1:], cp[0]]]), closed=True,
                   facecolor="white", edgecolor="0.4", hatch="////", linewidth=0, zorder=1, label="lost")
    lost.set_gid("lost")
    ax.add_patch(lost)
    k = thin(ek.size, keep=[int(np.argmax(ek)), int(np.argmin(ek))])
    (line,) = ax.plot(ek[k], pu[k], color="black", linewidth=1.2, label="measured loop", zorder=3)
    line.set_gid("loop")
    ax.axhline(0, color="0.6", linewidth=0.6)
    ax.axvline(0, color="0.6", linewidth=0.6)
    ax.set_xlabel("electric field E (kV/cm)")
    ax.set_ylabel("polarisation P (µC/cm²)")
    ax.set_title(title or "Polarisation–field loop", loc="left", fontsize=11)
    ax.grid(True, color="0.92", linewidth=0.5)
    ax.legend(loc="lower right", fontsize=8)
    text = (f"stored     {fmt_number(en.stored_J_per_m3 / 1e6)} J/cm³\n"
            f"recovered  {fmt_number(en.recovered_J_per_m3 / 1e6)} J/cm³\n"
            f"lost       {fmt_number(en.lost_J_per_m3 / 1e6)} J/cm³\n"
            f"efficiency {en.efficiency:.1%}")
    if len(getattr(en, "halves", ())) == 2:
        text += "\n(mean of the + and − halves;\n shading: + half only)"
    ax.text(0.02, 0.98, text, transform=ax.transAxes, ha="left", va="top", fontsize=8, family="monospace",
            bbox={"boxstyle": "square,pad=0.4", "facecolor": "white", "edgecolor": "0.6"})
    fig.energies = en
    return fig
