"""Endurance sets into the store: the units' times to failure, and the life-stress fit as derived values."""

from __future__ import annotations

from itertools import repeat

from db.bulk import insert_rows
from db.labdata.common import DEFAULT_CONFIDENCE, ImportResult
from db.labdata.provenance import _prepare
from materials.errors import InputError
from materials.properties import check_plausible

#: One electronvolt in joules (SI-exact since 2019): activation energies are stored in J.
ELECTRONVOLT_J = 1.602176634e-19


def fit_file(data, *, confidence: float = DEFAULT_CONFIDENCE):
    """The Weibull-power (or Weibull-power-Arrhenius) fit of a parsed endurance file, errors located in the file."""
    from materials.labfiles import in_file
    from materials.life import fit_endurance

    try:
        return fit_endurance(data.times_s, data.stress, censored=data.censored,
                             temperatures_K=data.fit_temperatures(), confidence=confidence)
    except InputError as exc:
        raise in_file(exc, data.path, prefix="the life-stress fit failed: ", keep_field=False) from None


def fit_figures(fit, stress_kind: str) -> dict:
    """The fit's figures for JSON and the import result (SI; the stress reference in V or V/m)."""
    unit = "V" if stress_kind == "voltage" else "V_per_m"
    out = {"n_failures": fit.n_failures, "n_censored": fit.n_censored, "confidence": fit.confidence,
           "life_exponent": fit.n, "life_exponent_bounds": list(fit.n_bounds), "shape": fit.shape,
           "shape_bounds": list(fit.shape_bounds), f"stress_ref_{unit}": fit.stress_ref,
           "scale_ref_s": fit.scale_ref_s, "scale_ref_bounds_s": list(fit.scale_ref_bounds_s),
           "temperature_ref_K": fit.temperature_ref_K,
           "activation_energy_eV": fit.ea_eV, "activation_energy_bounds_eV":
               list(fit.ea_bounds_eV) if fit.ea_bounds_eV else None,
           "log_likelihood": fit.log_likelihood,
           "shape_by_level": [{"level": list(k) if isinstance(k, tuple) else k, "shape": v}
                              for k, v in fit.shape_by_level.items()],
           "shape_test_p": fit.shape_test_p if fit.shape_test_p == fit.shape_test_p else None,
           "shape_warning": fit.shape_warning}
    return out


def import_endurance(session, data, *, material_key: str | None = None, new_material: str | None = None,
                     family: str | None = None, force: bool = False,
                     confidence: float = DEFAULT_CONFIDENCE) -> ImportResult:
    """Store a parsed endurance set (:class:`materials.labfiles.EnduranceFile`), its units and its fit.

    The fit (:func:`materials.life.fit_endurance`) becomes a ``life_exponent`` row (n, with its Fisher bounds as
    low/high) and, when the units ran at two or more temperatures, an ``activation_energy`` row (J), both at the
    set's temperature, thickness and area and referring to the set. The exponent is the same in voltage and in
    field (at one thickness ``E = V/d``).

    Raises:
        InputError: the file was imported before or the label is taken (unless ``force``), the material is
            unknown, the fit fails or its exponent is implausible.
    """
    from db.models import EndurancePoint, EnduranceSet, PropertyValue

    fit = fit_file(data, confidence=confidence)
    derived = {"life_exponent": (fit.n, *fit.n_bounds)}
    if fit.ea_eV is not None:
        derived["activation_energy"] = tuple(x * ELECTRONVOLT_J for x in (fit.ea_eV, *fit.ea_bounds_eV))
    for prop, (v, _, _) in derived.items():
        why = check_plausible(prop, v)
        if why:
            raise InputError(f"the fitted {prop} is implausible: {why}", file=data.path)
    mat, created, replaced, src, file_name = _prepare(
        session, data, EnduranceSet, PropertyValue.endurance_set_id, "endurance set", "endurance test",
        material_key=material_key, new_material=new_material, family=family, force=force, response="linear")
    c = data.conditions
    eset = EnduranceSet(material_id=mat.id, label=c.label, stress_kind=data.stress_kind, thickness_m=c.thickness_m,
                        area_m2=c.area_m2, temperature_K=c.temperature_K, source_id=src.id, file_name=file_name,
                        sha256=data.sha256)
    session.add(eset)
    session.flush()
    n = data.n
    temps = data.temperatures_K.tolist() if data.temperatures_K is not None else repeat(None, n)
    insert_rows(session, EndurancePoint.__table__, ("set_id", "seq", "time_s", "stress", "temperature_K", "censored"),
                zip(repeat(eset.id, n), range(n), data.times_s.tolist(), data.stress.tolist(), temps,
                    data.censored.tolist(), strict=True))
    law = "Weibull-power-Arrhenius" if fit.ea_eV is not None else "Weibull-inverse-power-law"
    desc = (f"endurance set '{eset.label}' ({fit.n_failures} failures, {fit.n_censored} censored; {law} maximum "
            f"likelihood, {confidence:.0%} Fisher bounds; Weibull shape in time {fit.shape:.3g})")
    t_row = c.temperature_K if c.temperature_K is not None else fit.temperature_ref_K
    common = dict(material_id=mat.id, temperature_K=t_row, thickness_m=c.thickness_m, area_m2=c.area_m2,
                  source_id=src.id, endurance_set_id=eset.id)
    session.add_all([PropertyValue(property=prop, value=v, low=lo, high=hi, note=f"{prop} of {desc}", **common)
                     for prop, (v, lo, hi) in derived.items()])
    session.flush()
    return ImportResult(what="endurance set", material=mat.key, label=eset.label, id=eset.id, n=n,
                        censored=data.n_censored, source=src.key, kind=src.kind, sha256=data.sha256,
                        file=file_name, new_material=created, replaced=replaced,
                        figures=fit_figures(fit, data.stress_kind),
                        warnings=[w for w in (fit.shape_warning,) if w])
