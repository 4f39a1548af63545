"""Sizing one part at the worst case of its temperature range (``holdoff size``), through the evaluation engine."""

from __future__ import annotations

from materials.errors import DataError, InputError
from materials.records import MaterialData

#: Rules that only note a limit when one part is sized (the designer chose the material).
_RATED = ("rated-missing-max", "rated-outside-max", "rated-missing-min", "rated-outside-min")


def size_material(material: MaterialData, *, energy_J: float | None = None, voltage_V: float, tmin_K: float,
                  tmax_K: float, failure_probability: float = 0.01, margin: float = 1.0, ripple_current_A=None,
                  frequency_Hz=None, assume_defaults: bool = False, segment_area_m2=None, capacitance_F=None,
                  ripple=(), series_resistance_ohm: float = 0.0, thermal_resistance_K_per_W=None, ambient_K=None,
                  life_s=None, life_fraction: float = 0.01, packing_factor: float | None = None,
                  strict: bool = False, extrapolate: bool = False, max_sections: int = 1) -> dict:
    """Size ``material`` for ``energy_J`` (or ``capacitance_F``) at ``voltage_V`` over ``tmin_K…tmax_K``: the
    ``size`` JSON contract.

    The rules are the shortlist's (:func:`ranking.engine.evaluate` on a table of one row): a rated range that does
    not cover the target is noted, not refused; anything else that excludes the material is an error naming it.
    A ripple current (one, ``ripple_current_A`` at ``frequency_Hz``, or a spectrum ``ripple`` of (A, Hz)) is
    dissipated in the series resistance and the dielectric; with a thermal resistance the part is designed at its
    hot spot (:mod:`ranking.service`), and with ``life_s`` for its service life. ``packing_factor`` (dielectric
    volume over the part's volume) gives the device-level energy density beside the material's.
    """
    import numpy as np

    from materials.energy import EPSILON_0
    from materials.sizing import CAUTION, _finish, _ripple_power, _SEGMENT_NOTE
    from materials.table import ValueTable
    from ranking.engine import BIAS, charge_density, energy_density, evaluate, small_signal_permittivity
    from ranking.explain import LIMITS, assumption_notes, binding, reasons, service_details
    from ranking.reasons import words
    from ranking.target import Target

    if tmin_K > tmax_K:
        raise InputError("--tmin is above --tmax")
    if energy_J is None and capacitance_F is None:
        raise InputError("size needs --energy or --capacitance")
    if ripple_current_A is not None:
        if ripple:
            raise InputError("give --ripple or --ripple-current, not both")
        if frequency_Hz is None:
            raise DataError("ripple current given but frequency_Hz missing: cannot compute the dissipation")
        ripple = ((float(ripple_current_A), float(frequency_Hz)),)
    heated = bool(ripple) and thermal_resistance_K_per_W is not None
    target = Target(voltage_V=voltage_V, tmin_K=tmin_K, tmax_K=tmax_K, energy_J=energy_J, capacitance_F=capacitance_F,
                    failure_probability=failure_probability, margin=margin, segment_area_m2=segment_area_m2,
                    frequency_Hz=frequency_Hz, assume_defaults=assume_defaults, ripple=ripple if heated else (),
                    series_resistance_ohm=series_resistance_ohm, thermal_resistance_K_per_W=thermal_resistance_K_per_W,
                    ambient_K=ambient_K, life_s=life_s, life_fraction=life_fraction, packing_factor=packing_factor,
                    strict=strict,
                    extrapolate=extrapolate, max_sections=max_sections)
    energy_J = target.energy_J
    cols = evaluate(ValueTable.from_materials([material]), target)
    notes = []
    for code, q in reasons(cols, 0):
        if code == "rated-outside":
            notes.append(words("outside-rating", **q))
    for code, q in reasons(cols, 0, ignore=_RATED):
        raise DataError(f"{material.key}: {words(code, **q)}")
    P, inp = cols.parts, cols.parts["inputs"]
    d, area = float(P["d"][0]), float(P["area"][0])
    e_op = voltage_V / d
    u = float(energy_density(inp, [0], [e_op])[0])
    seg = float(P["seg"][0]) if P["has_seg"][0] else None
    n_sec = int(P["sections"][0])
    res_notes = assumption_notes(cols, 0)
    if seg:
        res_notes.append(_SEGMENT_NOTE)
    if inp.kind[0] == BIAS and e_op > inp.bias.fields[0, int(inp.bias.n[0]) - 1]:
        res_notes.append(f"operating field {e_op:.4g} V/m beyond the DC-bias curve: last permittivity held constant")
    small = float(small_signal_permittivity(inp, [0], [e_op])[0])
    loss = float(cols.values["loss"][0]) if np.isfinite(cols.values["loss"][0]) else None
    density = float(inp.density[0]) if np.isfinite(inp.density[0]) else None
    res = _finish(d=d, area=area, voltage=voltage_V, charge_per_m2=float(charge_density(inp, [0], [e_op])[0]),
                  energy=area * d * u, small_signal=EPSILON_0 * small * area / d, scale=float(P["scale_d"][0]),
                  shape=float(inp.beta[0]), test_area=float(inp.test_area[0]), log_k=float(P["log_k_d"][0]),
                  limited_by="min_thickness" if P["at_min"][0] else "breakdown",
                  iterations=int(P["iterations"][0]), density=density, loss_tangent=loss, ripple=None,
                  frequency=frequency_Hz, notes=res_notes,
                  # the weakest link: one segment, or the area of every series section
                  segment_area=seg if seg else (area * n_sec if n_sec > 1 else None))
    small_c = EPSILON_0 * small * area / d
    dissipated = None
    if heated:
        dissipated = float(P["heat"]["power_W"][0])
    elif ripple:
        dissipated = sum(_ripple_power(small_c, loss, i, f, series_resistance_ohm) for i, f in ripple)
    if segment_area_m2 and not inp.heals[0]:
        notes.append(words("segment-ignored"))
    t = inp.reader.t
    rows = []
    for lk, c in ((inp.eps_g, inp.c_eps[0]), (inp.ebd_g, inp.c_ebd[0])):
        rows += [lk.used0[c], lk.used1[c]]
    for lk in (inp.sh, inp.thick, inp.dens):
        if lk.present[0]:
            rows += [lk.used0[0], lk.used1[0]]
    if inp.has_loss[0]:
        rows += [inp.ls.used0[inp.c_loss[0]], inp.ls.used1[inp.c_loss[0]]]
    flags = [f for f, on in (("extrapolated", inp.extrapolated[0]), ("held-cold", inp.held_cold[0]),
                             ("permittivity-band", inp.banded[0]),
                             ("assumed-shape", not inp.shape_found[0]),
                             ("assumed-test-area", not inp.area_found[0])) if on]
    out = {"key": material.key, "name": material.name, "voltage_V": voltage_V, "tmin_K": tmin_K, "tmax_K": tmax_K,
           **res.as_dict(), "worst_temperature_K": float(inp.t_ebd[0]),
           "worst_permittivity_temperature_K": float(inp.t_eps[0]), "relative_permittivity": float(inp.eps_v[0]),
           "breakdown_field_V_per_m": float(inp.ebd_v[0]), "weibull_shape": float(inp.beta[0]),
           "test_area_m2": float(inp.test_area[0]), "sections": n_sec,
           "layer_thickness_m": float(P["layer"][0]),
           "sources": list(dict.fromkeys(t.source_keys[t.source[int(r)]] for r in rows if r >= 0)), "flags": flags}
    if inp.held_cold[0]:
        from materials.priors import COLD_HOLD

        out["sources"].append(COLD_HOLD[0])
    out["notes"] = notes + list(out["notes"]) + [n for n in assumption_notes(cols, 0) if n not in res_notes]
    out["cautions"] = [CAUTION]
    out["dissipated_power_W"] = dissipated
    out["series_resistance_ohm"] = series_resistance_ohm
    out["capacitance_target_F"] = capacitance_F
    out["binding_limit"] = LIMITS[binding(cols, 0)[0]]
    out.update(service_details(cols, 0))
    if P.get("life_binds") is not None and P["life_binds"][0]:
        out["design_field_V_per_m"] = float(P["ed"][0])
        out["limited_by"] = "life"
    if heated:
        out["dissipated_power_W"] = dissipated
    if P.get("life") is not None and P["life_has"][0] and not P["life"]["found"][0]:
        flags.append("assumed-life-exponent")
    out["packing_factor"] = packing_factor
    out.setdefault("device_energy_density_J_per_m3", None)
    return out
