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


def build(url: str, *, catalog_dir=None, force: bool = False) -> None:
    """(Re)build the store at ``url`` from the catalog.

    The catalog is validated completely first. A SQLite file is built beside the old one and swapped in atomically,
    so a bad catalog or a crash leaves the old store exactly as it was. Other backends drop and recreate the tables
    in one transaction. A store holding lab or user materials is only rebuilt with ``force``.
    """
    from materials.catalog_io import load_catalog
    from db.engine import connect_errors, make_engine, sqlite_file

    load_catalog(catalog_dir)  # validate before touching anything
    path = sqlite_file(url)
    if path is not None:
        with build_lock(path):  # the check for lab data too, so that nothing lands between it and the swap
            if not force:
                with connect_errors(url):
                    _refuse_if_lab_data(url)
            _build_file(path, catalog_dir)
        return
    if not force:
        with connect_errors(url):
            _refuse_if_lab_data(url)
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


def _refuse_if_lab_data(url: str) -> None:
    from db.engine import make_engine, sqlite_file

    path = sqlite_file(url)
    if path is not None and not path.exists():
        return
    engine = make_engine(url, create_dirs=False)
    try:
        if not _has_schema(engine):
            return
        with engine.connect() as c:
            held = user_data(c)
        if held:
            raise StoreError(f"the store holds {held}; 'db init --force' rebuilds it from the catalog and discards "
                             "them (dump it first with 'holdoff db dump FILE')")
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


def user_data(conn) -> str:
    """What the store holds beyond what its catalog wrote ("" if nothing): lab or user materials, breakdown sets,
    loops, lab sources, retired (corrected) rows, and values or sources added after the build. A store built
    before the build counts were recorded is judged by its sources: one the shipped catalog lacks is a user's."""
    from sqlalchemy import text

    def count(sql):
        return int(conn.execute(text(sql)).scalar() or 0)

    found = []
    for what, sql in (("lab/user material(s)", "SELECT count(*) FROM material WHERE origin != 'catalog'"),
                      ("breakdown set(s)", "SELECT count(*) FROM breakdown_set"),
                      ("loop(s)", "SELECT count(*) FROM loop"),
                      ("lab source(s)", "SELECT count(*) FROM source WHERE kind IN ('lab', 'invented')"),
                      ("corrected (retired) value(s)", "SELECT count(*) FROM property_value "
                                                       "WHERE retired_at IS NOT NULL")):
        n = count(sql)
        if n:
            found.append(f"{n} {what}")
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
