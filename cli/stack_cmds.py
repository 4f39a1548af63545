"""``holdoff stack``: the field in each layer of a series stack and which layer fails first."""

import math
from typing import Annotated, Optional

import typer

from cli import state
from cli.output import DefaultsOpt, ExtrapolateOpt, JsonOpt, StrictOpt
from cli.physics_cmds import AreaOpt, MarginOpt, PressureOpt, ProbOpt


def stack(layers: Annotated[Optional[list[str]], typer.Argument(help="Layers as KEY:THICKNESS (µm unless a unit), "
                                                                "from one electrode to the other.")] = None,
          layer: Annotated[Optional[list[str]], typer.Option("--layer", help="A layer KEY:THICKNESS; repeat.")] = None,
          voltage: Annotated[str, typer.Option("--voltage", help="Applied voltage, peak for AC (V unless a "
                                               "unit).")] = "",
          dc: Annotated[bool, typer.Option("--dc", help="DC: also the steady state, divided by conductivity "
                                           "(1/volume_resistivity).")] = False,
          reversal: Annotated[bool, typer.Option("--reversal", help="DC with a polarity reversal from the steady "
                                                 "state (implies --dc).")] = False,
          temp: Annotated[str, typer.Option("--temp", help="Temperature (°C unless a unit).")] = "25",
          area: AreaOpt = None, failure_prob: ProbOpt = None, margin: MarginOpt = 1.0,
          gap: Annotated[Optional[str], typer.Option("--gap", help="Add a gas gap in series (µm unless a unit), "
                                                     "filled with --gas.")] = None,
          gas: Annotated[str, typer.Option("--gas", help="Gas of --gap and of --void.")] = "air",
          pressure: PressureOpt = None,
          void: Annotated[Optional[str], typer.Option("--void", help="Flat gas void (µm unless a unit) in each "
                                                      "solid layer: partial-discharge inception voltage.")] = None,
          target: Annotated[Optional[str], typer.Option("--target", help="Evaluate the [[stack]] candidates of a "
                                                        "target file at its voltage and temperature range.")] = None,
          extrapolate: ExtrapolateOpt = False, strict: StrictOpt = False, assume_defaults: DefaultsOpt = False,
          json_out: JsonOpt = False):
    """Fields in each layer of a series stack, each layer's margin to its own breakdown, the first to fail."""
    if target:
        return _candidates(target, extrapolate=extrapolate, strict=strict, json_out=json_out)
    from db.query import load_materials
    from materials.errors import InputError
    from materials.sizing import CAUTION
    from materials.units import parse_option
    from ranking.stack import evaluate_stack, parse_layer

    specs = [parse_layer(x) for x in (layers or []) + (layer or [])]
    if not voltage:
        raise InputError("--voltage is required")
    v = parse_option(voltage, "voltage", name="--voltage")
    if not v > 0:
        raise InputError("--voltage must be positive")
    gap_m, pressure_Pa = _gap_options(gap, pressure)
    if gap_m is not None:
        specs.append((gas, gap_m))
    if not specs:
        raise InputError("give at least one layer as KEY:THICKNESS")
    void_m = parse_option(void, "thickness", name="--void") if void else None
    if void_m is not None and not void_m > 0:
        raise InputError("--void must be positive")
    if failure_prob is not None and not 0 < failure_prob < 1:
        raise InputError("--failure-prob must lie between 0 and 1")
    if margin < 1:
        raise InputError("--margin must be 1 or more")
    keys = list(dict.fromkeys([k for k, _ in specs] + ([gas] if void_m is not None else [])))
    with state.store().session(read_only=True) as s:
        mats = {m.key: m for m in load_materials(s, keys)}
    res = evaluate_stack([mats[k] for k, _ in specs], [d for _, d in specs], voltage_V=v, dc=dc, reversal=reversal,
                         temperature_K=parse_option(temp, "temperature", name="--temp"),
                         area_m2=parse_option(area, "capacitor_area", name="--area") if area else None,
                         failure_probability=failure_prob, margin=margin, pressure_Pa=pressure_Pa, void_m=void_m,
                         void_gas=mats.get(gas) if void_m is not None else None, assume_defaults=not strict,
                         extrapolate=extrapolate)
    cautions = [CAUTION]
    if res["pd_inception_V"] is not None and res["pd_inception_V"] <= v:
        cautions.insert(0, f"partial discharges expected: a {void_m * 1e6:g} µm void starts discharging at "
                        f"{res['pd_inception_V']:.4g} V, at or below the applied {v:g} V")
    res["cautions"] = cautions
    if json_out:
        from cli.output import print_json

        print_json(res)
        return
    _render(res)


def _candidates(path: str, *, extrapolate: bool, strict: bool, json_out: bool):
    """The layered candidates of a target file, each at the worse end of the target's temperature range."""
    from dataclasses import replace
    from pathlib import Path

    from db.query import load_materials
    from materials.errors import InputError
    from materials.sizing import CAUTION
    from ranking.stack import evaluate_candidates
    from ranking.target import load_target

    tg = load_target(Path(path))
    if strict:
        tg = replace(tg, strict=True)
    if not tg.stacks:
        raise InputError("no [[stack]] tables", file=path, field="stack")
    keys = list(dict.fromkeys(k for _, layers in tg.stacks for k, _ in layers))
    with state.store().session(read_only=True) as s:
        mats = {m.key: m for m in load_materials(s, keys)}
    rows = evaluate_candidates(tg, mats, extrapolate=extrapolate)
    if json_out:
        from cli.output import print_json

        print_json({"target": tg.to_dict(), "stacks": rows, "cautions": [CAUTION]})
        return
    from cli.output import caution

    render_candidates(rows, voltage_V=tg.voltage_V, title=f"layered candidates of {path}")
    caution([CAUTION])


def render_candidates(rows: list[dict], *, voltage_V: float, title: str) -> None:
    """The table of layered candidates (``ranking.stack.evaluate_candidates``)."""
    from cli.output import table
    from materials.numfmt import fmt_celsius, fmt_number, fmt_quantity

    body = [[r["name"], " / ".join(f"{ly['key']} {fmt_number(ly['thickness_m'] * 1e6)} µm" for ly in r["layers"]),
             r["first_to_fail"], fmt_quantity(r["stack_breakdown_V"], "V", "V"), fmt_celsius(r["worst_temperature_K"]),
             "yes" if r["holds"] else "no", fmt_number(r["energy_density_J_per_m3"] / 1e6)] for r in rows]
    table(["stack", "layers", "fails first", "at", "worst T", f"holds {fmt_number(voltage_V)} V", "J/cm³"], body,
          right={3, 6}, title=title)


def shortlist_candidates(target, table) -> list[dict]:
    """The target's layered candidates, from the materials of the shortlist's value table."""
    from materials.errors import DataError
    from ranking.stack import evaluate_candidates

    index = {k: i for i, k in enumerate(table.keys)}
    keys = list(dict.fromkeys(k for _, layers in target.stacks for k, _ in layers))
    missing = [k for k in keys if k not in index]
    if missing:
        raise DataError(f"stack candidate: no material '{missing[0]}' in the store")
    mats = dict(zip(keys, table.materials([index[k] for k in keys]), strict=True))
    return evaluate_candidates(target, mats)


def _gap_options(gap, pressure):
    from cli.physics_cmds import parse_gap_options

    return parse_gap_options(gap, pressure)


def _render(res: dict) -> None:
    from cli.output import caution, say, table
    from materials.numfmt import fmt_celsius, fmt_number, fmt_quantity
    from ranking.reasons import words
    from ranking.report.model import LEGEND, MARKS

    cases = [c for c in ("ac", "dc", "reversal") if f"field_{c}_V_per_m" in res["layers"][0]]
    heads = {"ac": "E_ac", "dc": "E_dc", "reversal": "E_rev"}

    def vum(x):
        return fmt_quantity(x, "V/um", "V/m")

    body, used = [], set()
    for i, ly in enumerate(res["layers"]):
        mark = "".join(MARKS[f] for f in ("recollection", "invented", "assumed") if f in ly["flags"])
        if "extrapolated" in ly["flags"] and "assumed" not in ly["flags"]:
            mark += MARKS["assumed"]
        used.update(f for f in ly["flags"] if f in MARKS)
        if "extrapolated" in ly["flags"]:
            used.add("assumed")
        body.append([f"{i + 1}{' ←' if i == res['first_layer'] else ''}", ly["key"] + mark,
                     fmt_quantity(ly["thickness_m"], "um", "m"), fmt_number(ly["relative_permittivity"]),
                     *[vum(ly[f"field_{c}_V_per_m"]) for c in cases], vum(ly["breakdown_V_per_m"]),
                     vum(ly["design_field_V_per_m"]), fmt_number(ly["margin"], 3),
                     fmt_quantity(ly["fails_at_V"], "V", "V"), ly["law"]])
    cond = [f"{fmt_number(res['voltage_V'])} V {res['mode']}", fmt_celsius(res["temperature_K"]),
            f"area {fmt_number(res['area_m2'])} m²" if res["area_m2"] else "at the test area",
            f"failure probability {fmt_number(res['failure_probability'], 3)}", f"margin {fmt_number(res['margin'])}"]
    table(["#", "layer", "d", "εr", *[heads[c] for c in cases], "E_bd", "E_design", "margin", "fails at", "law"],
          body, right=set(range(2, 9 + len(cases))), title="stack: " + ", ".join(cond))
    say(f"first to fail: {res['first_to_fail']} (layer {res['first_layer'] + 1}) at "
        f"{fmt_quantity(res['stack_breakdown_V'], 'V', 'V')} across the stack")
    cap = fmt_quantity(res["capacitance_per_area_F_per_m2"] * 1e-4, "nF", "F") + " per cm²"
    if res["capacitance_F"] is not None:
        cap += f"; {fmt_quantity(res['capacitance_F'], 'uF', 'F')} and {fmt_quantity(res['energy_J'], 'J', 'J')} " \
               "over the area"
    say(f"capacitance {cap}; energy {fmt_number(res['energy_per_area_J_per_m2'] * 1e-4)} J per cm²")
    if res["time_constants_s"]:
        say("interfacial (Maxwell-Wagner) time constants: "
            + ", ".join(fmt_quantity(x, "s", "s") for x in res["time_constants_s"]))
    if res.get("void_law") == "left-of-Paschen-asymptote":
        say(f"void {fmt_number(res['void_m'] * 1e6)} µm of {res['void_gas']}: " + words(
            "gas-gap-law", gap_m=res["void_m"], field_V_per_m=math.inf, law=res["void_law"]))
    elif res["pd_inception_V"] is not None:
        say(f"void {fmt_number(res['void_m'] * 1e6)} µm of {res['void_gas']} ({res['void_law']}, "
            f"{fmt_number(res['void_breakdown_V'])} V across it): partial discharges start at "
            f"{fmt_quantity(res['pd_inception_V'], 'V', 'V')} (void in {res['pd_layer']}; capacitive division, as "
            "under AC or just after a DC step)")
    for ly in res["layers"]:
        for n in ly["notes"]:
            say(f"note ({ly['key']}): {n}")
        say(f"sources ({ly['key']}): {', '.join(ly['sources'])}")
    for k in ("recollection", "invented", "assumed"):
        if k in used:
            say(f"{MARKS[k]} {LEGEND[k]}" + (" or used beyond its data or law" if k == "assumed" else ""))
    caution(res["cautions"])


def register(app) -> None:
    app.command("stack")(stack)
