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


_SECRET_WORDS = ("password", "passwd", "pwd", "secret", "token")
_SECRET_QUERY = re.compile(r"(?i)([?&][^=&]*(?:" + "|".join(_SECRET_WORDS) + r")[^=&]*=)[^&]*")


def _userinfo(url: str) -> tuple[str, str, str] | None:
    """(scheme, user:password, rest) of ``url``, splitting at the last '@' before the query: a password typed with
    '@', ':' or '/' in it, unencoded, stays whole. None when the URL names no user."""
    scheme, sep, rest = url.partition("://")
    if not sep or rest.startswith("/"):
        return None
    head = rest.partition("?")[0]
    at = head.rfind("@")
    if at < 0:
        return None
    return scheme, rest[:at], rest[at + 1:]


def mask_url(url: str) -> str:
    """The URL for messages: its password (however spelt: with '@' or ':' in it, URL-encoded) and any
    ``password=`` (or other secret) query parameter replaced by ``***``.

    SQLAlchemy renders the URL with ``hide_password``; where it would read the user part differently (an unencoded
    '@' in the password) or cannot read the URL, the part before the last '@' is masked here.
    """
    from sqlalchemy.engine import make_url
    from sqlalchemy.exc import ArgumentError

    parts = _userinfo(url)
    text = None
    if parts is not None and "@" not in parts[1]:
        try:
            text = make_url(url).render_as_string(hide_password=True)
        except (ArgumentError, ValueError, TypeError):
            text = None
    if text is None:
        if parts is None:
            text = url
        else:
            scheme, info, rest = parts
            user, colon, _ = info.partition(":")
            text = f"{scheme}://{user}{':***' if colon else ''}@{rest}"
    return _SECRET_QUERY.sub(r"\1***", text)


def _secrets(url: str) -> list[str]:
    """Every spelling of the URL's password and secret query values (plain and URL-encoded), longest first."""
    from urllib.parse import parse_qsl, quote, unquote

    values = []
    parts = _userinfo(url)
    if parts is not None and ":" in parts[1]:
        values.append(parts[1].partition(":")[2])
    query = url.partition("?")[2]
    values += [v for k, v in parse_qsl(query, keep_blank_values=True) if any(w in k.lower() for w in _SECRET_WORDS)]
    values += [m.group(0).partition("=")[2] for m in _SECRET_QUERY.finditer(url)]
    out = set()
    for v in values:
        if v:
            out |= {v, unquote(v), quote(v, safe=""), quote(unquote(v), safe="")}
    return sorted((x for x in out if x), key=len, reverse=True)


def error_text(exc: BaseException, url: str) -> str:
    """One line describing a driver error, with the URL's password (plain or URL-encoded) masked out."""
    orig = getattr(exc, "orig", None) or exc
    lines = [line for line in str(orig).splitlines() if line.strip()]
    text = lines[0] if lines else ""
    for secret in _secrets(url):
        text = text.replace(secret, "***")
    return f"{type(orig).__name__}: {text}"


def failure_text(exc: BaseException, url: str, what: str = "open store") -> str:
    """The one line for a store that could not be opened or used: ``cannot WHAT URL: Error: text``, no password."""
    return f"cannot {what} {mask_url(url)}: {error_text(exc, url)}"


@contextlib.contextmanager
def connect_errors(url: str, what: str = "open store"):
    """Turn a connection-level failure (server down, wrong password, locked file) into a one-line StoreError."""
    from sqlalchemy.exc import InterfaceError, OperationalError

    try:
        yield
    except (OperationalError, InterfaceError) as exc:
        raise StoreError(failure_text(exc, url, what)) from None


# SQLite's words for a file it cannot open, read or write, or that another writer held past the busy timeout.
_SQLITE_UNREACHABLE = ("unable to open database file", "not a database", "disk i/o error", "readonly database",
                       "database disk image is malformed", "database is locked", "database is busy")
# SQLSTATE classes of a refused or lost PostgreSQL connection: 08 connection exception, 28 invalid authorization
# (wrong password), 3D invalid catalog name (no such database), 57P operator intervention (shutting down, starting).
_PG_UNREACHABLE = ("08", "28", "3D", "57P")


def unreachable(exc: BaseException, url: str) -> BaseException | None:
    """The error in ``exc``'s chain (itself, then its cause or context) that means the store at ``url`` cannot be
    opened or reached, else None.

    That is: a driver error of a refused, failed or lost connection (server down, login refused, no such database);
    a SQLite file that cannot be opened, is not a database or stayed locked; an OS error on the store's file, its
    lock or its folder (missing and impossible to create, or not writable); or any :class:`StoreError` about a
    SQLite store whose file is not there. A bad URL, a bad query or a bug is not.
    """
    path = sqlite_file(url)
    seen: set[int] = set()
    while exc is not None and id(exc) not in seen:
        seen.add(id(exc))
        if _cannot_reach(exc, path):
            return exc
        exc = exc.__cause__ or exc.__context__
    return None


def _cannot_reach(exc: BaseException, path: Path | None) -> bool:
    import sqlite3
    import sys

    if isinstance(exc, StoreError):
        return path is not None and not path.exists()
    if getattr(exc, "connection_invalidated", False):  # SQLAlchemy saw the connection drop
        return True
    if isinstance(exc, sqlite3.DatabaseError):
        return any(words in str(exc).lower() for words in _SQLITE_UNREACHABLE)
    psycopg = sys.modules.get("psycopg")  # only loaded when a PostgreSQL store was used
    if psycopg is not None and isinstance(exc, psycopg.OperationalError):
        state = getattr(exc, "sqlstate", None)
        return state is None or state.startswith(_PG_UNREACHABLE)
    if isinstance(exc, OSError) and exc.filename is not None and path is not None:
        return _store_file(Path(str(exc.filename)), path)
    return False


def _store_file(name: Path, path: Path) -> bool:
    """Whether ``name`` is the store file ``path``, a file beside it named after it (lock, WAL) or a folder above."""
    name, path = Path(os.path.abspath(name)), Path(os.path.abspath(path))
    return name == path or name in path.parents or (name.parent == path.parent and name.name.startswith(path.name))


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
        raise StoreError(failure_text(exc, url)) from None
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
