"""Readers never wait: ``holdoff catalog`` and ``holdoff shortlist`` on the shipped catalog while another process holds
a long write transaction on the same SQLite store, beside the same commands with no writer (the reference). Goal:
the same time either way (a write-locking open would wait out the 30 s busy timeout, then fail).

Run as ``python tests/bench/bench_long_writer.py`` (or ``make bench``).
"""

from __future__ import annotations

import os
import sqlite3
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
COMMANDS = {"catalog": ["catalog"],
            "shortlist": ["shortlist", "--voltage", "800", "--tmin", "-40", "--tmax", "105", "--energy-density", "1"]}
REPEATS = 3


def _time(store: Path, args: list[str], env: dict) -> float:
    times = []
    for _ in range(REPEATS):
        t0 = time.perf_counter()
        r = subprocess.run([sys.executable, "-m", "cli.app", "--db", str(store), *args], cwd=ROOT, env=env,
                           capture_output=True, text=True, timeout=120)
        times.append(time.perf_counter() - t0)
        assert r.returncode in (0, 1), r.stderr
    return statistics.median(times)


def main() -> None:
    with tempfile.TemporaryDirectory() as d:
        store = Path(d) / "s.sqlite"
        env = dict(os.environ, XDG_DATA_HOME=d, COLUMNS="120")
        env.pop("HOLDOFF_CATALOG", None)
        subprocess.run([sys.executable, "-m", "cli.app", "--db", str(store), "catalog"], cwd=ROOT, env=env,
                       capture_output=True, check=True)
        free = {name: _time(store, args, env) for name, args in COMMANDS.items()}
        writer = sqlite3.connect(store, isolation_level=None)
        writer.execute("BEGIN IMMEDIATE")
        writer.execute("INSERT INTO meta (key, value) VALUES ('long-writer', 'holding')")
        try:
            held = {name: _time(store, args, env) for name, args in COMMANDS.items()}
        finally:
            writer.execute("ROLLBACK")
            writer.close()
    for name in COMMANDS:
        print(f"{name:10s} no writer {free[name]:.2f} s, while a writer holds the lock {held[name]:.2f} s "
              f"({held[name] / free[name]:.2f}×)")


if __name__ == "__main__":
    main()
