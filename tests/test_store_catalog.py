"""When a store is rebuilt from the catalog on open, and when it is left alone.

A store holding nothing but an older build of the catalog in use is rebuilt (nothing is lost); one holding lab
data is never rebuilt; one built from another catalog folder (a curator's) is neither rebuilt from the shipped
catalog nor called out of date against it.
"""

from __future__ import annotations

import shutil
from pathlib import Path

from sqlalchemy import create_engine, text

MINI = Path(__file__).parent / "data" / "mini_catalog_foundation"


def _meta(url, key):
    engine = create_engine(url)
    try:
        with engine.connect() as c:
            return c.execute(text("SELECT value FROM meta WHERE key = :k"), {"k": key}).scalar()
    finally:
        engine.dispose()


def _age(url):
    """Make the store look built from an older version of its catalog."""
    engine = create_engine(url)
    try:
        with engine.begin() as c:
            c.execute(text("UPDATE meta SET value = 'an-older-catalog' WHERE key = 'catalog_fingerprint'"))
    finally:
        engine.dispose()


def _keys(store):
    from db.query import load_materials

    with store.session() as s:
        return sorted(m.key for m in load_materials(s))


def test_an_older_catalog_only_store_is_rebuilt_from_the_catalog_in_use(tmp_path, monkeypatch):
    from db.store import build, catalog_is_current, open_store
    from materials.catalog_io import catalog_fingerprint

    from materials.catalog_io import CATALOG_DIR

    folder = tmp_path / "catalog"
    shutil.copytree(CATALOG_DIR, folder)  # (the mini catalog cites an invented source, which counts as user data)
    monkeypatch.setenv("HOLDOFF_CATALOG", str(folder))
    url = f"sqlite:///{tmp_path / 's.sqlite'}"
    build(url)
    _age(url)
    store = open_store(url)
    try:
        assert _meta(url, "catalog_fingerprint") == catalog_fingerprint(folder)
        assert catalog_is_current(store) is True
    finally:
        store.dispose()


def test_a_store_with_lab_data_is_not_rebuilt_and_check_says_it_is_out_of_date(tmp_path, monkeypatch):
    from db.check import check_store
    from db.labdata import add_materials
    from db.store import build, catalog_is_current, open_store
    from materials.records import MaterialRec, SourceRec, ValueRec

    monkeypatch.setenv("HOLDOFF_CATALOG", str(MINI))
    url = f"sqlite:///{tmp_path / 's.sqlite'}"
    build(url)
    store = open_store(url)
    rec = MaterialRec(key="bench-film", name="Bench film", family="polymer-film", origin="lab",
                      values=[ValueRec(property="relative_permittivity", value=2.2, source="lab-b",
                                       temperature_K=298.15)])
    store.write(lambda s: add_materials(s, [rec], {"lab-b": SourceRec(key="lab-b", kind="lab", citation="bench")}))
    store.dispose()
    _age(url)
    store = open_store(url)
    try:
        assert "bench-film" in _keys(store)
        assert _meta(url, "catalog_fingerprint") == "an-older-catalog"
        assert catalog_is_current(store) is False
        assert any("older catalog" in f.message for f in check_store(store))
    finally:
        store.dispose()


def test_a_store_built_from_another_folder_is_left_alone(tmp_path, monkeypatch):
    from db.check import check_store
    from db.store import build, catalog_is_current, open_store

    url = f"sqlite:///{tmp_path / 's.sqlite'}"
    build(url, catalog_dir=MINI)
    assert _meta(url, "catalog_dir") == str(MINI.resolve())
    monkeypatch.delenv("HOLDOFF_CATALOG", raising=False)  # the shipped catalog is in use now
    store = open_store(url)
    try:
        assert _keys(store) == ["mini-air", "mini-film", "mini-glass", "mini-x7r"]
        assert catalog_is_current(store) is None
        assert not any("older catalog" in f.message for f in check_store(store))
    finally:
        store.dispose()


def test_the_shipped_catalog_records_no_folder(tmp_path):
    from db.store import build

    url = f"sqlite:///{tmp_path / 's.sqlite'}"
    build(url)
    assert _meta(url, "catalog_dir") is None


def _corrected_store(tmp_path, monkeypatch, cli):
    """A catalog store in which a user corrected polypropylene's permittivity, citing a new paper."""
    from materials.catalog_io import CATALOG_DIR

    folder = tmp_path / "catalog"
    shutil.copytree(CATALOG_DIR, folder)
    monkeypatch.setenv("HOLDOFF_CATALOG", str(folder))
    url = f"sqlite:///{tmp_path / 's.sqlite'}"
    record = tmp_path / "correction.toml"
    record.write_text('''key = "polypropylene-bopp"
name = "Biaxially oriented polypropylene film (BOPP, capacitor grade)"
family = "polymer-film"

[[value]]
property = "relative_permittivity"
value = 2.25
temperature = "25 degC"
frequency = "1 kHz"
source = "a-users-paper-2026"
''', encoding="utf-8")
    (tmp_path / "sources.toml").write_text('''[a-users-paper-2026]
kind = "paper"
citation = "A. User, 'A corrected permittivity', Journal of Tests 1, 1 (2026), doi:10.0000/test"
''', encoding="utf-8")
    code, out, err = cli(["add", str(record)], db=url, catalog=folder)
    assert code == 0, err
    return url, folder


def test_a_users_correction_survives_a_catalog_upgrade(tmp_path, monkeypatch, cli):
    """A user's value and source on a catalog material are user data: a changed catalog never discards them."""
    url, folder = _corrected_store(tmp_path, monkeypatch, cli)
    _age(url)   # as if the shipped catalog had changed since the build
    code, out, err = cli(["show", "polypropylene-bopp", "--json"], db=url, catalog=folder)
    assert code == 0, err
    assert "a-users-paper-2026" in out
    code, out, err = cli(["db", "init"], db=url, catalog=folder)
    assert code == 2 and "db init --force" in err and "added value" in err
    code, out, err = cli(["show", "polypropylene-bopp", "--json"], db=url, catalog=folder)
    assert "a-users-paper-2026" in out
