"""Whole-command speed, each side by side with its reference, the two run in turn (A B A B …) in fresh processes,
with the median of the ratios pair by pair, so that a machine whose speed drifts cannot favour either side.

* ``holdoff --help`` against ``python -c "import typer"`` — goal within 1.5×;
* ``holdoff shortlist`` end to end on the catalog against a process that imports exactly the modules the shortlist
  loads (listed from a run of the command itself, so the reference can neither leave out a library the command
  needs nor add one it does not load) — goal within 1.3×;
* ``holdoff shortlist`` on catalog-shaped stores (invented variants of the catalog's materials: temperature curves,
  DC-bias curves, nonlinear materials) of 10,000 materials — goal under 1 s — and 100,000 — goal under 5 s. Each
  is timed with a snapshot of the store's columns (:mod:`db.snapshot`) and with snapshots off, paired in turn; the
  first figure is a command run again on an unchanged store, the second one after a write;
* ``holdoff shortlist`` on a synthetic store of 10,000 films (SQLite, and PostgreSQL when ``HOLDOFF_TEST_PG_URL``
  names a server).

Run as ``python tests/bench/bench_cli.py`` or ``make bench``; ``HOLDOFF_BENCH_BIG=0`` leaves out the
100,000-material store (building it and the runs on it take several minutes).
"""

from __future__ import annotations

import json
import os
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
PY = sys.executable
HOLDOFF = [PY, "-m", "cli.app"]
REPEATS = 7
TARGET = ["--target", "examples/dc-link-target.toml", "--top", "10"]
# The project's own packages: what a command imports of them is its work, not the libraries' import.
OURS = ("cli", "db", "materials", "ranking")

_DUMP = """
import atexit, json, runpy, sys
atexit.register(lambda: open({out!r}, "w").write(json.dumps(list(sys.modules))))
sys.argv = ["holdoff", *{args!r}]
runpy.run_module("cli.app", run_name="__main__")
"""

_IMPORT = """
import importlib, json
for name in json.load(open({path!r})):
    try:
        importlib.import_module(name)
    except ImportError:
        pass
"""


def _run(cmd, env):
    subprocess.run(cmd, cwd=ROOT, env=env, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)


def _timed(cmd, env) -> float:
    t0 = time.perf_counter()
    _run(cmd, env)
    return time.perf_counter() - t0


def _pair(a, b, env_a=None, env_b=None, repeats=REPEATS):
    """``a`` and ``b`` run in turn after one warm-up each: (median of a, median of b, median of the ratios a/b)."""
    _run(a, env_a)
    _run(b, env_b)
    ta, tb = [], []
    for _ in range(repeats):
        ta.append(_timed(a, env_a))
        tb.append(_timed(b, env_b))
    return (statistics.median(ta), statistics.median(tb),
            statistics.median(x / y for x, y in zip(ta, tb, strict=True)))


def _env(db_url, **extra):
    env = dict(os.environ, HOLDOFF_DB=db_url, COLUMNS="120", **extra)
    env.pop("HOLDOFF_CATALOG", None)
    return env


def loaded_modules(args, env, out: Path) -> list[str]:
    """Every module a run of ``holdoff ARGS`` has loaded, in load order, the project's own left out."""
    _run([PY, "-c", _DUMP.format(out=str(out), args=list(args))], env)
    names = json.loads(out.read_text())
    return [n for n in names if n.split(".")[0] not in OURS and n != "__main__"]


def bench_help():
    ours, ref, ratio = _pair(HOLDOFF + ["--help"], [PY, "-c", "import typer"])
    print(f"holdoff --help: median {ours * 1e3:.0f} ms; python -c 'import typer' {ref * 1e3:.0f} ms; "
          f"median ratio {ratio:.2f} (goal ≤ 1.5)")
    return ratio


def bench_shortlist_catalog(tmp: Path):
    url = f"sqlite:///{tmp / 'bench.sqlite'}"
    env = _env(url)
    _run(HOLDOFF + ["db", "init"], env)
    args = ["shortlist", "--target", "examples/dc-link-target.toml"]
    names = loaded_modules(args, env, tmp / "modules.json")
    (tmp / "reference.json").write_text(json.dumps(names))
    ref_cmd = [PY, "-c", _IMPORT.format(path=str(tmp / "reference.json"))]
    ours, ref, ratio = _pair(HOLDOFF + args, ref_cmd, env, env)
    top = sorted({n.split(".")[0] for n in names if not n.startswith("_")} - set(sys.stdlib_module_names))
    print(f"holdoff shortlist (catalog, 1,000 draws): median {ours * 1e3:.0f} ms; importing the {len(names)} modules "
          f"it loads ({', '.join(top)} and the standard library's) {ref * 1e3:.0f} ms; median ratio {ratio:.2f} "
          "(goal ≤ 1.3)")
    return ratio


def _synthetic_store(url: str, n: int) -> None:
    """A store of ``n`` invented polymer films spread around the catalog's values (source kind invented)."""
    import numpy as np

    from db.models import Material, PropertyValue, Source
    from db.store import empty_store
    from sqlalchemy import insert

    rng = np.random.default_rng(1)
    st = empty_store(url)
    with st.session() as s:
        src = Source(key="bench-invented", kind="invented", citation="synthetic benchmark data (invented)")
        s.add(src)
        s.flush()
        s.execute(insert(Material), [{"key": f"bench-{i:05d}", "name": f"benchmark film {i}",
                                      "family": "polymer-film", "origin": "user", "response": "linear"}
                                     for i in range(n)])
        ids = [r[0] for r in s.execute(Material.__table__.select().with_only_columns(Material.id))]
        rows = []
        for mid in ids:
            eps, ebd = rng.uniform(2.0, 4.0), rng.uniform(300e6, 750e6)
            for prop, v, extra in (("relative_permittivity", eps, {"temperature_K": 298.15}),
                                   ("relative_permittivity", eps * 0.97, {"temperature_K": 398.15}),
                                   ("breakdown_field", ebd, {"temperature_K": 298.15, "area_m2": 1e-4,
                                                             "low": 0.9 * ebd, "high": 1.1 * ebd}),
                                   ("breakdown_field", 0.8 * ebd, {"temperature_K": 423.15, "area_m2": 1e-4}),
                                   ("weibull_shape", rng.uniform(8, 20), {}),
                                   ("max_temperature", rng.uniform(380, 480), {}),
                                   ("min_temperature", 218.15, {}),
                                   ("loss_tangent", rng.uniform(1e-4, 3e-3), {}),
                                   ("density", rng.uniform(900, 1800), {}),
                                   ("min_thickness", rng.uniform(1e-6, 5e-6), {}),
                                   ("self_healing", float(rng.integers(0, 2)), {})):
                rows.append({"material_id": mid, "property": prop, "value": float(v), "source_id": src.id,
                             **{k: float(x) for k, x in extra.items()}})
        s.execute(insert(PropertyValue), rows)
    st.dispose()


def _medians(cmds, repeats=3):
    """Each command of ``cmds`` (name -> (argv, env)) run in turn after one warm-up each: name -> median."""
    for cmd, env in cmds.values():
        _run(cmd, env)
    times = {name: [] for name in cmds}
    for _ in range(repeats):
        for name, (cmd, env) in cmds.items():
            times[name].append(_timed(cmd, env))
    return {name: statistics.median(t) for name, t in times.items()}


def bench_shortlist_10k(tmp: Path, n: int = 10_000):
    url = f"sqlite:///{tmp / 'bench10k.sqlite'}"
    _synthetic_store(url, n)
    cmd = HOLDOFF + ["shortlist", "--voltage", "800", "--tmin", "25", "--tmax", "105", "--energy", "80", "--top", "10"]
    snaps = str(tmp / "snapshots")
    env = _env(url, HOLDOFF_SNAPSHOTS=snaps)
    got = _medians({"text": (cmd, env), "json": (cmd + ["--json"], env),
                    "catalog": (HOLDOFF + ["catalog"], env)})
    print(f"holdoff shortlist on {n:,} synthetic films: median {got['text']:.2f} s (goal < 2 s); with --json, every "
          f"row explained in full: {got['json']:.2f} s; holdoff catalog listing them all: {got['catalog']:.2f} s")
    return got["text"]


def _catalog_copies_store(url: str, catalog_url: str, n: int) -> None:
    """``n`` invented variants of the catalog's materials (values of εr, E_bd and tan δ scaled by 0.9–1.1): a
    store shaped like real data, with frequencies, temperature curves, DC-bias curves and nonlinear materials.
    Rows go in through the driver's executemany (a SQLite file)."""
    import sqlite3

    import numpy as np

    from db.query import load_materials
    from db.store import empty_store, open_store

    src = open_store(catalog_url)
    with src.session() as s:
        mats = load_materials(s)
    src.dispose()
    with sqlite3.connect(catalog_url.removeprefix("sqlite:///")) as c:
        sources = c.execute("SELECT key, kind, citation FROM source ORDER BY id").fetchall()
    rng = np.random.default_rng(3)
    picks = [(c, m) for c in range(n // len(mats) + 1) for m in mats][:n]
    empty_store(url).dispose()
    con = sqlite3.connect(url.removeprefix("sqlite:///"))
    try:
        with con:
            con.executemany("INSERT INTO source (key, kind, citation, note) VALUES (?, ?, ?, '')", sources)
            sid = dict(con.execute("SELECT key, id FROM source"))
            con.executemany("INSERT INTO material (key, name, family, form, description, origin, response) "
                            "VALUES (?, ?, ?, '', '', 'user', ?)",
                            [(f"{m.key}-v{c:03d}", f"{m.name}, invented variant {c}", m.family, m.response)
                             for c, m in picks])
            ids = dict(con.execute("SELECT key, id FROM material"))
            scaled = ("relative_permittivity", "breakdown_field", "loss_tangent")

            def rows():
                for c, m in picks:
                    f = rng.uniform(0.9, 1.1)
                    mid = ids[f"{m.key}-v{c:03d}"]
                    for v in m.values:
                        k = f if v.property in scaled else 1.0
                        yield (mid, v.property, v.value * k, None if v.low is None else v.low * k,
                               None if v.high is None else v.high * k, v.temperature_K, v.frequency_Hz,
                               v.field_V_per_m, v.thickness_m, v.area_m2, sid[v.source.key])

            con.executemany("INSERT INTO property_value (material_id, property, value, low, high, temperature_K, "
                            "frequency_Hz, field_V_per_m, thickness_m, area_m2, source_id, note, created_at) "
                            "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, '', '2026-01-01 00:00:00')", rows())
    finally:
        con.close()


def bench_shortlist_catalog_copies(tmp: Path, n: int, goal_s: float, repeats: int = 3):
    """``n`` catalog-shaped materials, a quarter of them class 2 or nonlinear (DC-bias curves, loops), all through
    the one column-wise engine; with the store's snapshot and without, in turn."""
    cat = f"sqlite:///{tmp / 'bench.sqlite'}"
    url = f"sqlite:///{tmp / f'copies{n}.sqlite'}"
    if not (tmp / "bench.sqlite").exists():
        _run(HOLDOFF + ["db", "init"], _env(cat))
    t0 = time.perf_counter()
    _catalog_copies_store(url, cat, n)
    built = time.perf_counter() - t0
    cmd = HOLDOFF + ["shortlist", *TARGET]
    got = _medians({"snapshot": (cmd, _env(url, HOLDOFF_SNAPSHOTS=str(tmp / "snapshots"))),
                    "read": (cmd, _env(url, HOLDOFF_SNAPSHOTS="off"))}, repeats=repeats)
    print(f"holdoff shortlist on {n:,} catalog-shaped materials (store built in {built:.0f} s): median "
          f"{got['snapshot']:.2f} s with the snapshot, {got['read']:.2f} s reading the store (goal < {goal_s:g} s)")
    return got


def bench_shortlist_10k_pg(n: int = 10_000):
    """The same on PostgreSQL, in a private schema, when HOLDOFF_TEST_PG_URL names a server."""
    base = os.environ.get("HOLDOFF_TEST_PG_URL")
    if not base:
        print("holdoff shortlist on PostgreSQL: skipped (HOLDOFF_TEST_PG_URL unset; source .ci/postgres.sh start)")
        return None
    sys.path.insert(0, str(ROOT / "tests"))
    from pg import fresh_schema

    with tempfile.TemporaryDirectory() as d, fresh_schema(base) as url:
        _synthetic_store(url, n)
        cmd = HOLDOFF + ["shortlist", "--voltage", "800", "--tmin", "25", "--tmax", "105", "--energy", "80",
                         "--top", "10"]
        got = _medians({"snapshot": (cmd, _env(url, HOLDOFF_SNAPSHOTS=d)),
                        "read": (cmd, _env(url, HOLDOFF_SNAPSHOTS="off"))})
    print(f"holdoff shortlist on {n:,} materials in PostgreSQL: median {got['snapshot']:.2f} s with the snapshot, "
          f"{got['read']:.2f} s reading the store (goal < 2 s)")
    return got


def big() -> bool:
    return os.environ.get("HOLDOFF_BENCH_BIG", "1") != "0"


def compiled() -> None:
    """Byte-compile the project's packages first, as an installed program is: with PYTHONDONTWRITEBYTECODE set
    (some shells and containers set it) every run would otherwise compile them again and time that too."""
    subprocess.run([PY, "-m", "compileall", "-q", *OURS], cwd=ROOT, check=True, stdout=subprocess.DEVNULL)


def test_bench_cli():
    compiled()
    with tempfile.TemporaryDirectory() as d:
        bench_help()
        bench_shortlist_catalog(Path(d))
        bench_shortlist_10k(Path(d))
        bench_shortlist_catalog_copies(Path(d), 10_000, 1.0)
        if big():
            bench_shortlist_catalog_copies(Path(d), 100_000, 5.0, repeats=1)
        else:
            print("holdoff shortlist on 100,000 catalog-shaped materials: skipped (HOLDOFF_BENCH_BIG=0)")
    bench_shortlist_10k_pg()


if __name__ == "__main__":
    test_bench_cli()
