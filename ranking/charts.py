"""Charts of a comparison: the property map, design energy against temperature, Weibull plots and P–E loops.

Every function returns a matplotlib ``Figure`` (Agg backend, nothing is shown) so that tests can inspect it and
callers can save it with :func:`save`. The look is deliberately plain: black and grey lines, default markers,
labelled axes with units, a legend. Artists that tests look for carry a ``gid``: ``material:KEY`` for a material's
marker, ``energy-line:U`` for the line of constant energy density U (J/cm³), ``fit:LABEL`` / ``band:LABEL`` / ``data:LABEL`` on a
Weibull plot, ``ceiling:KEY`` and ``target`` on a ceiling chart, ``recovered`` / ``lost`` on a loop chart, ``score:LABEL`` for a bar of the score chart. Gids become
element ids in SVG, so each is unique within its figure.
"""

from __future__ import annotations

import math
from pathlib import Path

import numpy as np

from materials.errors import DataError, InputError

EPSILON_0 = 8.8541878188e-12  # F/m, CODATA 2022 (scipy.constants.epsilon_0); kept here to spare the import
J_PER_M3_PER_J_PER_CM3 = 1e6
V_PER_M_PER_V_PER_UM = 1e6

# A monochrome cycle: series differ by line style and marker, never by a family colour.
_GREYS = ("black", "0.35", "0.55")
_STYLES = ("-", "--", "-.", ":")
_MARKERS = ("o", "s", "^", "D", "v", "P", "X", "<", ">")


def _style(i: int) -> dict:
    return {"color": _GREYS[i % len(_GREYS)], "linestyle": _STYLES[i % len(_STYLES)],
            "marker": _MARKERS[i % len(_MARKERS)]}


def _figure(width_in: float = 7.0, height_in: float = 5.0):
    """A new figure that belongs to no pyplot state (so nothing leaks between calls or threads)."""
    from matplotlib.figure import Figure

    fig = Figure(figsize=(width_in, height_in), dpi=100, layout="constrained")
    return fig, fig.add_subplot()


def save(fig, path, *, force: bool = False) -> Path:
    """Write ``fig`` to ``path`` as PNG or SVG (by extension); refuse to overwrite unless ``force``."""
    path = Path(path)
    ext = path.suffix.lower().lstrip(".")
    if ext not in ("png", "svg"):
        raise InputError(f"chart file must end in .png or .svg, not '{path.suffix or path.name}'", file=str(path))
    if path.exists() and not force:
        raise InputError("file exists (use --force to overwrite)", file=str(path))
    if not path.parent.exists():
        raise InputError(f"folder {path.parent} does not exist", file=str(path))
    if ext == "png":
        fig.savefig(path, format="png", dpi=150)
    else:
        fig.savefig(path, format="svg", metadata=SVG_METADATA)
    return path


# Matplotlib's SVG metadata block links to external vocabularies; a self-contained report wants none of it.
SVG_METADATA = {"Creator": None, "Date": None, "Format": None, "Type": None}


def svg_text(fig) -> str:
    """The figure as an SVG string without the XML prolog or doctype, ready to inline in HTML."""
    import io
    import re

    buf = io.StringIO()
    fig.savefig(buf, format="svg", metadata=SVG_METADATA)
    text = buf.getvalue()
    text = re.sub(r"<\?xml[^>]*\?>\s*", "", text)
    text = re.sub(r"<!DOCTYPE[^>]*>\s*", "", text, flags=re.S)
    text = re.sub(r"<metadata>.*?</metadata>\s*", "", text, flags=re.S)
    return text.strip()


def _plain_log_axis(axis, lo: float, hi: float) -> None:
    """Plain numbers (5, 10, 200) on a log axis; over a narrow span label ticks between the decades too."""
    from matplotlib import ticker

    fmt = ticker.FuncFormatter(lambda v, _pos: f"{v:g}")
    axis.set_major_formatter(fmt)
    span = math.log10(hi / lo)
    if span < 2.5:
        subs = (1.5, 2.0, 3.0, 4.0, 5.0, 6.0, 8.0) if span < 1 else (2.0, 5.0)
        axis.set_minor_locator(ticker.LogLocator(subs=subs))
        axis.set_minor_formatter(fmt)
    else:
        axis.set_minor_formatter(ticker.NullFormatter())


# --- the property map ----------------------------------------------------------------------------------------

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
    return f"{u:g} J/cm³"


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
    fig, ax = _figure(7.5, 5.5)
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
    where = "at about 25 °C" if temperature_K is None else f"at {temperature_K - 273.15:g} °C"
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
    _plain_log_axis(ax.xaxis, x0, x1)
    _plain_log_axis(ax.yaxis, y0, y1)
    ax.grid(True, which="major", color="0.9", linewidth=0.5)
    fig.legend(loc="outside lower center", ncols=3, fontsize=8, frameon=False)
    fig.skipped = skipped
    return fig


# --- design energy density against temperature ----------------------------------------------------------------

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
    fig, ax = _figure(7.5, 5.0)
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
        st = _style(i)
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
        bits.append(f"area {area:g} m²")
    if pf is not None:
        bits.append(f"failure probability {pf:g}")
    if mg and mg != 1.0:
        bits.append(f"margin {mg:g}")
    ax.set_title("Design energy density against temperature" + ("\n" + ", ".join(bits) if bits else ""),
                 loc="left", fontsize=10)
    finite = np.concatenate([c[1][~np.isnan(c[1])] for c in curves.values()]) if curves else np.array([])
    u_target = t.get("energy_density_J_per_m3")
    if finite.size and finite.min() > 0 and finite.max() / finite.min() > 30:
        ax.set_yscale("log")
    if u_target:
        line = ax.axhline(u_target / J_PER_M3_PER_J_PER_CM3, color="black", linewidth=1.0, linestyle=(0, (6, 3)),
                          label=f"target {u_target / J_PER_M3_PER_J_PER_CM3:g} J/cm³")
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


# --- Weibull probability plot ---------------------------------------------------------------------------------

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
    fig, ax = _figure(7.0, 5.0)
    fits = {}
    e_all = []
    for i, d in enumerate(items):
        fields = np.asarray(d["fields"], dtype=float)
        fit = d.get("fit") or fit_weibull(fields, d["censored"], confidence=confidence)
        fits[d["label"]] = fit
        x, f = plotting_positions(fields, d["censored"])
        st = _style(i)
        xe = x / V_PER_M_PER_V_PER_UM
        e_all.append(xe)
        (pts,) = ax.plot(xe, _weibull_y(f), linestyle="none", marker=st["marker"], color=st["color"],
                         markerfacecolor="white" if i % 2 else st["color"], markersize=5,
                         label=f"{d['label']} (n = {fit.n}" + (f", {fit.n_censored} censored)" if fit.n_censored
                                                                 else ")"))
        pts.set_gid(f"data:{d['label']}")
        p = np.geomspace(max(1e-3, f.min() / 3), min(0.999, 1 - (1 - f.max()) / 3), 80)
        q = np.asarray(fit.quantile(p)) / V_PER_M_PER_V_PER_UM
        (line,) = ax.plot(q, _weibull_y(p), color=st["color"], linestyle=st["linestyle"], linewidth=1.1,
                          label=f"fit: α = {fit.scale / V_PER_M_PER_V_PER_UM:.4g} V/µm, β = {fit.shape:.3g}")
        line.set_gid(f"fit:{d['label']}")
        lo, hi = fit.quantile_bounds(p)
        lo, hi = np.asarray(lo) / V_PER_M_PER_V_PER_UM, np.asarray(hi) / V_PER_M_PER_V_PER_UM
        band = ax.fill_betweenx(_weibull_y(p), lo, hi, color="0.85", alpha=0.6, linewidth=0, zorder=0,
                                label=f"{fit.confidence:.0%} bounds" if i == 0 else None)
        band.set_gid(f"band:{d['label']}")
    ax.set_xscale("log")
    lo_e, hi_e = ax.get_xlim()
    _plain_log_axis(ax.xaxis, lo_e, hi_e)
    ax.set_xlabel("breakdown field E (V/µm), logarithmic: x = ln E")
    ax.set_ylabel("ln(−ln(1 − F))")
    ax.set_title("Weibull plot of breakdown fields", loc="left", fontsize=11)
    # A right-hand axis in percent failed is how breakdown engineers read these plots.
    ticks = np.array([0.01, 0.05, 0.1, 0.2, 0.5, 0.632, 0.9, 0.99])
    sec = ax.secondary_yaxis("right", functions=(_from_weibull_y, _weibull_y_safe))
    sec.set_ylabel("failure probability F (%)")
    sec.set_yticks(ticks, labels=[f"{t * 100:.3g}" for t in ticks])
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


# --- polarisation–field loop ----------------------------------------------------------------------------------

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
    fig, ax = _figure(7.0, 5.0)
    charge, discharge = _branches(e, p)
    ce, cp = _zero_end(ek, pu, charge)
    de, dp = _zero_end(ek, pu, discharge)
    rec = Polygon(np.column_stack([np.r_[de, 0.0, 0.0], np.r_[dp, dp[-1], dp[0]]]), closed=True,
                  facecolor="0.8", edgecolor="none", hatch="", zorder=1, label="recovered")
    rec.set_gid("recovered")
    ax.add_patch(rec)
    lost = Polygon(np.column_stack([np.r_[ce, de[1:], 0.0], np.r_[cp, dp[1:], cp[0]]]), closed=True,
                   facecolor="white", edgecolor="0.4", hatch="////", linewidth=0, zorder=1, label="lost")
    lost.set_gid("lost")
    ax.add_patch(lost)
    (line,) = ax.plot(ek, pu, color="black", linewidth=1.2, label="measured loop", zorder=3)
    line.set_gid("loop")
    ax.axhline(0, color="0.6", linewidth=0.6)
    ax.axvline(0, color="0.6", linewidth=0.6)
    ax.set_xlabel("electric field E (kV/cm)")
    ax.set_ylabel("polarisation P (µC/cm²)")
    ax.set_title(title or "Polarisation–field loop", loc="left", fontsize=11)
    ax.grid(True, color="0.92", linewidth=0.5)
    ax.legend(loc="lower right", fontsize=8)
    text = (f"stored     {en.stored_J_per_m3 / 1e6:.4g} J/cm³\n"
            f"recovered  {en.recovered_J_per_m3 / 1e6:.4g} J/cm³\n"
            f"lost       {en.lost_J_per_m3 / 1e6:.4g} J/cm³\n"
            f"efficiency {en.efficiency:.1%}")
    if len(getattr(en, "halves", ())) == 2:
        text += "\n(mean of the + and − halves;\n shading: + half only)"
    ax.text(0.02, 0.98, text, transform=ax.transAxes, ha="left", va="top", fontsize=8, family="monospace",
            bbox={"boxstyle": "square,pad=0.4", "facecolor": "white", "edgecolor": "0.6"})
    fig.energies = en
    return fig


# --- a chart a shortlist result alone can give ----------------------------------------------------------------

SCORE_ROWS = 30  # bars in the score chart; a longer ranking shows its head (the table has every row)
# Beyond this many materials the map draws the ones not highlighted as one artist (one marker set, one legend
# entry), not one per material: thousands of separate error-bar artists take minutes to draw.
MAP_SINGLE_ARTISTS = 200


def score_chart(result: dict):
    """Horizontal bars of the ranked materials' scores (the first SCORE_ROWS), with P(first) printed.

    ``result`` is a shortlist result dict (see :func:`ranking.shortlist.shortlist`).
    """
    every = list(result.get("ranked") or [])
    ranked = every[:SCORE_ROWS]
    fig, ax = _figure(7.0, max(2.0, 0.35 * len(ranked) + 1.2))
    if not ranked:
        ax.text(0.5, 0.5, "no material ranked", transform=ax.transAxes, ha="center", va="center")
        return fig
    names = [f"{r.get('rank', i + 1)}. {r.get('label') or r['key']}" for i, r in enumerate(ranked)]
    scores = [float(r.get("score") or 0.0) for r in ranked]
    y = np.arange(len(ranked))[::-1]
    bars = ax.barh(y, scores, color="0.6", edgecolor="black", linewidth=0.6, height=0.6, label="score")
    for b, r in zip(bars, ranked):
        b.set_gid(f"score:{r.get('label') or r['key']}")
    for yi, r, s in zip(y, ranked, scores):
        pt = r.get("p_top")
        if pt is not None:
            ax.text(s, yi, f"  P(first) {pt:.0%}", va="center", fontsize=7)
    ax.set_yticks(y, labels=names, fontsize=8)
    method = result.get("method", "")
    ax.set_xlabel(f"score ({method})" if method else "score")
    ax.set_xlim(0, max(scores) * 1.35 if max(scores) > 0 else 1)
    total = (result.get("counts") or {}).get("ranked", len(every))
    ax.set_title("Ranking" if total <= len(ranked) else f"Ranking: the first {len(ranked)} of {total}", loc="left",
                 fontsize=11)
    ax.grid(True, axis="x", color="0.92", linewidth=0.5)
    return fig
