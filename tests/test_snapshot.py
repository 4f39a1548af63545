"""The snapshot of a whole-store read: used again while the store is unchanged, never after a write.

Each test writes to the store between two reads, the way the program writes (a value added, a value retired, a
material added or deleted, a source added, a meta row changed), and checks that the second read equals a read of
the store with snapshots turned off, value for value; on SQLite and (marked postgres) PostgreSQL.
"""

from __future__ import annotations

import dataclasses
import datetime as dt

import numpy as np
import pytest

from db import query, snapshot
from pg import sample_store


@pytest.fixture
def store(backend_url, tmp_path, monkeypatch):
    monkeypatch.setenv("HOLDOFF_SNAPSHOTS", str(tmp_path / "snapshots"))
    monkeypatch.setattr(snapshot, "MIN_VALUES", 0)
    st = sample_store(backend_url)
    yield st
    st.dispose()


def _read(store):
    with store.reading() as conn:
        return query.load_table(conn)


def _fresh(store, monkeypatch):
    with monkeypatch.context() as m:
        m.setenv("HOLDOFF_SNAPSHOTS", "off")
        return _read(store)


def _same(a, b):
    for f in dataclasses.fields(a):
        if f.name == "_py":
            continue
        x, y = getattr(a, f.name), getattr(b, f.name)
        if isinstance(x, np.ndarray):
            np.testing.assert_array_equal(x, y, err_msg=f.name)
        else:
            assert x == y, f.name


def _count_reads(monkeypatch):
    calls = []
    real = query._read

    def spy(*args, **kw):
        calls.append(1)
        return real(*args, **kw)

    monkeypatch.setattr(query, "_read", spy)
    return calls


def test_an_unchanged_store_is_read_once(store, monkeypatch, tmp_path):
    calls = _count_reads(monkeypatch)
    first = _read(store)
    second = _read(store)
    assert len(calls) == 1 and list((tmp_path / "snapshots").glob("*.npz"))
    _same(first, second)
    _same(second, _fresh(store, monkeypatch))
    # the table from a snapshot gives the same records as one read from the store
    assert second.materials() == first.materials()


def _add_value(s):
    from db.models import Material, PropertyValue, Source

    mid = s.query(Material.id).order_by(Material.key).first()[0]
    sid = s.query(Source.id).first()[0]
    s.add(PropertyValue(material_id=mid, property="density", value=1234.5, source_id=sid, note="",
                        created_at=dt.datetime(2026, 1, 1)))


def _retire_only(s):
    from db.models import PropertyValue

    pv = s.query(PropertyValue).filter(PropertyValue.retired_at.is_(None)).order_by(PropertyValue.id).first()
    pv.retired_at, pv.retired_reason = dt.datetime(2026, 1, 2), "checked again"


def _add_material(s):
    from db.models import Material

    s.add(Material(key="zz-new-film", name="New film", family="polymer-film", form="", description="",
                   origin="user", response="linear"))


def _delete_material(s):
    from db.models import Material

    s.delete(s.query(Material).filter(Material.key == "lab-film-a").one())


def _add_source(s):
    from db.models import Source

    s.add(Source(key="zz-new-source", kind="paper", citation="A paper, 2026", note=""))


def _meta(s):
    from db.models import Meta

    s.add(Meta(key="zz_fact", value="changed"))


@pytest.mark.parametrize("write", [_add_value, _retire_only, _add_material, _delete_material, _add_source, _meta])
def test_a_write_between_two_reads_is_seen(store, monkeypatch, write):
    _read(store)
    calls = _count_reads(monkeypatch)
    store.write(write)
    after = _read(store)
    assert calls, "the store was written to, yet the snapshot was used"
    _same(after, _fresh(store, monkeypatch))
    done = len(calls)
    _same(_read(store), after)
    assert len(calls) == done, "the store was read again though nothing changed"


def test_filtered_reads_and_small_stores_take_no_snapshot(store, monkeypatch, tmp_path):
    with store.reading() as conn:
        query.load_table(conn, family="polymer-film")
    assert not list((tmp_path / "snapshots").glob("*.npz"))
    monkeypatch.setattr(snapshot, "MIN_VALUES", 10**9)
    _read(store)
    assert not list((tmp_path / "snapshots").glob("*.npz"))


def test_a_damaged_snapshot_is_ignored(store, monkeypatch, tmp_path):
    first = _read(store)
    for f in (tmp_path / "snapshots").glob("*.npz"):
        f.write_bytes(b"not a snapshot")
    calls = _count_reads(monkeypatch)
    _same(_read(store), first)
    assert calls


def test_family_filter_reads_only_that_family(store, monkeypatch):
    """On a store of 500 materials or more the family is chosen in the store; the table equals the whole table
    cut to that family."""
    from db.models import Material, PropertyValue, Source

    def many(s):
        sid = s.query(Source.id).first()[0]
        for i in range(520):
            m = Material(key=f"bulk-{i:03d}", name=f"bulk {i}", family="glass" if i % 2 else "mica", form="",
                         description="", origin="user", response="linear")
            s.add(m)
            s.flush()
            s.add(PropertyValue(material_id=m.id, property="relative_permittivity", value=5.0 + i / 1000,
                                source_id=sid, note="", created_at=dt.datetime(2026, 1, 1)))

    store.write(many)
    whole = _fresh(store, monkeypatch)
    with store.reading() as conn:
        glass = query.load_table(conn, family="glass")
    assert set(glass.families) == {"glass"} and len(glass) >= 260
    keep = [i for i, f in enumerate(whole.families) if f == "glass"]
    assert glass.keys == [whole.keys[i] for i in keep]
    assert glass.materials() == whole.materials(keep)
