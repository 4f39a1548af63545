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

    ``session`` is an ORM session or a Core connection (:meth:`db.store.Store.reading`, which spares a command
    the ORM's import). The values are read through the driver's own cursor (a compiled statement, parameters
    bound by the driver): building a result row per value costs more than the query on a store of 10⁵ values.
    A read of the whole store is kept as a snapshot and used again while the store has not changed
    (:mod:`db.snapshot`).
    """
    from materials.properties import PROPERTIES

    conn = session if hasattr(session, "exec_driver_sql") else session.connection()
    vocab = sorted(PROPERTIES)
    whole = keys is None and not family and not origin and not include_retired
    sig = None
    if whole:
        from db import snapshot

        if snapshot.usable(conn):
            sig, n_values = snapshot.signature(conn, _fetch, vocab)
            if n_values < snapshot.MIN_VALUES:
                sig = None
            else:
                kept = snapshot.load(conn, sig)
                if kept is not None:
                    return kept
    table = ValueTable.from_columns(*_read(conn, vocab, keys, family=family, include_retired=include_retired,
                                           origin=origin))
    if sig is not None:
        snapshot.save(conn, sig, table)
    return table


def _read(conn, vocab, keys, *, family, include_retired, origin):
    """The columns of :func:`load_table` from the store: ``materials, values, sources, words`` as
    :meth:`ValueTable.from_columns` takes them."""
    import datetime as dt

    import numpy as np
    from sqlalchemy import bindparam, case, column, func, select, table

    # Lightweight table clauses (the names of db.models) keep this free of the ORM.
    material = table("material", *(column(c) for c in ("id", "key", "name", "family", "form", "description",
                                                       "origin", "response")))
    source = table("source", column("id"), column("key"), column("kind"), column("citation"))
    pv = table("property_value", *(column(c) for c in (
        "id", "material_id", "property", "value", "low", "high", "temperature_K", "frequency_Hz", "field_V_per_m",
        "thickness_m", "area_m2", "source_id", "note", "breakdown_set_id", "loop_id", "retired_at",
        "retired_reason"))).c
    bset = table("breakdown_set", column("id"), column("label"))
    loop = table("loop", column("id"), column("label"))
    m = material.c
    chosen = []
    if keys is not None:
        chosen.append(m.key.in_(list(keys)))
    if family:
        chosen.append(m.family == family)
    if origin:
        chosen.append(m.origin == origin)
    q = select(m.id, m.key, m.name, m.family, m.form, m.description, m.origin, m.response).where(*chosen)
    mats = _fetch(conn, q.order_by(m.key))
    if keys is not None:
        missing = sorted(set(keys) - {r[1] for r in mats})
        if missing:
            raise DataError(f"no material '{missing[0]}' in the store (see 'holdoff catalog')")
    mcols = {"keys": [r[1] for r in mats], "names": [r[2] for r in mats], "families": [r[3] for r in mats],
             "forms": [r[4] or "" for r in mats], "descriptions": [r[5] or "" for r in mats],
             "origins": [r[6] for r in mats], "responses": [r[7] for r in mats]}
    sc = source.c
    srcs = _fetch(conn, select(sc.id, sc.key, sc.kind, sc.citation).order_by(sc.id))
    scols = {"keys": [r[1] for r in srcs], "kinds": [r[2] for r in srcs], "citations": [r[3] for r in srcs]}
    scope = []
    if len(mats) < 500:
        scope.append(pv.material_id.in_([r[0] for r in mats] or [-1]))
    elif chosen:
        # the filter runs in the store: only the chosen materials' values are read
        scope.append(pv.material_id.in_(select(m.id).where(*chosen)))
    if not include_retired:
        scope.append(pv.retired_at.is_(None))
    # Numbers in one query, all numeric so that the driver's rows become one float array at once: the property as
    # its code in the (validated, sorted) vocabulary and an unstated condition as +inf (no stored value is
    # infinite); the few rows with words (a note, a breakdown set or loop, a retirement) in another query.
    inf = bindparam("unstated", float("inf"), literal_execute=False)
    nullable = (pv.low, pv.high, pv.temperature_K, pv.frequency_Hz, pv.field_V_per_m, pv.thickness_m, pv.area_m2)
    a = _fetch_floats(conn, select(pv.material_id, pv.id, case({k: i for i, k in enumerate(vocab)},
                                                                value=pv.property, else_=-1), pv.value,
                                   *(func.coalesce(c, inf) for c in nullable), pv.source_id).where(*scope), 12)
    words = {r[0]: r[1:] for r in _fetch(
        conn, select(pv.id, pv.note, bset.c.label, loop.c.label, pv.retired_at, pv.retired_reason)
        .select_from(pv.id.table.outerjoin(bset, pv.breakdown_set_id == bset.c.id)
                     .outerjoin(loop, pv.loop_id == loop.c.id))
        .where(*scope, (pv.note != "") | pv.breakdown_set_id.is_not(None) | pv.loop_id.is_not(None)
               | pv.retired_at.is_not(None)))}
    n = a.shape[0]
    if n and (a[:, 2] < 0).any():
        raise DataError("the store holds a property outside the vocabulary (run 'holdoff db check')")
    nulls = a[:, 4:11]
    nulls[np.isinf(nulls) & (nulls > 0)] = np.nan
    cols = [np.ascontiguousarray(a[:, j]) for j in range(12)]
    # Store ids to table positions through lookup arrays (ids are positive integers).
    mat_ids = np.fromiter((r[0] for r in mats), dtype=np.int64, count=len(mats))
    src_ids = np.fromiter((r[0] for r in srcs), dtype=np.int64, count=len(srcs))
    mat_pos = np.zeros(int(mat_ids.max(initial=0)) + 1, dtype=np.int64)
    mat_pos[mat_ids] = np.arange(mat_ids.size)
    src_pos = np.zeros(int(src_ids.max(initial=0)) + 1, dtype=np.int64)
    src_pos[src_ids] = np.arange(src_ids.size)

    def stamp(x):
        if isinstance(x, str):
            x = dt.datetime.fromisoformat(x)
        return x.isoformat(sep=" ", timespec="seconds")

    words = {vid: (w[0], w[1], w[2], None if w[3] is None else stamp(w[3]), w[4]) for vid, w in words.items()}
    vals = {"material": mat_pos[cols[0].astype(np.int64)], "id": cols[1].astype(np.int64),
            "property": cols[2].astype(np.int64), "property_names": vocab,
            "value": cols[3], "low": cols[4], "high": cols[5], "temperature_K": cols[6], "frequency_Hz": cols[7],
            "field_V_per_m": cols[8], "thickness_m": cols[9], "area_m2": cols[10],
            "source": src_pos[cols[11].astype(np.int64)]}
    return mcols, vals, scols, words


def _fetch_floats(conn, stmt, width: int):
    """The rows of an all-numeric statement as one ``(rows, width)`` float array, read from the driver's cursor in
    batches (never a list of every row at once)."""
    import itertools

    import numpy as np

    cur = _cursor(conn, stmt)
    try:
        chunks = []
        while True:
            batch = cur.fetchmany(65536)
            if not batch:
                break
            chunks.append(np.fromiter(itertools.chain.from_iterable(batch), dtype=float,
                                      count=len(batch) * width))
    finally:
        cur.close()
    return (np.concatenate(chunks) if chunks else np.zeros(0)).reshape(-1, width)


def _cursor(conn, stmt):
    """The driver's own cursor, the Core statement executed on it (parameters bound by the driver)."""
    compiled = stmt.compile(dialect=conn.dialect, compile_kwargs={"render_postcompile": True})
    params = [compiled.params[k] for k in compiled.positiontup] if compiled.positional else compiled.params
    cur = conn.connection.cursor()
    try:
        cur.execute(str(compiled), params)
    except BaseException:
        cur.close()
        raise
    return cur


def _fetch(conn, stmt) -> list[tuple]:
    """All rows of a Core statement as plain tuples, straight from the driver's cursor (parameters bound by it)."""
    cur = _cursor(conn, stmt)
    try:
        return cur.fetchall()
    finally:
        cur.close()


SUMMARY_PROPERTIES = ("relative_permittivity", "loss_tangent", "breakdown_field", "min_temperature",
                      "max_temperature")


def summaries(session, *, family: str | None = None, where: str | None = None,
              limit: int | None = None) -> tuple[list[dict], int]:
    """The catalog listing: each material of ``family`` that satisfies ``where``, with its headline reference
    values (small-signal, nearest 25 °C and 1 kHz; None where missing) and the kinds of source behind its values;
    the first ``limit`` of them (all if None) and how many there are.

    Read column-wise (:func:`materials.lookup.reference_values`): the same numbers as
    :func:`list_materials` with :func:`materials.lookup.reference_value`, without a record per value.
    """
    import numpy as np

    from materials.lookup import reference_values

    keys, pred = set(), None
    if where:
        from db.where import compile_where_values

        keys, pred = compile_where_values(where)
    t = load_table(session, family=family)
    # each reference value as a list, None where missing
    refs = {k: [None if x != x else x for x in v.tolist()]
            for k, v in reference_values(t, sorted(set(SUMMARY_PROPERTIES) | keys)).items()}
    # the kinds of source behind each material's values: a bit per kind, each distinct set of bits spelt once
    names = sorted(set(t.source_kinds))
    bits = np.zeros(len(t), dtype=np.int64)
    if t.source.size:
        row_kind = np.array([names.index(k) for k in t.source_kinds], dtype=np.int64)[t.source]
        mat = t.material_of_row
        for b in range(len(names)):
            bits |= (np.bincount(mat[row_kind == b], minlength=len(t)) > 0).astype(np.int64) << b
    spelt = {int(x): [n for b, n in enumerate(names) if int(x) >> b & 1] for x in np.unique(bits).tolist()}
    out, total = [], 0
    for i, (key, name, fam, form, origin, response, eps, tan, ebd, tmin, tmax, b) in enumerate(zip(
            t.keys, t.names, t.families, t.forms, t.origins, t.responses, refs["relative_permittivity"],
            refs["loss_tangent"], refs["breakdown_field"], refs["min_temperature"], refs["max_temperature"],
            bits.tolist(), strict=True)):
        if pred is not None and not pred({k: refs[k][i] for k in keys}, {"family": fam, "response": response,
                                                                         "origin": origin}):
            continue
        total += 1
        if limit is None or total <= limit:
            out.append({"key": key, "name": name, "family": fam, "form": form, "origin": origin,
                        "response": response, "relative_permittivity": eps, "loss_tangent": tan,
                        "breakdown_field_V_per_m": ebd, "min_temperature_K": tmin, "max_temperature_K": tmax,
                        "source_kinds": spelt[b]})
    return out, total


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
