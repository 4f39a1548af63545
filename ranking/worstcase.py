"""The worst-case inputs of one material over a temperature range, gathered once for ranking and sizing.

Worst case = the lowest permittivity and the lowest breakdown field on a grid of both ends of the range plus
every data point inside it, even where they occur at different temperatures (conservative), and the largest loss
tangent.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from materials.errors import DataError
from materials.lookup import ValueAt, bias_curve, temperature_points, value_at
from materials.records import MaterialData


@dataclass
class WorstCase:
    grid: list[float]
    eps_at: dict[float, ValueAt]
    ebd_at: dict[float, ValueAt]
    t_eps: float
    t_ebd: float
    beta: float | None = None
    beta_v: ValueAt | None = None
    test_area_m2: float | None = None
    min_thickness: ValueAt | None = None
    density: ValueAt | None = None
    loss: ValueAt | None = None
    flags: list[str] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    missing: list[str] = field(default_factory=list)

    @property
    def eps(self) -> ValueAt:
        return self.eps_at[self.t_eps]

    @property
    def ebd(self) -> ValueAt:
        return self.ebd_at[self.t_ebd]

    def bias_curve(self, material: MaterialData):
        return bias_curve(material, temperature_K=self.t_eps)

    def sources(self) -> list[str]:
        out = []
        for v in (*self.eps_at.values(), *self.ebd_at.values(), self.beta_v, self.min_thickness, self.density,
                  self.loss):
            for s in (v.sources if v is not None else ()):
                if s not in out:
                    out.append(s)
        return out


def temperature_grid(material: MaterialData, tmin_K: float, tmax_K: float) -> list[float]:
    """Both ends of the range plus every permittivity, breakdown or loss data point inside it (K)."""
    pts = temperature_points(material, ("relative_permittivity", "breakdown_field", "loss_tangent"))
    return sorted({tmin_K, tmax_K, *[t for t in pts if tmin_K < t < tmax_K]})


def worst_case(material: MaterialData, *, tmin_K: float, tmax_K: float, frequency_Hz: float | None = None,
               assume_defaults: bool = False) -> WorstCase:
    """Gather the worst-case inputs; DataError names what is missing (β and test area unless defaults allowed)."""
    from ranking.ceiling import DEFAULT_TEST_AREA_M2, DEFAULT_WEIBULL_SHAPE

    for prop in ("relative_permittivity", "breakdown_field"):
        if not material.has(prop):
            raise DataError(f"{prop} missing")
    grid = temperature_grid(material, tmin_K, tmax_K)
    eps_at = {t: value_at(material, "relative_permittivity", temperature_K=t, extrapolate=True) for t in grid}
    ebd_at = {t: value_at(material, "breakdown_field", temperature_K=t, extrapolate=True) for t in grid}
    wc = WorstCase(grid=grid, eps_at=eps_at, ebd_at=ebd_at, t_eps=min(grid, key=lambda t: eps_at[t].value),
                   t_ebd=min(grid, key=lambda t: ebd_at[t].value))
    if any(v.extrapolated for v in (*eps_at.values(), *ebd_at.values())):
        wc.flags.append("extrapolated")
        wc.notes.append("permittivity or breakdown held at the end of its data outside the measured temperatures")
    try:
        wc.beta_v = value_at(material, "weibull_shape", temperature_K=wc.t_ebd, extrapolate=True)
        wc.beta = wc.beta_v.value
    except DataError:
        if not assume_defaults:
            raise DataError("weibull_shape missing: breakdown cannot be scaled to the part's area "
                            "(allow common-practice defaults to take β = 10)") from None
        wc.beta = DEFAULT_WEIBULL_SHAPE
        wc.flags.append("assumed-shape")
        wc.notes.append(f"weibull_shape not in the data: common-practice β = {DEFAULT_WEIBULL_SHAPE:g} assumed")
    wc.test_area_m2 = next((r.area_m2 for r in wc.ebd.rows if r.area_m2), None)
    if wc.test_area_m2 is None:
        if not assume_defaults:
            raise DataError("breakdown test electrode area not stated: cannot scale to the part's area "
                            "(allow common-practice defaults to take 1 cm²)")
        wc.test_area_m2 = DEFAULT_TEST_AREA_M2
        wc.flags.append("assumed-test-area")
        wc.notes.append("breakdown test electrode area not stated: common-practice 1 cm² assumed")
    if material.has("min_thickness"):
        wc.min_thickness = value_at(material, "min_thickness")
    if material.has("density"):
        wc.density = value_at(material, "density", extrapolate=True)
    if material.has("loss_tangent"):
        tl = [value_at(material, "loss_tangent", temperature_K=t, frequency_Hz=frequency_Hz, extrapolate=True)
              for t in grid]
        wc.loss = max(tl, key=lambda v: v.value)
    return wc
