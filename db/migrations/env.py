"""Alembic environment for the holdoff store, configured from code by :mod:`db.migrate` (no alembic.ini).

The caller passes an open connection in ``config.attributes["connection"]``; every migration of one command then
runs in that connection's transaction, so a failed upgrade leaves the store at its old revision.
"""

from alembic import context

from db.models import Base

config = context.config
target_metadata = Base.metadata


def _configure(**kwargs) -> None:
    context.configure(target_metadata=target_metadata, compare_type=True, render_as_batch=True, **kwargs)


def run_migrations_offline() -> None:
    _configure(url=config.get_main_option("sqlalchemy.url"), literal_binds=True,
               dialect_opts={"paramstyle": "named"})
    with context.begin_transaction():
        context.run_migrations()


def run_migrations_online() -> None:
    connection = config.attributes.get("connection")
    if connection is None:
        from db.engine import make_engine

        engine = make_engine(config.get_main_option("sqlalchemy.url"))
        try:
            with engine.begin() as conn:
                _configure(connection=conn)
                with context.begin_transaction():
                    context.run_migrations()
        finally:
            engine.dispose()
        return
    _configure(connection=connection)
    with context.begin_transaction():
        context.run_migrations()


if context.is_offline_mode():
    run_migrations_offline()
else:
    run_migrations_online()
