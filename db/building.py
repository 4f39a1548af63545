"""Building a store from the catalog: validated first, a SQLite file built beside the old one and swapped in under an
advisory lock, other backends refilled in one transaction; and the checks that decide whether a store may or
should be rebuilt (lab data in it, an older catalog)."""

from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path

from materials.errors import StoreError


def _has_schema(engine) -> bool:
    from sqlalchemy import inspect

    return inspect(engine).has_table("material")


def write_catalog(session, sources, materials) -> None:
    """Insert validated catalog records (from :func:`materials.catalog_io.load_catalog`) in one go."""
    from db.models import Material, PropertyValue, Source

    src_ids = {}
    for s in sources.values():
        row = Source(key=s.key, kind=s.kind, citation=s.citation, note=s.note)
        session.add(row)
        src_ids[s.key] = row
    session.flush()
    for m in materials:
        mat = Material(key=m.key, name=m.name, family=m.family, form=m.form, description=m.description,
                       origin=m.origin, response=m.response)
        session.add(mat)
        session.flush()
        for v in m.values:
            session.add(PropertyValue(
                material_id=mat.id, property=v.property, value=v.value, low=v.low, high=v.high,
                temperature_K=v.temperature_K, frequency_Hz=v.frequency_Hz, field_V_per_m=v.field_V_per_m,
                thickness_m=v.thickness_m, area_m2=v.area_m2, source_id=src_ids[v.source].id, note=v.note))


def _fill(engine, catalog_dir=None, *, only_if_empty: bool = False) -> None:
    from sqlalchemy.orm import Session

    from db.models import Base, Meta
    from db.store import SCHEMA_REVISION
    from materials.catalog_io import catalog_dir as default_dir, catalog_fingerprint, load_catalog

    catalog_dir = catalog_dir or default_dir()
    sources, materials = load_catalog(catalog_dir)
    with Session(engine) as s, s.begin():
        if engine.dialect.name == "postgresql":
            # Two commands opening the same empty server at once: the second waits here, then finds it built.
            from sqlalchemy import text

            s.execute(text("SELECT pg_advisory_xact_lock(7304117)"))
            if only_if_empty and _has_schema(s.connection()):
                return
        Base.metadata.create_all(s.connection())
        write_catalog(s, sources, materials)
        s.flush()
        # What the catalog wrote, so that anything added later (a user's value, source or correction) is known as
        # user data and never discarded by an automatic rebuild.
        from sqlalchemy import text as _text

        for key, table in (("catalog_values", "property_value"), ("catalog_sources", "source")):
            n = s.execute(_text(f"SELECT count(*) FROM {table}")).scalar()
            s.add(Meta(key=key, value=str(n)))
        for key, value in _catalog_record(sources, materials).items():
            s.add(Meta(key=key, value=value))
        s.add(Meta(key="schema_revision", value=SCHEMA_REVISION))
        s.add(Meta(key="catalog_fingerprint", value=catalog_fingerprint(catalog_dir)))
        folder = _catalog_folder(catalog_dir)
        if folder is not None:
            s.add(Meta(key="catalog_dir", value=folder))
        _stamp_alembic(s.connection())


def _catalog_folder(directory=None) -> str | None:
    """The catalog folder a store is built from, as recorded in ``meta``: None for the shipped catalog."""
    from materials.catalog_io import CATALOG_DIR, catalog_dir

    folder = Path(directory or catalog_dir()).resolve()
    return None if folder == CATALOG_DIR.resolve() else str(folder)


def _same_catalog_folder(conn) -> bool:
    """Whether the store was built from the catalog folder in use now (the shipped one, or $HOLDOFF_CATALOG).

    Only then does a different fingerprint mean an older catalog: a store built from a curator's folder is not
    rebuilt from the shipped catalog, nor called out of date against it.
    """
    from sqlalchemy import text

    recorded = conn.execute(text("SELECT value FROM meta WHERE key = 'catalog_dir'")).scalar()
    return recorded == _catalog_folder()


def _stamp_alembic(conn) -> None:
    from db.migrate import stamp_head

    stamp_head(conn)


_HELD_LOCKS: dict[str, int] = {}


@contextlib.contextmanager
def build_lock(path: Path, *, timeout_s: float = 120.0):
    """Exclusive advisory lock (``<store>.lock`` beside it) while a SQLite store file is built or rebuilt.

    Two commands opening a missing or stale store at the same moment would otherwise both build it, and the
    second swap would discard what the first had written in between. Re-entrant within a process; where the
    platform has no ``fcntl`` it does nothing.
    """
    try:
        import fcntl
    except ImportError:  # pragma: no cover - not POSIX
        yield
        return
    path.parent.mkdir(parents=True, exist_ok=True)
    key = str(path.parent.resolve() / (path.name + ".lock"))
    if key in _HELD_LOCKS:
        yield
        return
    import time

    fd = os.open(key, os.O_RDWR | os.O_CREAT, 0o600)
    deadline = time.monotonic() + timeout_s
    while True:
        try:
            fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            break
        except BlockingIOError:
            if time.monotonic() > deadline:
                os.close(fd)
                raise StoreError(f"{path} is being built by another holdoff process (waited {timeout_s:g} s)") \
                    from None
            time.sleep(0.05)
    _HELD_LOCKS[key] = fd
    try:
        yield
    finally:
        del _HELD_LOCKS[key]
        os.close(fd)  # releases the lock


def build(url: str, *, catalog_dir=None, force: bool = False) -> list[str] | None:
    """(Re)build the store at ``url`` from the catalog; None, or what a merge changed.

    The catalog is validated completely first. A SQLite file is built beside the old one and swapped in atomically,
    so a bad catalog or a crash leaves the old store exactly as it was. Other backends drop and recreate the tables
    in one transaction. A store holding user data (see :func:`user_data`) is never rebuilt without ``force``: the
    catalog is merged under that data instead (:func:`merge_catalog`), and the changes are returned; a store that
    does not record what its catalog wrote is refused.
    """
    from materials.catalog_io import load_catalog
    from db.engine import connect_errors, make_engine, sqlite_file

    load_catalog(catalog_dir)  # validate before touching anything
    path = sqlite_file(url)
    if path is not None:
        with build_lock(path):  # the check for lab data too, so that nothing lands between it and the swap
            if not force:
                with connect_errors(url):
                    changes = _merge_if_user_data(url, catalog_dir)
                if changes is not None:
                    return changes
            _build_file(path, catalog_dir)
        return None
    if not force:
        with connect_errors(url):
            changes = _merge_if_user_data(url, catalog_dir)
        if changes is not None:
            return changes
    engine = make_engine(url)
    try:
        from sqlalchemy.orm import Session

        from db.models import Base

        with connect_errors(url), Session(engine) as s, s.begin():
            Base.metadata.drop_all(s.connection())
            _drop_alembic_table(s.connection())
        _fill(engine, catalog_dir)
    finally:
        engine.dispose()
    return None


def _build_file(path: Path, catalog_dir) -> None:
    """Build a SQLite store beside ``path`` and swap it in (the caller holds :func:`build_lock`)."""
    from db.engine import make_engine

    fd, tmp = tempfile.mkstemp(prefix=".holdoff-build-", suffix=".sqlite", dir=path.parent)
    os.close(fd)
    os.unlink(tmp)
    engine = make_engine(f"sqlite:///{tmp}")
    try:
        _fill(engine, catalog_dir)
    except BaseException:
        engine.dispose()
        for suffix in ("", "-wal", "-shm"):
            with contextlib.suppress(FileNotFoundError):
                os.unlink(tmp + suffix)
        raise
    engine.dispose()
    for suffix in ("-wal", "-shm"):
        with contextlib.suppress(FileNotFoundError):
            os.unlink(str(path) + suffix)
    os.replace(tmp, path)
    for suffix in ("-wal", "-shm"):
        with contextlib.suppress(FileNotFoundError):
            os.unlink(tmp + suffix)


def _drop_alembic_table(conn) -> None:
    from sqlalchemy import text

    conn.execute(text("DROP TABLE IF EXISTS alembic_version"))


def _merge_if_user_data(url: str, catalog_dir) -> list[str] | None:
    """None if the store at ``url`` holds no user data (it may be rebuilt); else the catalog merged under that data
    and the changes, or a refusal where the store does not record what its catalog wrote."""
    from db.engine import make_engine, sqlite_file
    from db.store import Store, reader

    path = sqlite_file(url)
    if path is not None and not path.exists():
        return None
    engine = make_engine(url, create_dirs=False)
    try:
        if not _has_schema(reader(engine)):
            return None
        with reader(engine).connect() as c:
            held = user_data(c)
            mergeable = _recorded(c) is not None
        if not held:
            return None
        if not mergeable:
            raise StoreError(f"the store holds {held}; 'db init --force' rebuilds it from the catalog and discards "
                             "them (dump it first with 'holdoff db dump FILE')")
        changes = Store(url=url, engine=engine).write(lambda s: merge_catalog(s, catalog_dir))
        return [f"the store holds {held}: kept; the catalog merged under them ('db init --force' would rebuild "
                "it and discard them)", *changes]
    finally:
        engine.dispose()


def _stale_catalog_only(engine) -> bool:
    """True if the store was built from another catalog version and holds no lab or user data."""
    from sqlalchemy import text

    from materials.catalog_io import catalog_fingerprint

    try:
        with engine.connect() as c:
            fp = c.execute(text("SELECT value FROM meta WHERE key = 'catalog_fingerprint'")).scalar()
            if fp is None or fp == catalog_fingerprint() or not _same_catalog_folder(c):
                return False
            held = user_data(c)
    except Exception:  # noqa: BLE001 - a store this check cannot read is simply not a stale catalog-only store
        return False
    return not held


# --- what the catalog wrote, and merging a newer catalog under a user's data ----------------------------------------

#: Why a catalog row is retired when a newer catalog changes or drops it.
CATALOG_UPDATE = "catalog update"


def row_digest(material: str, prop: str, value, low, high, conditions, source: str, note) -> str:
    """A short digest of one value row's content (material and source by key), the same for a catalog record and
    the row it became in any store, whatever its id."""
    import hashlib

    text = repr((material, prop, value, low, high, tuple(conditions), source, note or ""))
    return hashlib.sha256(text.encode()).hexdigest()[:16]


def _catalog_record(sources, materials) -> dict[str, str]:
    """Meta entries naming what a catalog writes: the digest of every value row and every source key."""
    from materials.records import CONDITIONS

    rows = sorted({row_digest(m.key, v.property, v.value, v.low, v.high, (getattr(v, c) for c in CONDITIONS),
                              v.source, v.note) for m in materials for v in m.values})
    return {"catalog_rows": " ".join(rows), "catalog_source_keys": " ".join(sorted(sources))}


def _stored_rows(conn):
    """(id, digest, retired_reason, retired) of every value row not derived from a breakdown set or loop."""
    from sqlalchemy import text

    from materials.records import CONDITIONS

    sql = ("SELECT v.id, m.key, v.property, v.value, v.low, v.high, " + ", ".join(f'v."{c}"' for c in CONDITIONS)
           + ", s.key, v.note, v.retired_at, v.retired_reason FROM property_value v "
           "JOIN material m ON m.id = v.material_id JOIN source s ON s.id = v.source_id "
           "WHERE v.breakdown_set_id IS NULL AND v.loop_id IS NULL")
    n = len(CONDITIONS)
    for r in conn.execute(text(sql)).all():
        yield r[0], row_digest(r[1], r[2], r[3], r[4], r[5], r[6:6 + n], r[6 + n], r[7 + n]), r[9 + n], \
            r[8 + n] is not None


def _recorded(conn) -> tuple[set[str], set[str]] | None:
    """(catalog row digests, catalog source keys) recorded at the build or the last merge; None for a store built
    before they were recorded."""
    from sqlalchemy import text

    meta = dict(conn.execute(text("SELECT key, value FROM meta WHERE key IN ('catalog_rows', "
                                  "'catalog_source_keys')")).all())
    if "catalog_rows" not in meta:
        return None
    return set(meta["catalog_rows"].split()), set(meta.get("catalog_source_keys", "").split())


def merge_catalog(session, catalog_dir=None) -> list[str] | None:
    """Bring a store built from an older catalog up to the catalog in use, under the user's data; what changed.

    New catalog sources and materials are added; a catalog row the new catalog changed or dropped is retired with
    the reason :data:`CATALOG_UPDATE` and the new one added; a catalog source's citation is updated in place.
    Everything else is left as it is: the user's values, sources, corrections (a catalog row the user retired
    stays retired), lab and user materials, breakdown sets and loops. None if the store does not record what its
    catalog wrote (built by an older holdoff): it is then left alone.
    """
    from sqlalchemy import select, text

    from db.models import Material, Meta, PropertyValue, Source
    from materials.catalog_io import catalog_fingerprint, load_catalog
    from materials.records import CONDITIONS

    conn = session.connection()
    recorded = _recorded(conn)
    if recorded is None:
        return None
    old_rows, old_sources = recorded
    sources, materials = load_catalog(catalog_dir)
    changes: list[str] = []
    src = {r.key: r for r in session.execute(select(Source)).scalars()}
    for key, rec in sources.items():
        row = src.get(key)
        if row is None:
            src[key] = Source(key=key, kind=rec.kind, citation=rec.citation, note=rec.note)
            session.add(src[key])
            changes.append(f"new source '{key}' ({rec.kind})")
        elif (row.kind, row.citation, row.note or "") != (rec.kind, rec.citation, rec.note or "") \
                and key in old_sources:
            row.kind, row.citation, row.note = rec.kind, rec.citation, rec.note
            changes.append(f"source '{key}': citation updated")
    session.flush()
    mats = {m.key: m for m in session.execute(select(Material)).scalars()}
    stored: dict[str, list[tuple[int, str | None, bool]]] = {}
    for vid, digest, reason, retired in _stored_rows(conn):
        stored.setdefault(digest, []).append((vid, reason, retired))
    new_rows = {}
    for m in materials:
        for v in m.values:
            new_rows[row_digest(m.key, v.property, v.value, v.low, v.high, (getattr(v, c) for c in CONDITIONS),
                                v.source, v.note)] = (m, v)
    from db.labdata.common import _now

    now = _now()
    retired = 0
    for digest in sorted(old_rows - set(new_rows)):
        for vid, _reason, was_retired in stored.get(digest, ()):
            if not was_retired:
                pv = session.get(PropertyValue, vid)
                pv.retired_at, pv.retired_reason = now, CATALOG_UPDATE
                retired += 1
    added = 0
    for m in materials:
        mat = mats.get(m.key)
        if mat is None:
            mat = mats[m.key] = Material(key=m.key, name=m.name, family=m.family, form=m.form,
                                         description=m.description, origin="catalog", response=m.response)
            session.add(mat)
            session.flush()
            changes.append(f"new material '{m.key}' ({m.name})")
        elif mat.origin != "catalog":
            changes.append(f"catalog material '{m.key}' not merged: the store holds a {mat.origin} material "
                           "with that key")
            continue
        else:
            for f in ("name", "family", "form", "description", "response"):
                if (getattr(mat, f) or "") != (getattr(m, f) or ""):
                    setattr(mat, f, getattr(m, f))
                    changes.append(f"{m.key}: {f} updated")
        for v in m.values:
            digest = row_digest(m.key, v.property, v.value, v.low, v.high, (getattr(v, c) for c in CONDITIONS),
                                v.source, v.note)
            if digest in old_rows or digest in stored:
                continue  # unchanged (kept as the user left it, retired or not), or already in the store
            session.add(PropertyValue(material_id=mat.id, property=v.property, value=v.value, low=v.low,
                                      high=v.high, source_id=src[v.source].id, note=v.note,
                                      **{c: getattr(v, c) for c in CONDITIONS}))
            added += 1
    if retired:
        changes.append(f"{retired} catalog value(s) changed or dropped by the catalog: retired ({CATALOG_UPDATE})")
    if added:
        changes.append(f"{added} catalog value(s) added")
    session.flush()
    record = _catalog_record(sources, materials)
    record["catalog_fingerprint"] = catalog_fingerprint(catalog_dir)
    for key, value in record.items():
        row = session.get(Meta, key)
        if row is None:
            session.add(Meta(key=key, value=value))
        else:
            row.value = value
    conn.execute(text("DELETE FROM meta WHERE key IN ('catalog_values', 'catalog_sources')"))
    return changes


def _stale(conn) -> bool:
    """Whether the store was built from an older version of the catalog folder in use."""
    from sqlalchemy import text

    from materials.catalog_io import catalog_fingerprint

    fp = conn.execute(text("SELECT value FROM meta WHERE key = 'catalog_fingerprint'")).scalar()
    return fp is not None and fp != catalog_fingerprint() and _same_catalog_folder(conn)


def merge_if_stale(store) -> list[str]:
    """Merge the catalog in use into ``store`` if it was built from an older one and records what that wrote
    (:func:`merge_catalog`), in one write transaction re-run on conflicts; the changes ([] if none)."""
    def go(session):
        conn = session.connection()
        if not _stale(conn):
            return []  # current, or another command merged it while this one waited
        return merge_catalog(session) or []

    from db.store import reader

    try:
        with reader(store.engine).connect() as c:
            if not _stale(c) or _recorded(c) is None:
                return []
    except Exception:  # noqa: BLE001 - a store this check cannot read is not one to merge; opening reports it
        return []
    return store.write(go)


def user_data(conn) -> str:
    """What the store holds beyond what its catalog wrote ("" if nothing): lab or user materials, breakdown sets,
    loops, lab sources, retired (corrected) rows, and values or sources added after the build. A store built
    before the build counts were recorded is judged by its sources: one the shipped catalog lacks is a user's."""
    from sqlalchemy import text

    def count(sql):
        return int(conn.execute(text(sql)).scalar() or 0)

    found = []
    recorded = _recorded(conn)
    for what, sql in (("lab/user material(s)", "SELECT count(*) FROM material WHERE origin != 'catalog'"),
                      ("breakdown set(s)", "SELECT count(*) FROM breakdown_set"),
                      ("loop(s)", "SELECT count(*) FROM loop"),
                      ("lab source(s)", "SELECT count(*) FROM source WHERE kind IN ('lab', 'invented')"),
                      ("corrected (retired) value(s)", "SELECT count(*) FROM property_value "
                                                       "WHERE retired_at IS NOT NULL"
                       + (f" AND retired_reason != '{CATALOG_UPDATE}'" if recorded is not None else ""))):
        n = count(sql)
        if n:
            found.append(f"{n} {what}")
    if recorded is not None:
        rows, keys = recorded
        extra = sum(1 for _vid, digest, reason, _r in _stored_rows(conn)
                    if digest not in rows and reason != CATALOG_UPDATE)
        if extra:
            found.append(f"{extra} added value(s)")
        extra = sum(1 for (k,) in conn.execute(text("SELECT key FROM source")).all() if k not in keys)
        if extra:
            found.append(f"{extra} added source(s)")
        return ", ".join(found)
    built = dict(conn.execute(text("SELECT key, value FROM meta WHERE key IN ('catalog_values', "
                                   "'catalog_sources')")).all())
    if built:
        for what, table, key in (("value(s)", "property_value", "catalog_values"),
                                 ("source(s)", "source", "catalog_sources")):
            extra = count(f"SELECT count(*) FROM {table}") - int(built.get(key, 0))
            if extra > 0:
                found.append(f"{extra} added {what}")
    else:
        from materials.catalog_io import load_catalog

        shipped = set(load_catalog()[0])
        keys = [k for (k,) in conn.execute(text("SELECT key FROM source")).all()]
        extra = [k for k in keys if k not in shipped]
        if extra:
            found.append(f"{len(extra)} source(s) not in the catalog")
    return ", ".join(found)


def rebuild_if(url: str, path: Path, needed, *, force: bool = False) -> None:
    """Rebuild the SQLite store at ``path`` if ``needed(engine)`` still holds once the build lock is held: another
    command may have rebuilt it, or written to it, while this one waited."""
    from db.engine import make_engine

    with build_lock(path):
        engine = make_engine(url)
        again = needed(engine)
        engine.dispose()
        if again:
            build(url, force=force)
