"""A process killed with SIGKILL in the middle of a large import leaves the set complete or absent, never half.

The child inserts one breakdown set of 100,000 points in one transaction, in chunks, and says where it is; the
parent kills it there (mid-insert, and just as it commits), then checks the store and runs ``holdoff db check``.
"""

from __future__ import annotations

import signal
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pg

POINTS = 100_000
CHUNK = 5_000
REPO = Path(__file__).resolve().parents[1]

CHILD = textwrap.dedent("""
    import sys
    from sqlalchemy import select
    from db.models import BreakdownPoint, BreakdownSet, Material, Source
    from db.store import bulk_insert, open_store

    url, label, n, chunk = sys.argv[1], sys.argv[2], int(sys.argv[3]), int(sys.argv[4])
    store = open_store(url, create=False)
    with store.session() as s:
        mat = s.execute(select(Material.id).where(Material.key == "mini-film")).scalar_one()
        src = s.execute(select(Source.id).where(Source.key == "fixture-invented")).scalar_one()
        bset = BreakdownSet(material_id=mat, label=label, thickness_m=3e-6, area_m2=1e-4, temperature_K=298.15,
                            waveform="dc", source_id=src, file_name="big.csv", sha256="9" * 64)
        s.add(bset)
        s.flush()
        for start in range(0, n, chunk):
            bulk_insert(s, BreakdownPoint.__table__,
                        [{"set_id": bset.id, "seq": i, "field_V_per_m": 4e8 + i, "censored": False,
                          "thickness_m": None} for i in range(start, min(n, start + chunk))])
            print("inserting" if start == 0 else "more", flush=True)
        print("committing", flush=True)
    print("committed", flush=True)
""")


def _points_of(url: str, label: str) -> int | None:
    from sqlalchemy import func, select

    from db.models import BreakdownPoint, BreakdownSet
    from db.store import open_store

    store = open_store(url, create=False)
    try:
        with store.session() as s:
            set_id = s.execute(select(BreakdownSet.id).where(BreakdownSet.label == label)).scalar()
            if set_id is None:
                return None
            return s.execute(select(func.count()).select_from(BreakdownPoint)
                             .where(BreakdownPoint.set_id == set_id)).scalar()
    finally:
        store.dispose()


def _kill_at(url: str, label: str, when: str, delay: float = 0.0) -> str:
    """Run the child, SIGKILL it once it prints ``when`` (plus ``delay`` s); the last line it printed."""
    p = subprocess.Popen([sys.executable, "-c", CHILD, url, label, str(POINTS), str(CHUNK)], cwd=REPO,
                         stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
    last = ""
    try:
        for line in p.stdout:
            last = line.strip()
            if last == when:
                if delay:
                    time.sleep(delay)
                p.send_signal(signal.SIGKILL)
                break
        p.wait(timeout=60)
    finally:
        if p.poll() is None:
            p.kill()
            p.wait()
    assert p.returncode in (-signal.SIGKILL, 0), p.stderr.read()
    return last


def _check_passes(url: str) -> None:
    from typer.testing import CliRunner

    from cli.app import app

    r = CliRunner().invoke(app, ["--db", url, "db", "check"])
    assert r.exit_code == 0, r.output


def test_sigkill_mid_insert_leaves_nothing(backend_url):
    from db.store import build

    build(backend_url, catalog_dir=pg.MINI_CATALOG)
    assert _kill_at(backend_url, "big set", "more", 0.02) == "more"
    assert _points_of(backend_url, "big set") is None
    _check_passes(backend_url)


def test_sigkill_at_commit_leaves_all_or_nothing_and_the_store_works_on(backend_url):
    from db.store import build

    build(backend_url, catalog_dir=pg.MINI_CATALOG)
    _kill_at(backend_url, "big set", "committing")
    assert _points_of(backend_url, "big set") in (None, POINTS)
    _check_passes(backend_url)
    assert _kill_at(backend_url, "again", "never") == "committed"
    assert _points_of(backend_url, "again") == POINTS
    _check_passes(backend_url)
