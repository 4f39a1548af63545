"""The query layer: materials and their values as plain records, filters, values at a condition.

Everything returned is detached from the session (plain dataclasses from :mod:`materials.records`), so the
ranking layer never touches the database.
"""

from __future__ import annotations

from materials.errors import DataError
from materials.lookup import ValueAt, value_at as _value_at
from materials.records import MaterialData
from materials.table import ValueTable


def load_materials(session, keys=None, *, family: str | None = None, include_retired: bool = False,
                   origin: str | None = None) -> list[MaterialData]:
    """Materials (all, or those with ``keys``, or of ``family``) with their values, in three queries."""
    return load_table(session, keys, family=family, include_retired=include_retired, origin=origin).materials()


def load_table(session, keys=None, *, family: str | None = None, include_retired: bool = False,
               origin: str | None = None) -> ValueTable:
    """Materials (all, or those with ``keys``, or of ``family``) and their values as a :class:`ValueTable`.

    The values are read through the driver's own cursor (a compiled SQLAlchemy statement, parameters bound by the
    driver): building a result row per value costs more than the query itself on a store of 10⁵ values.
    """
    import datetime as dt

    from sqlalchemy import select

    from db.models import BreakdownSet, Loop, Material, PropertyValue, Source

    conn = session.connection()
    q = select(Material.id, Material.key, Material.name, Material.family, Material.form, Material.description,
               Material.origin, Material.response).order_by(Material.key)
    if keys is not None:
        q = q.where(Material.key.in_(list(keys)))
    if family:
        q = q.where(Material.family == family)
    if origin:
        q = q.where(Material.origin == origin)
    mats = _fetch(conn, q)
    if keys is not None:
        missing = sorted(set(keys) - {m[1] for m in mats})
        if missing:
            raise DataError(f"no material '{missing[0]}' in the store (see 'holdoff catalog')")
    mcols = {"keys": [m[1] for m in mats], "names": [m[2] for m in mats], "families": [m[3] for m in mats],
             "forms": [m[4] or "" for m in mats], "descriptions": [m[5] or "" for m in mats],
             "origins": [m[6] for m in mats], "responses": [m[7] for m in mats]}
    srcs = _fetch(conn, select(Source.id, Source.key, Source.kind, Source.citation).order_by(Source.id))
    scols = {"keys": [s[1] for s in srcs], "kinds": [s[2] for s in srcs], "citations": [s[3] for s in srcs]}
    src_pos = {s[0]: i for i, s in enumerate(srcs)}
    pv = PropertyValue
    scope = []
    if len(mats) < 500:
        scope.append(pv.material_id.in_([m[0] for m in mats] or [-1]))
    if not include_retired:
        scope.append(pv.retired_at.is_(None))
    # Numbers in one query; the few rows with words (a note, a breakdown set or loop, a retirement) in another.
    rows = _fetch(conn, select(pv.material_id, pv.id, pv.property, pv.value, pv.low, pv.high, pv.temperature_K,
                               pv.frequency_Hz, pv.field_V_per_m, pv.thickness_m, pv.area_m2, pv.source_id)
                  .where(*scope))
    words = {r[0]: r[1:] for r in _fetch(
        conn, select(pv.id, pv.note, BreakdownSet.label, Loop.label, pv.retired_at, pv.retired_reason)
        .outerjoin(BreakdownSet, pv.breakdown_set_id == BreakdownSet.id)
        .outerjoin(Loop, pv.loop_id == Loop.id)
        .where(*scope, (pv.note != "") | pv.breakdown_set_id.is_not(None) | pv.loop_id.is_not(None)
               | pv.retired_at.is_not(None)))}
    mat_pos = {m[0]: i for i, m in enumerate(mats)}
    if len(mats) >= 500 and (keys is not None or family or origin):
        rows = [r for r in rows if r[0] in mat_pos]
    cols = list(zip(*rows)) if rows else [()] * 12
    n = len(rows)
    if words:
        blank = ("", None, None, None, None)
        extra = list(zip(*[words.get(i, blank) for i in cols[1]])) if rows else [()] * 5
    else:
        extra = [[""] * n, [None] * n, [None] * n, [None] * n, [None] * n]

    def stamp(x):
        if isinstance(x, str):
            x = dt.datetime.fromisoformat(x)
        return x.isoformat(sep=" ", timespec="seconds")

    vals = {"material": [mat_pos[i] for i in cols[0]], "id": cols[1], "property": cols[2],
            "value": cols[3], "low": cols[4], "high": cols[5], "temperature_K": cols[6], "frequency_Hz": cols[7],
            "field_V_per_m": cols[8], "thickness_m": cols[9], "area_m2": cols[10],
            "source": [src_pos[i] for i in cols[11]], "note": [x or "" for x in extra[0]],
            "breakdown_set": list(extra[1]), "loop": list(extra[2]),
            "retired_at": [None if x is None else stamp(x) for x in extra[3]], "retired_reason": list(extra[4])}
    return ValueTable.from_columns(mcols, vals, scols)


def _fetch(conn, stmt) -> list[tuple]:
    """All rows of a Core statement as plain tuples, straight from the driver's cursor (parameters bound by it)."""
    compiled = stmt.compile(dialect=conn.dialect, compile_kwargs={"render_postcompile": True})
    params = [compiled.params[k] for k in compiled.positiontup] if compiled.positional else compiled.params
    cur = conn.connection.cursor()
    try:
        cur.execute(str(compiled), params)
        return cur.fetchall()
    finally:
        cur.close()


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
