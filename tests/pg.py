"""Backends for the store tests: a private PostgreSQL schema per test, a SQLite file, and a sample store.

PostgreSQL comes from ``HOLDOFF_TEST_PG_URL`` (``.ci/postgres.sh start`` exports it); tests marked
``@pytest.mark.postgres`` skip when it is unset. Each test gets its own schema on that server (selected through the
URL's ``search_path``), dropped afterwards, so tests never see each other's tables.

Its fixtures ``backend_url`` and ``pg_url`` are imported by conftest.py, so every test module can ask for them.
"""

from __future__ import annotations

import contextlib
import datetime as dt
import os
import uuid
from pathlib import Path

import pytest

PG_ENV = "HOLDOFF_TEST_PG_URL"
MINI_CATALOG = Path(__file__).parent / "data" / "mini_catalog_foundation"
HOSTILE = "x'); DROP TABLE material;--"


def pg_base_url() -> str | None:
    return os.environ.get(PG_ENV) or None


def _admin_engine(url: str):
    from sqlalchemy import create_engine

    return create_engine(url, isolation_level="AUTOCOMMIT")


@contextlib.contextmanager
def fresh_schema(base: str):
    """A URL selecting a new, empty schema on the server at ``base``; the schema is dropped on exit."""
    from sqlalchemy import text

    schema = f"t_{uuid.uuid4().hex[:12]}"
    admin = _admin_engine(base)
    with admin.connect() as c:
        c.execute(text(f"CREATE SCHEMA {schema}"))
    sep = "&" if "?" in base else "?"
    try:
        yield f"{base}{sep}options=-csearch_path%3D{schema}"
    finally:
        with admin.connect() as c:
            c.execute(text("SET lock_timeout = '20s'"))  # a connection left in a transaction fails the test, not CI
            c.execute(text(f"DROP SCHEMA {schema} CASCADE"))
        admin.dispose()


def require_pg() -> str:
    base = pg_base_url()
    if not base:
        pytest.skip(f"no PostgreSQL server ({PG_ENV} unset; start one with 'source .ci/postgres.sh start')")
    return base


@pytest.fixture
def pg_url():
    """The URL of a fresh, empty schema on the test server (skips without ``HOLDOFF_TEST_PG_URL``)."""
    with fresh_schema(require_pg()) as url:
        yield url


@pytest.fixture(params=["sqlite", pytest.param("postgres", marks=pytest.mark.postgres)])
def backend_url(request, tmp_path):
    """A URL for a store that does not exist yet: a SQLite file, and (marked postgres) an empty schema."""
    if request.param == "sqlite":
        return f"sqlite:///{tmp_path / 'store.sqlite'}"
    return request.getfixturevalue("pg_url")


def fill_lab_data(store) -> None:
    """Add to a store every kind of row the catalog lacks: a lab source and material, a breakdown set and a loop
    with points, values derived from them, retired history rows, awkward floats and text, and a meta fact."""
    from db.models import BreakdownPoint, BreakdownSet, Loop, LoopPoint, Material, Meta, PropertyValue, Source

    t0 = dt.datetime(2026, 3, 4, 5, 6, 7, 891011)
    with store.session() as s:
        src = Source(key="lab-bench-7", kind="lab", citation="Bench 7 breakdown rig, run book p. 12 — µm films, "
                     "ε′ at 1 kHz; \"quoted\" and\ttabbed\nand a second line", note="")
        # Keys are slugs (a bundle or 'add' refuses any other); the hostile text sits in every free-text field.
        odd = Source(key="hostile-text", kind="invented", citation=HOSTILE, note="ünïcödé ✓ 🧪")
        mat = Material(key="lab-film-a", name="Laboratory film A", family="polymer-film", form="cast film",
                       description="", origin="lab", response="linear")
        mat2 = Material(key="hostile-ceramic", name=HOSTILE, family="ceramic-class-2", form="",
                        description="Robert'); --", origin="user", response="nonlinear")
        s.add_all([src, odd, mat, mat2])
        s.flush()
        bset = BreakdownSet(material_id=mat.id, label="25 °C, 3 µm", thickness_m=3e-6, area_m2=1.0e-4,
                            temperature_K=298.15, waveform="dc", ramp_V_per_s=500.0, source_id=src.id,
                            file_name="set a.csv", sha256="ab" * 32, created_at=t0)
        empty_ramp = BreakdownSet(material_id=mat2.id, label=HOSTILE, thickness_m=None, area_m2=None,
                                  temperature_K=None, waveform="ac", ramp_V_per_s=None, source_id=odd.id,
                                  file_name="", sha256="cd" * 32, created_at=t0)
        loop = Loop(material_id=mat2.id, label="loop 1", temperature_K=373.15, frequency_Hz=10.0, thickness_m=1e-4,
                    source_id=odd.id, file_name="loop.csv", sha256="ef" * 32, created_at=t0)
        s.add_all([bset, empty_ramp, loop])
        s.flush()
        fields = [4.1e8 + i * 1.234567e6 + 0.1 + 0.2 for i in range(25)]
        s.add_all([BreakdownPoint(set_id=bset.id, seq=i, field_V_per_m=f, censored=(i % 7 == 3),
                                  thickness_m=(3e-6 + i * 1e-9) if i % 2 else None) for i, f in enumerate(fields)])
        s.add_all([BreakdownPoint(set_id=empty_ramp.id, seq=10 * i, field_V_per_m=v, censored=False)
                   for i, v in enumerate([1 / 3, 5e-324, 1.7976931348623157e308, -0.0, 2.2250738585072014e-308])])
        s.add_all([LoopPoint(loop_id=loop.id, seq=i, field_V_per_m=e, polarization_C_per_m2=p)
                   for i, (e, p) in enumerate([(0.0, 0.0), (1e7, 0.1), (2e7, 0.15), (1e7, 0.12), (0.0, 0.03)])])
        rows = [
            PropertyValue(material_id=mat.id, property="breakdown_field", value=6.1e8, low=5.9e8, high=6.3e8,
                          temperature_K=298.15, thickness_m=3e-6, area_m2=1.0e-4, source_id=src.id, note="fit",
                          breakdown_set_id=bset.id, created_at=t0),
            PropertyValue(material_id=mat.id, property="weibull_shape", value=12.345678901234567, source_id=src.id,
                          note="", breakdown_set_id=bset.id, temperature_K=298.15, created_at=t0),
            PropertyValue(material_id=mat.id, property="relative_permittivity", value=3.1, source_id=src.id,
                          note="first try", temperature_K=298.15, frequency_Hz=1e3, created_at=t0,
                          retired_at=t0 + dt.timedelta(days=1), retired_reason="re-measured"),
            PropertyValue(material_id=mat.id, property="relative_permittivity", value=3.0000000000000004,
                          source_id=src.id, note="", temperature_K=298.15, frequency_Hz=1e3,
                          created_at=t0 + dt.timedelta(days=1)),
            PropertyValue(material_id=mat2.id, property="recoverable_energy_density", value=1.25e6,
                          field_V_per_m=2e7, temperature_K=373.15, source_id=odd.id, note=HOSTILE, loop_id=loop.id,
                          created_at=t0),
            PropertyValue(material_id=mat2.id, property="efficiency", value=0.8, source_id=odd.id, note="",
                          loop_id=loop.id, created_at=t0),
        ]
        s.add_all(rows)
        s.add(Meta(key="lab_note", value="filled by tests/pg.py"))


def sample_store(url: str, catalog_dir: Path = MINI_CATALOG):
    """A store at ``url`` built from the mini catalog and filled with :func:`fill_lab_data`; open."""
    from db.store import build, open_store

    build(url, catalog_dir=catalog_dir, force=True)
    store = open_store(url, create=False)
    fill_lab_data(store)
    return store
