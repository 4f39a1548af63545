"""The query layer: materials and their values as plain records, filters, values at a condition.

Everything returned is detached from the session (plain dataclasses from :mod:`materials.records`), so the
ranking layer never touches the database.
"""

from __future__ import annotations

from materials.errors import DataError
from materials.lookup import ValueAt, value_at as _value_at
from materials.records import MaterialData, SourceRef, StoredValue


def load_materials(session, keys=None, *, family: str | None = None, include_retired: bool = False,
                   origin: str | None = None) -> list[MaterialData]:
    """Materials (all, or those with ``keys``, or of ``family``) with their values, in three queries."""
    from sqlalchemy import select

    from db.models import BreakdownSet, Loop, Material, PropertyValue, Source

    q = select(Material).order_by(Material.key)
    if keys is not None:
        q = q.where(Material.key.in_(list(keys)))
    if family:
        q = q.where(Material.family == family)
    if origin:
        q = q.where(Material.origin == origin)
    mats = session.execute(q).scalars().all()
    if keys is not None:
        missing = sorted(set(keys) - {m.key for m in mats})
        if missing:
            raise DataError(f"no material '{missing[0]}' in the store (see 'holdoff catalog')")
    by_id = {m.id: MaterialData(key=m.key, name=m.name, family=m.family, form=m.form or "",
                                description=m.description or "", origin=m.origin, response=m.response)
             for m in mats}
    if not by_id:
        return []
    # Column tuples, not ORM objects: ten times faster on a large store, and nothing here is written back.
    srcs = {sid: SourceRef(key=k, kind=kind, citation=cit)
            for sid, k, kind, cit in session.connection().execute(
                select(Source.id, Source.key, Source.kind, Source.citation))}
    pv = PropertyValue
    vq = (select(pv.id, pv.material_id, pv.property, pv.value, pv.low, pv.high, pv.temperature_K,
                 pv.frequency_Hz, pv.field_V_per_m, pv.thickness_m, pv.area_m2, pv.note, pv.source_id,
                 BreakdownSet.label, Loop.label, pv.retired_at, pv.retired_reason)
          .outerjoin(BreakdownSet, pv.breakdown_set_id == BreakdownSet.id)
          .outerjoin(Loop, pv.loop_id == Loop.id)
          .order_by(pv.material_id, pv.property, pv.temperature_K.nulls_first(), pv.field_V_per_m.nulls_first(),
                    pv.id))
    if len(by_id) < 500:
        vq = vq.where(pv.material_id.in_(list(by_id)))
    if not include_retired:
        vq = vq.where(pv.retired_at.is_(None))
    for (vid, mid, prop, value, low, high, t, f, e, d, a, note, sid, set_label, loop_label, retired_at,
         retired_reason) in session.connection().execute(vq):
        md = by_id.get(mid)
        if md is not None:
            md.values.append(StoredValue(
                id=vid, property=prop, value=value, low=low, high=high, temperature_K=t, frequency_Hz=f,
                field_V_per_m=e, thickness_m=d, area_m2=a, note=note or "", source=srcs[sid],
                breakdown_set=set_label, loop=loop_label,
                retired_at=retired_at.isoformat(sep=" ", timespec="seconds") if retired_at else None,
                retired_reason=retired_reason))
    return [by_id[m.id] for m in mats]


def get_material(session, key: str, *, include_retired: bool = False) -> MaterialData:
    """One material by key; DataError naming the key if absent."""
    return load_materials(session, [key], include_retired=include_retired)[0]


def list_materials(session, *, family: str | None = None, where: str | None = None) -> list[MaterialData]:
    """Materials of ``family`` that satisfy the ``--where`` expression (see :mod:`db.where`)."""
    mats = load_materials(session, family=family)
    if where:
        from db.where import compile_where

        pred = compile_where(where)
        mats = [m for m in mats if pred(m)]
    return mats


def value_at(session, key: str, prop: str, *, temperature_K: float | None = None,
             field_V_per_m: float | None = None, frequency_Hz: float | None = None,
             extrapolate: bool = False) -> ValueAt:
    """The value of ``prop`` of material ``key`` at a condition, with the source rows it came from."""
    return _value_at(get_material(session, key), prop, temperature_K=temperature_K, field_V_per_m=field_V_per_m,
                     frequency_Hz=frequency_Hz, extrapolate=extrapolate)


def sources(session, *, kind: str | None = None):
    """Every source with the number of active values that cite it: list of dicts."""
    from sqlalchemy import func, select

    from db.models import PropertyValue, Source

    q = (select(Source, func.count(PropertyValue.id))
         .outerjoin(PropertyValue, (PropertyValue.source_id == Source.id) & PropertyValue.retired_at.is_(None))
         .group_by(Source.id).order_by(Source.kind, Source.key))
    if kind:
        q = q.where(Source.kind == kind)
    return [{"key": s.key, "kind": s.kind, "citation": s.citation, "note": s.note or "", "values": n}
            for s, n in session.execute(q)]


def counts_by_kind(session) -> dict[str, int]:
    """Active values per source kind."""
    from sqlalchemy import func, select

    from db.models import PropertyValue, Source

    q = (select(Source.kind, func.count(PropertyValue.id)).join(Source, PropertyValue.source_id == Source.id)
         .where(PropertyValue.retired_at.is_(None)).group_by(Source.kind))
    return {k: n for k, n in session.execute(q)}
