"""Open and check a store, and run a command's transaction on it. One transaction per command; a failure leaves the
store as it was. Building it from the catalog is :mod:`db.building`."""

from __future__ import annotations

import contextlib
from dataclasses import dataclass

from db.building import _fill, _has_schema, _same_catalog_folder, _stale_catalog_only, build, build_lock, rebuild_if
from db.building import write_catalog  # noqa: F401  (imported from here by other modules)
from db.bulk import bulk_insert  # noqa: F401  (imported from here by other modules)
from materials.errors import StoreError

SCHEMA_REVISION = "0004"  # the newest migration in db/migrations/versions


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
    from sqlalchemy.exc import SQLAlchemyError

    try:
        fresh = not _has_schema(engine)
    except (SQLAlchemyError, OSError) as exc:
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
            rebuild_if(url, path, lambda e: not _has_schema(e), force=True)
            engine = make_engine(url)
    elif path is not None and create and _stale_catalog_only(engine):
        # A store that holds nothing but an older catalog is rebuilt from the current one (nothing is lost);
        # under the lock it is checked again, as another command may have rebuilt it or written to it meanwhile.
        engine.dispose()
        rebuild_if(url, path, _stale_catalog_only)
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
