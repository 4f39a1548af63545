"""Importing 10⁵ breakdown points into PostgreSQL, side by side with bare psycopg (executemany and COPY).

Run as ``HOLDOFF_TEST_PG_URL=postgresql+psycopg://… python tests/bench/bench_pg_import.py`` (``source
.ci/postgres.sh start`` sets it) or ``pytest tests/bench/bench_pg_import.py -s -o addopts=""``. Each way commits
one transaction holding one set of 10⁵ points; the median of five runs is printed with its ratio to the bare
psycopg ``executemany`` and ``COPY`` of the same rows. Works in a private schema, dropped at the end.
"""

from __future__ import annotations

import os
import statistics
import sys
import time
import uuid
from pathlib import Path

N = 100_000
REPEATS = 5
sys.path.insert(0, str(Path(__file__).resolve().parents[2]))


def _fields():
    """Weibull-distributed breakdown fields (shape 10, scale 500 V/µm), as a lab series would be."""
    import numpy as np

    return 5e8 * np.random.default_rng(7).weibull(10.0, N)


def _libpq(url: str) -> str:
    from sqlalchemy.engine import make_url

    return make_url(url).set(drivername="postgresql").render_as_string(hide_password=False)


def _median(fn, reset) -> float:
    times = []
    for _ in range(REPEATS):
        reset()
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    reset()
    return statistics.median(times)


def bench(base_url: str) -> dict[str, float]:
    import numpy as np
    import psycopg
    from sqlalchemy import create_engine, insert, select, text

    from db.labdata import import_breakdown
    from db.models import BreakdownPoint, BreakdownSet, Material, Source
    from db.store import Store, bulk_insert, write_catalog
    from materials.labfiles import BreakdownFile, Conditions
    from materials.records import MaterialRec, SourceRec

    schema = f"bench_{uuid.uuid4().hex[:8]}"
    admin = create_engine(base_url, isolation_level="AUTOCOMMIT")
    with admin.connect() as c:
        c.execute(text(f"CREATE SCHEMA {schema}"))
    url = f"{base_url}{'&' if '?' in base_url else '?'}options=-csearch_path%3D{schema}"
    try:
        from db.engine import make_engine
        from db.models import Base

        engine = make_engine(url)
        Base.metadata.create_all(engine)
        store = Store(url=url, engine=engine)
        with store.session() as s:
            write_catalog(s, {"bench": SourceRec(key="bench", kind="invented", citation="benchmark rows")},
                          [MaterialRec(key="bench-film", name="Benchmark film", family="polymer-film")])
            mat = s.execute(select(Material.id)).scalar_one()
            src = s.execute(select(Source.id)).scalar_one()
            bset = BreakdownSet(material_id=mat, label="bench", source_id=src, file_name="", sha256="0" * 64)
            s.add(bset)
            s.flush()
            set_id = bset.id

        def clear_points():
            with engine.begin() as c:
                c.execute(text("DELETE FROM breakdown_point WHERE set_id = :s"), {"s": set_id})
                c.execute(text("DELETE FROM breakdown_set WHERE id <> :s"), {"s": set_id})
                c.execute(text("DELETE FROM source WHERE key <> 'bench'"))

        fields = _fields()
        rows = [(set_id, i, e, False, None) for i, e in enumerate(fields.tolist())]
        dicts = [dict(zip(("set_id", "seq", "field_V_per_m", "censored", "thickness_m"), r, strict=True)) for r in rows]
        data = BreakdownFile(path="bench.csv", sha256="1" * 64,
                             conditions=Conditions(label="bench import", thickness_m=3e-6, area_m2=1e-4,
                                                   temperature_K=298.15, kind="invented"),
                             fields_V_per_m=fields, censored=np.zeros(N, dtype=bool))

        def holdoff_import():
            with store.session() as s:
                import_breakdown(s, data, material_key="bench-film", force=True)

        def sqlalchemy_core():
            with engine.begin() as c:
                c.execute(insert(BreakdownPoint), dicts)

        def holdoff_bulk_insert():
            with engine.begin() as c:
                bulk_insert(c, BreakdownPoint.__table__, dicts)

        conn = psycopg.connect(_libpq(url))
        sql = ('INSERT INTO breakdown_point (set_id, seq, "field_V_per_m", censored, thickness_m) '
               "VALUES (%s, %s, %s, %s, %s)")

        def bare_executemany():
            with conn.transaction(), conn.cursor() as cur:
                cur.executemany(sql, rows)

        def bare_copy():
            with conn.transaction(), conn.cursor() as cur:
                with cur.copy('COPY breakdown_point (set_id, seq, "field_V_per_m", censored, thickness_m) '
                              "FROM STDIN") as cp:
                    for r in rows:
                        cp.write_row(r)

        results = {
            "holdoff import_breakdown (points + Weibull fit)": _median(holdoff_import, clear_points),
            "SQLAlchemy Core executemany (points only)": _median(sqlalchemy_core, clear_points),
            "holdoff db.store.bulk_insert (points only)": _median(holdoff_bulk_insert, clear_points),
            "bare psycopg executemany": _median(bare_executemany, clear_points),
            "bare psycopg COPY": _median(bare_copy, clear_points),
        }
        conn.close()
        engine.dispose()
    finally:
        with admin.connect() as c:
            c.execute(text(f"DROP SCHEMA {schema} CASCADE"))
        admin.dispose()
    em, cp = results["bare psycopg executemany"], results["bare psycopg COPY"]
    print(f"\n{N:,} breakdown points into PostgreSQL, one transaction, median of {REPEATS}")
    for name, t in results.items():
        print(f"  {name:50s} {t * 1e3:9.0f} ms   ×{t / em:5.2f} executemany   ×{t / cp:6.2f} COPY")
    return results


def test_bench_pg_import():
    import pytest

    url = os.environ.get("HOLDOFF_TEST_PG_URL")
    if not url:
        pytest.skip("HOLDOFF_TEST_PG_URL unset")
    bench(url)


if __name__ == "__main__":
    url = os.environ.get("HOLDOFF_TEST_PG_URL")
    if not url:
        sys.exit("set HOLDOFF_TEST_PG_URL (e.g. 'source .ci/postgres.sh start')")
    bench(url)
