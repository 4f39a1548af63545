"""Benchmark: importing 10⁵ breakdown points into a SQLite store, side by side with bare sqlite3 executemany.

Goal: the import of the points within 2× of a bare ``sqlite3`` ``executemany`` of the same rows into the
same table of the same kind of file (WAL, synchronous NORMAL, foreign keys on — the store's own pragmas).

Timed, each on a fresh copy of one freshly built store, median of the repetitions:

- reference: ``sqlite3`` executemany of the (set_id, seq, field, censored, thickness) rows, one transaction;
- ORM bulk insert: ``session.execute(insert(BreakdownPoint), dicts)`` of the same rows, for comparison (the import
  does not use it: on SQLite it hands the rows to the driver's executemany);
- import: :func:`db.labdata.import_breakdown` of the parsed file (source, set, points, Weibull fit, derived rows)
  — the figure the goal is about;
- parse + import: reading the CSV file as well (what ``holdoff breakdown import`` does).

Run: ``.venv/bin/python tests/bench/bench_import.py [N] [REPEATS]``.
"""

from __future__ import annotations

import shutil
import sqlite3
import statistics
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))
sys.path.insert(0, str(ROOT / "tests"))


def _fresh(template: Path, work: Path, i: int) -> Path:
    path = work / f"run{i}.sqlite"
    shutil.copyfile(template, path)
    return path


def _bare(path: Path, rows) -> float:
    con = sqlite3.connect(path, isolation_level=None)
    con.execute("PRAGMA foreign_keys = ON")
    con.execute("PRAGMA journal_mode = WAL")
    con.execute("PRAGMA synchronous = NORMAL")
    t0 = time.perf_counter()
    con.execute("BEGIN IMMEDIATE")
    con.execute("INSERT INTO breakdown_set (id, material_id, label, waveform, source_id, file_name, sha256, "
                "created_at) VALUES (1, 1, 'bench', 'dc', 1, 'bench.csv', 'x', '2024-01-01 00:00:00')")
    con.executemany("INSERT INTO breakdown_point (set_id, seq, field_V_per_m, censored, thickness_m) "
                    "VALUES (?, ?, ?, ?, ?)", rows)
    con.execute("COMMIT")
    dt = time.perf_counter() - t0
    con.close()
    return dt


def _points(path: Path, rows) -> float:
    from sqlalchemy import insert

    from db.models import BreakdownPoint, BreakdownSet
    from db.store import open_store

    st = open_store(f"sqlite:///{path}", create=False)
    try:
        t0 = time.perf_counter()
        with st.session() as s:
            s.add(BreakdownSet(id=1, material_id=1, label="bench", waveform="dc", source_id=1,
                               file_name="bench.csv", sha256="x"))
            s.flush()
            s.execute(insert(BreakdownPoint), [
                {"set_id": r[0], "seq": r[1], "field_V_per_m": r[2], "censored": r[3], "thickness_m": r[4]}
                for r in rows])
        return time.perf_counter() - t0
    finally:
        st.dispose()


def _import(path: Path, csv_path: Path, data=None) -> float:
    from db.labdata import import_breakdown
    from db.store import open_store
    from materials.labfiles import read_breakdown

    st = open_store(f"sqlite:///{path}", create=False)
    try:
        t0 = time.perf_counter()
        parsed = data if data is not None else read_breakdown(csv_path)
        with st.session() as s:
            import_breakdown(s, parsed, material_key="fixture-film")
        return time.perf_counter() - t0
    finally:
        st.dispose()


def main(n: int = 100_000, repeats: int = 5) -> None:
    import numpy as np

    from lab_support import build_store, write_set
    from materials.labfiles import read_breakdown

    work = Path(tempfile.mkdtemp(prefix="holdoff-bench-"))
    try:
        url = build_store(work)
        template = Path(url.removeprefix("sqlite:///"))
        x = 640.0 * np.random.default_rng(1).weibull(12.0, n)
        cens = np.random.default_rng(2).random(n) < 0.05
        csv_path = write_set(work / "bench.csv", x, cens, header={"temperature": "25", "area": "1 cm^2"})
        data = read_breakdown(csv_path)
        rows = [(1, i, e, bool(c), None) for i, (e, c) in
                enumerate(zip(data.fields_V_per_m.tolist(), data.censored.tolist(), strict=True))]
        times = {"reference: sqlite3 executemany": [], "ORM bulk insert (comparison)": [], "import (parsed data)": [],
                 "parse + import": []}
        k = 0
        for _ in range(repeats):
            for name in times:
                k += 1
                path = _fresh(template, work, k)
                if name.startswith("reference"):
                    times[name].append(_bare(path, rows))
                elif name.startswith("ORM"):
                    times[name].append(_points(path, rows))
                elif name.startswith("import"):
                    times[name].append(_import(path, csv_path, data))
                else:
                    times[name].append(_import(path, csv_path))
                for suffix in ("", "-wal", "-shm"):
                    Path(str(path) + suffix).unlink(missing_ok=True)
        ref = statistics.median(times["reference: sqlite3 executemany"])
        print(f"{n} breakdown points into SQLite, median of {repeats} (goal: import within 2x of the reference)")
        print(f"{'what':34s} {'median ms':>10s} {'ratio':>7s}")
        for name, ts in times.items():
            med = statistics.median(ts)
            print(f"{name:34s} {med * 1e3:10.1f} {med / ref:7.2f}")
    finally:
        shutil.rmtree(work, ignore_errors=True)


def test_bench_import():
    main()


if __name__ == "__main__":
    main(*(int(a) for a in sys.argv[1:3]))
