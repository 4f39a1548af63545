"""The charts a report shows: the ranking's scores, the permittivity–breakdown map, design energy against
temperature (figures from :mod:`ranking.charts`)."""

from __future__ import annotations

from ranking.report.model import as_report


def report_charts(obj, *, top: int = 6) -> list[tuple[str, str, object]]:
    """(title, caption, figure) of the charts a report can show: the ranking's scores (shortlist), and with
    materials attached the property map and design energy against temperature."""
    import numpy as np

    from ranking import charts

    rep = as_report(obj)
    out = []
    if rep.kind == "shortlist" and rep.rows and rep.raw is not None:
        out.append(("Scores", f"Score of each ranked candidate ({rep.method}); P(first) is the share of Monte "
                    "Carlo draws, with weights and values varied within their ranges, in which it ranks first.",
                    charts.score_chart(rep.raw)))
    mats = rep.materials or []
    if not mats:
        return out
    shown = {r.key for r in rep.rows[:top]} if rep.kind == "shortlist" else set()
    fig = charts.map_chart(mats, highlight=shown, highlight_label=f"top {len(shown)} of the shortlist")
    out.append(("Permittivity and breakdown field",
                "Small-signal εr against breakdown field at about 25 °C, bars spanning each value's range; grey "
                "lines hold ½·ε0·εr·E² constant (J/cm³)." + (" Filled markers: the top of the shortlist." if shown
                                                              else ""), fig))
    by_key = {m.key: m for m in mats}
    area = None
    if rep.kind == "shortlist" and rep.target and rep.target.get("tmin_K") is not None:
        t0, t1 = rep.target["tmin_K"], rep.target["tmax_K"]
        keys: dict[str, None] = {}
        for r in rep.rows:
            if r.key in by_key:
                keys.setdefault(r.key)
                if len(keys) == top:
                    break
        chosen = [by_key[k] for k in keys]
        pad = max(10.0, 0.1 * (t1 - t0))
        temps = np.linspace(t0 - pad, t1 + pad, 15)
        cap = ("Design energy density (breakdown field scaled to the part's area and failure probability, divided "
               "by the margin) of the top candidates; the band is the operating range, the dashed line the target.")
        target = rep.target
        if target.get("area_m2") is None:
            area = {r.key: (rep.raw or {}).get("ranked", [{}])[i].get("design", {}).get("area_m2")
                    for i, r in enumerate(rep.rows) if rep.raw}
            area = {k: v for k, v in area.items() if v}
    else:
        chosen = list(mats)
        ranges = [charts.rated_range(m) for m in mats]
        lo = [r[0] for r in ranges if r[0] is not None]
        hi = [r[1] for r in ranges if r[1] is not None]
        t0 = max(min(lo), 213.15) if lo else 233.15
        t1 = min(max(hi), 473.15) if hi else 398.15
        temps = np.linspace(t0, t1, 15)
        cap = "Ceiling ½·ε0·εr·E_bd² against temperature over the materials' rated range (no area scaling)."
        target = None
    if chosen:
        fig = charts.ceiling_chart(chosen, temps, target=target, area_m2=area)
        if fig.curves:
            out.append(("Design energy density against temperature", cap, fig))
    return out
