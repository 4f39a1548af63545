"""Design energy density against temperature for chosen materials, with the target marked."""

from __future__ import annotations

import numpy as np

from materials.errors import DataError, InputError
from materials.numfmt import fmt_number
from ranking.charts.common import J_PER_M3_PER_J_PER_CM3, new_figure, style


def _target_numbers(target) -> dict:
    if target is None:
        return {}
    if isinstance(target, (int, float)):
        return {"energy_density_J_per_m3": float(target)}
    return dict(target)


def ceiling_chart(materials, temps_K, *, target=None, area_m2=None, failure_probability: float | None = None,
                  margin: float | None = None, assume_defaults: bool | None = None):
    """Design energy density (J/cm³) against temperature (°C) for each material, with the target marked.

    The density at each temperature is :func:`ranking.ceiling.ceiling_at`'s design density: the breakdown field
    scaled to the part's area and failure probability, divided by the margin. Points outside a material's data
    are held at the end value and drawn open (extrapolated); temperatures where a value is missing leave a gap.

    Args:
        materials: :class:`~materials.records.MaterialData` list.
        temps_K: temperatures (K) to evaluate.
        target: a number (required energy density, J/m³) or a shortlist target dict (``energy_density_J_per_m3``,
            ``tmin_K``, ``tmax_K``, ``area_m2``, ``failure_probability``, ``margin``); explicit keyword arguments
            override the dict.
        area_m2: the part's active area (m²), or a dict key → area when each candidate has its own (a
            shortlist sized from the energy); None for no area scaling.
        failure_probability, margin: design conditions passed to ``ceiling_at``.
        assume_defaults: let ``ceiling_at`` take common-practice Weibull defaults where the data lack them
            (default: the target's setting, else True).

    Returns:
        The figure; ``fig.curves`` maps key to ``(temps_K, J_per_m3, extrapolated)`` arrays and ``fig.skipped``
        lists ``(key, reason)``.
    """
    from ranking.ceiling import ceiling_at

    t = _target_numbers(target)
    area = area_m2 if area_m2 is not None else t.get("area_m2")
    pf = failure_probability if failure_probability is not None else t.get("failure_probability")
    mg = margin if margin is not None else (t.get("margin") or 1.0)
    defaults = assume_defaults if assume_defaults is not None else bool(t.get("assume_defaults", True))
    temps = np.asarray(sorted(float(x) for x in temps_K))
    if temps.size == 0:
        raise InputError("ceiling chart needs at least one temperature")
    fig, ax = new_figure(7.5, 5.0)
    curves, skipped = {}, []
    cut_any = False
    for i, m in enumerate(materials):
        u = np.full(temps.size, np.nan)
        ex = np.zeros(temps.size, dtype=bool)
        reason = None
        a = area.get(m.key) if isinstance(area, dict) else area
        lo_K, hi_K = rated_range(m)
        for j, tk in enumerate(temps):
            if (lo_K is not None and tk < lo_K - 1e-6) or (hi_K is not None and tk > hi_K + 1e-6):
                cut_any = True
                continue
            try:
                c = ceiling_at(m, temperature_K=float(tk), area_m2=a, failure_probability=pf, margin=mg,
                               extrapolate=True, assume_defaults=defaults)
            except DataError as exc:
                reason = str(exc)
                continue
            d = c.design_J_per_m3 if not isinstance(c, dict) else c["design_J_per_m3"]
            u[j] = d if d is not None else np.nan
            ex[j] = c.extrapolated if not isinstance(c, dict) else c["extrapolated"]
        if np.all(np.isnan(u)):
            skipped.append((m.key, reason or "no design energy density"))
            continue
        curves[m.key] = (temps, u, ex)
        st = style(i)
        tc = temps - 273.15
        uc = u / J_PER_M3_PER_J_PER_CM3
        inside = ~ex & ~np.isnan(uc)
        (line,) = ax.plot(tc, uc, color=st["color"], linestyle=st["linestyle"], linewidth=1.2, label=m.key,
                          marker=st["marker"], markersize=4, markevery=[int(k) for k in np.flatnonzero(inside)])
        line.set_gid(f"ceiling:{m.key}")
        if ex.any():
            ax.plot(tc[ex], uc[ex], linestyle="none", marker=st["marker"], color=st["color"],
                    markerfacecolor="white", markersize=4)
    ax.set_xlabel("temperature (°C)")
    ax.set_ylabel("design energy density (J/cm³)")
    bits = []
    if isinstance(area, dict):
        bits.append("each part's own area")
    elif area is not None:
        bits.append(f"area {fmt_number(area, 6)} m²")
    if pf is not None:
        bits.append(f"failure probability {fmt_number(pf, 6)}")
    if mg and mg != 1.0:
        bits.append(f"margin {fmt_number(mg, 6)}")
    ax.set_title("Design energy density against temperature" + ("\n" + ", ".join(bits) if bits else ""),
                 loc="left", fontsize=10)
    finite = np.concatenate([c[1][~np.isnan(c[1])] for c in curves.values()]) if curves else np.array([])
    u_target = t.get("energy_density_J_per_m3")
    if finite.size and finite.min() > 0 and finite.max() / finite.min() > 30:
        ax.set_yscale("log")
    if u_target:
        line = ax.axhline(u_target / J_PER_M3_PER_J_PER_CM3, color="black", linewidth=1.0, linestyle=(0, (6, 3)),
                          label=f"target {fmt_number(u_target / J_PER_M3_PER_J_PER_CM3, 6)} J/cm³")
        line.set_gid("target")
    if t.get("tmin_K") is not None and t.get("tmax_K") is not None:
        span = ax.axvspan(t["tmin_K"] - 273.15, t["tmax_K"] - 273.15, color="0.9", zorder=0,
                          label="operating range")
        span.set_gid("target-range")
    ax.grid(True, color="0.9", linewidth=0.5)
    if curves or u_target:
        fig.legend(loc="outside right upper", fontsize=8, frameon=False)
    foot = []
    if any(c[2].any() for c in curves.values()):
        foot.append("open markers: outside the data, end value held")
    if cut_any:
        foot.append("curves stop at each material's rated temperature limits")
    if foot:
        fig.supxlabel("; ".join(foot), fontsize=7, color="0.3")
    fig.curves, fig.skipped = curves, skipped
    return fig


def rated_range(m):
    """(min, max) rated temperature of a material (K), None where not stated."""
    from materials.lookup import value_at

    out = []
    for prop in ("min_temperature", "max_temperature"):
        try:
            out.append(value_at(m, prop).value)
        except DataError:
            out.append(None)
    return tuple(out)
