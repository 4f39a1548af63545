"""Schema migrations (Alembic), configured from code: the scripts live in ``db/migrations``, no alembic.ini.

A store built from the models (:func:`db.store.build`) is stamped at the newest revision; ``holdoff db upgrade``
(:func:`upgrade_store`) brings an older store forward in one transaction. A store made before migrations existed
carries its revision in the ``meta`` table and is stamped from it first.

Changing the schema: edit ``db/models.py``, then ``python -c "from db.migrate import new_revision as n;
n('what changed')"`` writes ``db/migrations/versions/NNNN_….py`` from the difference (review it: Alembic does not
see CHECK constraints), and raise ``db.store.SCHEMA_REVISION`` to NNNN. Revision ids are four-digit sequence
numbers; tests/test_migrations.py checks that models and migrations agree on SQLite and PostgreSQL.
"""

from __future__ import annotations

from pathlib import Path

from materials.errors import StoreError

MIGRATIONS_DIR = Path(__file__).with_name("migrations")


def config(url: str | None = None, connection=None):
    """An Alembic Config for the holdoff scripts; ``connection`` (if given) is the one the migrations run on."""
    from alembic.config import Config

    cfg = Config()
    cfg.set_main_option("script_location", str(MIGRATIONS_DIR))
    if url:
        cfg.set_main_option("sqlalchemy.url", url.replace("%", "%%"))
    cfg.attributes["connection"] = connection
    return cfg


def head_revision() -> str:
    """The newest revision of the migration scripts."""
    from alembic.script import ScriptDirectory

    return ScriptDirectory.from_config(config()).get_current_head()


def current_revision(conn) -> str | None:
    """The revision a store is stamped at (None when it has no ``alembic_version`` table)."""
    from alembic.runtime.migration import MigrationContext

    return MigrationContext.configure(conn).get_current_revision()


def stamp_head(bind) -> None:
    """Mark a store whose schema was created from the models as being at the newest revision.

    ``bind`` is an Engine (stamped in its own transaction) or a Connection (stamped in the caller's).
    """
    from alembic import command
    from sqlalchemy.engine import Connection

    if isinstance(bind, Connection):
        command.stamp(config(connection=bind), "head", purge=True)
        return
    with bind.begin() as conn:
        command.stamp(config(connection=conn), "head", purge=True)


def upgrade_store(url: str, revision: str = "head") -> str:
    """Migrate the store at ``url`` to ``revision`` (default: the newest) in one transaction; the revision reached.

    Refuses a missing or empty store (build it with ``holdoff db init``) and a store stamped with a revision this
    program does not know (made by a newer holdoff).
    """
    from alembic import command
    from alembic.script import ScriptDirectory
    from alembic.util import CommandError
    from sqlalchemy import inspect, text

    from db.engine import connect_errors, make_engine, mask_url, sqlite_file

    path = sqlite_file(url)
    if path is not None and not path.exists():
        raise StoreError(f"no store at {path} (run 'holdoff db init')")
    engine = make_engine(url, create_dirs=False)
    try:
        with connect_errors(url), engine.begin() as conn:
            insp = inspect(conn)
            if not insp.has_table("material"):
                raise StoreError(f"the store at {mask_url(url)} is empty (run 'holdoff db init')")
            cfg = config(connection=conn)
            rev = current_revision(conn)
            if not rev:
                # Built before migrations were installed: its revision is in the meta table.
                rev = conn.execute(text("SELECT value FROM meta WHERE key = 'schema_revision'")).scalar() \
                    if insp.has_table("meta") else None
                if not rev:
                    raise StoreError(f"the store at {mask_url(url)} has no schema revision; "
                                     "dump it with 'holdoff db dump' and load the bundle into a new store")
                command.stamp(cfg, rev)
            scripts = ScriptDirectory.from_config(cfg)
            try:
                scripts.get_revision(rev)
            except CommandError:
                raise StoreError(f"the store is at revision {rev}, which this holdoff does not know (its newest is "
                                 f"{scripts.get_current_head()}); upgrade holdoff") from None
            try:
                command.upgrade(cfg, revision)
            except CommandError as exc:
                raise StoreError(f"cannot upgrade to {revision}: {exc}") from None
            return current_revision(conn)
    finally:
        engine.dispose()


def new_revision(message: str) -> Path:
    """Write the next revision script from the difference between the models and the newest revision; its path."""
    import re
    import tempfile

    from alembic import command

    from db.engine import make_engine

    head = head_revision()
    rev = f"{int(head) + 1:04d}" if head else "0001"
    slug = re.sub(r"[^a-z0-9]+", "_", message.lower()).strip("_")[:40]
    with tempfile.TemporaryDirectory() as tmp:
        engine = make_engine(f"sqlite:///{tmp}/head.sqlite")
        try:
            with engine.begin() as conn:
                cfg = config(connection=conn)
                cfg.set_main_option("file_template", "%%(rev)s_" + slug)
                command.upgrade(cfg, "head")
                command.revision(cfg, message=message, autogenerate=True, rev_id=rev)
        finally:
            engine.dispose()
    return MIGRATIONS_DIR / "versions" / f"{rev}_{slug}.py"
