"""Open, build and check a store. One transaction per command; a failure leaves the store as it was."""

from __future__ import annotations

import contextlib
import os
import tempfile
from dataclasses import dataclass
from pathlib import Path

from db.bulk import bulk_insert  # noqa: F401  (imported from here by other modules)
from materials.errors import StoreError

SCHEMA_REVISION = "0002"  # the newest migration in db/migrations/versions


@dataclass
class Store:
    url: str
    engine: object

    @contextlib.contextmanager
    def session(self, *, read_only: bool = False):
        """A session in one transaction: committed on success, rolled back on any error.

        ``read_only``: for commands that only read; on SQLite the transaction then takes no write lock (see
        :meth:`reading`) and is rolled back at the end.
        """
        from sqlalchemy.orm import Session

        bind = self.engine.execution_options(holdoff_read=True) if read_only else self.engine
        with Session(bind, expire_on_commit=False) as s:
            with s.begin():
                yield s
                if read_only:
                    s.rollback()

    @contextlib.contextmanager
    def reading(self):
        """A plain (Core) connection in one read-only transaction (rolled back at the end), for reads that need no
        ORM. On SQLite it takes no write lock: it reads one consistent snapshot while writers go on."""
        with self.engine.connect() as conn:
            conn = conn.execution_options(holdoff_read=True)
            with conn.begin() as tx:
                yield conn
                tx.rollback()

    def write(self, fn, *, retries: int = 12):
        """``fn(session)`` in its own transaction, re-run when another writer got in the way; its result.

        Re-runs on SQLite 'database is locked' and on PostgreSQL serialization failures and deadlocks (the
        transaction runs SERIALIZABLE there, so a read-then-insert such as get-or-create of a source is safe
        against a concurrent writer). ``fn`` must therefore do nothing outside the session it is given.
        """
        import random
        import time

        from sqlalchemy.exc import DBAPIError
        from sqlalchemy.orm import Session

        bind = self.engine
        if self.engine.dialect.name == "postgresql":
            bind = self.engine.execution_options(isolation_level="SERIALIZABLE")
        for attempt in range(retries + 1):
            try:
                with Session(bind, expire_on_commit=False) as s:
                    with s.begin():
                        return fn(s)
            except DBAPIError as exc:
                if attempt == retries or not is_transient(exc):
                    raise
            # Jittered exponential back-off so that colliding writers do not collide again.
            time.sleep(min(0.02 * 2 ** attempt, 1.0) * random.uniform(0.5, 1.5))
        raise AssertionError("unreachable")

    def dispose(self):
        self.engine.dispose()


def is_transient(exc) -> bool:
    """Whether a database error is a lock or serialization conflict that a re-run of the transaction can clear."""
    orig = getattr(exc, "orig", exc)
    state = getattr(orig, "sqlstate", None)
    if state in ("40001", "40P01", "55P03"):  # serialization failure, deadlock, lock not available
        return True
    text = str(orig).lower()
    return "database is locked" in text or "database is busy" in text or "database table is locked" in text


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
        from sqlalchemy import text

        with engine.connect() as c:
            n = c.execute(text("SELECT count(*) FROM material WHERE origin != 'catalog'")).scalar()
        if n:
            raise StoreError(f"the store holds {n} lab/user material(s); 'db init --force' rebuilds it from the "
                             "catalog and discards them (dump it first with 'holdoff db dump FILE')")
    finally:
        engine.dispose()


def open_store(url: str | None = None, *, create: bool = True) -> Store:
    """Open the store at ``url`` (see :func:`db.engine.resolve_url`), building it from the catalog on first use."""
    from db.engine import error_text, make_engine, mask_url, resolve_url, sqlite_file

    url = resolve_url(url)
    path = sqlite_file(url)
    if path is not None and not path.exists():
        if not create:
            raise StoreError(f"no store at {path} (run 'holdoff db init')")
        with build_lock(path):
            if not path.exists():  # another command may have built it while this one waited
                build(url)
    engine = make_engine(url)
    try:
        fresh = not _has_schema(engine)
    except Exception as exc:
        engine.dispose()
        raise StoreError(f"cannot open store {mask_url(url)}: {error_text(exc, url)}") from None
    if fresh:
        if not create:
            engine.dispose()
            raise StoreError(f"the store at {mask_url(url)} is empty (run 'holdoff db init')")
        if path is None:
            try:
                _fill(engine, only_if_empty=True)
            except BaseException:
                engine.dispose()
                raise
        else:
            engine.dispose()
            with build_lock(path):
                engine = make_engine(url)
                empty = not _has_schema(engine)
                engine.dispose()
                if empty:
                    build(url, force=True)
            engine = make_engine(url)
    elif path is not None and create and _stale_catalog_only(engine):
        # A store that holds nothing but an older catalog is rebuilt from the current one (nothing is lost);
        # under the lock it is checked again, as another command may have rebuilt it or written to it meanwhile.
        engine.dispose()
        with build_lock(path):
            engine = make_engine(url)
            stale = _stale_catalog_only(engine)
            engine.dispose()
            if stale:
                build(url)
        engine = make_engine(url)
    try:
        _require_current_schema(engine, url)
    except BaseException:
        engine.dispose()
        raise
    return Store(url=url, engine=engine)


def _require_current_schema(engine, url: str) -> None:
    """Refuse a store whose schema revision is not this program's: older needs 'holdoff db upgrade'.

    Revision ids are four-digit sequence numbers (db/migrations/versions), so older and newer compare as numbers.
    A store that records no revision (made by :func:`empty_store`) is taken as current.
    """
    from sqlalchemy import inspect, text

    from db.engine import mask_url

    with engine.connect() as c:
        tables = set(inspect(c).get_table_names())
        rev = None
        if "alembic_version" in tables:
            rev = c.execute(text("SELECT version_num FROM alembic_version")).scalar()
        elif "meta" in tables:
            rev = c.execute(text("SELECT value FROM meta WHERE key = 'schema_revision'")).scalar()
    if rev is None or rev == SCHEMA_REVISION:
        return
    if rev.isdigit() and int(rev) < int(SCHEMA_REVISION):
        raise StoreError(f"the store at {mask_url(url)} is at schema revision {rev}, this holdoff needs "
                         f"{SCHEMA_REVISION}: run 'holdoff db upgrade' (dump it first with 'holdoff db dump FILE' "
                         "if you want a copy)")
    raise StoreError(f"the store at {mask_url(url)} is at schema revision {rev}, newer than this holdoff knows "
                     f"({SCHEMA_REVISION}): upgrade holdoff")


def _stale_catalog_only(engine) -> bool:
    """True if the store was built from another catalog version and holds no lab or user data."""
    from sqlalchemy import text

    from materials.catalog_io import catalog_fingerprint

    try:
        with engine.connect() as c:
            fp = c.execute(text("SELECT value FROM meta WHERE key = 'catalog_fingerprint'")).scalar()
            if fp is None or fp == catalog_fingerprint() or not _same_catalog_folder(c):
                return False
            others = c.execute(text("SELECT count(*) FROM material WHERE origin != 'catalog'")).scalar()
            sets = c.execute(text("SELECT count(*) FROM breakdown_set")).scalar()
            loops = c.execute(text("SELECT count(*) FROM loop")).scalar()
            lab = c.execute(text("SELECT count(*) FROM source WHERE kind IN ('lab', 'invented')")).scalar()
    except Exception:
        return False
    return not (others or sets or loops or lab)


def memory_store(catalog_dir=None) -> Store:
    """An in-memory SQLite store filled from the catalog (tests and scratch work)."""
    from db.engine import make_engine

    engine = make_engine("sqlite://")
    _fill(engine, catalog_dir)
    return Store(url="sqlite://", engine=engine)


def empty_store(url: str = "sqlite://") -> Store:
    """A store with the schema and no rows."""
    from db.engine import make_engine
    from db.models import Base

    engine = make_engine(url)
    Base.metadata.create_all(engine)
    return Store(url=url, engine=engine)


def catalog_is_current(store: Store) -> bool | None:
    """True/False whether the store was built from today's catalog files; None if unknown (no fingerprint, or
    built from another catalog folder than the one in use)."""
    from sqlalchemy import select

    from db.models import Meta
    from materials.catalog_io import catalog_fingerprint

    with store.session(read_only=True) as s:
        row = s.execute(select(Meta.value).where(Meta.key == "catalog_fingerprint")).scalar()
        same = _same_catalog_folder(s.connection())
    return None if row is None or not same else row == catalog_fingerprint()
