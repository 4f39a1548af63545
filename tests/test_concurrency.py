"""Four processes adding 250 material records each, at the same moment, end with exactly 1,000 and no error.

Each process writes its records in transactions of 25 (forty transactions in flight against each other) through
``Store.write``, which re-runs a transaction that lost a lock (SQLite) or a serialization check (PostgreSQL). All
four cite one lab source that none of them finds in the store at the start, so their first transactions race to
create it.
"""

from __future__ import annotations

import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

import pg
from procs import run_together

WORKERS = 4
PER_WORKER = 250
PER_TRANSACTION = 25
REPO = Path(__file__).resolve().parents[1]

WORKER = textwrap.dedent("""
    import sys
    from db.labdata import add_materials
    from db.store import open_store
    from materials.records import MaterialRec, SourceRec, ValueRec

    url, worker, n, chunk = sys.argv[1], int(sys.argv[2]), int(sys.argv[3]), int(sys.argv[4])
    sources = {"lab-shared": SourceRec(key="lab-shared", kind="lab", citation="Shared bench, concurrency test")}
    store = open_store(url, create=False)
    with store.session() as s:  # connect (and import everything) before the start signal
        pass
    print("ready", flush=True)
    sys.stdin.readline()
    recs = [MaterialRec(key=f"w{worker}-m{i:03d}", name=f"Worker {worker} film {i}", family="polymer-film",
                        origin="lab", values=[ValueRec(property="relative_permittivity", value=2.0 + i / 1000,
                                                       source="lab-shared", temperature_K=298.15)])
            for i in range(n)]
    for i in range(0, n, chunk):
        store.write(lambda s: add_materials(s, recs[i:i + chunk], sources))
    store.dispose()
    print("done", flush=True)
""")


def _run_workers(url: str) -> None:
    results = run_together(WORKER, [[url, str(w), str(PER_WORKER), str(PER_TRANSACTION)] for w in range(WORKERS)])
    for code, out, err in results:
        assert code == 0 and out.strip() == "done", err
        assert "Traceback" not in err, err


def test_four_writers_at_once_lose_nothing(backend_url):
    from sqlalchemy import func, select

    from db.check import check_store
    from db.models import Material, PropertyValue, Source
    from db.store import build, open_store

    build(backend_url, catalog_dir=pg.MINI_CATALOG)
    _run_workers(backend_url)
    store = open_store(backend_url, create=False)
    try:
        with store.session() as s:
            keys = s.execute(select(Material.key).where(Material.origin == "lab")).scalars().all()
            n_values = s.execute(select(func.count()).select_from(PropertyValue)
                                 .join(Source, PropertyValue.source_id == Source.id)
                                 .where(Source.key == "lab-shared")).scalar()
            n_shared = s.execute(select(func.count()).select_from(Source).where(Source.key == "lab-shared")).scalar()
        assert len(keys) == len(set(keys)) == WORKERS * PER_WORKER
        assert set(keys) == {f"w{w}-m{i:03d}" for w in range(WORKERS) for i in range(PER_WORKER)}
        assert n_values == WORKERS * PER_WORKER
        assert n_shared == 1
        assert [f for f in check_store(store) if f.level == "error"] == []
    finally:
        store.dispose()


def test_write_reruns_a_transaction_that_met_a_lock(tmp_path):
    """The retry itself: a writer that meets a held SQLite lock re-runs its transaction instead of failing."""
    import threading

    from sqlalchemy import event, func, select, text

    from db.engine import make_engine
    from db.models import Source
    from db.store import Store, build

    url = f"sqlite:///{tmp_path / 's.sqlite'}"
    build(url, catalog_dir=pg.MINI_CATALOG)
    holder = make_engine(url)
    conn = holder.connect()
    conn.execute(text("INSERT INTO meta (key, value) VALUES ('held', 'yes')"))  # holds the write lock
    engine = make_engine(url)

    @event.listens_for(engine, "connect")
    def _no_wait(dbapi_conn, _record):
        dbapi_conn.execute("PRAGMA busy_timeout = 0")  # meet the lock at once, so that write() must re-run

    store = Store(url=url, engine=engine)
    attempts = []

    def add(s):
        attempts.append(1)
        s.add(Source(key="after-lock", kind="lab", citation="written once the lock was released", note=""))

    timer = threading.Timer(0.3, lambda: (conn.commit(), conn.close()))
    timer.start()
    try:
        store.write(add)
    finally:
        timer.join()
    with store.session() as s:
        assert s.execute(select(func.count()).select_from(Source).where(Source.key == "after-lock")).scalar() == 1
    assert len(attempts) > 1
    store.dispose()
    holder.dispose()


OPENER = textwrap.dedent("""
    import sys
    from sqlalchemy import func, select
    from db.models import Material
    from db.store import open_store

    sys.stdin.readline()
    store = open_store(sys.argv[1])
    with store.session() as s:
        print(s.execute(select(func.count()).select_from(Material)).scalar(), flush=True)
    store.dispose()
""")


@pytest.mark.postgres
def test_two_first_opens_of_an_empty_server_build_it_once(pg_url):
    import os

    env = dict(os.environ, HOLDOFF_CATALOG=str(pg.MINI_CATALOG))
    procs = [subprocess.Popen([sys.executable, "-c", OPENER, pg_url], cwd=REPO, env=env, stdin=subprocess.PIPE,
                              stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True) for _ in range(2)]
    for p in procs:
        p.stdin.write("go\n")
        p.stdin.flush()
    outs = [p.communicate(timeout=60) for p in procs]
    assert [p.returncode for p in procs] == [0, 0], [err for _, err in outs]
    assert [out.strip() for out, _ in outs] == ["4", "4"]


IMPORTERS = 8


@pytest.mark.postgres
def test_eight_breakdown_imports_at_once_all_land(pg_url, tmp_path):
    """Eight ``holdoff breakdown import`` processes started together against one PostgreSQL store: their points go
    in by COPY inside SERIALIZABLE transactions that collide; every transaction that loses is re-run, so all eight
    sets land whole, and the eight first uses of the new lab material make it once."""
    import os

    import numpy as np

    from db.labdata import describe_sets, read_points
    from db.store import build, open_store
    from lab_support import write_set
    from materials.labfiles import read_breakdown

    build(pg_url, catalog_dir=pg.MINI_CATALOG)
    files = [write_set(tmp_path / f"run{i}.csv", 600 * np.random.default_rng(i).weibull(10.0, 3_000),
                       header={"temperature": f"{25 + 5 * i}", "area": "1 cm^2", "thickness": "3 um"})
             for i in range(IMPORTERS)]
    env = dict(os.environ, HOLDOFF_CATALOG=str(pg.MINI_CATALOG), COLUMNS="120")
    code = ("import sys; from cli.app import main; print('ready', flush=True); sys.stdin.readline(); "
            "sys.argv = ['holdoff', *sys.argv[1:]]; main()")
    results = run_together(code, [["--db", pg_url, "breakdown", "import", str(f), "--new-material",
                                   "Concurrency test film", "--family", "polymer-film"] for f in files],
                           env=env, timeout=300)
    for rc, _out, err in results:
        assert rc == 0 and "Traceback" not in err, err
    store = open_store(pg_url, create=False)
    try:
        with store.session() as s:
            sets = describe_sets(s, "concurrency-test-film")["breakdown_sets"]
            assert sorted(x["label"] for x in sets) == sorted(f"run{i}" for i in range(IMPORTERS))
            for i, f in enumerate(files):
                assert np.array_equal(read_points(s, "concurrency-test-film", f"run{i}")[0],
                                      read_breakdown(f).fields_V_per_m)
    finally:
        store.dispose()
