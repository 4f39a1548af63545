"""TOPSIS speed side by side with pymcdm and a minimal numpy TOPSIS; Monte Carlo against a per-draw loop.

Run as ``python tests/bench/bench_topsis.py`` or ``pytest tests/bench/bench_topsis.py -s -o addopts=""``.
Goals: TOPSIS 10⁶ × 6 within 1.3× of the minimal numpy version and faster than pymcdm (vector normalisation,
validation off); 1,000 Monte Carlo draws over 60 × 6 well under a second.
"""

from __future__ import annotations

import time

import numpy as np

from ranking.methods import topsis
from ranking.robustness import monte_carlo

REPEATS = 5


def _median_s(fn, repeats=REPEATS):
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return float(np.median(times))


def minimal_numpy_topsis(x, w, benefit):
    """The textbook Hwang & Yoon steps in plain numpy, no care for copies: the reference speed."""
    w = w / w.sum()
    v = x / np.sqrt((x ** 2).sum(axis=0)) * w
    ideal = np.where(benefit, v.max(axis=0), v.min(axis=0))
    anti = np.where(benefit, v.min(axis=0), v.max(axis=0))
    s_plus = np.sqrt(((v - ideal) ** 2).sum(axis=1))
    s_minus = np.sqrt(((v - anti) ** 2).sum(axis=1))
    return s_minus / (s_plus + s_minus)


def bench_topsis(m=1_000_000, n=6):
    from pymcdm import normalizations
    from pymcdm.methods import TOPSIS

    rng = np.random.default_rng(0)
    x = rng.random((m, n)) + 0.1
    w = rng.random(n)
    benefit = np.arange(n) % 2 == 0
    types = np.where(benefit, 1, -1)
    body = TOPSIS(normalizations.vector_normalization)

    ours = topsis(x, w, benefit)
    assert np.allclose(ours, minimal_numpy_topsis(x, w, benefit), rtol=1e-12)
    assert np.allclose(ours, body(x, w / w.sum(), types, validation=False), rtol=1e-10)
    t = {
        "holdoff": _median_s(lambda: topsis(x, w, benefit)),
        "minimal numpy": _median_s(lambda: minimal_numpy_topsis(x, w, benefit)),
        "pymcdm (vector, validation=False)": _median_s(lambda: body(x, w / w.sum(), types, validation=False)),
    }
    print(f"\nTOPSIS {m:,} x {n}, median of {REPEATS}")
    for name, s in t.items():
        print(f"  {name:36s} {s * 1e3:8.1f} ms")
    print(f"  ratio holdoff / minimal numpy        {t['holdoff'] / t['minimal numpy']:8.2f}  (goal <= 1.3)")
    print(f"  ratio holdoff / pymcdm               {t['holdoff'] / t['pymcdm (vector, validation=False)']:8.2f}"
          "  (goal < 1)")
    return t


def bench_monte_carlo(m=60, n=6, draws=1000):
    rng = np.random.default_rng(1)
    typ = rng.lognormal(0.0, 1.0, (m, n))
    low, high = typ * 0.8, typ * 1.2
    w = rng.random(n) + 0.1
    benefit = np.arange(n) % 2 == 0

    def per_draw_loop():
        # Same model, one TOPSIS call per draw: what a straightforward loop costs.
        g = np.random.default_rng(0)
        first = np.zeros(m)
        for _ in range(draws):
            wk = g.dirichlet(50.0 * w / w.sum())
            xk = g.triangular(low, typ, high)
            first[np.argmax(topsis(xk, wk, benefit))] += 1
        return first / draws

    t = {
        "holdoff monte_carlo": _median_s(lambda: monte_carlo(low, typ, high, w, benefit, draws=draws)),
        "per-draw loop": _median_s(per_draw_loop),
    }
    print(f"\nMonte Carlo TOPSIS, {draws:,} draws over {m} x {n}, median of {REPEATS}")
    for name, s in t.items():
        print(f"  {name:36s} {s * 1e3:8.1f} ms")
    print(f"  ratio vectorised / loop              {t['holdoff monte_carlo'] / t['per-draw loop']:8.2f}"
          "  (goal: well under 1 s)")
    return t


def test_topsis_speed_against_pymcdm_and_minimal_numpy():
    bench_topsis()


def test_monte_carlo_speed_against_per_draw_loop():
    bench_monte_carlo()


if __name__ == "__main__":
    bench_topsis()
    bench_monte_carlo()
