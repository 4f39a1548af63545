"""Sizing one part at the worst case of its temperature range (``holdoff size``)."""

from __future__ import annotations

from materials.errors import DataError
from materials.records import MaterialData
from ranking.worstcase import WorstCase, worst_case


def self_heals(material: MaterialData) -> bool:
    from materials.lookup import value_at

    return material.has("self_healing") and value_at(material, "self_healing").value >= 0.5


def size_worst_case(material: MaterialData, wc: WorstCase, *, energy_J: float, voltage_V: float,
                    failure_probability: float, margin: float, ripple_current_A=None, frequency_Hz=None,
                    segment_area_m2=None):
    """A :class:`materials.sizing.SizingResult` from worst-case inputs; linear or along the DC-bias curve.

    A segment area applies only to a self-healing material (a breakdown clears or disconnects one segment).
    """
    from materials.sizing import size_linear, size_nonlinear

    common = dict(energy_J=energy_J, voltage_V=voltage_V, scale_V_per_m=wc.ebd.value, shape=wc.beta,
                  test_area_m2=wc.test_area_m2, failure_probability=failure_probability, margin=margin,
                  density_kg_per_m3=wc.density.value if wc.density else None,
                  min_thickness_m=wc.min_thickness.value if wc.min_thickness else None,
                  loss_tangent=wc.loss.value if wc.loss else None, ripple_current_A=ripple_current_A,
                  frequency_Hz=frequency_Hz,
                  segment_area_m2=segment_area_m2 if segment_area_m2 and self_heals(material) else None)
    curve = wc.bias_curve(material)
    if curve is not None:
        fields, eps, _rows = curve
        return size_nonlinear(bias_field_V_per_m=fields, differential_permittivity=eps, extrapolate=True,
                              **common)
    if material.response != "linear":
        raise DataError(f"{material.key} is nonlinear and has no DC-bias curve: it cannot be sized")
    return size_linear(relative_permittivity=wc.eps.value, **common)


def size_material(material: MaterialData, *, energy_J: float, voltage_V: float, tmin_K: float, tmax_K: float,
                  failure_probability: float = 0.01, margin: float = 1.0, ripple_current_A=None,
                  frequency_Hz=None, assume_defaults: bool = False, segment_area_m2=None) -> dict:
    """Size ``material`` for ``energy_J`` at ``voltage_V`` over ``tmin_K…tmax_K``: the ``size`` JSON contract."""
    from materials.sizing import CAUTION

    if tmin_K > tmax_K:
        from materials.errors import InputError

        raise InputError("--tmin is above --tmax")
    notes = []
    for prop, need, bad in (("max_temperature", tmax_K, lambda r, t: r < t), ("min_temperature", tmin_K,
                                                                            lambda r, t: r > t)):
        if material.has(prop):
            from materials.lookup import value_at

            rated = value_at(material, prop).value
            if bad(rated, need):
                notes.append(f"outside the rated range: {prop} is {rated - 273.15:g} °C")
    try:
        wc = worst_case(material, tmin_K=tmin_K, tmax_K=tmax_K, frequency_Hz=frequency_Hz,
                        assume_defaults=assume_defaults)
    except DataError as exc:
        raise DataError(f"{material.key}: {exc}") from None
    res = size_worst_case(material, wc, energy_J=energy_J, voltage_V=voltage_V,
                          failure_probability=failure_probability, margin=margin,
                          ripple_current_A=ripple_current_A, frequency_Hz=frequency_Hz,
                          segment_area_m2=segment_area_m2)
    if segment_area_m2 and not self_heals(material):
        notes.append("segment area ignored: the material is not self-healing, so the whole area counts")
    out = {"key": material.key, "name": material.name, "voltage_V": voltage_V, "tmin_K": tmin_K, "tmax_K": tmax_K,
           **res.as_dict(), "worst_temperature_K": wc.t_ebd, "worst_permittivity_temperature_K": wc.t_eps,
           "relative_permittivity": wc.eps.value, "breakdown_field_V_per_m": wc.ebd.value,
           "weibull_shape": wc.beta, "test_area_m2": wc.test_area_m2, "sources": wc.sources(),
           "flags": wc.flags}
    out["notes"] = notes + wc.notes + list(out["notes"])
    out["cautions"] = [CAUTION]
    return out
