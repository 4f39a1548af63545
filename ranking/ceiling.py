"""Energy-density ceilings of one material at one temperature, from the cited values it holds.

Two numbers per temperature:

* the *ceiling* ``½·ε0·εr(T)·E_bd(T)²`` — the small-area, short-term figure datasheets quote;
* the *design* density at the design field: the Weibull quantile at the accepted failure probability, scaled
  from the test electrode area to the part's active area (weakest link), divided by the margin
  (IEEE Std 930 / IEC 62539 practice). For a material with a DC-bias curve the density is ``∫E dD`` along the
  curve; for a nonlinear material known only from a loop, the loop's recoverable density scaled by the square of
  the field ratio and never beyond the measured field.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from materials.errors import DataError
from materials.records import MaterialData


@dataclass
class Ceiling:
    key: str
    temperature_K: float
    relative_permittivity: float
    breakdown_field_V_per_m: float
    ceiling_J_per_m3: float
    design_field_V_per_m: float | None
    design_J_per_m3: float | None
    weibull_shape: float | None
    test_area_m2: float | None
    extrapolated: bool
    sources: list[str]
    notes: list[str] = field(default_factory=list)
    method: str = "linear"

    def to_dict(self) -> dict:
        return {"key": self.key, "temperature_K": self.temperature_K,
                "relative_permittivity": self.relative_permittivity,
                "breakdown_field_V_per_m": self.breakdown_field_V_per_m, "ceiling_J_per_m3": self.ceiling_J_per_m3,
                "design_field_V_per_m": self.design_field_V_per_m, "design_J_per_m3": self.design_J_per_m3,
                "weibull_shape": self.weibull_shape, "test_area_m2": self.test_area_m2,
                "extrapolated": self.extrapolated, "method": self.method, "sources": self.sources,
                "notes": self.notes}


def _one(material: MaterialData, temperature_K: float, assume_defaults: bool):
    from materials.lookup import reader_of
    from ranking.engine import worst_inputs

    r, _ = reader_of(material)
    return worst_inputs(r, tmin_K=temperature_K, tmax_K=temperature_K, assume_defaults=assume_defaults)


def check_inputs(inp, i: int, *, key: str, extrapolate: bool) -> None:
    """Refuse material ``i`` of the engine's inputs without a permittivity or a breakdown field, or with one (or its
    loop) held outside its temperatures (unless ``extrapolate``; breakdown held below its coldest point is a lower
    bound and passes)."""
    from ranking.explain import held_notes
    from ranking.reasons import words

    for prop, has in (("relative_permittivity", inp.eps_has), ("breakdown_field", inp.ebd_has)):
        if not has[i]:
            raise DataError(f"{key} has no {prop}")
    # the engine's own rule (inputs.extrapolated), in the shortlist's words
    if inp.extrapolated[i] and not extrapolate:
        raise DataError(f"{key}: " + words("outside-data", notes="; ".join(held_notes(inp, i))))


def ceiling_at(material: MaterialData, *, temperature_K: float, area_m2: float | None = None,
               failure_probability: float | None = None, margin: float = 1.0, extrapolate: bool = False,
               assume_defaults: bool = False, gap_m: float | None = None,
               pressure_Pa: float | None = None) -> Ceiling:
    """The ceiling and design energy density of ``material`` at ``temperature_K``, from the evaluation engine.

    With no ``failure_probability`` the design field is the Weibull scale at the part's area (63.2 % failure),
    divided by ``margin``. With no ``area_m2`` no area scaling is done (the test coupon's area is assumed); a gas is
    never area-scaled. With ``gap_m`` the breakdown is that of a layer or gap of that width: a gas's from its gap law
    at ``pressure_Pa`` (:mod:`ranking.gaps`), a liquid's by the stressed-volume law, a solid's by the thickness law.
    Raises DataError naming a missing property or a temperature outside the data.
    """
    import math

    from materials.energy import linear_energy_density
    from materials.sizing import design_field
    from ranking.engine import BIAS, LOOP, METHOD_NAMES, energy_density
    from ranking.reasons import words

    inp = _one(material, temperature_K, assume_defaults)
    check_inputs(inp, 0, key=material.key, extrapolate=extrapolate)
    eps, ebd = float(inp.eps_v[0]), float(inp.ebd_v[0])
    notes: list[str] = []
    kind = int(inp.kind[0])
    top = float(inp.loop_field[0]) if kind == LOOP else math.inf
    # A nonlinear material's ceiling comes from its own curve or loop, never from ½·ε0·εr·E² with small-signal εr.
    if kind in (BIAS, LOOP):
        ceiling = float(energy_density(inp, [0], [min(ebd, top)])[0])
        if ebd > top:
            notes.append(words("loop-top", loop_V_per_m=top, field_V_per_m=ebd))
    else:
        ceiling = float(linear_energy_density(eps, ebd))
    gas = bool(inp.no_area_law[0])
    if gap_m is not None:
        gap_notes, ebd, fixed_design = _at_gap(inp, material, temperature_K=temperature_K, area_m2=area_m2,
                                               failure_probability=failure_probability, margin=margin,
                                               gap_m=gap_m, pressure_Pa=pressure_Pa, assume_defaults=assume_defaults,
                                               extrapolate=extrapolate)
        notes += gap_notes
        ceiling = float(linear_energy_density(eps, ebd)) if kind not in (BIAS, LOOP) else \
            float(energy_density(inp, [0], [min(ebd, top)])[0])
    elif gas:
        notes.append(words("gas-stored-gap", thickness_m=float(inp.test_thickness[0])))
    if gas and area_m2 is not None:
        notes.append(words("gas-no-area"))
    shape = float(inp.beta[0]) if inp.shape_found[0] else None
    test_area = float(inp.test_area[0]) if inp.area_found[0] else None
    need_scaling = area_m2 is not None or failure_probability is not None
    if need_scaling and shape is None:
        if not assume_defaults:
            raise DataError(f"{material.key}: " + words("shape-missing"))
        shape = float(inp.beta[0])
        notes.append(words("assumed-shape", shape=shape, family=material.family))
    if area_m2 is not None and test_area is None and not gas:
        if not assume_defaults:
            raise DataError(f"{material.key}: " + words("test-area-missing"))
        test_area = float(inp.test_area[0])
        notes.append(words("assumed-test-area", area_m2=test_area))
    if gap_m is not None:
        e_design = fixed_design
    elif need_scaling:
        # Without a part area there is no area scaling: any equal pair of areas gives the ratio 1.
        ref_area = test_area if test_area is not None else 1.0
        e_design = float(design_field(scale_V_per_m=ebd, shape=shape, test_area_m2=ref_area,
                                      area_m2=area_m2 if area_m2 is not None and not gas else ref_area,
                                      failure_probability=failure_probability if failure_probability is not None
                                      else -math.expm1(-1.0), margin=margin))
    else:
        e_design = ebd / margin
    u_design = float(energy_density(inp, [0], [min(e_design, top)])[0])
    if e_design > top and ebd <= top:
        notes.append(words("loop-top", loop_V_per_m=top, field_V_per_m=e_design))
    method = METHOD_NAMES[int(inp.kind[0])]
    t = inp.reader.t
    from ranking.explain import band_notes

    notes.extend(band_notes(inp, 0))
    # the rows behind each answer, and the rows that gave it its shape over temperature (a weaker curve, a band)
    rows = [getattr(lk, a)[c] for lk, c in ((inp.eps_g, inp.c_eps[0]), (inp.ebd_g, inp.c_ebd[0]))
            for a in ("used0", "used1", "shape0", "shape1")]
    if inp.shape_found[0]:
        rows += [inp.sh.used0[0], inp.sh.used1[0]]
    rows += getattr(inp, "gap_rows", [])
    srcs = list(dict.fromkeys(t.source_keys[t.source[int(r)]] for r in rows if r >= 0))
    srcs += [k for k in getattr(inp, "gap_sources", []) if k not in srcs]
    if inp.held_cold[0]:
        from materials.priors import COLD_HOLD

        notes.append(words("held-cold", coldest_K=float(inp.ebd_g.lo_x[inp.c_ebd[0]]), source=COLD_HOLD[0]))
        srcs.append(COLD_HOLD[0])
    if method == "linear-upper-bound":
        notes.append(words("linear-upper-bound"))
    if method == "loop":
        notes.append(words("loop-scaled"))
    return Ceiling(key=material.key, temperature_K=temperature_K, relative_permittivity=eps,
                   breakdown_field_V_per_m=ebd, ceiling_J_per_m3=ceiling, design_field_V_per_m=e_design,
                   design_J_per_m3=u_design, weibull_shape=shape, test_area_m2=test_area,
                   extrapolated=bool(inp.extrapolated[0] or inp.held_cold[0]), sources=srcs, notes=notes,
                   method=method)


def _at_gap(inp, material, *, temperature_K, area_m2, failure_probability, margin, gap_m, pressure_Pa,
            assume_defaults, extrapolate):
    """(notes, breakdown at the gap, design field at the gap) of material 0 of ``inp``, by the engine's laws."""
    import math

    from ranking.engine import evaluate
    from ranking.explain import law_notes
    from ranking.target import Target

    fixed = apply_gap_laws(inp, [gap_m], pressure_Pa=pressure_Pa, temperature_K=temperature_K)
    target = Target(voltage_V=1.0, tmin_K=temperature_K, tmax_K=temperature_K, margin=margin, area_m2=area_m2,
                    failure_probability=failure_probability if failure_probability is not None
                    else -math.expm1(-1.0), assume_defaults=assume_defaults, extrapolate=extrapolate)
    cols = evaluate(inp, target, thickness_m=gap_m)
    refuse_outside(cols, [material.key])
    return fixed["notes"][0] + law_notes(cols, 0), float(cols.parts["scale_d"][0]), float(cols.parts["ed"][0])


def refuse_outside(cols, keys) -> None:
    """Refuse the first candidate the engine found outside its data (a temperature, or a layer beyond what a law may
    carry) when the target does not extrapolate, naming it and why."""
    from ranking.explain import outside_notes

    for i in map(int, (cols.fails["outside-data"]).nonzero()[0][:1]):
        raise DataError(f"{keys[i]}: " + "; ".join(outside_notes(cols, i)) + " (ask for extrapolation to use it)")


def apply_gap_laws(inp, gaps_m, *, pressure_Pa, temperature_K) -> dict:
    """Apply :func:`ranking.gaps.apply_gaps` and say, per material, which gas law gave its breakdown at its gap (the
    engine's :func:`ranking.explain.law_notes` say how a liquid or solid was carried there)."""
    import numpy as np

    from materials.priors import LIQUID_TEST_GAP
    from ranking.gaps import FORMULA_SOURCES, apply_gaps, law_name
    from ranking.reasons import words

    g = apply_gaps(inp, gaps_m, pressure_Pa=pressure_Pa, temperature_K=temperature_K)
    gaps = np.broadcast_to(np.asarray(gaps_m, dtype=float), (inp.reader.m,))
    notes, sources, rows = [], [], []
    for i in range(inp.reader.m):
        n, s = [], []
        code = int(g["law"][i])
        if code >= 0:
            n.append(words("gas-gap-law", law=law_name(code), gap_m=float(gaps[i]),
                           field_V_per_m=float(inp.ebd_v[i])))
            if code in FORMULA_SOURCES:
                s.append(FORMULA_SOURCES[code][0])
        elif g["gas"][i]:
            n.append(words("gas-no-law"))
        if g["gap_assumed"][i]:
            s.append(LIQUID_TEST_GAP.source)
        if g["liquid"][i] and inp.has_law[i]:
            s.append(inp.law_source[i])
        notes.append(n)
        sources.append(s)
        rows.append(g["rows"][i])
    inp.parts["gap_rows"] = rows[0] if inp.reader.m == 1 else []
    inp.parts["gap_sources"] = sources[0] if inp.reader.m == 1 else []
    return {**g, "notes": notes, "sources": sources, "rows": rows}
