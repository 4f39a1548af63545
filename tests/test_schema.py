"""What the database itself enforces: CHECK constraints, NOT NULL source, foreign keys, unique keys, WAL mode."""

from __future__ import annotations

import datetime as dt
from pathlib import Path

import pytest
from sqlalchemy import insert, text
from sqlalchemy.exc import IntegrityError

from db.models import Material, PropertyValue, Source
from db.store import empty_store


@pytest.fixture
def store(tmp_db_url):
    """An empty SQLite file store with one source and one material to hang rows on."""
    st = empty_store(tmp_db_url)
    with st.engine.begin() as c:
        c.execute(insert(Source.__table__).values(id=1, key="s", kind="handbook", citation="A handbook, 1st ed."))
        c.execute(insert(Material.__table__).values(id=1, key="m", name="A film", family="polymer-film",
                                                    origin="catalog", response="linear"))
    yield st
    st.dispose()


def _insert(store, table, **values):
    with store.engine.begin() as c:
        c.execute(insert(table.__table__).values(**values))


def _value(**over):
    row = dict(material_id=1, property="relative_permittivity", value=2.2, source_id=1)
    row.update(over)
    return row


def test_a_valid_row_is_accepted(store):
    _insert(store, PropertyValue, **_value(low=2.1, high=2.3, temperature_K=298.15))
    with store.engine.connect() as c:
        assert c.execute(text("SELECT count(*) FROM property_value")).scalar() == 1


@pytest.mark.parametrize("kind", ["rumour", "Handbook", ""])
def test_source_kind_is_checked(store, kind):
    with pytest.raises(IntegrityError, match="CHECK"):
        _insert(store, Source, key="x", kind=kind, citation="c")


@pytest.mark.parametrize("column, bad", [("family", "plastic"), ("origin", "internet"), ("response", "weird")])
def test_material_enumerations_are_checked(store, column, bad):
    row = dict(key="x", name="X", family="glass", origin="catalog", response="linear")
    row[column] = bad
    with pytest.raises(IntegrityError, match="CHECK"):
        _insert(store, Material, **row)


def test_property_key_is_checked(store):
    with pytest.raises(IntegrityError, match="CHECK"):
        _insert(store, PropertyValue, **_value(property="colour"))


def test_every_value_needs_a_source(store):
    with pytest.raises(IntegrityError, match="NOT NULL"):
        _insert(store, PropertyValue, **_value(source_id=None))


def test_foreign_keys_are_enforced(store):
    with store.engine.connect() as c:
        assert c.exec_driver_sql("PRAGMA foreign_keys").scalar() == 1
    with pytest.raises(IntegrityError, match="FOREIGN KEY"):
        _insert(store, PropertyValue, **_value(source_id=999))
    with pytest.raises(IntegrityError, match="FOREIGN KEY"):
        _insert(store, PropertyValue, **_value(material_id=999))


def test_a_cited_source_cannot_be_deleted(store):
    _insert(store, PropertyValue, **_value())
    with pytest.raises(IntegrityError, match="FOREIGN KEY"):
        with store.engine.begin() as c:
            c.execute(text("DELETE FROM source WHERE id = 1"))


def test_deleting_a_material_deletes_its_values(store):
    _insert(store, PropertyValue, **_value())
    with store.engine.begin() as c:
        c.execute(text("DELETE FROM material WHERE id = 1"))
    with store.engine.connect() as c:
        assert c.execute(text("SELECT count(*) FROM property_value")).scalar() == 0


def test_material_and_source_keys_are_unique(store):
    with pytest.raises(IntegrityError, match="UNIQUE"):
        _insert(store, Material, key="m", name="Another", family="glass", origin="catalog", response="linear")
    with pytest.raises(IntegrityError, match="UNIQUE"):
        _insert(store, Source, key="s", kind="paper", citation="Another paper")


def test_range_must_be_ordered(store):
    with pytest.raises(IntegrityError, match="CHECK"):
        _insert(store, PropertyValue, **_value(low=2.3, high=2.1))


@pytest.mark.parametrize("t", [0.0, -10.0])
def test_temperature_is_absolute(store, t):
    with pytest.raises(IntegrityError, match="CHECK"):
        _insert(store, PropertyValue, **_value(temperature_K=t))


def test_retired_rows_say_when_and_why(store):
    now = dt.datetime(2026, 1, 1, 12, 0)
    with pytest.raises(IntegrityError, match="CHECK"):
        _insert(store, PropertyValue, **_value(retired_at=now))
    with pytest.raises(IntegrityError, match="CHECK"):
        _insert(store, PropertyValue, **_value(retired_reason="superseded"))
    _insert(store, PropertyValue, **_value(retired_at=now, retired_reason="superseded by a corrected value"))


def test_file_store_runs_in_wal_mode(store):
    with store.engine.connect() as c:
        assert c.exec_driver_sql("PRAGMA journal_mode").scalar().lower() == "wal"


def test_memory_store_has_foreign_keys_on(mini_store):
    with mini_store.engine.connect() as c:
        assert c.exec_driver_sql("PRAGMA foreign_keys").scalar() == 1
        assert c.exec_driver_sql("PRAGMA foreign_key_check").fetchall() == []


def test_built_file_store_is_wal_and_sound(tmp_db_url, mini_catalog):
    from db.check import check_store
    from db.store import build, open_store

    build(tmp_db_url, catalog_dir=mini_catalog)
    st = open_store(tmp_db_url, create=False)
    try:
        with st.engine.connect() as c:
            assert c.exec_driver_sql("PRAGMA journal_mode").scalar().lower() == "wal"
            assert c.execute(text("SELECT count(*) FROM material")).scalar() == 4
        assert [f for f in check_store(st) if f.level == "error"] == []
    finally:
        st.dispose()


def test_every_physical_column_names_its_unit():
    # DESIGN.md: SI inside, the unit in the column name; value/low/high carry the unit of their property, an
    # endurance point's stress that of its set's stress_kind (V or V/m).
    from sqlalchemy import Float

    from db.models import Base

    suffixes = ("_K", "_Hz", "_V_per_m", "_m", "_m2", "_V_per_s", "_C_per_m2", "_s")
    for table in Base.metadata.tables.values():
        for col in table.columns:
            if isinstance(col.type, Float) and col.name not in ("value", "low", "high", "stress"):
                assert col.name.endswith(suffixes), f"{table.name}.{col.name}"


def test_tests_never_touch_the_users_data_folder(tmp_path_factory):
    # conftest points platformdirs at a temporary home; the default store must resolve inside it.
    import os

    from db.engine import resolve_url, sqlite_file

    path = sqlite_file(resolve_url(None))
    assert path is not None and path.name == "holdoff.sqlite"
    assert Path(os.environ["XDG_DATA_HOME"]) in path.parents
    assert tmp_path_factory.getbasetemp() in path.parents
