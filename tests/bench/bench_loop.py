"""Benchmark: energies of a 10⁶-point bipolar polarisation loop.

Goal: under 50 ms. The reference run side by side is the least possible work, one numpy trapezoid of ∮E dD
over the whole record (numpy.trapezoid), which gives the loop area but not the branch energies.
Run: ``python tests/bench/bench_loop.py`` or with pytest on this file (``-s`` to see the figures).
"""

import math
import statistics
import timeit

import numpy as np

from materials.energy import EPSILON_0, loop_energies

GOAL_S = 0.050


def run(n=10**6):
    # three cycles of a lossy elliptical loop: E0 = 20 MV/m, P0 = 0.3 C/m², phase lag 0.3 rad
    t = np.linspace(0, 6 * np.pi, n)
    e0, p0, delta = 20e6, 0.3, 0.3
    e, p = e0 * np.sin(t), p0 * np.sin(t - delta)
    d = EPSILON_0 * e + p
    ours = statistics.median(timeit.repeat(lambda: loop_energies(e, p), number=1, repeat=11))
    ref = statistics.median(timeit.repeat(lambda: np.trapezoid(e, d), number=1, repeat=11))
    res, area = loop_energies(e, p), np.trapezoid(e, d)
    expected = math.pi * e0 * p0 * math.sin(delta)
    print()
    print(f"loop_energies, {n} points: median {ours * 1e3:.1f} ms (goal < {GOAL_S * 1e3:.0f} ms: "
          f"{'met' if ours < GOAL_S else 'NOT met'}); one trapezoid over the record: {ref * 1e3:.1f} ms "
          f"(ratio {ours / ref:.1f}x)")
    print(f"loss per cycle {2 * res.lost_J_per_m3:.6e} J/m³, analytic {expected:.6e}, trapezoid of 3 cycles / 3 "
          f"{abs(area) / 3:.6e}")
    return ours, res, expected


def test_loop_energies_speed():
    _, res, expected = run()
    assert abs(2 * res.lost_J_per_m3 / expected - 1) < 1e-6


if __name__ == "__main__":
    run()
