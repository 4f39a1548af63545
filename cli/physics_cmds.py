"""``holdoff ceiling`` and ``holdoff size``: energy-density ceilings and part sizing at real conditions."""


from typing import Annotated, Optional

import typer

from cli import state
from cli.output import DefaultsOpt, ExtrapolateOpt, JsonOpt, QuietOpt, SectionsOpt, StrictOpt, set_quiet
from cli.service_opts import (AmbientOpt, CapacitanceOpt, LifeFractionOpt, LifeOpt, PackingOpt, RippleOpt,
                              SeriesResistanceOpt, ThermalResistanceOpt)

TempOpt = Annotated[Optional[list[str]], typer.Option("--temp", help="Temperature (°C unless a unit is given); "
                                                      "repeat for several. Default 25 °C.")]
AreaOpt = Annotated[Optional[str], typer.Option("--area", help="Capacitor active area (m² unless a unit is given); "
                                                "breakdown is scaled from the test area (weakest link).")]
ProbOpt = Annotated[Optional[float], typer.Option("--failure-prob", help="Accepted short-term failure "
                                                  "probability (e.g. 0.01); default: the Weibull scale (63.2 %).")]
MarginOpt = Annotated[float, typer.Option("--margin", help="Divides the design field (≥ 1).")]
GapOpt = Annotated[Optional[str], typer.Option("--gap", help="Gap or layer width (µm unless a unit is given): a "
                                              "gas by its gap law (Paschen / published formula), a liquid by the "
                                              "stressed-volume law, a solid by the thickness law.")]
PressureOpt = Annotated[Optional[str], typer.Option("--pressure", help="Gas pressure (kPa unless a unit is given); "
                                                    "default 101.3 kPa.")]


def parse_gap_options(gap, pressure):
    """(gap m or None, pressure Pa or None) from the --gap and --pressure options."""
    from materials.errors import InputError
    from materials.units import parse_option

    g = parse_option(gap, "thickness", name="--gap") if gap else None
    p = parse_option(pressure, "pressure", name="--pressure") if pressure else None
    if g is not None and not g > 0:
        raise InputError("--gap must be positive")
    if p is not None and not p > 0:
        raise InputError("--pressure must be positive")
    return g, p


def ceiling(keys: Annotated[list[str], typer.Argument(help="Material keys.")],
            temp: TempOpt = None, area: AreaOpt = None, failure_prob: ProbOpt = None, margin: MarginOpt = 1.0,
            extrapolate: ExtrapolateOpt = False, gap: GapOpt = None, pressure: PressureOpt = None,
            strict: StrictOpt = False, assume_defaults: DefaultsOpt = False, json_out: JsonOpt = False,
            quiet: QuietOpt = False):
    """Energy-density ceiling ½·ε0·εr·E² and the design density at a temperature, area and failure probability."""
    from db.query import load_materials
    from materials.errors import InputError
    from materials.sizing import CAUTION
    from materials.units import parse_option
    from ranking.ceiling import ceiling_at

    set_quiet(quiet)
    temps = [parse_option(t, "temperature", name="--temp") for t in (temp or ["25"])]
    a = parse_option(area, "capacitor_area", name="--area") if area else None
    if failure_prob is not None and not 0 < failure_prob < 1:
        raise InputError("--failure-prob must lie between 0 and 1")
    if margin < 1:
        raise InputError("--margin must be 1 or more")
    gap_m, pressure_Pa = parse_gap_options(gap, pressure)
    with state.store().session(read_only=True) as s:
        mats = {m.key: m for m in load_materials(s, keys)}
    rows = [ceiling_at(mats[k], temperature_K=t, area_m2=a, failure_probability=failure_prob, margin=margin,
                       extrapolate=extrapolate, assume_defaults=not strict, gap_m=gap_m, pressure_Pa=pressure_Pa)
            for k in keys for t in temps]
    if json_out:
        from cli.output import print_json

        print_json([{**r.to_dict(), "cautions": [CAUTION]} for r in rows])
        return
    from cli.fmt import display
    from cli.output import caution, say, table
    from cli.shortlist_cmds import marks_legend
    from materials.numfmt import fmt_celsius, fmt_number
    from ranking.report.marks import MARKS

    kinds = _source_kinds()
    body, used = [], set()
    for r in rows:
        cls = _ceiling_evidence(r, kinds)
        used.add(cls)
        mk = MARKS[cls] if cls else ""
        body.append([r.key, fmt_celsius(r.temperature_K), fmt_number(r.relative_permittivity),
                     display("breakdown_field", r.breakdown_field_V_per_m), fmt_number(r.ceiling_J_per_m3 / 1e6) + mk,
                     display("breakdown_field", r.design_field_V_per_m), fmt_number(r.design_J_per_m3 / 1e6) + mk,
                     ("extrapolated " if r.extrapolated else "") + r.method, ", ".join(r.sources)])
    cond = []
    cond.append(f"area {fmt_number(a)} m²" if a else "at the test area")
    cond.append(f"failure probability {fmt_number(failure_prob)}" if failure_prob is not None
                else "Weibull scale (63.2 %)")
    cond.append(f"margin {fmt_number(margin)}")
    if gap_m is not None:
        cond.append(f"gap {fmt_number(gap_m * 1e6)} µm at {fmt_number((pressure_Pa or 101.3e3) / 1e3)} kPa")
    table(["key", "T", "εr", "E_bd", "ceiling J/cm³", "E_design", "design J/cm³", "method", "sources"], body,
          right={2, 3, 4, 5, 6}, legend=[marks_legend(used)], caption="design: " + ", ".join(cond))
    for r in rows:
        for n in r.notes:
            say(f"note ({r.key}, {fmt_celsius(r.temperature_K)}): {n}", wrap=True)
    caution([CAUTION], sized=False)


def _source_kinds() -> dict[str, str]:
    """Source key → kind, for the evidence marks of ceiling and size."""
    with state.store().reading() as conn:
        return dict(conn.exec_driver_sql("SELECT key, kind FROM source").fetchall())


def _ceiling_evidence(r, kinds: dict) -> str | None:
    """One ceiling row's evidence class: its sources' kinds, held outside the data, an assumed shape or area."""
    from ranking.report.marks import evidence

    extra = ["extrapolated"] if r.extrapolated else []
    if any(" assumed" in n for n in r.notes):  # the words of an assumed Weibull shape or test area
        extra.append("assumed")
    return evidence([kinds.get(k, "assumed") for k in r.sources], extra=extra)


def size(key: Annotated[str, typer.Argument(help="Material key.")],
         voltage: Annotated[str, typer.Option("--voltage", help="Working voltage (V unless a unit is given).")],
         energy: Annotated[Optional[str], typer.Option("--energy", help="Energy to store (J unless a unit is "
                                                       "given).")] = None,
         capacitance: CapacitanceOpt = None,
         tmin: Annotated[str, typer.Option("--tmin", help="Lowest temperature (°C unless a unit).")] = "25",
         tmax: Annotated[str, typer.Option("--tmax", help="Highest temperature (°C unless a unit).")] = "25",
         failure_prob: Annotated[float, typer.Option("--failure-prob", help="Accepted short-term failure "
                                                     "probability of the whole part.")] = 0.01,
         margin: MarginOpt = 1.0,
         ripple_current: Annotated[Optional[str], typer.Option("--ripple-current", help="RMS ripple current "
                                                               "(A unless a unit) for the dissipated power.")] = None,
         frequency: Annotated[Optional[str], typer.Option("--frequency", help="Ripple frequency (Hz unless a "
                                                          "unit).")] = None,
         segment_area: Annotated[Optional[str], typer.Option("--segment-area", help="Self-healing films with "
                                                             "segmented electrodes: scale breakdown to one segment "
                                                             "(cm² unless a unit); p is then per segment.")] = None,
         ripple: RippleOpt = None, series_resistance: SeriesResistanceOpt = None,
         thermal_resistance: ThermalResistanceOpt = None, ambient: AmbientOpt = None, life: LifeOpt = None,
         life_fraction: LifeFractionOpt = None,
         packing_factor: PackingOpt = None,
         strict: StrictOpt = False, extrapolate: ExtrapolateOpt = False, sections: SectionsOpt = None,
         assume_defaults: DefaultsOpt = False, json_out: JsonOpt = False, quiet: QuietOpt = False):
    """Size the dielectric of one part: thickness, area, volume, mass, capacitance, fields, failure probability;
    with a ripple and thermal resistance at its hot spot, with --life for its service life."""
    from cli.service_opts import parse_service
    from db.query import get_material
    from materials.units import parse_option
    from ranking.part import size_material

    set_quiet(quiet)

    with state.store().session(read_only=True) as s:
        m = get_material(s, key)
    res = size_material(
        m, energy_J=parse_option(energy, "energy", name="--energy") if energy else None,
        voltage_V=parse_option(voltage, "voltage", name="--voltage"),
        tmin_K=parse_option(tmin, "temperature", name="--tmin"), tmax_K=parse_option(tmax, "temperature",
                                                                                    name="--tmax"),
        failure_probability=failure_prob, margin=margin,
        ripple_current_A=parse_option(ripple_current, "current", name="--ripple-current") if ripple_current else None,
        frequency_Hz=parse_option(frequency, "frequency", name="--frequency") if frequency else None,
        assume_defaults=not strict, strict=strict, extrapolate=extrapolate, max_sections=sections or 1,
        segment_area_m2=parse_option(segment_area, "electrode_area", name="--segment-area") if segment_area else None,
        life_fraction=0.01 if life_fraction is None else life_fraction, packing_factor=packing_factor,
        **parse_service(capacitance=capacitance, ripple=ripple, series_resistance=series_resistance,
                        thermal_resistance=thermal_resistance, ambient=ambient, life=life))
    if json_out:
        from cli.output import print_json

        print_json(res)
        return
    from cli.output import caution, say, table
    from cli.shortlist_cmds import marks_legend
    from materials.numfmt import fmt_celsius, fmt_eng, fmt_number
    from ranking.report.marks import MARKS, evidence

    kinds = _source_kinds()
    cls = evidence([kinds.get(k, "assumed") for k in res["sources"]], res.get("flags") or [], "size")
    mk = MARKS[cls] if cls else ""
    rows = [["thickness", fmt_eng(res["thickness_m"], "m") + mk
             + (f" ({res['sections']} series sections of {fmt_eng(res['layer_thickness_m'], 'm')})"
                if res["sections"] > 1 else "")],
            ["active area", fmt_eng(res["area_m2"], "m2") + mk],
            ["dielectric volume", fmt_eng(res["volume_m3"], "m3") + mk],
            ["dielectric mass", fmt_eng(res["mass_kg"], "kg") + mk if res["mass_kg"] is not None else "— (no density)"],
            ["capacitance", fmt_eng(res["capacitance_F"], "F") + mk],
            ["operating field", fmt_eng(res["operating_field_V_per_m"], "V/m") + mk],
            ["design field", fmt_eng(res["design_field_V_per_m"], "V/m") + mk],
            ["energy stored", fmt_eng(res["energy_J"], "J")],
            ["failure probability", (fmt_number(res["failure_probability"]) if res["failure_probability"] >= 1e-6
                                     else "< 0.000001") + mk],
            ["limited by", res["limited_by"]],
            ["worst temperature", fmt_celsius(res["worst_temperature_K"])]]
    if res.get("device_energy_density_J_per_m3") is not None:
        rows.append([f"device energy density (packing {fmt_number(res['packing_factor'])})",
                     fmt_number(res["device_energy_density_J_per_m3"] / 1e6) + " J/cm³"])
    if res.get("dissipated_power_W") is not None:
        rows.append(["dissipated power", fmt_eng(res["dissipated_power_W"], "W") + mk
                     + f" (series {fmt_eng(res['series_resistance_ohm'], 'Ω')} and dielectric)"])
    rows += service_rows(res)
    cap = f"{fmt_eng(res['capacitance_target_F'], 'F')} (" if res.get("capacitance_target_F") else ""
    table(["", res["key"]], rows, right={1}, keys=set(), long=set(), legend=[marks_legend({cls} if cls else ())],
          title=f"{res['name']} for {cap}{fmt_eng(res['energy_J'], 'J')}" + (") at " if cap else " at ")
          + f"{fmt_eng(res['voltage_V'], 'V')}, {fmt_celsius(res['tmin_K'])} … {fmt_celsius(res['tmax_K'])}")
    for n in res["notes"]:
        say(f"note: {n}", wrap=True)
    say("sources: " + ", ".join(res["sources"]), wrap=True)
    caution(res["cautions"], sized=True)


def service_rows(d: dict) -> list[list[str]]:
    """Table rows of a design's service figures (hot spot, runaway margin, B-life, binding limit), where present."""
    from materials.numfmt import fmt_celsius, fmt_number, fmt_quantity

    rows = []
    if d.get("hot_spot_K") is not None:
        rows.append(["hot spot", fmt_celsius(d["hot_spot_K"])])
        m = d.get("runaway_margin")
        rows.append(["margin to thermal runaway", "none: losses do not rise with temperature" if m is None
                     else f"×{fmt_number(m, 3)} ripple power (Semenov)"])
    if d.get("b_life_s") is not None:
        rows.append([f"B{fmt_number(d['life_fraction'] * 100)} life at the operating point",
                     fmt_quantity(d["b_life_s"], "h", "s", 3)
                     + f" (n {fmt_number(d['life_exponent'], 3)}{', assumed' if d['life_exponent_assumed'] else ''})"])
    if d.get("binding_limit"):
        rows.append(["binding limit", d["binding_limit"]])
    return rows


def register(app) -> None:
    from cli import stack_cmds

    app.command("ceiling")(ceiling)
    app.command("size")(size)
    stack_cmds.register(app)
