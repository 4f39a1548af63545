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
from materials.lookup import ValueAt, bias_curve, value_at
from materials.records import MaterialData

# Common-practice defaults, used only when the caller asks for them (assume_defaults=True).
DEFAULT_WEIBULL_SHAPE = 10.0      # small-area ramp tests on capacitor films commonly give β ≈ 8–20
DEFAULT_TEST_AREA_M2 = 1e-4       # 1 cm² electrodes, the usual laboratory coupon


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
    inputs: dict[str, ValueAt] = field(default_factory=dict)
    method: str = "linear"

    def to_dict(self) -> dict:
        return {"key": self.key, "temperature_K": self.temperature_K,
                "relative_permittivity": self.relative_permittivity,
                "breakdown_field_V_per_m": self.breakdown_field_V_per_m, "ceiling_J_per_m3": self.ceiling_J_per_m3,
                "design_field_V_per_m": self.design_field_V_per_m, "design_J_per_m3": self.design_J_per_m3,
                "weibull_shape": self.weibull_shape, "test_area_m2": self.test_area_m2,
                "extrapolated": self.extrapolated, "method": self.method, "sources": self.sources,
                "notes": self.notes}


def energy_density_at(material: MaterialData, field_V_per_m: float, *, temperature_K: float,
                      eps: ValueAt | None = None) -> tuple[float, str]:
    """Stored energy density (J/m³) at a field, and the method used (linear, bias-curve or loop)."""
    from materials.energy import linear_energy_density, nonlinear_energy_density

    curve = bias_curve(material, temperature_K=temperature_K)
    if curve is not None:
        fields, eps_diff, _rows = curve
        return float(nonlinear_energy_density(fields, eps_diff, field_V_per_m, extrapolate=True)), "bias-curve"
    if material.response == "nonlinear" and material.has("recoverable_energy_density"):
        rows = sorted((r for r in material.rows("recoverable_energy_density") if r.field_V_per_m),
                      key=lambda r: r.field_V_per_m)
        if rows:
            ref = max(rows, key=lambda r: r.field_V_per_m)
            e = min(field_V_per_m, ref.field_V_per_m)
            return ref.value * (e / ref.field_V_per_m) ** 2, "loop"
    if eps is None:
        eps = value_at(material, "relative_permittivity", temperature_K=temperature_K, extrapolate=True)
    method = "linear" if material.response == "linear" else "linear-upper-bound"
    return float(linear_energy_density(eps.value, field_V_per_m)), method


def ceiling_at(material: MaterialData, *, temperature_K: float, area_m2: float | None = None,
               failure_probability: float | None = None, margin: float = 1.0, extrapolate: bool = False,
               assume_defaults: bool = False) -> Ceiling:
    """The ceiling and design energy density of ``material`` at ``temperature_K``.

    With no ``failure_probability`` the design field is the Weibull scale at the part's area (63.2 % failure),
    divided by ``margin``. With no ``area_m2`` no area scaling is done (the test coupon's area is assumed).
    Raises DataError naming a missing property or a temperature outside the data.
    """
    from materials.energy import linear_energy_density
    from materials.sizing import design_field

    eps = value_at(material, "relative_permittivity", temperature_K=temperature_K, extrapolate=extrapolate)
    ebd = value_at(material, "breakdown_field", temperature_K=temperature_K, extrapolate=extrapolate)
    inputs = {"relative_permittivity": eps, "breakdown_field": ebd}
    notes: list[str] = []
    ceiling = float(linear_energy_density(eps.value, ebd.value))
    try:
        beta = value_at(material, "weibull_shape", temperature_K=temperature_K, extrapolate=True)
        inputs["weibull_shape"] = beta
        shape = beta.value
    except DataError:
        shape = None
    test_area = next((r.area_m2 for r in ebd.rows if r.area_m2), None)
    need_scaling = area_m2 is not None or failure_probability is not None
    if need_scaling and shape is None:
        if not assume_defaults:
            raise DataError(f"{material.key} has no weibull_shape: its breakdown field cannot be scaled to the "
                            "part's area or failure probability (allow common-practice defaults to take "
                            f"β = {DEFAULT_WEIBULL_SHAPE:g})")
        shape = DEFAULT_WEIBULL_SHAPE
        notes.append(f"weibull_shape not in the data: common-practice β = {DEFAULT_WEIBULL_SHAPE:g} assumed")
    if area_m2 is not None and test_area is None:
        if not assume_defaults:
            raise DataError(f"{material.key}: the electrode area of its breakdown test is not stated, so it cannot "
                            "be scaled to the part's area (allow common-practice defaults to take 1 cm²)")
        test_area = DEFAULT_TEST_AREA_M2
        notes.append("breakdown test area not stated: common-practice 1 cm² assumed")
    if need_scaling:
        # Without a part area there is no area scaling: any equal pair of areas gives the ratio 1.
        ref_area = test_area if test_area is not None else 1.0
        e_design = float(design_field(scale_V_per_m=ebd.value, shape=shape, test_area_m2=ref_area,
                                      area_m2=area_m2 if area_m2 is not None else ref_area,
                                      failure_probability=failure_probability if failure_probability is not None
                                      else 1 - 2.718281828459045 ** -1, margin=margin))
    else:
        e_design = ebd.value / margin
    u_design, method = energy_density_at(material, e_design, temperature_K=temperature_K, eps=eps)
    extrap = any(v.extrapolated for v in inputs.values())
    srcs = []
    for v in inputs.values():
        for s in v.sources:
            if s not in srcs:
                srcs.append(s)
    if method == "linear-upper-bound":
        notes.append("nonlinear material without a DC-bias curve or loop: ½·ε0·εr·E² with the small-signal εr "
                     "overstates its energy")
    if method == "loop":
        notes.append("nonlinear: loop's recoverable density scaled by (E/E_loop)², capped at the loop's field")
    return Ceiling(key=material.key, temperature_K=temperature_K, relative_permittivity=eps.value,
                   breakdown_field_V_per_m=ebd.value, ceiling_J_per_m3=ceiling, design_field_V_per_m=e_design,
                   design_J_per_m3=u_design, weibull_shape=shape, test_area_m2=test_area, extrapolated=extrap,
                   sources=srcs, notes=notes, inputs=inputs, method=method)
