"""The charts a report shows, each from the same evaluation as its tables: the headroom of the ranked candidates and
their design energy density across the operating range (shortlist), the ceiling against temperature (comparison)."""

from __future__ import annotations

from ranking.report.model import as_report


def report_charts(obj, *, top: int = 6, bars: int = 15) -> list[tuple[str, str, object]]:
    """(title, caption, figure) of the charts a report can show. A shortlist with its materials attached gives the
    headroom chart and the design energy density of its first ``top`` rows across the range; a comparison gives
    the ceiling against temperature; the captions say exactly what is plotted."""
    import numpy as np

    from materials.numfmt import fmt_celsius, fmt_number
    from ranking import charts

    rep = as_report(obj)
    out = []
    mats = rep.materials or []
    if rep.kind == "shortlist" and rep.rows and rep.raw is not None:
        if mats and rep.target and rep.target.get("tmin_K") is not None:
            from materials.table import ValueTable

            target = charts.as_target(rep.target)
            ceilings = charts.worst_ceilings(mats if isinstance(mats, ValueTable) else ValueTable.from_materials(mats),
                                             target)
            rng = f"{fmt_celsius(target.tmin_K)} … {fmt_celsius(target.tmax_K)}"
            out.append(("Headroom by rank",
                        "Per ranked candidate, a bar from its design energy density (the table's value: breakdown "
                        "scaled to the part's area or segment and failure probability, divided by the margin, at "
                        f"the worst temperature of {rng}) up to its ceiling at that worst temperature; the rank is "
                        "at the left end, the ratio ceiling / design at the right"
                        + (f", the dashed line the target {fmt_number(target.energy_density_J_per_m3 / 1e6)} J/cm³"
                           if target.energy_density_J_per_m3 else "") + ".",
                        charts.headroom_chart(rep.raw, ceilings, rows=bars)))
            rows = rep.raw["ranked"][:top]
            if isinstance(mats, ValueTable):   # the records of the charted rows only
                at = {k: i for i, k in enumerate(mats.keys)}
                shown = [at[r["key"]] for r in rows if r["key"] in at]
                fig = charts.design_temperature_chart(mats.materials(shown), rep.target, rows)
            else:
                fig = charts.design_temperature_chart(mats, rep.target, rows)
            if fig.curves:
                out.append(("Design energy density across the operating range",
                            f"Design energy density of the first {len(rows)} candidates, evaluated by the same "
                            f"engine as the table with the whole range at each temperature from {rng} (its ends, "
                            "evenly between and at every stated data temperature), with the same voltage, energy, "
                            "area or segment area, layer thickness, failure probability and margin; the thick "
                            "segment across the range is the table's worst-case value"
                            + (", the dashed line the target" if target.energy_density_J_per_m3 else "") + ".",
                            fig))
        out.append(("Scores", f"Score of each ranked candidate ({rep.method}); P(first) is the share of Monte "
                    "Carlo draws, with weights and values varied within their ranges, in which it ranks first.",
                    charts.score_chart(rep.raw)))
        return out
    if not mats or rep.kind != "comparison":
        return out
    from materials.lookup import REFERENCE_TEMPERATURE_K

    ranges = [charts.rated_range(m) for m in mats]
    lo = [r[0] for r in ranges if r[0] is not None]
    hi = [r[1] for r in ranges if r[1] is not None]
    t0 = max(min(lo), 213.15) if lo else 233.15
    t1 = min(max(hi), 473.15) if hi else 398.15
    at = rep.condition.get("temperature_K") or REFERENCE_TEMPERATURE_K
    temps = sorted(set(np.linspace(t0, t1, 13).tolist()) | set(charts.data_temperatures(mats, t0, t1)) | {at})
    fig = charts.ceiling_chart(mats, temps, quantity="ceiling")
    if fig.curves:
        out.append(("Ceiling against temperature",
                    "Ceiling ½·ε0·εr·E_bd² (the energy at E_bd on the material's own curve for a nonlinear one) "
                    f"against temperature, at the test coupons' area (no area scaling), evaluated at "
                    f"{fmt_celsius(t0)} … {fmt_celsius(t1)}, at every stated data temperature and at the table's "
                    f"{fmt_celsius(at)}, which gives the table's ceiling column.", fig))
    return out
