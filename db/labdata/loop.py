"""Polarisation loops into the store: the samples, and the recovered energy density and efficiency."""

from __future__ import annotations

from itertools import repeat

from db.bulk import insert_rows
from db.labdata.common import ImportResult
from db.labdata.provenance import _prepare
from materials.errors import DataError, InputError
from materials.properties import check_plausible

def import_loop(session, data, *, material_key: str | None = None, new_material: str | None = None,
                family: str | None = None, force: bool = False) -> ImportResult:
    """Store a parsed loop (:class:`materials.labfiles.LoopFile`), its samples and its energies.

    Recovered energy density and efficiency (:func:`materials.energy.loop_energies`) become
    ``recoverable_energy_density`` and ``efficiency`` rows that reference the loop, at its peak field,
    temperature, frequency and thickness; the discharge branch's recoverable energy up to each tenth of the peak
    field (:func:`materials.energy.discharge_profile`) become ``recoverable_energy_density`` rows at those fields,
    so that a part run below the loop's peak is credited with the loop integrated to its own field. A new
    material made here has a nonlinear response.
    """
    from db.models import Loop, LoopPoint, PropertyValue
    from materials.energy import discharge_profile, loop_energies

    try:
        en = loop_energies(data.fields_V_per_m, data.polarization_C_per_m2)
    except InputError as exc:
        from materials.labfiles import in_file

        raise in_file(exc, data.path) from None
    for prop, v in (("recoverable_energy_density", en.recovered_J_per_m3), ("efficiency", en.efficiency)):
        why = check_plausible(prop, v)
        if why:
            raise InputError(f"the loop's {prop} is implausible: {why}; is the loop in measured order?",
                             file=data.path)
    mat, created, replaced, src, file_name = _prepare(
        session, data, Loop, PropertyValue.loop_id, "loop", "polarisation loop", material_key=material_key,
        new_material=new_material, family=family, force=force, response="nonlinear")
    c = data.conditions
    loop = Loop(material_id=mat.id, label=c.label, temperature_K=c.temperature_K, frequency_Hz=c.frequency_Hz,
                thickness_m=c.thickness_m, source_id=src.id, file_name=file_name, sha256=data.sha256)
    session.add(loop)
    session.flush()
    insert_rows(session, LoopPoint.__table__, ("loop_id", "seq", "field_V_per_m", "polarization_C_per_m2"),
                 zip(repeat(loop.id, data.n), range(data.n), data.fields_V_per_m.tolist(),
                     data.polarization_C_per_m2.tolist(), strict=True))
    desc = (f"loop '{loop.label}' (stored {en.stored_J_per_m3:.4g} J/m³, lost {en.lost_J_per_m3:.4g} J/m³, "
            f"halves: {', '.join(en.halves)}; loop integration of E dD)")
    common = dict(material_id=mat.id, temperature_K=c.temperature_K, frequency_Hz=c.frequency_Hz,
                  field_V_per_m=en.max_field_V_per_m, thickness_m=c.thickness_m, source_id=src.id, loop_id=loop.id)
    session.add_all([
        PropertyValue(property="recoverable_energy_density", value=en.recovered_J_per_m3,
                      note=f"recovered energy density of {desc}", **common),
        PropertyValue(property="efficiency", value=en.efficiency, note=f"efficiency of {desc}", **common),
    ])
    fields, u = discharge_profile(data.fields_V_per_m, data.polarization_C_per_m2)
    session.add_all([
        PropertyValue(property="recoverable_energy_density", value=float(uk),
                      note=f"recoverable energy density up to {ek / 1e6:.4g} V/µm on the discharge branch of {desc}",
                      **{**common, "field_V_per_m": float(ek)})
        for ek, uk in zip(fields[1:-1].tolist(), u[1:-1].tolist(), strict=True) if uk > 0])
    session.flush()
    return ImportResult(what="loop", material=mat.key, label=loop.label, id=loop.id, n=data.n, source=src.key,
                        kind=src.kind, sha256=data.sha256, file=file_name, new_material=created, replaced=replaced,
                        figures=en.as_dict())


def read_loop_points(session, material_key: str, label: str):
    """The samples of a stored loop: (fields V/m, polarisations C/m²), in measured order."""
    import numpy as np
    from sqlalchemy import select

    from db.models import Loop, LoopPoint, Material

    loop = session.execute(select(Loop).join(Material).where(Material.key == material_key, Loop.label == label)
                           ).scalar_one_or_none()
    if loop is None:
        raise DataError(f"'{material_key}' has no loop labelled '{label}'")
    rows = session.execute(select(LoopPoint.field_V_per_m, LoopPoint.polarization_C_per_m2)
                           .where(LoopPoint.loop_id == loop.id).order_by(LoopPoint.seq)).all()
    return np.array([r[0] for r in rows], dtype=float), np.array([r[1] for r in rows], dtype=float)
