"""The headroom chart: per ranked candidate, how far its design energy density sits below its ceiling.

One horizontal bar per candidate, in rank order (first on top), from the design energy density (the engine's
``energy`` criterion: breakdown scaled to the part's area and failure probability, divided by the margin, at the
worst temperature) up to the ceiling ``½·ε0·εr·E_bd²`` at the worst temperature of the range (on the material's
own curve or loop where it has one). The target density is a vertical line; the rank is printed at the left end of
each bar and the ratio ceiling / design at its right end. Plain black and grey.
"""

from __future__ import annotations

import numpy as np

from materials.numfmt import fmt_number
from ranking.charts.common import J_PER_M3_PER_J_PER_CM3, new_figure, plain_log_axis

HEADROOM_ROWS = 25  # bars drawn; a longer ranking shows its head (the tables hold every row)


def worst_ceilings(table, target) -> dict[str, float]:
    """Each material's ceiling (J/m³) at the worst temperature of ``target``'s range: its energy at the lowest
    breakdown field of the range, by its own energy model, from the same engine inputs the shortlist reads."""
    from materials.table import ValueTable
    from ranking.design import energy_density
    from ranking.engine import worst_inputs

    t = table if isinstance(table, ValueTable) else ValueTable.from_materials(list(table))
    inp = worst_inputs(t, tmin_K=target.tmin_K, tmax_K=target.tmax_K, frequency_Hz=target.frequency_Hz,
                       assume_defaults=target.assume_defaults)
    idx = np.arange(len(t.keys))
    with np.errstate(all="ignore"):
        e = np.where(np.isfinite(inp.loop_field), np.minimum(inp.ebd_v, inp.loop_field), inp.ebd_v)
        u = energy_density(inp, idx, np.nan_to_num(e))
    return {k: float(v) for k, v, ok in zip(t.keys, u, inp.eps_has & inp.ebd_has, strict=True) if ok}


def headroom_chart(result: dict, ceilings: dict[str, float], *, rows: int = HEADROOM_ROWS):
    """The headroom chart of a shortlist ``result`` (:func:`ranking.shortlist.shortlist`) with ``ceilings``
    (key → J/m³, :func:`worst_ceilings`).

    Returns the figure; ``fig.values`` maps each drawn candidate's label to ``(rank, design_J_per_m3,
    ceiling_J_per_m3)``, exactly the numbers drawn (tests compare them with the table).
    """
    from ranking.report.marks import MARKS, legend_lines, row_evidence

    ranked = [r for r in (result.get("ranked") or []) if r["key"] in ceilings and "energy" in r["criteria"]][:rows]
    fig, ax = new_figure(7.5, max(2.4, 0.32 * len(ranked) + 1.8))
    fig.values = {}
    if not ranked:
        ax.text(0.5, 0.5, "no ranked candidate with a design energy density", transform=ax.transAxes,
                ha="center", va="center")
        return fig
    y = np.arange(len(ranked))[::-1]
    design = np.array([r["criteria"]["energy"] for r in ranked]) / J_PER_M3_PER_J_PER_CM3
    ceil = np.array([ceilings[r["key"]] for r in ranked]) / J_PER_M3_PER_J_PER_CM3
    top = np.maximum(ceil, design)
    used = set()
    labels = []
    for yi, r, d, c in zip(y, ranked, design, top, strict=True):
        cls = row_evidence(r, ["energy"])["energy"]
        used.add(cls)
        labels.append(f"{r['label']} {MARKS[cls]}" if cls else r["label"])
        bar = ax.barh(yi, c - d, left=d, height=0.55, color="0.85", edgecolor="black", linewidth=0.7)
        bar.patches[0].set_gid(f"headroom:{r['label']}")
        (tick,) = ax.plot([d, d], [yi - 0.3, yi + 0.3], color="black", linewidth=2.2, solid_capstyle="butt")
        tick.set_gid(f"design:{r['label']}")
        ax.annotate(str(r["rank"]), (d, yi), xytext=(-4, 0), textcoords="offset points", ha="right", va="center",
                    fontsize=8, fontweight="bold")
        ax.annotate(f"×{fmt_number(c / d) if d > 0 else '—'}", (c, yi), xytext=(4, 0), textcoords="offset points",
                    ha="left", va="center", fontsize=7, color="0.25")
        fig.values[r["label"]] = (r["rank"], float(r["criteria"]["energy"]), float(ceilings[r["key"]]))
    ax.set_yticks(y, labels=labels, fontsize=8)
    lo = float(min(design[design > 0].min() if (design > 0).any() else 1e-3, top.min()))
    hi = float(top.max())
    t = result.get("target") or {}
    u_t = t.get("energy_density_J_per_m3")
    if u_t:
        lo, hi = min(lo, u_t / J_PER_M3_PER_J_PER_CM3), max(hi, u_t / J_PER_M3_PER_J_PER_CM3)
    if hi / max(lo, 1e-12) > 20:
        ax.set_xscale("log")
        ax.set_xlim(lo / 3, hi * 4)
        plain_log_axis(ax.xaxis, lo / 3, hi * 4)
    else:
        ax.set_xlim(0, hi * 1.25)
    if u_t:
        line = ax.axvline(u_t / J_PER_M3_PER_J_PER_CM3, color="black", linewidth=1.0, linestyle=(0, (5, 3)))
        line.set_gid("target")
        ax.annotate(f"target {fmt_number(u_t / J_PER_M3_PER_J_PER_CM3)} J/cm³", (u_t / J_PER_M3_PER_J_PER_CM3, 1.0),
                    xycoords=("data", "axes fraction"), xytext=(3, 2), textcoords="offset points", fontsize=7,
                    va="bottom")
    ax.set_ylim(-0.8, len(ranked) - 0.2)
    ax.set_xlabel("energy density (J/cm³): thick tick = design, bar end = ceiling at the worst temperature")
    total = (result.get("counts") or {}).get("ranked", len(result.get("ranked") or []))
    ax.set_title("Headroom below the ceiling, by rank" + (f" (first {len(ranked)} of {total})"
                                                             if total > len(ranked) else ""), loc="left", fontsize=10)
    ax.grid(True, axis="x", color="0.92", linewidth=0.5)
    foot = legend_lines(c for c in used if c)
    if foot:
        fig.supxlabel("marks: " + "; ".join(foot), fontsize=6, color="0.3", wrap=True)
    return fig
