"""``holdoff add``, ``holdoff breakdown fit|import``, ``holdoff loop analyze|import`` and ``holdoff life fit|import``:
lab data in.

Files are parsed and validated completely before the store is opened; each command then writes in one
transaction (re-run if another writer holds the lock), so a failure leaves the store exactly as it was.
"""


import contextlib
from pathlib import Path
from typing import Annotated, Optional

import typer

from cli import state
from cli.output import JsonOpt

breakdown_app = typer.Typer(help="Weibull breakdown statistics of lab series: fit a file, or import it into the "
                                 "store.", no_args_is_help=True)
loop_app = typer.Typer(help="Polarisation–field loops: analyse a file's energies, or import it into the store.",
                       no_args_is_help=True)
life_app = typer.Typer(help="Endurance (time-to-failure) tests: fit the Weibull life-stress law to a file, or import "
                            "it into the store.", no_args_is_help=True)

#: Files larger than this (bytes, about ten thousand rows) get a progress bar while they are read.
PROGRESS_BYTES = 100_000

FileArg = Annotated[Path, typer.Argument(help="CSV file (see README: lab files).", show_default=False)]
MaterialOpt = Annotated[Optional[str], typer.Option("--material", help="Key of an existing material.")]
NewMaterialOpt = Annotated[Optional[str], typer.Option("--new-material", metavar="NAME",
                                                       help="Create a lab material with this generic name.")]
FamilyOpt = Annotated[Optional[str], typer.Option("--family", help="Family of a new material (polymer-film, "
                                                  "ceramic-bulk, …).")]
LabelOpt = Annotated[Optional[str], typer.Option("--label", help="Label of the set or loop (default: the file's "
                                                 "'# label:' line, else its name).")]
ThicknessOpt = Annotated[Optional[str], typer.Option("--thickness", help="Specimen thickness (µm unless a unit "
                                                     "is given).")]
TempOpt = Annotated[Optional[str], typer.Option("--temp", help="Test temperature (°C unless a unit is given).")]
OperatorOpt = Annotated[Optional[str], typer.Option("--operator", metavar="WHO", help="Who measured.")]
LabOpt = Annotated[Optional[str], typer.Option("--lab", metavar="WHERE", help="Where it was measured.")]
DateOpt = Annotated[Optional[str], typer.Option("--date", metavar="WHEN", help="When (ISO 8601, YYYY-MM-DD).")]
ForceOpt = Annotated[bool, typer.Option("--force", help="Import a file seen before, or replace a set or loop with "
                                        "the same label (the old one's derived values are retired).")]


# --- helpers ----------------------------------------------------------------------------------------------------

def _say(text: str) -> None:
    """A line of plain text (data in it may hold brackets, which rich would take for markup)."""
    from cli.output import esc, say

    say(esc(text))


def _quantity(text: str | None, kind: str, option: str) -> float | None:
    """A set condition given as an option, in SI: read and range-checked exactly as the same condition in a file's
    header (materials.labfiles.parse_condition), so an option is never let through where a header line would not."""
    from materials.errors import InputError
    from materials.labfiles.header import parse_condition

    if text is None:
        return None
    try:
        return parse_condition(option.removeprefix("--").replace("temp", "temperature"), text)
    except InputError as exc:
        raise InputError(f"{option}: {exc}") from None


def _confidence(text: str) -> float:
    from materials.errors import InputError

    t = text.strip()
    try:
        value = float(t[:-1]) / 100 if t.endswith("%") else float(t)
    except ValueError:
        raise InputError(f"cannot read '{text}' as a confidence (e.g. 0.9 or 90%)", field="--confidence") from None
    if not 0 < value < 1:
        raise InputError(f"confidence '{text}' must lie strictly between 0 and 1 (or 0 % and 100 %)",
                         field="--confidence")
    return value


def _check_file(path: Path) -> None:
    from materials.textfile import check_file

    check_file(path)


@contextlib.contextmanager
def _progress(description: str, total: int, *, show: bool):
    """A rich progress bar on stderr (terminals only); yields a callback taking the amount done."""
    if not show:
        yield lambda done: None
        return
    from rich.progress import BarColumn, DownloadColumn, Progress, TextColumn, TimeRemainingColumn

    from cli.output import console

    con = console(stderr=True)
    with Progress(TextColumn("{task.description}"), BarColumn(), DownloadColumn(), TimeRemainingColumn(),
                  console=con, transient=True, disable=not con.is_terminal) as bar:
        task = bar.add_task(description, total=total)
        yield lambda done: bar.update(task, completed=done)


def _read(reader, path: Path, overrides: dict):
    _check_file(path)
    size = path.stat().st_size
    with _progress(f"reading {path.name}", size, show=size > PROGRESS_BYTES) as tick:
        return reader(path, overrides, on_progress=tick)


def _is_loop(path: Path) -> bool:
    """Whether a file that is no breakdown series reads as a P–E loop."""
    from materials.errors import InputError
    from materials.labfiles import read_loop

    try:
        read_loop(path, {})
    except InputError:
        return False
    return True


def _common_overrides(label, thickness, temp, operator, lab, date) -> dict:
    return {"label": label, "thickness": _quantity(thickness, "thickness", "--thickness"),
            "temperature": _quantity(temp, "temperature", "--temp"), "operator": operator, "lab": lab,
            "date": date}


def _target(material, new_material, family) -> dict:
    from materials.errors import InputError

    if bool(material) == bool(new_material):
        raise InputError("give either --material KEY or --new-material NAME --family F")
    if new_material and not family:
        raise InputError("--new-material needs --family", field="--family")
    if new_material:
        from materials.textfile import text_problem

        why = text_problem(new_material, "name")
        if why:
            raise InputError(f"the name {why}", field="--new-material")
    if material and family:
        raise InputError("--family goes with --new-material only", field="--family")
    return {"material_key": material, "new_material": new_material, "family": family}


def _fit_lines(fit, *, title: str) -> None:
    from cli.output import table
    from materials.numfmt import fmt_number, fmt_quantity

    conf = f"{fit.confidence:.0%}"
    v_um = lambda x: fmt_quantity(x, "V/um", "V/m")  # noqa: E731
    rows = [["scale α (63.2 %)", v_um(fit.scale), f"{v_um(fit.scale_bounds[0])} … {v_um(fit.scale_bounds[1])}"],
            ["shape β (ML)", fmt_number(fit.shape),
             f"{fmt_number(fit.shape_bounds[0])} … {fmt_number(fit.shape_bounds[1])}"],
            ["shape β (unbiased, Ross)", fmt_number(fit.shape_unbiased), ""],
            ["B1 (1 % failure)", v_um(fit.b1), ""],
            ["B10 (10 % failure)", v_um(fit.b10), ""]]
    table(["figure", "value", f"{conf} bounds"], rows, right={1}, title=title,
          caption="two-parameter Weibull, maximum likelihood with right-censoring (IEEE Std 930 / IEC 62539); "
                  "Fisher-matrix bounds")
    if fit.mixture_warning:
        _say(f"warning: {fit.mixture_warning}")
    _say("note: B1 and B10 hold for the test electrode area; a larger part fails at lower fields (weakest link).")


def _energy_rows(en) -> list[list[str]]:
    from materials.numfmt import fmt_number, fmt_quantity

    return [["stored", fmt_quantity(en.stored_J_per_m3, "J/cm**3", "J/m3")],
            ["recovered", fmt_quantity(en.recovered_J_per_m3, "J/cm**3", "J/m3")],
            ["lost", fmt_quantity(en.lost_J_per_m3, "J/cm**3", "J/m3")],
            ["efficiency", fmt_quantity(en.efficiency, "%", "1", 3)],
            ["peak field", f"{fmt_quantity(en.max_field_V_per_m, 'kV/cm', 'V/m')} "
                           f"({fmt_quantity(en.max_field_V_per_m, 'V/um', 'V/m')})"],
            ["max polarisation", f"{fmt_number(en.max_polarization_C_per_m2 * 100)} µC/cm²"],
            ["remanent polarisation", f"{fmt_number(en.remanent_polarization_C_per_m2 * 100)} µC/cm²"]]


def _import(importer, reader, file: Path, overrides: dict, target: dict, *, force: bool, json_out: bool) -> None:
    """Read a file, store it in one transaction, and print the JSON or a summary."""
    data = _read(reader, file, overrides)
    res = state.store().write(lambda s: importer(s, data, force=force, **target))
    if json_out:
        from cli.output import print_json

        print_json(res.as_dict())
        return
    _imported_lines(res)


def _figures_line(res) -> str:
    from materials.numfmt import fmt_number, fmt_quantity

    f = res.figures
    if res.what == "endurance set":
        lo, hi = f["life_exponent_bounds"]
        ea = f["activation_energy_eV"]
        return (f"life exponent n {fmt_number(f['life_exponent'])} ({f['confidence']:.0%}: {fmt_number(lo)} … "
                f"{fmt_number(hi)}), Weibull shape in time {fmt_number(f['shape'])}"
                + (f", activation energy {fmt_number(ea)} eV" if ea is not None else "")
                + ", stored as life_exponent" + (" and activation_energy" if ea is not None else ""))
    if res.what == "loop":
        return (f"recovered {fmt_quantity(f['recovered_J_per_m3'], 'J/cm**3', 'J/m3')} at "
                f"{fmt_quantity(f['max_field_V_per_m'], 'kV/cm', 'V/m')}, "
                f"efficiency {fmt_quantity(f['efficiency'], '%', '1', 3)},"
                " stored as recoverable_energy_density and efficiency")
    lo, hi = f["scale_bounds_V_per_m"]
    return (f"Weibull scale {fmt_quantity(f['scale_V_per_m'], 'V/um', 'V/m')} ({f['confidence']:.0%}: "
            f"{fmt_quantity(lo, 'V/um', 'V/m')} … {fmt_quantity(hi, 'V/um', 'V/m')}), shape {fmt_number(f['shape'])} "
            f"(unbiased {fmt_number(f['shape_unbiased'])}), stored as breakdown_field and weibull_shape")


def _imported_lines(res) -> None:
    created = f"created lab material '{res.material}'; " if res.new_material else ""
    censored = f" ({res.censored} censored)" if res.what in ("breakdown set", "endurance set") else ""
    _say(f"{created}imported {res.what} '{res.label}' into '{res.material}': {res.n} points{censored}")
    if res.replaced:
        _say(f"replaced the earlier {res.what}, kept as '{res.replaced}' (its derived values retired)")
    _say(f"source {res.source} [{res.kind}]; file {res.file}, SHA-256 {res.sha256}")
    if res.kind == "invented":
        _say("! invented demo data: not a measurement of any real material")
    _say(_figures_line(res))
    for w in res.warnings:
        _say(f"warning: {w}")


def print_sets(sets: dict) -> None:
    """Tables of a material's breakdown sets, loops and endurance sets (what :func:`db.labdata.describe_sets`
    returns), for show."""
    from cli.output import table
    from materials.numfmt import fmt_celsius, fmt_number, fmt_quantity

    def um(x):
        return fmt_quantity(x, "um", "m") if x is not None else "—"

    if sets.get("breakdown_sets"):
        rows = []
        for r in sets["breakdown_sets"]:
            rng = (f"{fmt_number(r['scale_low_V_per_m'] / 1e6)} … {fmt_number(r['scale_high_V_per_m'] / 1e6)}"
                   if r["scale_low_V_per_m"] is not None else "")
            rows.append([r["label"], r["n"], r["censored"], fmt_celsius(r["temperature_K"]), um(r["thickness_m"]),
                         fmt_quantity(r["area_m2"], "cm**2", "m2"), r["waveform"],
                         fmt_quantity(r["scale_V_per_m"], "V/um", "V/m") if r["scale_V_per_m"] else "—",
                         rng, fmt_number(r["shape"]), f"{r['source']} [{r['kind']}]"])
        table(["breakdown set", "n", "cens.", "T", "d", "A", "wave", "scale α", "bounds V/µm", "β", "source [kind]"],
              rows, right={1, 2, 7, 9}, caption="α: Weibull scale with its bounds; β: Ross-unbiased shape")
    if sets.get("loops"):
        rows = [[r["label"], r["n"], fmt_celsius(r["temperature_K"]),
                 fmt_quantity(r["frequency_Hz"], "Hz", "Hz") if r["frequency_Hz"] else "—",
                 fmt_quantity(r["max_field_V_per_m"], "V/um", "V/m") if r["max_field_V_per_m"] else "—",
                 fmt_quantity(r["recovered_J_per_m3"], "J/cm**3", "J/m3"),
                 fmt_quantity(r["efficiency"], "%", "1", 3),
                 f"{r['source']} [{r['kind']}]"] for r in sets["loops"]]
        table(["loop", "n", "T", "f", "peak field", "recovered", "efficiency", "source [kind]"], rows,
              right={1, 4, 5, 6})
    if sets.get("endurance_sets"):
        rows = [[r["label"], r["n"], r["censored"], fmt_celsius(r["temperature_K"]), r["stress_kind"],
                 fmt_number(r["life_exponent"]),
                 f"{fmt_number(r['life_exponent_low'])} … {fmt_number(r['life_exponent_high'])}"
                 if r["life_exponent_low"] is not None else "",
                 fmt_number(r["activation_energy_eV"]) if r["activation_energy_eV"] is not None else "—",
                 f"{r['source']} [{r['kind']}]"] for r in sets["endurance_sets"]]
        table(["endurance set", "n", "cens.", "T", "stress", "life exp. n", "bounds", "Ea eV", "source [kind]"],
              rows, right={1, 2, 5, 7})


# --- commands ---------------------------------------------------------------------------------------------------

def add(files: Annotated[list[Path], typer.Argument(help="Material records: catalog-form .toml files (with a "
                                                    "sources.toml beside them or among the files) or flat .csv "
                                                    "value tables.", show_default=False)],
        dry_run: Annotated[bool, typer.Option("--dry-run", help="Print what would change; write nothing.")] = False,
        json_out: JsonOpt = False):
    """Add or update material records; a changed value retires the old row (see 'show KEY --history')."""
    from db.labdata import add_materials, read_add_files, store_sources

    for f in files:
        _check_file(f)
    reason = "superseded by holdoff add " + ", ".join(f.name for f in files)
    store = state.store()
    # Read and validate every file against the store's sources before the write transaction: a large file is
    # parsed while other commands go on writing. A source that vanished meanwhile is refused by add_materials.
    with store.session(read_only=True) as s:
        known = store_sources(s)
    with _progress("reading files", len(files), show=len(files) > 1) as tick:
        records, sources = read_add_files(known, files)
        tick(len(files))
    changes = store.write(lambda s: add_materials(s, records, sources, dry_run=dry_run, reason=reason))
    if json_out:
        from cli.output import print_json

        print_json({"dry_run": dry_run, "materials": [r.key for r in records], "changes": changes})
        return
    for c in changes:
        _say(f"would: {c}" if dry_run else c)
    if dry_run:
        _say(f"dry run: nothing written ({len(changes)} change(s) described)")
    else:
        _say(f"{len(records)} material(s) processed; see 'holdoff show KEY' (and --history for retired values)")


@breakdown_app.command("fit")
def breakdown_fit(file: FileArg,
                  confidence: Annotated[str, typer.Option("--confidence", help="Two-sided confidence of the "
                                                          "bounds (0.9 or 90%).")] = "0.9",
                  thickness: Annotated[Optional[str], typer.Option("--thickness", help="Thickness for a voltage "
                                                                   "file without one (µm unless a unit).")] = None,
                  json_out: JsonOpt = False):
    """Fit a two-parameter Weibull distribution to a breakdown series file (nothing is stored)."""
    from materials.breakdown import fit_weibull
    from materials.errors import InputError
    from materials.labfiles import in_file, read_breakdown

    conf = _confidence(confidence)
    try:
        data = _read(read_breakdown, file, {"thickness": _quantity(thickness, "thickness", "--thickness")})
    except InputError:
        if _is_loop(file):
            raise InputError(f"{file} is a polarisation–field loop, not a breakdown series: "
                             f"use 'holdoff loop analyze {file}'") from None
        raise
    try:
        fit = fit_weibull(data.fields_V_per_m, data.censored, confidence=conf)
    except InputError as exc:
        raise in_file(exc, file, prefix="the Weibull fit failed: ", keep_field=False) from None
    if json_out:
        from cli.output import print_json

        print_json(fit.as_dict())
        return
    _fit_lines(fit, title=f"{file.name}: {fit.n} specimens, {fit.n_censored} censored")


@breakdown_app.command("import")
def breakdown_import(
        file: FileArg, material: MaterialOpt = None, new_material: NewMaterialOpt = None, family: FamilyOpt = None,
        label: LabelOpt = None, thickness: ThicknessOpt = None,
        area: Annotated[Optional[str], typer.Option("--area", help="Electrode area (cm² unless a unit).")] = None,
        temp: TempOpt = None,
        ramp: Annotated[Optional[str], typer.Option("--ramp", help="Voltage ramp rate (V/s unless a unit).")] = None,
        waveform: Annotated[Optional[str], typer.Option("--waveform", help="dc or ac (default dc).")] = None,
        operator: OperatorOpt = None, lab: LabOpt = None, date: DateOpt = None, force: ForceOpt = False,
        json_out: JsonOpt = False):
    """Store a breakdown series (raw points) and its Weibull fit as the material's breakdown values."""
    from db.labdata import import_breakdown
    from materials.labfiles import read_breakdown

    target = _target(material, new_material, family)
    overrides = _common_overrides(label, thickness, temp, operator, lab, date)
    overrides.update(area=_quantity(area, "electrode_area", "--area"), ramp=_quantity(ramp, "ramp", "--ramp"),
                     waveform=waveform)
    _import(import_breakdown, read_breakdown, file, overrides, target, force=force, json_out=json_out)


@loop_app.command("analyze")
def loop_analyze(file: FileArg, json_out: JsonOpt = False):
    """Stored, recovered and lost energy density, efficiency and polarisations of a loop file."""
    from materials.energy import loop_energies
    from materials.errors import InputError
    from materials.labfiles import in_file, read_loop

    data = _read(read_loop, file, {})
    try:
        en = loop_energies(data.fields_V_per_m, data.polarization_C_per_m2)
    except InputError as exc:
        raise in_file(exc, file) from None
    if json_out:
        from cli.output import print_json

        d = en.as_dict()
        print_json({k: d[k] for k in ("stored_J_per_m3", "recovered_J_per_m3", "lost_J_per_m3", "efficiency",
                                      "max_field_V_per_m", "max_polarization_C_per_m2",
                                      "remanent_polarization_C_per_m2")} | {"halves": d.get("halves")})
        return
    from cli.output import table

    table(["figure", "value"], _energy_rows(en), right={1},
          title=f"{file.name}: {data.n} samples ({', '.join(en.halves)} half)",
          caption="loop integration of E dD with D = ε0·E + P: charge branch (stored), discharge branch "
                  "(recovered)")


@loop_app.command("import")
def loop_import(
        file: FileArg, material: MaterialOpt = None, new_material: NewMaterialOpt = None, family: FamilyOpt = None,
        label: LabelOpt = None, thickness: ThicknessOpt = None, temp: TempOpt = None,
        frequency: Annotated[Optional[str], typer.Option("--frequency", help="Loop frequency (Hz unless a unit).")]
        = None,
        operator: OperatorOpt = None, lab: LabOpt = None, date: DateOpt = None, force: ForceOpt = False,
        json_out: JsonOpt = False):
    """Store a loop (samples in measured order) and its recovered energy density and efficiency."""
    from db.labdata import import_loop
    from materials.labfiles import read_loop

    target = _target(material, new_material, family)
    overrides = _common_overrides(label, thickness, temp, operator, lab, date)
    overrides["frequency"] = _quantity(frequency, "frequency", "--frequency")
    _import(import_loop, read_loop, file, overrides, target, force=force, json_out=json_out)


def _life_lines(fit, stress_kind: str, *, title: str) -> None:
    from cli.output import table
    from materials.numfmt import fmt_celsius, fmt_number, fmt_quantity

    conf = f"{fit.confidence:.0%}"
    unit, si = ("V", "V") if stress_kind == "voltage" else ("V/um", "V/m")

    def hours(x):
        return fmt_quantity(x, "h", "s")

    def rng(a, fmt=fmt_number):
        return f"{fmt(a[0])} … {fmt(a[1])}"

    rows = [["life exponent n (life ∝ S^-n)", fmt_number(fit.n), rng(fit.n_bounds)],
            ["Weibull shape β in time", fmt_number(fit.shape), rng(fit.shape_bounds)],
            [f"scale η at {fmt_quantity(fit.stress_ref, unit, si)}"
             + (f", {fmt_celsius(fit.temperature_ref_K)}" if fit.ea_eV is not None else ""),
             hours(fit.scale_ref_s), rng(fit.scale_ref_bounds_s, hours)]]
    if fit.ea_eV is not None:
        rows.append(["activation energy Ea", f"{fmt_number(fit.ea_eV)} eV", f"{rng(fit.ea_bounds_eV)} eV"])
    law = "Weibull-power-Arrhenius" if fit.ea_eV is not None else "Weibull-inverse-power-law"
    table(["figure", "value", f"{conf} bounds"], rows, right={1}, title=title,
          caption=f"{law}, maximum likelihood with right-censoring (Nelson 1990; Meeker & Escobar 1998); Fisher "
                  "bounds")
    if fit.shape_by_level:
        def level(k):
            s_, t_ = (k, None) if not isinstance(k, tuple) else k
            return fmt_quantity(s_, unit, si) + (f" at {fmt_celsius(t_)}" if t_ is not None else "")

        levels = "; ".join(f"{level(k)}: β {fmt_number(v, 3)}" for k, v in fit.shape_by_level.items())
        _say(f"shape by stress level: {levels} (common shape: likelihood-ratio p = {fmt_number(fit.shape_test_p, 2)})")
    if fit.shape_warning:
        _say(f"warning: {fit.shape_warning}")


@life_app.command("fit")
def life_fit(file: FileArg,
             confidence: Annotated[str, typer.Option("--confidence", help="Two-sided confidence of the bounds (0.9 "
                                                     "or 90%).")] = "0.9",
             temp: TempOpt = None, json_out: JsonOpt = False):
    """Fit the Weibull life-stress law to an endurance file (nothing is stored)."""
    from db.labdata import fit_figures, fit_file
    from materials.labfiles import read_endurance

    conf = _confidence(confidence)
    data = _read(read_endurance, file, {"temperature": _quantity(temp, "temperature", "--temp")})
    fit = fit_file(data, confidence=conf)
    if json_out:
        from cli.output import print_json

        print_json({"n": data.n, "censored": data.n_censored, "stress_kind": data.stress_kind,
                    **fit_figures(fit, data.stress_kind)})
        return
    _life_lines(fit, data.stress_kind, title=f"{file.name}: {data.n} units, {data.n_censored} censored")


@life_app.command("import")
def life_import(
        file: FileArg, material: MaterialOpt = None, new_material: NewMaterialOpt = None, family: FamilyOpt = None,
        label: LabelOpt = None, thickness: ThicknessOpt = None,
        area: Annotated[Optional[str], typer.Option("--area", help="Electrode area (cm² unless a unit).")] = None,
        temp: TempOpt = None, operator: OperatorOpt = None, lab: LabOpt = None, date: DateOpt = None,
        force: ForceOpt = False, json_out: JsonOpt = False):
    """Store an endurance set (each unit's time and stress) and its fitted life exponent (and activation energy)."""
    from db.labdata import import_endurance
    from materials.labfiles import read_endurance

    target = _target(material, new_material, family)
    overrides = _common_overrides(label, thickness, temp, operator, lab, date)
    overrides["area"] = _quantity(area, "electrode_area", "--area")
    _import(import_endurance, read_endurance, file, overrides, target, force=force, json_out=json_out)


def register(app) -> None:
    app.command("add")(add)
    app.add_typer(breakdown_app, name="breakdown")
    app.add_typer(loop_app, name="loop")
    app.add_typer(life_app, name="life")

