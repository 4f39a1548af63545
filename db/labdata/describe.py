"""A material's breakdown sets, loops and endurance sets as stored, with their fits and energies (for ``show``)."""

from __future__ import annotations

from db.labdata.common import _material
from materials.errors import DataError

def describe_sets(session, material_key: str, *, include_replaced: bool = False) -> dict:
    """The breakdown sets, loops and endurance sets of a material with their stored fits and energies (SI), for
    ``show``.

    A set or loop replaced by a later import (its derived values retired) is left out unless
    ``include_replaced``.

    Returns:
        ``{"breakdown_sets": [{label, n, censored, temperature_K, thickness_m, area_m2, waveform, ramp_V_per_s,
        shape, shape_low, shape_high, scale_V_per_m, scale_low_V_per_m, scale_high_V_per_m, source, kind, file,
        sha256, imported_at}], "loops": [{label, n, temperature_K, frequency_Hz, thickness_m, max_field_V_per_m,
        recovered_J_per_m3, efficiency, source, kind, file, sha256, imported_at}], "endurance_sets": [{label, n,
        censored, stress_kind, temperature_K, thickness_m, area_m2, life_exponent, life_exponent_low,
        life_exponent_high, activation_energy_eV, source, kind, file, sha256, imported_at}]}``
    """
    from sqlalchemy import func, select

    from db.models import BreakdownPoint, BreakdownSet, Loop, LoopPoint, PropertyValue, Source

    mat = _material(session, material_key)
    if mat is None:
        raise DataError(f"no material '{material_key}' in the store")
    counts = dict(session.execute(
        select(BreakdownPoint.set_id, func.count()).join(BreakdownSet, BreakdownPoint.set_id == BreakdownSet.id)
        .where(BreakdownSet.material_id == mat.id).group_by(BreakdownPoint.set_id)).all())
    n_cens = dict(session.execute(
        select(BreakdownPoint.set_id, func.count()).join(BreakdownSet, BreakdownPoint.set_id == BreakdownSet.id)
        .where(BreakdownSet.material_id == mat.id, BreakdownPoint.censored.is_(True))
        .group_by(BreakdownPoint.set_id)).all())
    derived: dict[tuple[str, int], dict[str, object]] = {}
    for pv in session.execute(select(PropertyValue).where(
            PropertyValue.material_id == mat.id, PropertyValue.retired_at.is_(None),
            (PropertyValue.breakdown_set_id.is_not(None)) | (PropertyValue.loop_id.is_not(None)))).scalars():
        owner = ("set", pv.breakdown_set_id) if pv.breakdown_set_id is not None else ("loop", pv.loop_id)
        have = derived.setdefault(owner, {}).get(pv.property)
        # a loop's profile rows sit below its peak: the loop is described at its peak field
        if have is None or (pv.field_V_per_m or 0) > (have.field_V_per_m or 0):
            derived[owner][pv.property] = pv
    sets = []
    for bset, src in session.execute(select(BreakdownSet, Source).join(Source, BreakdownSet.source_id == Source.id)
                                     .where(BreakdownSet.material_id == mat.id)
                                     .order_by(BreakdownSet.temperature_K, BreakdownSet.label)):
        d = derived.get(("set", bset.id), {})
        if not d and not include_replaced:
            continue
        scale, shape = d.get("breakdown_field"), d.get("weibull_shape")
        sets.append({"label": bset.label, "n": counts.get(bset.id, 0), "censored": n_cens.get(bset.id, 0),
                     "temperature_K": bset.temperature_K, "thickness_m": bset.thickness_m, "area_m2": bset.area_m2,
                     "waveform": bset.waveform, "ramp_V_per_s": bset.ramp_V_per_s,
                     "shape": shape.value if shape else None, "shape_low": shape.low if shape else None,
                     "shape_high": shape.high if shape else None,
                     "scale_V_per_m": scale.value if scale else None,
                     "scale_low_V_per_m": scale.low if scale else None,
                     "scale_high_V_per_m": scale.high if scale else None,
                     "source": src.key, "kind": src.kind, "file": bset.file_name, "sha256": bset.sha256,
                     "imported_at": bset.created_at.isoformat(sep=" ", timespec="seconds")})
    loop_counts = dict(session.execute(
        select(LoopPoint.loop_id, func.count()).join(Loop, LoopPoint.loop_id == Loop.id)
        .where(Loop.material_id == mat.id).group_by(LoopPoint.loop_id)).all())
    loops = []
    for loop, src in session.execute(select(Loop, Source).join(Source, Loop.source_id == Source.id)
                                     .where(Loop.material_id == mat.id).order_by(Loop.temperature_K, Loop.label)):
        d = derived.get(("loop", loop.id), {})
        if not d and not include_replaced:
            continue
        rec, eff = d.get("recoverable_energy_density"), d.get("efficiency")
        loops.append({"label": loop.label, "n": loop_counts.get(loop.id, 0), "temperature_K": loop.temperature_K,
                      "frequency_Hz": loop.frequency_Hz, "thickness_m": loop.thickness_m,
                      "max_field_V_per_m": rec.field_V_per_m if rec else None,
                      "recovered_J_per_m3": rec.value if rec else None, "efficiency": eff.value if eff else None,
                      "source": src.key, "kind": src.kind, "file": loop.file_name, "sha256": loop.sha256,
                      "imported_at": loop.created_at.isoformat(sep=" ", timespec="seconds")})
    return {"breakdown_sets": sets, "loops": loops, "endurance_sets": _endurance_sets(session, mat.id,
                                                                                      include_replaced)}


def _endurance_sets(session, material_id: int, include_replaced: bool) -> list[dict]:
    """A material's endurance sets with their fitted life exponent (and activation energy, in eV)."""
    from sqlalchemy import case, func, select

    from db.labdata.endurance import ELECTRONVOLT_J
    from db.models import EndurancePoint, EnduranceSet, PropertyValue, Source

    counts = {sid: (n, c or 0) for sid, n, c in session.execute(
        select(EndurancePoint.set_id, func.count(), func.sum(case((EndurancePoint.censored.is_(True), 1), else_=0)))
        .join(EnduranceSet, EndurancePoint.set_id == EnduranceSet.id)
        .where(EnduranceSet.material_id == material_id).group_by(EndurancePoint.set_id)).all()}
    derived: dict[int, dict] = {}
    for pv in session.execute(select(PropertyValue).where(
            PropertyValue.material_id == material_id, PropertyValue.retired_at.is_(None),
            PropertyValue.endurance_set_id.is_not(None))).scalars():
        derived.setdefault(pv.endurance_set_id, {})[pv.property] = pv
    out = []
    for eset, src in session.execute(select(EnduranceSet, Source).join(Source, EnduranceSet.source_id == Source.id)
                                     .where(EnduranceSet.material_id == material_id)
                                     .order_by(EnduranceSet.temperature_K, EnduranceSet.label)):
        d = derived.get(eset.id, {})
        if not d and not include_replaced:
            continue
        n, ea = d.get("life_exponent"), d.get("activation_energy")
        out.append({"label": eset.label, "n": counts.get(eset.id, (0, 0))[0],
                    "censored": counts.get(eset.id, (0, 0))[1], "stress_kind": eset.stress_kind,
                    "temperature_K": eset.temperature_K, "thickness_m": eset.thickness_m, "area_m2": eset.area_m2,
                    "life_exponent": n.value if n else None, "life_exponent_low": n.low if n else None,
                    "life_exponent_high": n.high if n else None,
                    "activation_energy_eV": ea.value / ELECTRONVOLT_J if ea else None,
                    "source": src.key, "kind": src.kind, "file": eset.file_name, "sha256": eset.sha256,
                    "imported_at": eset.created_at.isoformat(sep=" ", timespec="seconds")})
    return out
