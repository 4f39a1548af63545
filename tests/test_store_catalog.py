"""When a store is rebuilt from the catalog on open, and when it is left alone.

A store holding nothing but an older build of the catalog in use is rebuilt (nothing is lost); one holding lab
data is never rebuilt; one built from another catalog folder (a curator's) is neither rebuilt from the shipped
catalog nor called out of date against it.
"""

from __future__ import annotations

import json

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


def test_a_store_with_lab_data_is_not_rebuilt_but_brought_up_to_date(tmp_path, monkeypatch):
    from db.check import check_store
    from db.store import catalog_is_current, open_store
    from materials.catalog_io import catalog_fingerprint

    url = _lab_store(tmp_path, monkeypatch)
    _age(url)
    store = open_store(url)
    try:
        assert "bench-film" in _keys(store)
        assert store.changes == []  # the catalog's content did not change: nothing to merge
        assert _meta(url, "catalog_fingerprint") == catalog_fingerprint(MINI)
        assert catalog_is_current(store) is True
        assert not any("older catalog" in f.message for f in check_store(store))
    finally:
        store.dispose()


def _lab_store(tmp_path, monkeypatch) -> str:
    """A store built from the mini catalog with one lab material added."""
    from db.labdata import add_materials
    from db.store import build, open_store
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
    return url


def test_a_store_from_an_older_holdoff_with_lab_data_is_left_alone_and_check_says_so(tmp_path, monkeypatch):
    """A store that does not record what its catalog wrote cannot be merged: it keeps its catalog and is flagged."""
    from db.check import check_store
    from db.store import catalog_is_current, open_store

    url = _lab_store(tmp_path, monkeypatch)
    _age(url)
    engine = create_engine(url)
    with engine.begin() as c:
        c.execute(text("DELETE FROM meta WHERE key IN ('catalog_rows', 'catalog_source_keys')"))
    engine.dispose()
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


def _bopp(cli, url, folder) -> dict:
    code, out, err = cli(["show", "polypropylene-bopp", "--json", "--history"], db=url, catalog=folder)
    assert code == 0, err
    return json.loads(out)


def test_a_users_correction_survives_a_catalog_upgrade(tmp_path, monkeypatch, cli):
    """A user's value and source on a catalog material are user data: 'db init' without --force keeps them and
    merges the catalog under them, saying so."""
    url, folder = _corrected_store(tmp_path, monkeypatch, cli)
    _age(url)   # as if the shipped catalog had changed since the build
    before = _bopp(cli, url, folder)
    assert "a-users-paper-2026" in json.dumps(before)
    code, out, err = cli(["db", "init"], db=url, catalog=folder)
    assert code == 0, err
    assert "added value" in err and "added source" in err and "--force" in err and "merged" in out
    assert _bopp(cli, url, folder) == before


def _user_rows(show: dict) -> list[dict]:
    return [v for v in show["values"] if v["source"]["key"] == "a-users-paper-2026"]


NEW_FILM = """key = "zz-new-film"
name = "A film added by a later catalog"
family = "polymer-film"

[[value]]
property = "relative_permittivity"
value = 3.0
source = "callister-8e-t18-5"
"""


def test_a_catalog_change_is_merged_under_a_users_correction(tmp_path, monkeypatch, cli):
    """The catalog changes (one BOPP density edited, one material added) after a user corrected BOPP's
    permittivity citing a new paper: the next command merges the new catalog under the user's rows, retires the
    changed catalog row with the reason 'catalog update', adds the new material, says what changed, and the user's
    row and source are exactly as they were."""
    url, folder = _corrected_store(tmp_path, monkeypatch, cli)
    mine = _user_rows(_bopp(cli, url, folder))
    assert len(mine) == 1 and mine[0]["value"] == 2.25
    bopp = folder / "polypropylene-bopp.toml"
    bopp.write_text(bopp.read_text(encoding="utf-8").replace('value = "910 kg/m^3"', 'value = "911 kg/m^3"'),
                    encoding="utf-8")
    (folder / "zz-new-film.toml").write_text(NEW_FILM, encoding="utf-8")
    code, out, err = cli(["catalog", "--json"], db=url, catalog=folder)
    assert code == 0, err
    assert "zz-new-film" in {m["key"] for m in json.loads(out)}
    assert "merged it under your data" in err and "new material 'zz-new-film'" in err
    assert "1 catalog value(s) changed or dropped by the catalog: retired (catalog update)" in err
    after = _bopp(cli, url, folder)
    assert _user_rows(after) == mine  # the user's correction, untouched
    densities = [v for v in after["values"] if v["property"] == "density"]
    assert 911.0 in [v["value"] for v in densities if "retired_at" not in v]
    assert [(v["value"], v["retired_reason"]) for v in densities if "retired_at" in v] == [(910.0, "catalog update")]
    # the catalog permittivity the user corrected stays retired as the user left it, and is not added again
    retired = [v for v in after["values"] if v["property"] == "relative_permittivity" and "retired_at" in v]
    assert all(v["retired_reason"] == "superseded by holdoff add" for v in retired)
    code, out, err = cli(["catalog", "--json"], db=url, catalog=folder)
    assert code == 0 and "merged" not in err  # merged once
    code, out, err = cli(["db", "check"], db=url, catalog=folder)
    assert code == 0, out
