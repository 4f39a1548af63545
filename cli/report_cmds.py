"""``holdoff export`` and ``holdoff chart``: comparison reports and charts as files.

The work is in :mod:`ranking.report` and :mod:`ranking.charts`; this module parses options, loads what the store
holds, and says what it wrote.
"""


from pathlib import Path
from typing import Annotated, Optional

import typer

from cli import state
from cli.output import DefaultsOpt, JsonOpt, StrictOpt

chart_app = typer.Typer(
    help="Charts as PNG or SVG (chosen by the --out extension): the headroom of a shortlist below its ceilings, "
         "design energy against temperature, Weibull plots of breakdown data, P–E loops.", no_args_is_help=True)

OutOpt = Annotated[Path, typer.Option("--out", help="Chart file, .png or .svg.", show_default=False)]
ForceOpt = Annotated[bool, typer.Option("--force", help="Overwrite an existing file.")]
TempOpt = Annotated[Optional[str], typer.Option("--temp", help="Condition of the values (°C unless a unit; "
                                                "default: the reference, about 25 °C).")]
FamilyOpt = Annotated[Optional[str], typer.Option("--family", help="All materials of this family "
                                                  "(polymer-film, ceramic-class-2, …).")]


def _wrote(path: Path, what: str, json_out: bool, **extra) -> None:
    if json_out:
        from cli.output import print_json

        print_json({"file": str(path), "format": path.suffix.lower().lstrip("."), **extra})
        return
    from cli.output import esc, say

    say(esc(f"wrote {path} ({what})"))


def _check_chart(path: Path, force: bool) -> None:
    """Refuse a wrong extension, an existing file or a missing folder before any work is done."""
    from ranking.charts import FORMATS
    from ranking.outfile import check_output

    check_output(path, FORMATS, force=force)


def _family(family: str | None) -> None:
    from materials.errors import InputError
    from materials.properties import FAMILIES

    if family and family not in FAMILIES:
        raise InputError(f"--family: '{family}' is not one of {', '.join(FAMILIES)}")


def _load(keys=None, family=None):
    """Materials from the store, in the order the keys were given (duplicates dropped)."""
    from db.query import load_materials

    keys = list(dict.fromkeys(keys)) if keys else None
    with state.store().session(read_only=True) as s:
        mats = load_materials(s, keys, family=family)
    if keys:
        order = {k: i for i, k in enumerate(keys)}
        mats.sort(key=lambda m: order[m.key])
    return mats


def _keys(text: str | None) -> list[str]:
    return [k.strip() for k in (text or "").split(",") if k.strip()]


# --- export ----------------------------------------------------------------------------------------------------

def export(
    keys: Annotated[Optional[list[str]], typer.Argument(help="Material keys to compare side by side (see 'holdoff "
                                                        "catalog').", show_default=False)] = None,
    to: Annotated[Path, typer.Option("--to", help="Report file: .csv, .xlsx, .md, .html or .json.",
                                     show_default=False)] = ...,
    from_file: Annotated[Optional[Path], typer.Option("--from", help="A saved shortlist (from 'holdoff shortlist "
                                                      "--json' or a .json export) or a saved comparison.")] = None,
    target: Annotated[Optional[Path], typer.Option("--target", help="Run the shortlist for this target TOML file "
                                                   "(see README) and export it.")] = None,
    method: Annotated[str, typer.Option("--method", help="With --target: topsis, weighted or pareto.")] = "topsis",
    k: Annotated[int, typer.Option("--k", metavar="K", help="With --target: the k of P(top k).")] = 3,
    family: FamilyOpt = None,
    temp: TempOpt = None,
    extrapolate: Annotated[bool, typer.Option("--extrapolate", help="Comparison: outside a material's data, hold "
                                              "the end value (flagged) instead of leaving the cell empty.")]
    = False,
    charts: Annotated[bool, typer.Option("--charts/--no-charts", help="HTML: include the charts.")] = True,
    force: ForceOpt = False,
    json_out: JsonOpt = False,
):
    """Write a comparison report from one of three sources.

    \b
    KEY... or --family F   the materials side by side at one condition (--temp)
    --from FILE.json       a saved shortlist or comparison, as it was saved (no store)
    --target FILE.toml     a fresh shortlist of the store's materials for that target
                           (for ad-hoc options: 'holdoff shortlist ... --export FILE')

    The format follows the extension of --to: CSV (one table written row by row, a sources and an evidence
    column beside each value), XLSX (comparison, excluded by reason, sources, target and notes sheets), Markdown
    and HTML (references [n]; the HTML a review document for A4 with its charts), JSON (SI numbers, written row by
    row). Every value carries one evidence mark (published, lab, assumed, extrapolated, imputed, recollection,
    invented), explained under each table.
    """
    from materials.errors import InputError
    from ranking import report
    from ranking.outfile import check_output

    check_output(to, report.FORMATS, force=force, aliases=report.ALIASES)
    given = [name for name, v in (("KEY", keys or family), ("--from", from_file), ("--target", target)) if v]
    if len(given) != 1:
        raise InputError("give one of: material keys (or --family), --from FILE.json, --target FILE.toml"
                         if not given else f"{' and '.join(given)} cannot be combined")
    _family(family)
    if from_file is not None:
        rep = report.load_json(from_file)
    elif target is not None:
        from ranking.shortlist import shortlist as run
        from ranking.target import load_target

        if k < 1:
            raise InputError("--k must be at least 1")
        from db.query import load_table

        t = load_target(target)
        # the store's values as columns, as the shortlist command reads them (no record per material)
        with state.store().reading() as conn:
            table = load_table(conn)
        rep = report.from_shortlist(run(table, t, method=method, top_k=k), materials=table)
    else:
        from materials.units import parse_option

        t_K = parse_option(temp, "temperature", name="--temp") if temp else None
        mats = _load(keys, family)
        if not mats:
            raise InputError(f"no materials of family '{family}' in the store")
        rep = report.from_materials(mats, temperature_K=t_K, extrapolate=extrapolate)
    path = report.write(rep, to, force=force, charts=charts)
    _wrote(path, f"{rep.kind}: {len(rep.rows)} rows, {len(rep.sources)} sources", json_out, kind=rep.kind,
           rows=len(rep.rows), excluded=len(rep.excluded), sources=len(rep.sources))


# --- charts ----------------------------------------------------------------------------------------------------

def _save(fig, out: Path, force: bool, what: str, json_out: bool, **extra) -> None:
    from ranking.charts import save

    path = save(fig, out, force=force)
    skipped = getattr(fig, "skipped", [])
    if skipped and not json_out:
        from cli.output import esc, say

        for key, reason in skipped:
            say(esc(f"left out {key}: {reason}"))
    _wrote(path, what, json_out, skipped=[{"key": k, "reason": r} for k, r in skipped], **extra)


@chart_app.command("headroom")
def chart_headroom(
    target: Annotated[Optional[Path], typer.Option("--target", help="Target TOML file (see README); the options "
                                                   "below override it.")] = None,
    voltage: Annotated[Optional[str], typer.Option("--voltage", help="Working voltage (V unless a unit).")] = None,
    tmin: Annotated[Optional[str], typer.Option("--tmin", help="Lowest temperature (°C unless a unit).")] = None,
    tmax: Annotated[Optional[str], typer.Option("--tmax", help="Highest temperature (°C unless a unit).")] = None,
    energy: Annotated[Optional[str], typer.Option("--energy", help="Energy the part stores (J unless a unit).")]
    = None,
    energy_density: Annotated[Optional[str], typer.Option("--energy-density", help="Required design energy "
                                                          "density, drawn as a line (J/cm³ unless a unit).")] = None,
    segment_area: Annotated[Optional[str], typer.Option("--segment-area", help="Segment area of self-healing "
                                                        "films (cm² unless a unit).")] = None,
    family: FamilyOpt = None,
    method: Annotated[str, typer.Option("--method", help="topsis, weighted or pareto.")] = "topsis",
    rows: Annotated[int, typer.Option("--rows", metavar="N", help="Candidates drawn, in rank order.")] = 15,
    strict: StrictOpt = False,
    out: OutOpt = ...,
    force: ForceOpt = False,
    json_out: JsonOpt = False,
):
    """Per ranked candidate, a bar from its design energy density up to its ceiling at the worst temperature of the
    range, in rank order, with the target as a line: how much each one gives away to area, failure probability,
    margin and temperature."""
    from db.query import load_table
    from materials.errors import InputError
    from ranking.charts import headroom_chart, worst_ceilings
    from ranking.shortlist import shortlist as run
    from ranking.target import target_from_options

    _check_chart(out, force)
    if rows < 1:
        raise InputError("--rows must be at least 1")
    t = target_from_options(target_file=target, voltage=voltage, tmin=tmin, tmax=tmax, energy=energy,
                            energy_density=energy_density, segment_area=segment_area, families=family,
                            strict=strict)
    with state.store().reading() as conn:
        table = load_table(conn)
    result = run(table, t, method=method, draws=0, rows=rows, excluded_rows=0)
    fig = headroom_chart(result, worst_ceilings(table, t), rows=rows)
    _save(fig, out, force, f"headroom of {len(fig.values)} ranked candidates", json_out,
          values=[{"label": k, "rank": v[0], "design_J_per_m3": v[1], "ceiling_J_per_m3": v[2]}
                  for k, v in fig.values.items()])


@chart_app.command("ceiling")
def chart_ceiling(
    keys: Annotated[list[str], typer.Argument(help="Material keys.", show_default=False)],
    tmin: Annotated[str, typer.Option("--tmin", help="Lowest temperature (°C unless a unit).")] = "-55",
    tmax: Annotated[str, typer.Option("--tmax", help="Highest temperature (°C unless a unit).")] = "125",
    points: Annotated[int, typer.Option("--points", help="Temperatures evaluated between --tmin and --tmax.")]
    = 25,
    area: Annotated[Optional[str], typer.Option("--area", help="Active area of the part (m² unless a unit): "
                                                "scales the breakdown field by the weakest link.")] = None,
    failure_prob: Annotated[Optional[float], typer.Option("--failure-prob", help="Accepted failure probability: "
                                                          "the design field is that Weibull quantile.")] = None,
    margin: Annotated[float, typer.Option("--margin", help="Divides the design field.")] = 1.0,
    target_density: Annotated[Optional[str], typer.Option("--target-density", help="Required energy density to "
                                                          "mark (J/cm³ unless a unit).")] = None,
    op_range: Annotated[Optional[str], typer.Option("--range", metavar="TMIN,TMAX", help="Operating range to "
                                                    "shade (°C unless a unit), e.g. -40,105.")] = None,
    strict: StrictOpt = False,
    assume_defaults: DefaultsOpt = False,
    out: OutOpt = ...,
    force: ForceOpt = False,
    json_out: JsonOpt = False,
):
    """Design energy density against temperature for chosen materials, with the target marked."""
    import numpy as np

    from materials.errors import InputError
    from materials.units import parse_option
    from ranking.charts import ceiling_chart

    _check_chart(out, force)
    t0 = parse_option(tmin, "temperature", name="--tmin")
    t1 = parse_option(tmax, "temperature", name="--tmax")
    if not t1 > t0:
        raise InputError("--tmax must be above --tmin")
    if points < 2:
        raise InputError("--points must be at least 2")
    if failure_prob is not None and not 0 < failure_prob < 1:
        raise InputError("--failure-prob must lie between 0 and 1")
    if margin < 1:
        raise InputError("--margin must be 1 or more")
    target = {"margin": margin}
    if target_density:
        target["energy_density_J_per_m3"] = parse_option(target_density, "energy_density", name="--target-density")
    if op_range:
        parts = [p for p in op_range.split(",") if p.strip()]
        if len(parts) != 2:
            raise InputError("--range: give two temperatures, e.g. -40,105")
        target["tmin_K"], target["tmax_K"] = (parse_option(p, "temperature", name="--range") for p in parts)
    mats = _load(keys)
    fig = ceiling_chart(mats, np.linspace(t0, t1, points), target=target,
                        area_m2=parse_option(area, "capacitor_area", name="--area") if area else None,
                        failure_probability=failure_prob, assume_defaults=not strict)
    if not fig.curves:
        raise InputError("no material could be charted: " + "; ".join(f"{k}: {r}" for k, r in fig.skipped))
    _save(fig, out, force, f"design energy density of {len(fig.curves)} materials", json_out)


@chart_app.command("weibull")
def chart_weibull(
    files: Annotated[Optional[list[Path]], typer.Argument(help="Breakdown CSV files (see README: lab files).",
                                                          show_default=False)] = None,
    material: Annotated[Optional[list[str]], typer.Option("--material", help="Plot the breakdown sets stored "
                                                          "for this material (repeatable).")] = None,
    thickness: Annotated[Optional[str], typer.Option("--thickness", help="Specimen thickness for files that give "
                                                     "voltages (µm unless a unit).")] = None,
    confidence: Annotated[float, typer.Option("--confidence", help="Confidence level of the bands.")] = 0.9,
    out: OutOpt = ...,
    force: ForceOpt = False,
    json_out: JsonOpt = False,
):
    """Weibull probability plot of breakdown sets: ln(−ln(1−F)) against ln E, fitted lines, confidence bands."""
    from materials.errors import InputError
    from ranking.charts import weibull_chart

    _check_chart(out, force)
    if not files and not material:
        raise InputError("give breakdown CSV files or --material KEY")
    if not 0 < confidence < 1:
        raise InputError("--confidence must lie between 0 and 1")
    sets = []
    if files:
        from materials.labfiles import read_breakdown
        from materials.units import parse_option

        over = {"thickness": parse_option(thickness, "thickness", name="--thickness")} if thickness else None
        for f in files:
            data = read_breakdown(f, over)
            sets.append({"label": data.conditions.label or Path(f).stem, "fields": data.fields_V_per_m,
                         "censored": data.censored})
    if material:
        from db.labdata import describe_sets, read_points

        with state.store().session(read_only=True) as s:
            for key in material:
                stored = describe_sets(s, key)["breakdown_sets"]
                if not stored:
                    raise InputError(f"'{key}' has no stored breakdown sets (see 'holdoff breakdown import')")
                for d in stored:
                    fields, cens, _thick = read_points(s, key, d["label"])
                    sets.append({"label": f"{key}: {d['label']}", "fields": fields, "censored": cens})
    fig = weibull_chart(sets, confidence=confidence)
    fits = {k: {"shape": f.shape, "scale_V_per_m": f.scale, "n": f.n, "censored": f.n_censored}
            for k, f in fig.fits.items()}
    _save(fig, out, force, f"Weibull plot of {len(sets)} sets", json_out, fits=fits)


@chart_app.command("loop")
def chart_loop(
    file: Annotated[Optional[Path], typer.Argument(help="Loop CSV file (see README: lab files).",
                                                   show_default=False)] = None,
    material: Annotated[Optional[str], typer.Option("--material", help="Plot a loop stored for this material "
                                                    "(with --label).")] = None,
    label: Annotated[Optional[str], typer.Option("--label", help="Label of the stored loop.")] = None,
    out: OutOpt = ...,
    force: ForceOpt = False,
    json_out: JsonOpt = False,
):
    """A polarisation–field loop with the recovered and lost energy shaded and the figures printed."""
    from materials.errors import InputError
    from ranking.charts import loop_chart

    _check_chart(out, force)
    if (file is None) == (material is None):
        raise InputError("give a loop CSV file or --material KEY --label LABEL (one of them)")
    if file is not None:
        from materials.labfiles import read_loop

        data = read_loop(file)
        e, p, title = data.fields_V_per_m, data.polarization_C_per_m2, data.conditions.label or file.name
    else:
        if not label:
            raise InputError("--material needs --label (see 'holdoff show KEY' for the stored loops)")
        from db.labdata import read_loop_points

        with state.store().session(read_only=True) as s:
            e, p = read_loop_points(s, material, label)
        title = f"{material}: {label}"
    fig = loop_chart(e, p, title=f"Polarisation–field loop: {title}")
    _save(fig, out, force, "P–E loop", json_out, **fig.energies.as_dict())


def register(app) -> None:
    app.command("export")(export)
    app.add_typer(chart_app, name="chart")
