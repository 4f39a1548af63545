"""``holdoff shortlist``: rank the store's dielectrics against a target and explain every verdict."""


from pathlib import Path
from typing import Annotated, Optional

import typer

from cli import state
from cli.output import DefaultsOpt, ExtrapolateOpt, JsonOpt, QuietOpt, SectionsOpt, StrictOpt, set_quiet
from cli.service_opts import (AmbientOpt, CapacitanceOpt, LifeFractionOpt, LifeOpt, PackingOpt, RippleOpt,
                              SeriesResistanceOpt, ThermalResistanceOpt)

# Excluded candidates listed in the text view; the rest are counted (all of them are in --json).
EXCLUDED_SHOWN = 40
MIN_DRAWS = 100


def shortlist(
    voltage: Annotated[Optional[str], typer.Option("--voltage", help="Working voltage (V unless a unit).")] = None,
    tmin: Annotated[Optional[str], typer.Option("--tmin", help="Lowest temperature (°C unless a unit).")] = None,
    tmax: Annotated[Optional[str], typer.Option("--tmax", help="Highest temperature (°C unless a unit).")] = None,
    energy_density: Annotated[Optional[str], typer.Option("--energy-density", help="Required design energy "
                                                          "density (J/cm³ unless a unit).")] = None,
    energy: Annotated[Optional[str], typer.Option("--energy", help="Energy the part stores (J unless a unit); "
                                                  "sizes each candidate.")] = None,
    method: Annotated[str, typer.Option("--method", help="topsis, weighted or pareto.")] = "topsis",
    weights: Annotated[Optional[str], typer.Option("--weights", help="e.g. energy=3,loss=1 (criteria: energy, "
                                                   "volume, mass, loss, drift, healing, confidence).")] = None,
    target: Annotated[Optional[Path], typer.Option("--target", help="Target TOML file (see README); options "
                                                   "override it.")] = None,
    top: Annotated[int, typer.Option("--top", metavar="N", help="Ranked rows to show.")] = 10,
    k: Annotated[int, typer.Option("--k", metavar="K", help="The k of P(top k): the share of Monte Carlo draws in "
                                   "which a candidate ranks among the first k.")] = 3,
    export: Annotated[Optional[Path], typer.Option("--export", help="Also write the result to FILE "
                                                   "(.csv, .xlsx, .md, .html, .json).")] = None,
    force: Annotated[bool, typer.Option("--force", help="Overwrite the export file.")] = False,
    frequency: Annotated[Optional[str], typer.Option("--frequency", help="Frequency for the loss tangent "
                                                     "(Hz unless a unit; default 1 kHz).")] = None,
    max_loss: Annotated[Optional[float], typer.Option("--max-loss", help="Exclude above this tan δ.")] = None,
    failure_prob: Annotated[Optional[float], typer.Option("--failure-prob", help="Accepted short-term failure "
                                                          "probability of the part (default 0.01).")] = None,
    margin: Annotated[Optional[float], typer.Option("--margin", help="Divides the design field (default 1).")]
    = None,
    area: Annotated[Optional[str], typer.Option("--area", help="Active area (m² unless a unit); else derived "
                                                "from --energy per candidate.")] = None,
    segment_area: Annotated[Optional[str], typer.Option("--segment-area", help="Self-healing films with "
                                                        "segmented electrodes: scale breakdown to one segment "
                                                        "(cm² unless a unit); p is then per segment.")] = None,
    family: Annotated[Optional[str], typer.Option("--family", help="Only these families (comma-separated).")]
    = None,
    thickness: Annotated[Optional[str], typer.Option("--thickness", help="Rank (material, thickness) pairs, "
                                                     "e.g. 2.5,3,4,6um.")] = None,
    capacitance: CapacitanceOpt = None,
    ripple: RippleOpt = None,
    series_resistance: SeriesResistanceOpt = None,
    thermal_resistance: ThermalResistanceOpt = None,
    ambient: AmbientOpt = None,
    life: LifeOpt = None,
    life_fraction: LifeFractionOpt = None,
    packing_factor: PackingOpt = None,
    strict: StrictOpt = False,
    extrapolate: ExtrapolateOpt = False,
    sections: SectionsOpt = None,
    assume_defaults: DefaultsOpt = False,
    draws: Annotated[int, typer.Option("--draws", metavar="N", help="Monte Carlo draws for P(1st) and P(top k) "
                                       "(at least 100).")] = 1000,
    seed: Annotated[int, typer.Option("--seed", help="Seed of the Monte Carlo draws.")] = 0,
    json_out: JsonOpt = False,
    quiet: QuietOpt = False,
):
    """Rank dielectrics for a voltage, temperature range and energy; every exclusion with its reason. Exit code 1
    when none is ranked."""
    from db.query import load_table
    from materials.errors import InputError
    from ranking.shortlist import shortlist as run
    from ranking.target import target_from_options

    if top < 1:
        raise InputError("--top must be at least 1")
    if k < 1:
        raise InputError("--k must be at least 1")
    if draws < MIN_DRAWS:
        raise InputError(f"--draws must be at least {MIN_DRAWS}")
    set_quiet(quiet)
    if export:
        from ranking.outfile import check_output
        from ranking.report import ALIASES, FORMATS

        check_output(export, FORMATS, force=force, aliases=ALIASES)
    t = target_from_options(target_file=target, voltage=voltage, tmin=tmin, tmax=tmax, energy=energy,
                            energy_density=energy_density, frequency=frequency, max_loss_tangent=max_loss,
                            failure_probability=failure_prob, margin=margin, area=area, segment_area=segment_area,
                            families=family, thicknesses=thickness, weights=weights, strict=strict,
                            extrapolate=extrapolate, max_sections=sections,
                            capacitance=capacitance, ripple=ripple, series_resistance=series_resistance,
                            thermal_resistance=thermal_resistance, ambient=ambient, life=life,
                            life_fraction=life_fraction, packing_factor=packing_factor)
    with state.store().reading() as conn:
        table = load_table(conn)
    # The text view explains only the rows it shows; --json and --export carry every row in full.
    whole = bool(json_out or export)
    result = run(table, t, method=method, top_k=k, draws=draws, seed=seed,
                 rows=None if whole else top, excluded_rows=None if whole else EXCLUDED_SHOWN, evidence_top=top)
    if export:
        from ranking.report import export_result

        # Only the HTML report draws charts, which read the materials' values.
        charted = export.suffix.lower() in (".html", ".htm")
        export_result(result, export, force=force, materials=table if charted else None)
    if json_out:
        from cli.output import print_json
        from ranking.report.marks import with_marks

        print_json(with_marks(result))
    else:
        render(result, top=top)
        if t.stacks:
            from cli.stack_cmds import render_sized

            render_sized(result["stacks"])
        if export:
            from cli.output import say

            say(f"wrote {export}")
    if not result["ranked"]:
        from materials.errors import NOTHING_MATCHED

        raise typer.Exit(NOTHING_MATCHED)


# Terminal columns of the criteria: (criterion, heading, how a value is written).
_SHOWN = (("energy", "J/cm³", None), ("volume", "volume", "m3"), ("mass", "mass", "kg"), ("loss", "tan δ", None),
          ("drift", "ΔC %", None))


def render(result: dict, *, top: int) -> None:
    from cli.output import esc, say, table
    from materials.numfmt import fmt_celsius, fmt_eng, fmt_number, to_display
    from ranking.report.marks import MARKS, row_evidence

    t = result["target"]
    head = [fmt_eng(t["voltage_V"], "V"), f"{fmt_celsius(t['tmin_K'])} … {fmt_celsius(t['tmax_K'])}"]
    if t.get("energy_J"):
        head.append(fmt_eng(t["energy_J"], "J"))
    if t.get("energy_density_J_per_m3"):
        head.append(f"≥ {fmt_number(t['energy_density_J_per_m3'] / 1e6)} J/cm³")
    head.append(f"p_fail {fmt_number(t['failure_probability'])}, margin {fmt_number(t['margin'])}")
    if t.get("ripple"):
        head.append("ripple " + " + ".join(f"{fmt_eng(h['current_A'], 'A')} at {fmt_eng(h['frequency_Hz'], 'Hz')}"
                                           for h in t["ripple"])
                    + f", R_s {fmt_eng(t['series_resistance_ohm'], 'Ω')}, "
                      f"R_th {fmt_number(t['thermal_resistance_K_per_W'])} K/W")
    if t.get("life_s"):
        head.append(f"life {fmt_number(t['life_s'] / 3600.0)} h at {fmt_number(t['life_fraction'] * 100)} % failed")
    say(f"[bold]shortlist[/] ({result['method']}): " + esc(", ".join(head))
        + (f" — {esc(t['name'])}" if t.get("name") else ""), wrap=True)
    crit = {c["name"]: c for c in result["criteria"]}
    k = result["robustness"]["top_k"]
    per = "" if t.get("energy_J") else "/J"
    shown = [(n, h + (per if u else ""), u) for n, h, u in _SHOWN if n in crit]

    def cell(name, unit, v, cls):
        c = crit[name]
        if v is None:
            return "—"
        shown = to_display(v, c["unit"], c["display_unit"]) if not unit else None
        if unit:
            text = fmt_eng(v, unit)
        elif name == "energy" and 0 < abs(shown) < 1e-3:
            text = fmt_eng(shown, "J") + "/cm³"   # a prefix, not an exponent: 1.13 nJ/cm³
        else:
            text = fmt_number(shown)
        return text + (MARKS[cls] if cls else "")

    cols = ["#", "key", "score", *[h for _n, h, _u in shown], "P(1st)", f"P(top {k})", "conf."]
    service = [c for c, key in (("hot spot", "hot_spot_K"), ("B-life h", "b_life_s"), ("limit", "binding_limit"))
               if any(r["design"].get(key) is not None for r in result["ranked"][:top])]
    cols += [*service, "binding"]
    body, used = [], set()
    for r in result["ranked"][:top]:
        ev = row_evidence(r, [n for n, _h, _u in shown])
        used |= {c for c in ev.values() if c}
        body.append([r["rank"], r["label"], f"{r['score']:.3f}",
                     *[cell(n, u, r["criteria"].get(n), ev[n]) for n, _h, u in shown],
                     _share(r["p_top"]), _share(r["p_top_k"]), f"{r['confidence']:.2f}",
                     *[_service_cell(c, r["design"]) for c in service], r["binding"]])
    counts = result.get("counts") or {"ranked": len(result["ranked"]), "excluded": len(result["excluded"])}
    if not body:
        # nothing ranked: no empty grid, just the count; the exclusions below say why
        say(f"0 ranked, {counts['excluded']} excluded")
        _exclusions(result, counts)
        return
    table(cols, body, right={0} | set(range(2, 3 + len(shown) + 3)), keys={1},
          title=f"{counts['ranked']} ranked, {counts['excluded']} excluded"
          + (f" (the first {len(body)} shown)" if counts["ranked"] > len(body) else ""),
          legend=[marks_legend(used)])
    ev = result.get("evidence") or {}
    if ev.get("rows"):
        say(f"the top {ev['rows']} rest on {ev['published']:.0%} published, {ev['lab']:.0%} lab, "
            f"{ev['common_practice']:.0%} common-practice and {ev['assumed_or_recollected']:.0%} assumed or "
            "recollected values", wrap=True)
    say(f"P(1st), P(top {k}): share of {result['robustness']['draws']} Monte Carlo draws (weights and values "
        f"varied within their ranges) in which it ranks first, or among the first {k}.", wrap=True)
    if result["ranked"]:
        win = result["ranked"][0]
        parts = ", ".join(f"{n} {v:+.3f}" for n, v in sorted(win["contributions"].items(), key=lambda x: -x[1]))
        say(f"winner {esc(win['label'])}: score {fmt_number(win['score'])} from {parts}", wrap=True)
        for r in result["ranked"][1:min(top, 4)]:
            say(f"  {esc(r['label'])}: {esc(r['versus_winner'])}"
                + (f"; dominated by {esc(r['dominated_by'])}" if r["dominated_by"] else ""), wrap=True)
    _exclusions(result, counts)


def _share(p) -> str:
    return "—" if p is None or p != p else f"{p:.2f}"


def marks_legend(used) -> str:
    """The one line under a table that explains the evidence marks it uses."""
    from ranking.report.marks import LEGEND, MARKS, ORDER

    return "marks: " + "; ".join(f"{MARKS[c]} {LEGEND[c]}" for c in reversed(ORDER) if c in used)


def _service_cell(column: str, design: dict) -> str:
    from materials.numfmt import fmt_celsius, fmt_number

    if column == "hot spot":
        return fmt_celsius(design.get("hot_spot_K"))
    if column == "B-life h":
        b = design.get("b_life_s")
        return fmt_number(b / 3600.0) if b is not None else "—"
    return design.get("binding_limit") or "—"


def _exclusions(result: dict, counts: dict) -> None:
    from cli.output import caution, esc, say

    if result["excluded"]:
        from ranking.report.exclusions import group_exclusions

        say("excluded, by reason:")
        for g in group_exclusions(result["excluded"]):
            members = ", ".join(m.replace(" (", "\xa0(") for m in g["members"])
            say(esc(f"  {g['reason']}: {members}"), wrap=True)
        more = counts["excluded"] - len(result["excluded"])
        if more > 0:
            say(f"… and {more} more excluded (every one with its reasons in --json)")
    caution(result["cautions"], sized=bool(result["target"].get("energy_J")))


def register(app) -> None:
    app.command("shortlist")(shortlist)
