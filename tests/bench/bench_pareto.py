"""Pareto front speed side by side with paretoset, each in a fresh process.

Run as ``python tests/bench/bench_pareto.py`` or ``pytest tests/bench/bench_pareto.py -s -o addopts=""``.
A fresh process per library counts paretoset's numba compilation in its first call, as a user meets it.
Goals on 10⁶ × 3 uniform: faster than paretoset's first call, within 3× of its warm call.
"""

from __future__ import annotations

import json
import subprocess
import sys
import textwrap
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
REPEATS = 5

_CHILD = textwrap.dedent("""
    import json, time, hashlib
    import numpy as np
    M, N, REPEATS, WHO = {m}, {n}, {repeats}, {who!r}
    x = np.random.default_rng(0).random((M, N))
    benefit = [True, False, True, False, True, False][:N]
    if WHO == "holdoff":
        from ranking.methods import pareto_front
        call = lambda: pareto_front(x, benefit)
    else:
        from paretoset import paretoset
        sense = ["max" if b else "min" for b in benefit]
        call = lambda: paretoset(x, sense=sense, distinct=False, use_numba=True)
    t0 = time.perf_counter(); mask = call(); first = time.perf_counter() - t0
    warm = []
    for _ in range(REPEATS):
        t0 = time.perf_counter(); call(); warm.append(time.perf_counter() - t0)
    print(json.dumps({{"first": first, "warm": float(np.median(warm)), "front": int(mask.sum()),
                      "digest": hashlib.sha1(np.flatnonzero(mask).tobytes()).hexdigest()}}))
""")


def _run(who, m, n):
    code = _CHILD.format(m=m, n=n, repeats=REPEATS, who=who)
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True, check=True)
    return json.loads(out.stdout.strip().splitlines()[-1])


def bench_pareto(m=1_000_000, n=3):
    ours, ref = _run("holdoff", m, n), _run("paretoset", m, n)
    assert ours["digest"] == ref["digest"], "fronts differ"
    print(f"\nPareto front {m:,} x {n} uniform, front of {ours['front']} rows, fresh process each; warm = median of "
          f"{REPEATS}")
    print(f"  {'':28s} {'first call':>12s} {'warm':>10s}")
    for name, r in (("holdoff", ours), ("paretoset (numba)", ref)):
        print(f"  {name:28s} {r['first'] * 1e3:9.1f} ms {r['warm'] * 1e3:7.1f} ms")
    print(f"  ratio first calls holdoff / paretoset {ours['first'] / ref['first']:7.3f}  (goal < 1)")
    print(f"  ratio holdoff first / paretoset warm  {ours['first'] / ref['warm']:7.2f}  (goal <= 3)")
    print(f"  ratio warm calls holdoff / paretoset  {ours['warm'] / ref['warm']:7.2f}")
    return ours, ref


def test_pareto_speed_against_paretoset():
    bench_pareto()


if __name__ == "__main__":
    bench_pareto()
