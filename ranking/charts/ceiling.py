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
                  margin: float | None = None, assume_defaults: bool | None = None, quantity: str = "design"):
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
        quantity: "design" (the design density) or "ceiling" (``½·ε0·εr·E_bd²``, or the energy at E_bd on the
            material's own curve, no area scaling): what is plotted, named on the axis.

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
            name = "ceiling_J_per_m3" if quantity == "ceiling" else "design_J_per_m3"
            d = getattr(c, name) if not isinstance(c, dict) else c[name]
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
    what = "ceiling energy density" if quantity == "ceiling" else "design energy density"
    ax.set_ylabel(f"{what} (J/cm³)")
    bits = []
    if isinstance(area, dict):
        bits.append("each part's own area")
    elif area is not None:
        bits.append(f"area {fmt_number(area, 6)} m²")
    if pf is not None:
        bits.append(f"failure probability {fmt_number(pf, 6)}")
    if mg and mg != 1.0:
        bits.append(f"margin {fmt_number(mg, 6)}")
    ax.set_title(what[:1].upper() + what[1:] + " against temperature" + ("\n" + ", ".join(bits) if bits else ""),
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


def as_target(target):
    """A :class:`ranking.target.Target` from itself or from its dict (``Target.to_dict``, a saved shortlist)."""
    from dataclasses import fields

    from ranking.target import Target

    if isinstance(target, dict):
        names = {f.name for f in fields(Target)}
        d = {k: v for k, v in target.items() if k in names}
        d["families"] = tuple(d.get("families") or ())
        d["thicknesses_m"] = tuple(d.get("thicknesses_m") or ())
        d["weights"] = dict(d.get("weights") or {})
        target = Target(**d)
    return target


def target_at(target, temperature_K: float):
    """``target`` (a :class:`ranking.target.Target` or its dict) with its whole range at one temperature."""
    from dataclasses import replace

    return replace(as_target(target), tmin_K=float(temperature_K), tmax_K=float(temperature_K))


def data_temperatures(materials, lo_K: float, hi_K: float) -> list[float]:
    """The temperatures inside ``lo_K``…``hi_K`` at which the materials state a permittivity or breakdown field."""
    out = set()
    for m in materials:
        for v in m.values:
            if v.property in ("relative_permittivity", "breakdown_field") and v.temperature_K is not None \
                    and lo_K <= v.temperature_K <= hi_K:
                out.add(float(v.temperature_K))
    return sorted(out)


def design_temperature_chart(materials, target, rows, *, points: int = 13):
    """Design energy density against temperature for shortlist ``rows``, from the evaluation engine.

    Each temperature is evaluated by :func:`ranking.engine.evaluate` with the target's whole range at that
    temperature and everything else as given (voltage, energy or area, segment area, failure probability, margin,
    and the row's fixed layer thickness), over the range's ends, ``points`` steps between them and every stated
    data temperature inside. The table's own worst-case value over the range is drawn as a thick segment across the
    range. ``rows`` are shortlist rows (``key``, ``label``, ``thickness_m``, ``criteria``).

    Returns the figure; ``fig.curves`` maps a row's label to ``(temps_K, J_per_m3)`` and ``fig.values`` to its
    table value (J/m³), the number the segment is drawn at.
    """
    from materials.table import ValueTable
    from ranking.engine import evaluate

    t0 = target["tmin_K"] if isinstance(target, dict) else target.tmin_K
    t1 = target["tmax_K"] if isinstance(target, dict) else target.tmax_K
    full = target_at(target, t0)
    by_key = {m.key: m for m in materials}
    rows = [r for r in rows if r["key"] in by_key]
    chosen = list(dict.fromkeys(r["key"] for r in rows))
    table = ValueTable.from_materials([by_key[k] for k in chosen])
    where = {k: i for i, k in enumerate(table.keys)}
    temps = np.array(sorted(set(np.linspace(t0, t1, points).tolist())
                            | set(data_temperatures([by_key[k] for k in chosen], t0, t1))))
    layers = sorted({r.get("thickness_m") for r in rows}, key=lambda x: -1 if x is None else x)
    u = {th: np.full((temps.size, len(chosen)), np.nan) for th in layers}
    for j, tk in enumerate(temps):
        tt = target_at(full, tk)
        for th in layers:
            cols = evaluate(table, tt, thickness_m=th)
            val = np.asarray(cols.values["energy"], dtype=float)
            out_of_rating = cols.fails["rated-outside-max"] | cols.fails["rated-outside-min"]
            u[th][j] = np.where(out_of_rating, np.nan, val)
    from ranking.report.marks import MARKS, legend_lines, row_evidence

    fig, ax = new_figure(7.5, 5.0)
    fig.curves, fig.values = {}, {}
    tc = temps - 273.15
    used = set()
    for i, r in enumerate(rows):
        st = style(i)
        series = u[r.get("thickness_m")][:, where[r["key"]]]
        fig.curves[r["label"]] = (temps, series)
        # the row's evidence mark for its energy, as in the table
        cls = row_evidence(r, ["energy"])["energy"] if "source_kinds" in r else None
        used.add(cls)
        label = f"{r['rank']}. {r['label']}" + (f" {MARKS[cls]}" if cls else "")
        (line,) = ax.plot(tc, series / J_PER_M3_PER_J_PER_CM3, color=st["color"], linestyle=st["linestyle"],
                          marker=st["marker"], markersize=3.5, linewidth=1.1, label=label)
        line.set_gid(f"design:{r['label']}")
        value = r["criteria"].get("energy")
        if value is not None:
            (seg,) = ax.plot([t0 - 273.15, t1 - 273.15], [value / J_PER_M3_PER_J_PER_CM3] * 2, color=st["color"],
                             linewidth=3.0, alpha=0.55, solid_capstyle="butt")
            seg.set_gid(f"table:{r['label']}")
            fig.values[r["label"]] = float(value)
    finite = np.concatenate([c[1][np.isfinite(c[1])] for c in fig.curves.values()] + [np.array(list(
        fig.values.values()))]) if fig.curves else np.array([])
    if finite.size and finite.min() > 0 and finite.max() / finite.min() > 30:
        ax.set_yscale("log")
    t = full.to_dict()
    if t.get("energy_density_J_per_m3"):
        line = ax.axhline(t["energy_density_J_per_m3"] / J_PER_M3_PER_J_PER_CM3, color="black", linewidth=1.0,
                          linestyle=(0, (6, 3)), label="target")
        line.set_gid("target")
    ax.set_xlim(t0 - 273.15, t1 - 273.15)
    ax.set_xlabel("temperature (°C)")
    ax.set_ylabel("design energy density (J/cm³)")
    ax.set_title("Design energy density across the operating range", loc="left", fontsize=10)
    ax.grid(True, color="0.9", linewidth=0.5)
    fig.legend(loc="outside right upper", fontsize=7, frameon=False)
    foot = legend_lines(c for c in used if c)
    if foot:
        fig.supxlabel("marks: " + "; ".join(foot), fontsize=6, color="0.3", wrap=True)
    return fig
