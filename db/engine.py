"""Engine and URL handling: the default SQLite file, ``--db URL`` / ``HOLDOFF_DB``, SQLite pragmas."""

from __future__ import annotations

import contextlib
import os
import re
from pathlib import Path

from materials.errors import StoreError

ENV_VAR = "HOLDOFF_DB"


def default_path() -> Path:
    """The default store: a SQLite file in the user's data folder (platformdirs)."""
    import platformdirs

    return Path(platformdirs.user_data_dir("holdoff", appauthor=False)) / "holdoff.sqlite"


def resolve_url(url: str | None = None) -> str:
    """The store URL: the explicit one, else ``$HOLDOFF_DB``, else the default SQLite file.

    A bare path (no ``://``) is taken as a SQLite file.
    """
    url = url or os.environ.get(ENV_VAR) or ""
    if not url:
        return f"sqlite:///{default_path()}"
    if "://" not in url:
        return f"sqlite:///{Path(url).expanduser().resolve()}"
    return url


def mask_url(url: str) -> str:
    """The URL with any password replaced, for messages."""
    return re.sub(r"(://[^:/@]*:)[^@]*@", r"\1***@", url)


def _password(url: str) -> str | None:
    m = re.search(r"://[^:/@]*:([^@]*)@", url)
    return m.group(1) if m and m.group(1) else None


def error_text(exc: BaseException, url: str) -> str:
    """One line describing a driver error, with the URL's password (plain or URL-encoded) masked out."""
    from urllib.parse import unquote

    orig = getattr(exc, "orig", None) or exc
    lines = [line for line in str(orig).splitlines() if line.strip()]
    text = mask_url(lines[0] if lines else "")
    pw = _password(url)
    for secret in {pw, unquote(pw)} if pw else ():
        text = text.replace(secret, "***")
    return f"{type(orig).__name__}: {text}"


@contextlib.contextmanager
def connect_errors(url: str, what: str = "open store"):
    """Turn a connection-level failure (server down, wrong password, locked file) into a one-line StoreError."""
    from sqlalchemy.exc import InterfaceError, OperationalError

    try:
        yield
    except (OperationalError, InterfaceError) as exc:
        raise StoreError(f"cannot {what} {mask_url(url)}: {error_text(exc, url)}") from None


def sqlite_file(url: str) -> Path | None:
    """The file of a SQLite URL, None for in-memory or other backends."""
    m = re.match(r"^sqlite(?:\+\w+)?:///(.*)$", url)
    if not m or m.group(1) in ("", ":memory:") or m.group(1).startswith("file:"):
        return None
    return Path(m.group(1))


def make_engine(url: str, *, create_dirs: bool = True):
    """An engine for ``url``; SQLite gets foreign keys, WAL and a busy timeout on every connection."""
    from sqlalchemy import create_engine, event

    is_sqlite = url.startswith("sqlite")
    kwargs = {}
    if url.startswith("postgresql"):
        # An unreachable server should fail in seconds, not hang a command.
        kwargs["connect_args"] = {"connect_timeout": 10}
    if is_sqlite:
        path = sqlite_file(url)
        if path is not None and create_dirs:
            path.parent.mkdir(parents=True, exist_ok=True)
        kwargs["connect_args"] = {"timeout": 30}
        if path is None:
            from sqlalchemy.pool import StaticPool

            kwargs["poolclass"] = StaticPool
            kwargs["connect_args"]["check_same_thread"] = False
    from sqlalchemy.exc import ArgumentError

    try:
        engine = create_engine(url, future=True, **kwargs)
    except (ArgumentError, ImportError, ValueError) as exc:  # a URL that cannot be parsed, or no such driver
        raise StoreError(f"cannot open store {mask_url(url)}: {error_text(exc, url)}") from None
    if is_sqlite:
        @event.listens_for(engine, "connect")
        def _pragmas(dbapi_conn, _record):  # pragma: no cover - exercised by every SQLite test
            # Let SQLAlchemy, not the driver, open transactions, so BEGIN IMMEDIATE can be issued.
            dbapi_conn.isolation_level = None
            cur = dbapi_conn.cursor()
            cur.execute("PRAGMA foreign_keys = ON")
            cur.execute("PRAGMA busy_timeout = 30000")
            if sqlite_file(url) is not None:
                cur.execute("PRAGMA journal_mode = WAL")
                cur.execute("PRAGMA synchronous = NORMAL")
            cur.close()

        @event.listens_for(engine, "begin")
        def _begin(conn):  # pragma: no cover
            # Take the write lock at the start of every transaction: no lock upgrades, no SQLITE_BUSY mid-way.
            # A read-only transaction (Store.reading) takes none: in WAL mode it reads a snapshot and neither
            # waits for writers nor holds them up.
            conn.exec_driver_sql("BEGIN" if conn.get_execution_options().get("holdoff_read") else "BEGIN IMMEDIATE")
    return engine
