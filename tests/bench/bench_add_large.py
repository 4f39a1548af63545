"""Reading a large material file stays linear: a 20,000-value TOML (and the same values as a CSV) through
``load_material`` / ``read_value_table`` and through ``holdoff add`` end to end, beside ``tomllib`` parsing the same
text (the reference: the work that cannot be avoided). Goal: the whole ``add`` within seconds, the reader within a
small factor of ``tomllib``; a quadratic line lookup took minutes here.

Run as ``python tests/bench/bench_add_large.py`` (or ``make bench``).
"""

from __future__ import annotations

import subprocess
import sys
import tempfile
import time
import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
sys.path.insert(0, str(ROOT))
N = 20_000


def _toml(n: int) -> str:
    head = 'key = "big-film"\nname = "A film with many values"\nfamily = "polymer-film"\n'
    rows = [f'\n[[value]]\nproperty = "relative_permittivity"\nvalue = {2.0 + (i % 1000) / 1e4!r}\n'
            f'temperature = "{-50 + i * 0.01:.2f} degC"\nsource = "lab-fixture-handbook"\n' for i in range(n)]
    return head + "".join(rows)


def main() -> None:
    from materials.catalog_io import load_material, load_sources

    catalog = ROOT / "tests" / "data" / "mini_catalog"
    with tempfile.TemporaryDirectory() as d:
        path = Path(d) / "big.toml"
        text = _toml(N)
        path.write_text(text, encoding="utf-8")
        t0 = time.perf_counter()
        tomllib.loads(text)
        t_ref = time.perf_counter() - t0
        sources = load_sources(catalog / "sources.toml")
        t0 = time.perf_counter()
        rec = load_material(path, sources, origin="user")
        t_read = time.perf_counter() - t0
        assert len(rec.values) == N
        store = Path(d) / "s.sqlite"
        env = {"HOLDOFF_CATALOG": str(catalog), "PATH": "/usr/bin:/bin"}
        t0 = time.perf_counter()
        r = subprocess.run([sys.executable, "-m", "cli.app", "--db", str(store), "add", str(path)], cwd=ROOT, env=env,
                           capture_output=True, text=True)
        t_add = time.perf_counter() - t0
        assert r.returncode == 0, r.stderr
    print(f"{N} values: tomllib {t_ref:.2f} s, load_material {t_read:.2f} s ({t_read / t_ref:.1f}× tomllib), "
          f"holdoff add end to end {t_add:.2f} s (store built from the mini catalog included)")


if __name__ == "__main__":
    main()
