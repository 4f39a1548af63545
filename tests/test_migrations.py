"""Alembic migrations: the models and the migrations describe one schema; an old store upgrades with its data."""

from __future__ import annotations

import contextlib
import datetime as dt

import pytest

import pg


def _engine(url):
    from db.engine import make_engine

    return make_engine(url)


def _migrate(url, revision="head"):
    from alembic import command

    from db.migrate import config

    engine = _engine(url)
    try:
        with engine.begin() as conn:
            command.upgrade(config(connection=conn), revision)
    finally:
        engine.dispose()


@contextlib.contextmanager
def _other_store(url, tmp_path):
    """A second empty store on the same backend as ``url``."""
    if url.startswith("sqlite"):
        yield f"sqlite:///{tmp_path / 'other.sqlite'}"
    else:
        with pg.fresh_schema(pg.require_pg()) as other:
            yield other


def _reflect(url) -> dict:
    """Every table's columns, checks, uniques, indexes and foreign keys as the database itself reports them."""
    from sqlalchemy import inspect

    engine = _engine(url)
    try:
        insp = inspect(engine)
        out = {}
        for t in sorted(insp.get_table_names()):
            if t == "alembic_version":
                continue
            out[t] = {
                "columns": [(c["name"], str(c["type"]), c["nullable"]) for c in insp.get_columns(t)],
                "checks": sorted((c["name"], c["sqltext"]) for c in insp.get_check_constraints(t)),
                "uniques": sorted((u["name"], tuple(u["column_names"])) for u in insp.get_unique_constraints(t)),
                "indexes": sorted((i["name"], tuple(i["column_names"]), bool(i["unique"]))
                                  for i in insp.get_indexes(t)),
                "fks": sorted((f["name"], tuple(f["constrained_columns"]), f["referred_table"],
                               (f.get("options") or {}).get("ondelete")) for f in insp.get_foreign_keys(t)),
                "pk": insp.get_pk_constraint(t)["constrained_columns"],
            }
        return out
    finally:
        engine.dispose()


def test_models_and_migrations_describe_one_schema(backend_url, tmp_path):
    """Alembic's autogenerate finds nothing to change, and the two databases reflect identically."""
    from alembic.autogenerate import compare_metadata
    from alembic.runtime.migration import MigrationContext

    from db.models import Base

    _migrate(backend_url)
    engine = _engine(backend_url)
    try:
        with engine.connect() as conn:
            ctx = MigrationContext.configure(conn, opts={"compare_type": True, "compare_server_default": True})
            assert compare_metadata(ctx, Base.metadata) == []
    finally:
        engine.dispose()
    with _other_store(backend_url, tmp_path) as other:
        engine = _engine(other)
        Base.metadata.create_all(engine)
        engine.dispose()
        # autogenerate does not compare CHECK constraints: a vocabulary change without a revision shows here.
        assert _reflect(backend_url) == _reflect(other)


def _fill_at_first_revision(url) -> None:
    """Rows in every table, written with plain SQL against the 0001 schema (frozen, like the revision itself)."""
    from sqlalchemy import text

    t = dt.datetime(2026, 1, 2, 3, 4, 5, 678901)
    engine = _engine(url)
    try:
        with engine.begin() as c:
            c.execute(text("INSERT INTO meta (key, value) VALUES ('schema_revision', '0001'), ('note', :n)"),
                      {"n": pg.HOSTILE})
            c.execute(text("INSERT INTO source (id, key, kind, citation, note) VALUES (1, 'lab-x', 'lab', :c, '')"),
                      {"c": "Bench notes, run 4"})
            c.execute(text("INSERT INTO material (id, key, name, family, form, description, origin, response) "
                           "VALUES (1, 'film-x', :n, 'polymer-film', '', '', 'lab', 'linear')"), {"n": pg.HOSTILE})
            c.execute(text('INSERT INTO breakdown_set (id, material_id, label, "thickness_m", "area_m2", '
                           '"temperature_K", waveform, "ramp_V_per_s", source_id, file_name, sha256, created_at) '
                           "VALUES (1, 1, 'set 1', 3e-6, 1e-4, 298.15, 'dc', 500, 1, 'a.csv', :h, :t)"),
                      {"h": "0" * 64, "t": t})
            c.execute(text('INSERT INTO breakdown_point (set_id, seq, "field_V_per_m", censored, thickness_m) '
                           "VALUES (1, :i, :e, :c, NULL)"),
                      [{"i": i, "e": 5e8 + i * 0.1, "c": i == 3} for i in range(40)])
            c.execute(text('INSERT INTO loop (id, material_id, label, "temperature_K", "frequency_Hz", thickness_m, '
                           "source_id, file_name, sha256, created_at) VALUES (1, 1, 'loop 1', NULL, 10, 1e-5, 1, '', "
                           ":h, :t)"), {"h": "1" * 64, "t": t})
            c.execute(text('INSERT INTO loop_point (loop_id, seq, "field_V_per_m", "polarization_C_per_m2") '
                           "VALUES (1, :i, :e, :p)"), [{"i": i, "e": i * 1e6, "p": i * 0.01} for i in range(5)])
            c.execute(text('INSERT INTO property_value (id, material_id, property, value, low, high, "temperature_K", '
                           '"frequency_Hz", "field_V_per_m", thickness_m, area_m2, source_id, note, '
                           "breakdown_set_id, loop_id, created_at, retired_at, retired_reason) VALUES "
                           "(1, 1, 'breakdown_field', 6e8, 5.8e8, 6.2e8, 298.15, NULL, NULL, 3e-6, 1e-4, 1, 'fit', 1, "
                           "NULL, :t, NULL, NULL), "
                           "(2, 1, 'relative_permittivity', 3.1, NULL, NULL, 298.15, 1000, NULL, NULL, NULL, 1, '', "
                           "NULL, NULL, :t, :t, 're-measured'), "
                           "(3, 1, 'relative_permittivity', 3.05, NULL, NULL, 298.15, 1000, NULL, NULL, NULL, 1, '', "
                           "NULL, NULL, :t, NULL, NULL), "
                           "(4, 1, 'efficiency', 0.9, NULL, NULL, NULL, NULL, 2e7, NULL, NULL, 1, '', NULL, 1, :t, "
                           "NULL, NULL)"), {"t": t})
    finally:
        engine.dispose()


def test_upgrade_from_the_first_revision_keeps_every_row(backend_url, tmp_path):
    from sqlalchemy import inspect

    from db.migrate import upgrade_store

    from db.bundle import dump_store
    from db.store import open_store

    _migrate(backend_url, "0001")
    _fill_at_first_revision(backend_url)

    assert upgrade_store(backend_url) == "0004"
    store = open_store(backend_url, create=False)
    try:
        engine = store.engine
        names = {i["name"] for i in inspect(engine).get_indexes("property_value")}
        assert {"ix_property_value_source_id", "ix_property_value_breakdown_set_id",
                "ix_property_value_loop_id"} <= names
        from db.query import load_materials

        with store.session() as s:
            (mat,) = load_materials(s, include_retired=True)
        assert mat.name == pg.HOSTILE
        assert sorted((v.property, v.value, v.retired_reason) for v in mat.values) == [
            ("breakdown_field", 6e8, None), ("efficiency", 0.9, None),
            ("relative_permittivity", 3.05, None), ("relative_permittivity", 3.1, "re-measured")]
        assert {v.breakdown_set for v in mat.values} == {"set 1", None}
        bundle = tmp_path / "after.jsonl"
        dump_store(store, bundle)
    finally:
        store.dispose()
    import json

    recs = [json.loads(x) for x in bundle.read_text(encoding="utf-8").splitlines()]
    (bset,) = [r for r in recs if r.get("type") == "breakdown_set"]
    assert [p[1] for p in bset["points"]] == [5e8 + i * 0.1 for i in range(40)]
    assert [p[2] for p in bset["points"]].count(True) == 1
    (loop,) = [r for r in recs if r.get("type") == "loop"]
    assert len(loop["points"]) == 5 and loop["created_at"] == "2026-01-02T03:04:05.678901"
    assert {"type": "meta", "key": "note", "value": pg.HOSTILE} in recs
    engine = _engine(backend_url)
    from sqlalchemy import text

    with engine.connect() as c:
        assert c.execute(text("SELECT value FROM meta WHERE key = 'schema_revision'")).scalar() == "0004"
    engine.dispose()


def test_downgrade_and_upgrade_again(tmp_path):
    from alembic import command

    from db.migrate import config, current_revision, upgrade_store

    url = f"sqlite:///{tmp_path / 's.sqlite'}"
    _migrate(url, "0001")
    _fill_at_first_revision(url)
    assert upgrade_store(url) == "0004"
    engine = _engine(url)
    with engine.begin() as c:
        command.downgrade(config(connection=c), "0001")
        assert current_revision(c) == "0001"
    engine.dispose()
    assert upgrade_store(url) == "0004"


def test_store_built_before_migrations_is_stamped_then_upgraded(tmp_path):
    """A store with no alembic_version table takes its revision from meta, then upgrades."""
    from sqlalchemy import text

    from db.migrate import upgrade_store

    url = f"sqlite:///{tmp_path / 's.sqlite'}"
    _migrate(url, "0001")
    _fill_at_first_revision(url)
    engine = _engine(url)
    with engine.begin() as c:
        c.execute(text("DROP TABLE alembic_version"))
    engine.dispose()
    assert upgrade_store(url) == "0004"


def test_built_store_is_at_head_and_cli_upgrade_says_so(tmp_path):
    from typer.testing import CliRunner

    from cli.app import app
    from db.migrate import current_revision, head_revision
    from db.store import build

    url = f"sqlite:///{tmp_path / 's.sqlite'}"
    build(url, catalog_dir=pg.MINI_CATALOG)
    engine = _engine(url)
    with engine.connect() as c:
        assert current_revision(c) == head_revision() == "0004"
    engine.dispose()
    r = CliRunner().invoke(app, ["--db", url, "db", "upgrade"])
    assert r.exit_code == 0 and "revision 0004" in r.stdout


def test_upgrade_refuses_missing_empty_and_newer_stores(tmp_path):
    from sqlalchemy import text

    from db.migrate import upgrade_store
    from materials.errors import StoreError

    with pytest.raises(StoreError, match="no store"):
        upgrade_store(f"sqlite:///{tmp_path / 'absent.sqlite'}")
    empty = tmp_path / "empty.sqlite"
    _engine(f"sqlite:///{empty}").connect().close()
    with pytest.raises(StoreError, match="empty"):
        upgrade_store(f"sqlite:///{empty}")
    url = f"sqlite:///{tmp_path / 's.sqlite'}"
    _migrate(url)
    engine = _engine(url)
    with engine.begin() as c:
        c.execute(text("UPDATE alembic_version SET version_num = '0999'"))
    engine.dispose()
    with pytest.raises(StoreError, match="0999.*upgrade holdoff"):
        upgrade_store(url)


def test_an_old_store_is_refused_until_upgraded(tmp_path):
    from db.migrate import head_revision, upgrade_store
    from db.store import SCHEMA_REVISION, open_store
    from materials.errors import StoreError

    assert SCHEMA_REVISION == head_revision()
    url = f"sqlite:///{tmp_path / 's.sqlite'}"
    _migrate(url, "0001")
    _fill_at_first_revision(url)
    with pytest.raises(StoreError, match="revision 0001.*holdoff db upgrade"):
        open_store(url)
    upgrade_store(url)
    open_store(url, create=False).dispose()
