"""The Pareto front and each row's dominator against a pair-by-pair count and the paretoset library.

Reference: paretoset (``paretoset(x, sense, distinct=False)``, its numpy path), run on the same input; and the
definition itself, every pair compared. Data: uniform (a small front), correlated criteria (a small front, many
near ties), anti-correlated (every row non-dominated), and few levels (many exact ties and identical rows).
"""

from __future__ import annotations

import numpy as np
import pytest

from ranking.methods import dominator_of, dominators, front_and_dominators, pareto_front

paretoset = pytest.importorskip("paretoset").paretoset


def _brute(x, benefit):
    """Front mask and lowest-index front dominator of every row, from all pairs."""
    y = np.where(benefit, -x, x)
    no_worse = (y[:, None, :] <= y[None, :, :]).all(-1)
    better = (y[:, None, :] < y[None, :, :]).any(-1)
    dom = no_worse & better                     # dom[a, b]: row a dominates row b
    front = ~dom.any(axis=0)
    by_front = dom & front[:, None]
    return front, np.where(by_front.any(axis=0), by_front.argmax(axis=0), -1)


def _data(kind, m, n, rng):
    if kind == "uniform":
        return rng.random((m, n))
    if kind == "correlated":
        t = rng.random(m)
        return np.column_stack([t + 0.05 * rng.random(m) for _ in range(n)])
    if kind == "all-non-dominated":
        # points on the simplex: raising one criterion lowers another, so no row dominates another
        p = rng.random((m, n))
        return p / p.sum(axis=1, keepdims=True)
    return rng.integers(0, 3, (m, n)).astype(float)   # few levels: ties and identical rows


KINDS = ("uniform", "correlated", "all-non-dominated", "levels")


@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("n", [1, 2, 3, 4, 7])
@pytest.mark.parametrize("m", [1, 37, 600])
def test_front_and_dominators_match_brute_force_and_paretoset(kind, n, m):
    rng = np.random.default_rng(m * 31 + n)
    x = _data(kind, m, n, rng)
    benefit = rng.random(n) < 0.5
    # Minimising every criterion of the oriented data keeps "all-non-dominated" so whatever the senses.
    if kind == "all-non-dominated":
        x = np.where(benefit, -x, x)
    front, dom = _brute(x, benefit)
    got_front, got_dom = front_and_dominators(x, benefit)
    np.testing.assert_array_equal(got_front, front)
    np.testing.assert_array_equal(got_dom, dom)
    np.testing.assert_array_equal(pareto_front(x, benefit), front)
    np.testing.assert_array_equal(dominators(x, benefit), dom)
    np.testing.assert_array_equal(dominators(x, benefit, front=front), dom)
    sense = ["max" if b else "min" for b in benefit]
    np.testing.assert_array_equal(got_front, paretoset(x, sense=sense, distinct=False, use_numba=False))
    if kind == "all-non-dominated" and n > 1:
        assert front.all()


@pytest.mark.parametrize("kind", KINDS)
@pytest.mark.parametrize("n", [2, 3, 5])
def test_front_matches_paretoset_on_large_sets(kind, n):
    """Large enough for the pivot pass and several levels of the divide and conquer."""
    rng = np.random.default_rng(n)
    x = _data(kind, 8_000 if kind != "all-non-dominated" else 2_000, n, rng)
    benefit = np.arange(n) % 2 == 0
    if kind == "all-non-dominated":
        x = np.where(benefit, -x, x)
    sense = ["max" if b else "min" for b in benefit]
    front = pareto_front(x, benefit)
    np.testing.assert_array_equal(front, paretoset(x, sense=sense, distinct=False, use_numba=False))
    dom = dominators(x, benefit, front=front)
    y = np.where(benefit, -x, x)
    lost = np.flatnonzero(~front)
    assert (dom[front] == -1).all() and front[dom[lost]].all()
    # each named dominator dominates, and no lower-index front row does (checked on a sample of rows)
    on = np.flatnonzero(front)
    for i in lost[:: max(1, lost.size // 50)]:
        beats = (y[on] <= y[i]).all(axis=1) & (y[on] < y[i]).any(axis=1)
        assert on[beats].min() == dom[i]


def test_dominator_of_answers_only_the_rows_asked():
    rng = np.random.default_rng(5)
    x = rng.random((400, 4))
    benefit = [True, False, True, False]
    front, dom = _brute(x, np.array(benefit))
    rows = [3, 17, 250, 399, 0]
    np.testing.assert_array_equal(dominator_of(x, benefit, front, rows), dom[rows])
    full = dominator_of(x, benefit, front, rows, size=400)
    assert (full[rows] == dom[rows]).all() and (np.delete(full, rows) == -1).all()


def test_signed_zero_and_identical_rows():
    x = np.array([[0.0, 1.0], [-0.0, 1.0], [0.0, 2.0], [1.0, 0.0], [1.0, 0.0]])
    front, dom = front_and_dominators(x, [False, False])
    np.testing.assert_array_equal(front, [True, True, False, True, True])
    np.testing.assert_array_equal(dom, [-1, -1, 0, -1, -1])
