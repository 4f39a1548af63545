"""Locks around a SQLite store: simultaneous first opens build it once and lose no write; a read takes no lock.

Without the build lock every process would build its own file and swap it in; a later swap would discard the
records an earlier process had already written to the file it built.
"""

from __future__ import annotations

import os
import textwrap

import pg
from procs import run_together

WORKERS = 4

WORKER = textwrap.dedent("""
    import os, sys
    from db.labdata import add_materials
    from materials.records import MaterialRec, SourceRec, ValueRec

    url, path, worker = sys.argv[1], sys.argv[2], int(sys.argv[3])
    import db.store  # import everything before the start signal
    print("ready", flush=True)
    sys.stdin.readline()
    store = db.store.open_store(url)
    inode = os.stat(path).st_ino
    src = {"lab-lock": SourceRec(key="lab-lock", kind="lab", citation="Build-lock test bench")}
    rec = MaterialRec(key=f"lock-w{worker}", name=f"Worker {worker} film", family="polymer-film", origin="lab",
                      values=[ValueRec(property="relative_permittivity", value=2.5, source="lab-lock",
                                       temperature_K=298.15)])
    store.write(lambda s: add_materials(s, [rec], src))
    store.dispose()
    print(inode, flush=True)
""")


def test_simultaneous_first_opens_build_once_and_keep_every_write(tmp_path):
    path = tmp_path / "team.sqlite"
    url = f"sqlite:///{path}"
    env = dict(os.environ, HOLDOFF_CATALOG=str(pg.MINI_CATALOG))
    results = run_together(WORKER, [[url, str(path), str(w)] for w in range(WORKERS)], env=env)
    for code, _out, err in results:
        assert code == 0, err
    inodes = {out.strip() for _code, out, _err in results}
    assert len(inodes) == 1, "the store file was built more than once"
    assert str(os.stat(path).st_ino) in inodes

    from db.query import load_materials
    from db.store import open_store

    store = open_store(url, create=False)
    try:
        with store.session() as s:
            keys = {m.key for m in load_materials(s, origin="lab")}
    finally:
        store.dispose()
    assert keys == {f"lock-w{w}" for w in range(WORKERS)}


def test_a_read_neither_waits_for_a_writer_nor_sees_its_uncommitted_rows(tmp_path):
    """Store.reading() takes no write lock on SQLite (WAL): a shortlist runs while another command writes."""
    import sqlite3
    import time

    from db.query import load_table
    from db.store import build, open_store

    path = tmp_path / "s.sqlite"
    url = f"sqlite:///{path}"
    build(url, catalog_dir=pg.MINI_CATALOG)
    store = open_store(url, create=False)
    writer = sqlite3.connect(path, isolation_level=None)
    try:
        writer.execute("BEGIN IMMEDIATE")  # another command holds the write lock...
        writer.execute("UPDATE material SET name = 'renamed' WHERE key = 'mini-film'")
        t0 = time.perf_counter()
        with store.reading() as conn:
            table = load_table(conn)
        assert time.perf_counter() - t0 < 5  # (a write-locking read would wait out the 30 s busy timeout)
        assert "renamed" not in table.names and len(table) == 4
    finally:
        writer.execute("ROLLBACK")
        writer.close()
        store.dispose()


def test_commands_answer_while_another_process_holds_a_long_write(tmp_path):
    """Opening the store, ``catalog``, ``shortlist``, ``show``, ``sources`` and ``db check`` take no write lock: each
    finishes while another process still holds its write transaction (held far longer than the 30 s busy timeout a
    write-locking open would wait out, then fail with exit code 3)."""
    import sqlite3
    import subprocess
    import sys

    from db.store import build
    from procs import REPO

    path = tmp_path / "s.sqlite"
    build(f"sqlite:///{path}", catalog_dir=pg.MINI_CATALOG)
    writer = sqlite3.connect(path, isolation_level=None)
    env = dict(os.environ, HOLDOFF_CATALOG=str(pg.MINI_CATALOG), COLUMNS="120")
    try:
        writer.execute("BEGIN IMMEDIATE")
        writer.execute("INSERT INTO meta (key, value) VALUES ('long-writer', 'holding')")
        for args in (["catalog"], ["shortlist", "--voltage", "800", "--tmin", "-40", "--tmax", "85",
                                   "--energy-density", "0.5"],
                     ["show", "mini-film"], ["sources"], ["db", "check"]):
            r = subprocess.run([sys.executable, "-m", "cli.app", "--db", str(path), *args], cwd=REPO, env=env,
                               capture_output=True, text=True, timeout=25)
            assert r.returncode in (0, 1), (args, r.stderr)
            assert "locked" not in r.stderr
        assert writer.in_transaction  # the writer held its lock the whole time
    finally:
        writer.execute("ROLLBACK")
        writer.close()
