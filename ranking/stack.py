"""A stack of dielectric layers in series: the field in each layer and which layer fails first, by the engine.

The fields come from :mod:`materials.stack` (AC by permittivity, DC steady state by conductivity
``σ = 1/volume_resistivity``, the instant after a polarity reversal). Each layer's breakdown is the evaluation
engine's design field at that layer's thickness, the part's area and the temperature (:func:`ranking.engine.evaluate`
with one thickness per layer: Weibull quantile, weakest-link area scaling, thickness law, temperature
interpolation), with gases and liquids carried to their gap by :func:`ranking.ceiling.apply_gap_laws`. A layer's
margin is its design field over the largest field it sees; the stack fails first in the layer of the smallest
margin, at the applied voltage times that margin (the fields are linear in the voltage).

A flat gas void in a solid layer (``void_m``) sees ``ε_solid·E_solid``; partial discharges start at the stack
voltage :func:`materials.stack.pd_inception_voltage` gives with the void gas's gap law.
"""

from __future__ import annotations

import math

import numpy as np

from materials import gas
from materials.errors import DataError, InputError

#: Families whose layer can hold a gas void (a solid).
_FLUID = ("gas", "liquid")


def parse_layer(text: str) -> tuple[str, float]:
    """``KEY:THICKNESS`` (µm unless a unit is given) into (key, metres)."""
    from materials.errors import InputError
    from materials.units import parse_option

    key, sep, thick = text.partition(":")
    if not sep or not key.strip() or not thick.strip():
        raise InputError(f"layer '{text}': write KEY:THICKNESS, e.g. polypropylene-bopp:10um")
    d = parse_option(thick.strip(), "thickness", name=f"layer {key.strip()}")
    if not d > 0:
        raise InputError(f"layer '{text}': thickness must be positive")
    return key.strip(), d


def evaluate_stack(materials, thicknesses_m, *, voltage_V: float, dc: bool = False, reversal: bool = False,
                   temperature_K: float, area_m2: float | None = None, failure_probability: float | None = None,
                   margin: float = 1.0, pressure_Pa: float | None = None, void_m: float | None = None,
                   void_gas=None, assume_defaults: bool = True, extrapolate: bool = False,
                   segment_area_m2: float | None = None) -> dict:
    """The stack's fields, margins, first failure, capacitance, energy and PD inception (SI, a JSON-ready dict).

    ``materials``: one :class:`materials.records.MaterialData` per layer (a material may repeat);
    ``void_gas``: the material filling a void (air), needed with ``void_m``; ``segment_area_m2``: a self-healing
    layer's weakest-link area is one segment (as in a shortlist target).
    """
    from materials.lookup import reader_of
    from materials.stack import (layer_fields, maxwell_wagner_time_constants, pd_inception_voltage,
                                 polarity_reversal_fields, stack_capacitance_per_area, stack_energy_per_area)
    from materials.table import ValueTable
    from ranking.ceiling import apply_gap_laws, check_inputs, refuse_outside
    from ranking.engine import evaluate, worst_inputs
    from ranking.explain import law_notes
    from ranking.target import Target

    d = np.asarray(thicknesses_m, dtype=float)
    if len(materials) != d.size or d.size == 0:
        raise InputError("give one thickness per layer")
    if not np.all(d > 0):
        raise InputError("layer thicknesses must be positive")
    if reversal:
        dc = True
    table = ValueTable.from_materials(list(materials))
    inp = worst_inputs(table, tmin_K=temperature_K, tmax_K=temperature_K, assume_defaults=assume_defaults)
    keys = [m.key for m in materials]
    for i, k in enumerate(keys):
        check_inputs(inp, i, key=k, extrapolate=extrapolate)
        if not assume_defaults and not (inp.shape_found[i] and (inp.area_found[i] or area_m2 is None)):
            raise DataError(f"{k}: weibull_shape or breakdown test area missing (--strict refuses assumptions)")
    gaps = apply_gap_laws(inp, d, pressure_Pa=pressure_Pa, temperature_K=temperature_K)
    p = failure_probability if failure_probability is not None else -math.expm1(-1.0)
    target = Target(voltage_V=voltage_V, tmin_K=temperature_K, tmax_K=temperature_K, margin=margin,
                    area_m2=area_m2, failure_probability=p, assume_defaults=assume_defaults, extrapolate=extrapolate,
                    segment_area_m2=segment_area_m2)
    cols = evaluate(inp, target, thickness_m=d)
    refuse_outside(cols, keys)
    P = cols.parts
    eps = inp.eps_v.astype(float)
    res = inp.reader.at("volume_resistivity", temperature_K)
    sigma = np.where(res.present, 1.0 / res.value, np.nan)
    e_ac = layer_fields(d, eps, voltage_V)
    cases = {"ac": e_ac}
    tau = None
    if dc:
        missing = [k for k, s in zip(keys, sigma, strict=True) if not np.isfinite(s)]
        if missing:
            raise DataError(f"{', '.join(dict.fromkeys(missing))}: no volume_resistivity, so the DC field division "
                            "cannot be computed")
        cases["dc"] = layer_fields(d, eps, voltage_V, conductivities=sigma, mode="dc")
        if reversal:
            cases["reversal"] = polarity_reversal_fields(d, eps, voltage_V, conductivities=sigma)
        tau = maxwell_wagner_time_constants(d, eps, sigma).tolist()
    worst = np.max(np.abs(np.vstack(list(cases.values()))), axis=0)
    ed, scale = P["ed"], P["scale_d"]
    with np.errstate(divide="ignore", invalid="ignore"):
        margins = ed / worst
    first = int(np.nanargmin(margins))
    c_area = float(stack_capacitance_per_area(d, eps))
    w_area = float(stack_energy_per_area(d, eps, voltage_V, conductivities=sigma if dc else None,
                                         mode="dc" if dc else "ac"))
    layers = []
    t = inp.reader.t
    from materials.priors import TEST_AREA, shape_prior
    from ranking.report.model import FLAG_KINDS

    for i, k in enumerate(keys):
        rows = [inp.eps_g.used0[inp.c_eps[i]], inp.eps_g.used1[inp.c_eps[i]], inp.ebd_g.used0[inp.c_ebd[i]],
                inp.ebd_g.used1[inp.c_ebd[i]], *gaps["rows"][i]]
        if inp.shape_found[i]:
            rows += [inp.sh.used0[i], inp.sh.used1[i]]
        if dc and res.present[i]:
            rows += [res.used0[i], res.used1[i]]
        srcs = list(dict.fromkeys(t.source_keys[t.source[int(r)]] for r in rows if r >= 0))
        kinds = {t.source_kinds[t.source[int(r)]] for r in rows if r >= 0}
        assumed = []
        if not inp.shape_found[i] and not gaps["gas"][i]:
            assumed.append(shape_prior(t.families[i]).source)
        if not inp.area_found[i] and area_m2 is not None and not gaps["gas"][i]:
            assumed.append(TEST_AREA.source)
        laws = gaps["sources"][i] + ([inp.law_source[i]] if P["scaled"][i] and inp.law_source[i] else [])
        srcs = list(dict.fromkeys(srcs + assumed + laws))
        flags = sorted(kd for kd in kinds if kd in FLAG_KINDS)
        if assumed or gaps["gap_assumed"][i]:
            flags.append("assumed")
        if inp.extrapolated[i] or P["thick_out"][i] or gaps["law"][i] in gas.BEYOND_LAWS:
            flags.append("extrapolated")
        layers.append({
            "key": k, "family": t.families[i], "thickness_m": float(d[i]), "relative_permittivity": float(eps[i]),
            "conductivity_S_per_m": float(sigma[i]) if np.isfinite(sigma[i]) else None,
            **{f"field_{c}_V_per_m": float(e[i]) for c, e in cases.items()},
            "field_V_per_m": float(worst[i]), "breakdown_V_per_m": float(scale[i]),
            "design_field_V_per_m": float(ed[i]), "margin": float(margins[i]),
            "fails_at_V": float(voltage_V * margins[i]), "law": _law(i, gaps, P, inp), "flags": flags,
            "notes": gaps["notes"][i] + law_notes(cols, i), "sources": srcs})
    out = {
        "layers": layers, "voltage_V": float(voltage_V), "mode": "reversal" if reversal else "dc" if dc else "ac",
        "temperature_K": float(temperature_K), "area_m2": area_m2, "failure_probability": p, "margin": margin,
        "pressure_Pa": pressure_Pa, "first_to_fail": keys[first], "first_layer": first,
        "stack_breakdown_V": float(voltage_V * margins[first]),
        "capacitance_per_area_F_per_m2": c_area, "energy_per_area_J_per_m2": w_area,
        "capacitance_F": c_area * area_m2 if area_m2 else None, "energy_J": w_area * area_m2 if area_m2 else None,
        "time_constants_s": tau, "void_m": void_m, "pd_inception_V": None, "pd_layer": None}
    if void_m is not None:
        out.update(_void(d, eps, keys, t.families, void_m=void_m, void_gas=void_gas, pressure_Pa=pressure_Pa,
                         temperature_K=temperature_K, reader_of=reader_of, pd_inception_voltage=pd_inception_voltage))
    return out


def _law(i, gaps, P, inp) -> str:
    from ranking.gaps import law_name

    if gaps["law"][i] >= 0:
        return law_name(gaps["law"][i])
    if P["scaled"][i]:
        return "stressed-volume" if gaps["liquid"][i] else "thickness"
    return "as stored"


def _void(d, eps, keys, families, *, void_m, void_gas, pressure_Pa, temperature_K, reader_of, pd_inception_voltage):
    """The lowest partial-discharge inception voltage over the solid layers able to hold the void."""
    from ranking.gaps import FORMULAS

    if void_gas is None:
        raise InputError("a void check needs the gas that fills it")
    r, _ = reader_of(void_gas)
    consts = [r.at(k) for k in ("townsend_a", "townsend_b", "secondary_emission")]
    a, b, g = (float(c.value[0]) if c.present[0] else math.nan for c in consts)
    formula = FORMULAS.get(void_gas.key, gas.NO_FORMULA)
    p = gas.REFERENCE_PRESSURE_PA if pressure_Pa is None else pressure_Pa
    vb, law = gas.gap_breakdown_voltage(void_m, pressure_Pa=p, temperature_K=temperature_K, a_per_Pa_m=a,
                                        b_V_per_Pa_m=b, gamma=g, formula=formula)
    if int(law) == gas.NO_LAW:
        raise DataError(f"{void_gas.key}: no Townsend constants or published formula for the void's gas")
    found = {"void_gas": void_gas.key, "void_breakdown_V": float(vb), "void_law": gas.LAW_NAMES[int(law)]}
    if not math.isfinite(vb):
        return {**found, "pd_inception_V": None, "pd_layer": None}
    best, where = math.inf, None
    for i in range(d.size):
        if families[i] in _FLUID or not void_m < d[i]:
            continue
        v = float(pd_inception_voltage(d, eps, void_layer=i, void_thickness_m=void_m, gas_breakdown_V=float(vb)))
        if v < best:
            best, where = v, i
    if where is None:
        raise InputError("no solid layer is thicker than the void")
    return {**found, "pd_inception_V": best, "pd_layer": keys[where]}


def evaluate_candidates(target, materials: dict, *, extrapolate: bool = False) -> list[dict]:
    """Each layered candidate of ``target`` (its ``[[stack]]`` tables) at the target's voltage, area, failure
    probability and margin, at both ends of its temperature range: the worse end decides. Adds per candidate
    ``name``, ``holds`` (the first failure lies at or above the target voltage), ``energy_density_J_per_m3`` (the
    stack's stored energy over its dielectric volume) and ``worst_temperature_K``."""
    out = []
    for name, layers, *_ in target.stacks:
        missing = [k for k, _ in layers if k not in materials]
        if missing:
            raise DataError(f"stack '{name}': no material '{missing[0]}'")
        ends = []
        for t_K in dict.fromkeys((target.tmin_K, target.tmax_K)):
            ends.append(evaluate_stack([materials[k] for k, _ in layers], [d for _, d in layers],
                                       voltage_V=target.voltage_V, temperature_K=t_K, area_m2=target.area_m2,
                                       failure_probability=target.failure_probability, margin=target.margin,
                                       assume_defaults=target.assume_defaults,
                                       extrapolate=extrapolate or target.extrapolate))
        worst = min(ends, key=lambda r: r["stack_breakdown_V"])
        total = sum(d for _, d in layers)
        out.append({"name": name, **worst, "worst_temperature_K": worst["temperature_K"],
                    "holds": worst["stack_breakdown_V"] >= target.voltage_V,
                    "energy_density_J_per_m3": worst["energy_per_area_J_per_m2"] / total})
    return out
