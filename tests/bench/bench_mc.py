"""Monte Carlo over a big candidate set with and without screening out the interval-dominated candidates.

Run as ``python tests/bench/bench_mc.py`` or ``pytest tests/bench/bench_mc.py -s -o addopts=""``.
Goal: 1,000 draws over 10,000 × 7, top 3, without rank statistics (as the shortlist asks) well under 0.2 s with
``screen=True``.
"""

from __future__ import annotations


import numpy as np

from ranking.robustness import monte_carlo

from bench_topsis import REPEATS, _median_s  # same folder: run as a script or by pytest

GOAL_S = 0.2


def shortlist_problem(m=10_000, seed=0):
    """Candidates shaped like a dielectric shortlist: three properties with ranges, four fixed.

    Energy density and breakdown margin (benefit, ±15 % and ±20 %) and loss (cost, ±10 %) follow a shared
    quality factor with their own scatter, as properties of one material family do; temperature class (benefit,
    five levels), price (cost), self-healing (benefit, 0/1) and one criterion every candidate meets equally
    (constant) have no range.
    """
    rng = np.random.default_rng(seed)
    q = rng.normal(size=m)
    typ = np.column_stack([
        np.exp(0.8 * q + 0.6 * rng.normal(size=m)),
        100.0 * np.exp(0.5 * q + 0.5 * rng.normal(size=m)),
        1e-3 * np.exp(-0.4 * q + 0.5 * rng.normal(size=m)),
        rng.choice([85.0, 105.0, 125.0, 150.0, 200.0], size=m),
        np.exp(0.3 * q + 0.7 * rng.normal(size=m)),
        (rng.random(m) < 0.3).astype(float),
        np.ones(m),
    ])
    spread = np.array([0.15, 0.2, 0.1, 0.0, 0.0, 0.0, 0.0])
    weights = np.array([0.3, 0.2, 0.15, 0.1, 0.1, 0.1, 0.05])
    benefit = np.array([True, True, False, True, False, True, True])
    return typ * (1 - spread), typ, typ * (1 + spread), weights, benefit


def bench_screened_monte_carlo(m=10_000, draws=1000, top_k=3):
    low, typ, high, w, benefit = shortlist_problem(m)
    results = {}
    print(f"\nMonte Carlo, {draws:,} draws over {m:,} x {typ.shape[1]}, top {top_k}, rank_stats=False, "
          f"median of {REPEATS}")
    for method in ("topsis", "weighted"):
        def run(screen, method=method):
            return monte_carlo(low, typ, high, w, benefit, method=method, draws=draws, top_k=top_k,
                               rank_stats=False, screen=screen)

        plain, screened = run(False), run(True)
        out = screened.screened
        # Screened candidates never reach the top in the full run either.
        assert (plain.p_top_k[out] == 0).all()
        t = {"plain": _median_s(lambda: run(False)), "screened": _median_s(lambda: run(True))}
        results[method] = t | {"survivors": int((~out).sum())}
        print(f"  {method:8s} screen=False {t['plain'] * 1e3:8.1f} ms   screen=True {t['screened'] * 1e3:7.1f} ms   "
              f"ratio {t['screened'] / t['plain']:.3f}   survivors {int((~out).sum()):,} of {m:,}   "
              f"(goal < {GOAL_S * 1e3:.0f} ms: {'met' if t['screened'] < GOAL_S else 'NOT met'})")
    return results


def test_screened_monte_carlo_speed():
    bench_screened_monte_carlo()


if __name__ == "__main__":
    bench_screened_monte_carlo()
