"""The text bundle: dump → load into an empty store → dump is byte-identical, on SQLite and PostgreSQL and across."""

from __future__ import annotations

import json
import math
import struct
from dataclasses import fields

import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

import pg


def _dump(url, path) -> bytes:
    from db.bundle import dump_store
    from db.store import open_store

    store = open_store(url, create=False)
    try:
        dump_store(store, path)
    finally:
        store.dispose()
    return path.read_bytes()


def _everything(url):
    """What the query layer sees of a store, ids left out: materials with all values (retired too) and sources."""
    from db.query import load_materials, sources
    from db.store import open_store

    store = open_store(url, create=False)
    try:
        with store.session() as s:
            mats = load_materials(s, include_retired=True)
            srcs = sources(s)
    finally:
        store.dispose()
    # Values sorted here: the query layer's ORDER BY puts NULL conditions first on SQLite, last on PostgreSQL.
    return ([(m.key, m.name, m.family, m.form, m.description, m.origin, m.response,
              sorted(({f.name: getattr(x, f.name) for f in fields(x) if f.name != "id"} for x in m.values),
                     key=repr))
             for m in mats], srcs)


def test_round_trip_is_byte_identical(backend_url, tmp_path):
    from db.bundle import load_bundle

    store = pg.sample_store(backend_url)
    store.dispose()
    first = _dump(backend_url, tmp_path / "first.jsonl")
    copy = f"sqlite:///{tmp_path / 'copy.sqlite'}"
    n = load_bundle(copy, tmp_path / "first.jsonl")
    assert n == len(first.splitlines()) - 2
    assert _dump(copy, tmp_path / "second.jsonl") == first
    assert _everything(copy) == _everything(backend_url)


def test_bundle_holds_everything(tmp_path):
    store = pg.sample_store(f"sqlite:///{tmp_path / 's.sqlite'}")
    store.dispose()
    lines = [json.loads(x) for x in _dump(f"sqlite:///{tmp_path / 's.sqlite'}", tmp_path / "b.jsonl").splitlines()]
    head, body, end = lines[0], lines[1:-1], lines[-1]
    assert head == {"format": "holdoff-bundle", "version": 1, "schema_revision": "0004"}
    assert end == {"type": "end", "records": len(body)}
    kinds = [r["type"] for r in body]
    assert kinds == sorted(kinds, key=["meta", "source", "material", "breakdown_set", "loop", "value"].index)
    sets = {r["label"]: r for r in body if r["type"] == "breakdown_set"}
    assert len(sets["25 °C, 3 µm"]["points"]) == 25
    assert [p[1] for p in sets[pg.HOSTILE]["points"]] == [1 / 3, 5e-324, 1.7976931348623157e308, 0.0,
                                                          2.2250738585072014e-308]
    assert math.copysign(1, sets[pg.HOSTILE]["points"][3][1]) == 1  # −0.0 is written unsigned
    retired = [r for r in body if r["type"] == "value" and r["retired_at"]]
    assert retired and retired[0]["retired_reason"] == "re-measured"
    assert any(r["type"] == "meta" and r["key"] == "lab_note" for r in body)
    assert all(r["key"] != "schema_revision" for r in body if r["type"] == "meta")


@pytest.mark.postgres
def test_sqlite_to_postgres_and_back(pg_url, tmp_path):
    from db.bundle import load_bundle
    from db.models import BreakdownPoint, BreakdownSet
    from db.store import bulk_insert

    src = f"sqlite:///{tmp_path / 'src.sqlite'}"
    store = pg.sample_store(src)
    with store.session() as s:  # a set larger than one load batch, so that batches split its points
        big = BreakdownSet(material_id=1, label="big", source_id=1, file_name="", sha256="0" * 64)
        s.add(big)
        s.flush()
        bulk_insert(s, BreakdownPoint.__table__, [{"set_id": big.id, "seq": i, "field_V_per_m": 4e8 + i / 7,
                                                   "censored": i % 9 == 0, "thickness_m": None}
                                                  for i in range(12_000)])
    store.dispose()
    a = _dump(src, tmp_path / "a.jsonl")
    load_bundle(pg_url, tmp_path / "a.jsonl")
    assert _dump(pg_url, tmp_path / "b.jsonl") == a
    back = f"sqlite:///{tmp_path / 'back.sqlite'}"
    load_bundle(back, tmp_path / "b.jsonl")
    assert _dump(back, tmp_path / "c.jsonl") == a
    assert _everything(pg_url) == _everything(src) == _everything(back)
    # New rows after a load get fresh ids: the PostgreSQL sequences were moved past the loaded ones.
    from db.models import Source
    from db.store import open_store

    store = open_store(pg_url, create=False)
    try:
        with store.session() as s:
            s.add(Source(key="after-load", kind="lab", citation="added after loading a bundle", note=""))
    finally:
        store.dispose()


def test_cli_dump_and_load(tmp_path):
    from typer.testing import CliRunner

    from cli.app import app

    src = f"sqlite:///{tmp_path / 'src.sqlite'}"
    pg.sample_store(src).dispose()
    run = CliRunner().invoke
    out = tmp_path / "bundle.jsonl"
    r = run(app, ["--db", src, "db", "dump", str(out)])
    assert r.exit_code == 0, r.output
    first = out.read_bytes()
    r = run(app, ["--db", src, "db", "dump", str(out)])
    assert r.exit_code == 2 and "exists" in r.stderr and "--force" in r.stderr
    assert out.read_bytes() == first
    assert run(app, ["--db", src, "db", "dump", str(out), "--force"]).exit_code == 0
    dst = f"sqlite:///{tmp_path / 'dst.sqlite'}"
    r = run(app, ["--db", dst, "db", "load", str(out)])
    assert r.exit_code == 0, r.output
    assert f"{len(first.splitlines()) - 2} records" in r.stdout
    r = run(app, ["--db", dst, "db", "load", str(out)])
    assert r.exit_code == 2 and "not empty" in r.stderr
    assert run(app, ["--db", dst, "db", "check"]).exit_code == 0
    assert _dump(dst, tmp_path / "again.jsonl") == first


@pytest.mark.parametrize("edit, message", [
    (lambda lines: lines[:-1], "no end line"),
    (lambda lines: lines[:1] + lines[2:], "end line counts"),  # a meta line lost
    (lambda lines: lines[:2] + ["{not json"] + lines[2:], "not JSON"),
    (lambda lines: ['{"format": "other", "version": 1}'] + lines[1:], "not a holdoff-bundle"),
    (lambda lines: [lines[0].replace('"version": 1', '"version": 9')] + lines[1:], "version 9"),
    (lambda lines: [lines[0]] + [x.replace('"source": "lab-bench-7"', '"source": "nowhere"') for x in lines[1:]],
     "source 'nowhere' is not defined"),
    (lambda lines: [lines[0]] + lines[2:-1] + [lines[1], lines[-1]], "records go in the order"),
])
def test_bad_bundle_changes_nothing(tmp_path, edit, message):
    from db.bundle import load_bundle
    from materials.errors import InputError

    src = f"sqlite:///{tmp_path / 'src.sqlite'}"
    pg.sample_store(src).dispose()
    lines = _dump(src, tmp_path / "ok.jsonl").decode().splitlines()
    bad = tmp_path / "bad.jsonl"
    bad.write_text("\n".join(edit(lines)) + "\n", encoding="utf-8")
    with pytest.raises(InputError, match=message):
        load_bundle(f"sqlite:///{tmp_path / 'new.sqlite'}", bad)
    assert not (tmp_path / "new.sqlite").exists()  # the file the load would have created is gone again


def test_bundle_names_every_column():
    """Lossless by construction: every column of every table is written, or is an id/key the bundle replaces."""
    from db import bundle
    from db.models import Base

    written = {bundle.TABLES[k]: set(v) | set(bundle.REFERENCES) for k, v in bundle.FIELDS.items()}
    for kind, (table, fk) in bundle.POINT_TABLES.items():
        written[table] = set(bundle.POINT_COLUMNS[kind]) | {fk}
    for name, table in Base.metadata.tables.items():
        cols = {c.name for c in table.columns} - {"id"}
        assert cols <= written[name] and not (written[name] - cols - set(bundle.REFERENCES)), name


_text = st.text(st.characters(blacklist_categories=("Cs",), blacklist_characters="\x00"), max_size=30)


@settings(max_examples=20, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(values=st.lists(st.floats(allow_nan=False, allow_infinity=False), min_size=1, max_size=8),
       note=_text, name=_text)
def test_dump_then_load_is_the_identity(tmp_path_factory, values, note, name):
    """Property (hypothesis): any finite doubles and any text survive dump → load bit for bit (zero unsigned)."""
    from db.bundle import load_bundle
    from db.models import Material, PropertyValue, Source
    from db.store import empty_store

    d = tmp_path_factory.mktemp("prop")
    store = empty_store(f"sqlite:///{d / 'a.sqlite'}")
    with store.session() as s:
        src = Source(key="s", kind="invented", citation=note or "c", note=note)
        mat = Material(key="m", name=name, family="composite", form=note, description="", origin="user")
        s.add_all([src, mat])
        s.flush()
        s.add_all([PropertyValue(material_id=mat.id, property="density", value=v, source_id=src.id, note=note)
                   for v in values])
    store.dispose()
    a = _dump(f"sqlite:///{d / 'a.sqlite'}", d / "a.jsonl")
    load_bundle(f"sqlite:///{d / 'b.sqlite'}", d / "a.jsonl")
    assert _dump(f"sqlite:///{d / 'b.sqlite'}", d / "b.jsonl") == a
    got = [v["value"] for v in _everything(f"sqlite:///{d / 'b.sqlite'}")[0][0][7]]
    assert sorted(struct.pack("<d", x) for x in got) == sorted(struct.pack("<d", x + 0.0) for x in values)
