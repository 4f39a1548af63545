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


def ceiling_at(material: MaterialData, *, temperature_K: float, area_m2: float | None = None,
               failure_probability: float | None = None, margin: float = 1.0, extrapolate: bool = False,
               assume_defaults: bool = False) -> Ceiling:
    """The ceiling and design energy density of ``material`` at ``temperature_K``, from the evaluation engine.

    With no ``failure_probability`` the design field is the Weibull scale at the part's area (63.2 % failure),
    divided by ``margin``. With no ``area_m2`` no area scaling is done (the test coupon's area is assumed).
    Raises DataError naming a missing property or a temperature outside the data.
    """
    import math

    from materials.energy import linear_energy_density
    from materials.lookup import outside_data_message
    from materials.sizing import design_field
    from ranking.engine import BIAS, LOOP, METHOD_NAMES, energy_density
    from ranking.reasons import words

    inp = _one(material, temperature_K, assume_defaults)
    for prop, has, lk, c in (("relative_permittivity", inp.eps_has, inp.eps_g, inp.c_eps),
                             ("breakdown_field", inp.ebd_has, inp.ebd_g, inp.c_ebd)):
        if not has[0]:
            raise DataError(f"{material.key} has no {prop}")
        carried = prop == "breakdown_field" and inp.cold[c[0]]   # held below the coldest point: a lower bound
        if lk.extrapolated[c[0]] and not extrapolate and not carried:
            raise DataError(outside_data_message(prop, lk.lo_x[c[0]], lk.hi_x[c[0]], temperature_K))
    if inp.loop_out[0] and not extrapolate:
        raise DataError(outside_data_message("loop energy", inp.loop_lo[0], inp.loop_hi[0], temperature_K))
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
    shape = float(inp.beta[0]) if inp.shape_found[0] else None
    test_area = float(inp.test_area[0]) if inp.area_found[0] else None
    need_scaling = area_m2 is not None or failure_probability is not None
    if need_scaling and shape is None:
        if not assume_defaults:
            raise DataError(f"{material.key}: " + words("shape-missing"))
        shape = float(inp.beta[0])
        notes.append(words("assumed-shape", shape=shape, family=material.family))
    if area_m2 is not None and test_area is None:
        if not assume_defaults:
            raise DataError(f"{material.key}: " + words("test-area-missing"))
        test_area = float(inp.test_area[0])
        notes.append(words("assumed-test-area", area_m2=test_area))
    if need_scaling:
        # Without a part area there is no area scaling: any equal pair of areas gives the ratio 1.
        ref_area = test_area if test_area is not None else 1.0
        e_design = float(design_field(scale_V_per_m=ebd, shape=shape, test_area_m2=ref_area,
                                      area_m2=area_m2 if area_m2 is not None else ref_area,
                                      failure_probability=failure_probability if failure_probability is not None
                                      else -math.expm1(-1.0), margin=margin))
    else:
        e_design = ebd / margin
    u_design = float(energy_density(inp, [0], [min(e_design, top)])[0])
    if e_design > top and ebd <= top:
        notes.append(words("loop-top", loop_V_per_m=top, field_V_per_m=e_design))
    method = METHOD_NAMES[int(inp.kind[0])]
    t = inp.reader.t
    rows = [inp.eps_g.used0[inp.c_eps[0]], inp.eps_g.used1[inp.c_eps[0]], inp.ebd_g.used0[inp.c_ebd[0]],
            inp.ebd_g.used1[inp.c_ebd[0]]]
    if inp.shape_found[0]:
        rows += [inp.sh.used0[0], inp.sh.used1[0]]
    srcs = list(dict.fromkeys(t.source_keys[t.source[int(r)]] for r in rows if r >= 0))
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
                   extrapolated=bool(inp.extrapolated[0] or inp.held_cold[0]), sources=srcs, notes=notes, method=method)
