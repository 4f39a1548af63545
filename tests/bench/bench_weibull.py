"""Benchmark: Weibull maximum-likelihood fit against scipy.stats.weibull_min.fit, side by side.

Goal: at least 50× faster than scipy on 10⁵ and 10⁶ points, same answer to rtol 1e-5.
Run: ``python tests/bench/bench_weibull.py`` or with pytest on this file (``-s`` to see the table).
"""

import statistics
import timeit

import numpy as np

from materials.breakdown import fit_weibull

GOAL_RATIO = 50.0


def run(sizes=(10**5, 10**6)):
    from scipy.stats import weibull_min

    rng = np.random.default_rng(2024)
    fit_weibull(rng.weibull(10.0, 100))  # warm-up: lazy imports
    rows = []
    for n in sizes:
        x = 600e6 * rng.weibull(12.0, n)
        ours = statistics.median(timeit.repeat(lambda x=x: fit_weibull(x), number=1, repeat=7))
        ref = statistics.median(timeit.repeat(lambda x=x: weibull_min.fit(x, floc=0), number=1,
                                              repeat=5 if n <= 10**5 else 3))
        fit, (shape, _, scale) = fit_weibull(x), weibull_min.fit(x, floc=0)
        rows.append((n, ours, ref, ref / ours, abs(fit.shape / shape - 1), abs(fit.scale / scale - 1)))
    print()
    print(f"{'points':>9} {'holdoff ms':>11} {'scipy ms':>10} {'ratio':>7} {'d shape':>9} {'d scale':>9}  goal")
    for n, ours, ref, ratio, ds, da in rows:
        goal = "met" if ratio >= GOAL_RATIO else "NOT met"
        print(f"{n:>9} {ours * 1e3:>11.2f} {ref * 1e3:>10.1f} {ratio:>6.0f}x {ds:>9.1e} {da:>9.1e}  "
              f">= {GOAL_RATIO:.0f}x {goal}")
    return rows


def test_weibull_fit_speed_against_scipy():
    for n, _, _, _, d_shape, d_scale in run():
        assert d_shape < 1e-5 and d_scale < 1e-5, n


if __name__ == "__main__":
    run()
