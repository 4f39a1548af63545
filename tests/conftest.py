"""Shared fixtures: a mini catalog, in-memory stores, a fresh SQLite URL, and a CLI runner with a pinned width."""

from __future__ import annotations

import shutil
from pathlib import Path

import pytest

from pg import backend_url, pg_url  # noqa: F401  (fixtures offered to every test module)

DATA = Path(__file__).parent / "data"
MINI_CATALOG = DATA / "mini_catalog_foundation"

# Every CLI run gets these: a pinned terminal width, no colour, and no inherited store or catalog choice.
CLI_ENV = {"COLUMNS": "120", "LINES": "50", "NO_COLOR": "1", "TERM": "dumb", "HOLDOFF_DB": None,
           "HOLDOFF_CATALOG": None}


@pytest.fixture(autouse=True)
def _private_data_dirs(tmp_path_factory, monkeypatch):
    """Keep the user's data folder out of every test: platformdirs resolves under a temporary home."""
    home = tmp_path_factory.getbasetemp() / "home"
    home.mkdir(exist_ok=True)
    monkeypatch.setenv("XDG_DATA_HOME", str(home / "data"))
    monkeypatch.setenv("XDG_CACHE_HOME", str(home / "cache"))
    monkeypatch.delenv("HOLDOFF_DB", raising=False)
    monkeypatch.delenv("HOLDOFF_CATALOG", raising=False)


@pytest.fixture
def mini_catalog() -> Path:
    """The foundation tests' mini catalog (sources.toml + four small materials); read-only."""
    return MINI_CATALOG


@pytest.fixture
def mini_catalog_copy(tmp_path) -> Path:
    """A private copy of the mini catalog that a test may edit or break."""
    dest = tmp_path / "catalog"
    shutil.copytree(MINI_CATALOG, dest)
    return dest


@pytest.fixture(scope="session")
def mem_store():
    """An in-memory store built from the real shipped catalog (shared by the session: do not write to it)."""
    from db.store import memory_store

    store = memory_store()
    yield store
    store.dispose()


@pytest.fixture
def mini_store(mini_catalog):
    """An in-memory store built from the mini catalog (private to the test)."""
    from db.store import memory_store

    store = memory_store(mini_catalog)
    yield store
    store.dispose()


@pytest.fixture(scope="session")
def mini_db(tmp_path_factory) -> str:
    """The URL of a SQLite store built once from the mini catalog, shared by read-only CLI tests: do not write."""
    from db.store import build

    url = f"sqlite:///{tmp_path_factory.mktemp('mini-db') / 'holdoff.sqlite'}"
    build(url, catalog_dir=MINI_CATALOG)
    return url


@pytest.fixture
def mini_cli(cli, mini_db):
    """``mini_cli("catalog", "--json")``: ``holdoff ARGS`` on the shared mini-catalog store (``db=`` for another)."""
    def go(*args, db=None, **kw):
        return cli(list(args), db=db or mini_db, catalog=MINI_CATALOG, **kw)

    return go


@pytest.fixture
def tmp_db_url(tmp_path) -> str:
    """A SQLite file URL under the test's temporary folder (the file does not exist yet)."""
    return f"sqlite:///{tmp_path / 'holdoff.sqlite'}"


@pytest.fixture
def cli(tmp_path):
    """Run ``holdoff ARGS`` in-process: returns (exit_code, stdout, stderr).

    The store defaults to a fresh SQLite file under tmp_path (pass ``db=`` or ``env={"HOLDOFF_DB": …}`` to
    choose another); ``catalog=`` sets HOLDOFF_CATALOG. A bug (an uncaught exception) is re-raised so the
    test shows its traceback rather than exit code 1.
    """
    from typer.testing import CliRunner

    from cli.app import app

    default_db = f"sqlite:///{tmp_path / 'cli.sqlite'}"

    def run(args, *, env=None, db=None, catalog=None, input=None):
        full_env = dict(CLI_ENV, HOLDOFF_DB=db or default_db)
        if catalog is not None:
            full_env["HOLDOFF_CATALOG"] = str(catalog)
        full_env.update(env or {})
        result = CliRunner().invoke(app, [str(a) for a in args], env=full_env, input=input)
        if result.exception is not None and not isinstance(result.exception, SystemExit):
            raise result.exception
        return result.exit_code, result.stdout, result.stderr

    return run



@pytest.fixture(scope="session")
def make_material():
    """Build a :class:`materials.records.MaterialData` from ``(property, value, kind, conditions…)`` tuples.

    ``make_material("m", [("relative_permittivity", 2.2, "handbook", {"temperature_K": 298.15})], family=…)``;
    rows get increasing ids in the order given, and each kind its own source key.
    """
    from materials.records import MaterialData, SourceRef, StoredValue

    def build(key, rows, *, family="polymer-film", response="linear", origin="catalog"):
        values = []
        for i, row in enumerate(rows, 1):
            prop, value, kind = row[:3]
            extra = dict(row[3]) if len(row) > 3 else {}
            src = SourceRef(key=extra.pop("source", f"{kind}-source"), kind=kind, citation=f"a {kind} source")
            values.append(StoredValue(id=i, property=prop, value=value, source=src, **extra))
        return MaterialData(key=key, name=key, family=family, response=response, origin=origin, values=values)

    return build
