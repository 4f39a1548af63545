"""Ranking methods against reference libraries (pymcdm, paretoset, scipy) and invariants (hypothesis)."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st
from hypothesis.extra import numpy as hnp

from materials.errors import InputError
from ranking.methods import (dominators, pareto_front, rank_order, topsis, topsis_contributions, weighted_sum,
                             weighted_sum_contributions)

pymcdm_methods = pytest.importorskip("pymcdm.methods")
pymcdm_norm = pytest.importorskip("pymcdm.normalizations")
paretoset = pytest.importorskip("paretoset").paretoset

# pymcdm's input validation warns about dominated alternatives in small examples; harmless here.
pytestmark = pytest.mark.filterwarnings("ignore:Alternatives with indices:UserWarning")


def _random_problem(seed, m, n):
    rng = np.random.default_rng(seed)
    x = rng.lognormal(0.0, 1.5, (m, n))
    w = rng.random(n) + 0.05
    benefit = rng.random(n) < 0.5
    return x, w, benefit


def _types(benefit):
    return np.where(benefit, 1, -1)


def _pymcdm_topsis(x, w, benefit):
    """Hwang & Yoon TOPSIS as pymcdm computes it (vector normalisation; its cost form 1 - r leaves C unchanged)."""
    body = pymcdm_methods.TOPSIS(pymcdm_norm.vector_normalization)
    return body(x, w / w.sum(), _types(benefit))


def _pymcdm_wsm(x, w, benefit):
    return pymcdm_methods.WSM(pymcdm_norm.minmax_normalization)(x, w / w.sum(), _types(benefit))


def _sense(benefit):
    return ["max" if b else "min" for b in benefit]


def _dominates(a, b, benefit):
    """Reference definition, row by row: a no worse everywhere and strictly better somewhere."""
    sign = np.where(benefit, 1.0, -1.0)
    a, b = a * sign, b * sign
    return bool(np.all(a >= b) and np.any(a > b))


# ------------------------------------------------------------------------------------- TOPSIS against pymcdm

@pytest.mark.parametrize("seed,m,n", [(0, 2, 1), (1, 5, 3), (2, 40, 6), (3, 300, 4), (4, 1000, 9),
                                      (5, 20_001, 3)])
def test_topsis_matches_pymcdm_vector_normalization(seed, m, n):
    x, w, benefit = _random_problem(seed, m, n)
    np.testing.assert_allclose(topsis(x, w, benefit), _pymcdm_topsis(x, w, benefit), rtol=1e-12, atol=1e-14)


def test_topsis_matches_pymcdm_docstring_example():
    # pymcdm TOPSIS docstring example matrix; pymcdm is the reference, computed side by side (vector form).
    x = np.array([[1, 2, 5], [3000, 3750, 4500]], dtype=float).T
    w = np.array([0.5, 0.5])
    benefit = np.array([False, True])
    np.testing.assert_allclose(topsis(x, w, benefit), _pymcdm_topsis(x, w, benefit), rtol=1e-12)


def test_topsis_zero_column_contributes_nothing_pymcdm_on_the_rest():
    x, w, benefit = _random_problem(5, 30, 4)
    x[:, 2] = 0.0
    keep = [0, 1, 3]
    got = topsis(x, w, benefit)
    assert np.isfinite(got).all()
    # Closeness is invariant to a common factor on the weights, so the dropped column's share does not matter.
    np.testing.assert_allclose(got, _pymcdm_topsis(x[:, keep], w[keep], benefit[keep]), rtol=1e-12)


def test_topsis_single_candidate_and_identical_candidates_score_one():
    assert topsis([[1.0, 2.0, 3.0]], [1, 1, 1], [True, False, True]).tolist() == [1.0]
    np.testing.assert_array_equal(topsis(np.ones((4, 3)), [1, 2, 3], [True, False, True]), np.ones(4))


def test_topsis_ties_give_equal_closeness():
    x, w, benefit = _random_problem(6, 10, 3)
    x[7] = x[2]
    c = topsis(x, w, benefit)
    assert c[7] == c[2]


def test_topsis_stack_equals_each_matrix_ranked_alone():
    rng = np.random.default_rng(7)
    stack = rng.random((5, 20, 4)) + 0.1
    weights = rng.random((5, 4))
    benefit = np.array([True, False, True, False])
    got = topsis(stack, weights, benefit)
    assert got.shape == (5, 20)
    for k in range(5):
        np.testing.assert_allclose(got[k], _pymcdm_topsis(stack[k], weights[k], benefit), rtol=1e-12)
    np.testing.assert_allclose(topsis(stack, weights[0], benefit)[3], topsis(stack[3], weights[0], benefit))


def test_topsis_extreme_magnitudes_do_not_overflow():
    # Squares of 1e200 overflow and of 1e-200 underflow; the closeness must not change with the column's scale.
    x, w, benefit = _random_problem(8, 12, 3)
    scaled = x * np.array([1e200, 1e-200, 1.0])
    np.testing.assert_allclose(topsis(scaled, w, benefit), topsis(x, w, benefit), rtol=1e-12)


def test_topsis_contributions_sum_to_closeness_and_stay_in_bounds():
    x, w, benefit = _random_problem(9, 50, 5)
    contrib = topsis_contributions(x, w, benefit)
    np.testing.assert_allclose(contrib.sum(axis=1), topsis(x, w, benefit), rtol=1e-12, atol=1e-15)
    r = x / np.sqrt((x ** 2).sum(axis=0))
    gap2 = (w / w.sum() * (r.max(axis=0) - r.min(axis=0))) ** 2
    assert (contrib >= -1e-15).all()
    assert (contrib <= gap2 / gap2.sum() + 1e-15).all()


def test_topsis_contributions_ideal_and_anti_ideal_candidates():
    x = np.array([[1.0, 10.0], [3.0, 20.0], [5.0, 30.0]])
    w, benefit = np.array([1.0, 3.0]), np.array([True, False])
    # Row 1 is the ideal point: closeness 1, split by squared gap; row 2 is anti-ideal: all zero.
    x[0], x[2] = [5.0, 10.0], [1.0, 30.0]
    contrib = topsis_contributions(x, w, benefit)
    r = x / np.sqrt((x ** 2).sum(axis=0))
    gap2 = (w / w.sum() * (r.max(axis=0) - r.min(axis=0))) ** 2
    np.testing.assert_allclose(contrib[0], gap2 / gap2.sum(), rtol=1e-12)
    np.testing.assert_allclose(contrib[2], [0.0, 0.0], atol=1e-15)
    np.testing.assert_allclose(topsis_contributions([[2.0, 3.0]], [1, 3], [True, True]), [[0.25, 0.75]])


# ------------------------------------------------------------------------------- weighted sum against pymcdm

@pytest.mark.parametrize("seed,m,n", [(10, 2, 1), (11, 6, 3), (12, 60, 6), (13, 500, 8), (17, 20_001, 5)])
def test_weighted_sum_matches_pymcdm_wsm_minmax(seed, m, n):
    x, w, benefit = _random_problem(seed, m, n)
    np.testing.assert_allclose(weighted_sum(x, w, benefit), _pymcdm_wsm(x, w, benefit), rtol=1e-12, atol=1e-15)


def test_weighted_sum_constant_column_is_one_like_pymcdm_minmax():
    x, w, benefit = _random_problem(14, 20, 4)
    x[:, 1] = 7.5
    np.testing.assert_allclose(weighted_sum(x, w, benefit), _pymcdm_wsm(x, w, benefit), rtol=1e-12)
    assert weighted_sum([[1.0, 2.0]], [1, 1], [True, False]).tolist() == [1.0]


def test_weighted_sum_contributions_are_weight_times_minmax_value():
    x, w, benefit = _random_problem(15, 25, 5)
    contrib = weighted_sum_contributions(x, w, benefit)
    np.testing.assert_allclose(contrib.sum(axis=1), weighted_sum(x, w, benefit), rtol=1e-14, atol=1e-15)
    lo, hi = x.min(axis=0), x.max(axis=0)
    r = np.where(benefit, (x - lo) / (hi - lo), (hi - x) / (hi - lo))
    np.testing.assert_allclose(contrib, r * w / w.sum(), rtol=1e-12, atol=1e-15)


def test_weighted_sum_stack_matches_pymcdm_per_matrix():
    rng = np.random.default_rng(16)
    stack, weights = rng.random((4, 15, 3)), rng.random((4, 3))
    benefit = np.array([False, True, True])
    got = weighted_sum(stack, weights, benefit)
    for k in range(4):
        np.testing.assert_allclose(got[k], _pymcdm_wsm(stack[k], weights[k], benefit), rtol=1e-12)


# --------------------------------------------------------------------------------- Pareto against paretoset

@pytest.mark.parametrize("seed,m,n", [(20, 1, 3), (21, 50, 1), (22, 500, 2), (23, 2000, 3), (24, 2000, 4),
                                      (25, 800, 6)])
def test_pareto_front_matches_paretoset_random(seed, m, n):
    rng = np.random.default_rng(seed)
    x = rng.random((m, n))
    benefit = rng.random(n) < 0.5
    expected = paretoset(x, sense=_sense(benefit), distinct=False, use_numba=False)
    np.testing.assert_array_equal(pareto_front(x, benefit), expected)


@pytest.mark.parametrize("seed,m,n,levels", [(30, 400, 2, 4), (31, 3000, 3, 5), (32, 1000, 4, 3),
                                             (33, 300, 5, 2), (34, 200, 3, 1)])
def test_pareto_front_matches_paretoset_discrete_ties(seed, m, n, levels):
    rng = np.random.default_rng(seed)
    x = rng.integers(0, levels, (m, n)).astype(float)
    benefit = rng.random(n) < 0.5
    expected = paretoset(x, sense=_sense(benefit), distinct=False, use_numba=False)
    np.testing.assert_array_equal(pareto_front(x, benefit), expected)


def test_pareto_front_matches_paretoset_on_a_large_front():
    # Points on a plane: nobody dominates anybody, the worst case for pivot elimination.
    rng = np.random.default_rng(35)
    x = rng.dirichlet([1.0, 1.0, 1.0], 1500)
    x = np.vstack([x, x[:10] + 0.01])
    expected = paretoset(x, sense=["min"] * 3, distinct=False, use_numba=False)
    np.testing.assert_array_equal(pareto_front(x, [False] * 3), expected)


def test_pareto_front_keeps_duplicates_of_a_front_row():
    x = np.array([[1.0, 5.0], [1.0, 5.0], [0.5, 4.0], [2.0, 1.0], [2.0, 1.0], [2.0, 0.5]])
    got = pareto_front(x, [True, True])
    np.testing.assert_array_equal(got, [True, True, False, True, True, False])
    np.testing.assert_array_equal(got, paretoset(x, sense=["max", "max"], distinct=False, use_numba=False))


def test_dominators_name_a_front_row_that_dominates():
    rng = np.random.default_rng(36)
    x = rng.integers(0, 6, (300, 3)).astype(float)
    benefit = np.array([True, False, True])
    front = pareto_front(x, benefit)
    dom = dominators(x, benefit)
    assert ((dom == -1) == front).all()
    for i in np.flatnonzero(~front):
        j = dom[i]
        assert front[j] and _dominates(x[j], x[i], benefit)
        # The lowest-index front row that dominates is the one named.
        assert not any(_dominates(x[k], x[i], benefit) for k in np.flatnonzero(front) if k < j)


# ------------------------------------------------------------------------------------------------ rank order

def test_rank_order_matches_scipy_rankdata():
    from scipy.stats import rankdata
    s = np.array([0.3, 0.9, 0.3, 0.1, 0.9, 0.5])
    np.testing.assert_array_equal(rank_order(s), rankdata(-s, method="ordinal"))
    np.testing.assert_array_equal(rank_order(s, ties="min"), rankdata(-s, method="min"))
    both = rank_order(np.stack([s, -s]), ties="min")
    np.testing.assert_array_equal(both[1], rankdata(s, method="min"))


# ------------------------------------------------------------------------------------------------ validation

@pytest.mark.parametrize("call", [
    lambda: topsis([[1.0, 2.0]], [1.0], [True, True]),                 # weights shape
    lambda: topsis([[1.0, 2.0]], [1.0, 1.0], [True]),                  # benefit shape
    lambda: topsis([[1.0, np.nan]], [1.0, 1.0], [True, True]),         # NaN in the matrix
    lambda: weighted_sum([[1.0, np.inf]], [1.0, 1.0], [True, True]),   # infinity
    lambda: topsis([[1.0, 2.0]], [1.0, -0.5], [True, True]),           # negative weight
    lambda: weighted_sum([[1.0, 2.0]], [0.0, 0.0], [True, True]),      # all-zero weights
    lambda: topsis([[1.0, 2.0]], [1.0, np.nan], [True, True]),         # NaN weight
    lambda: topsis([[1.0, 2.0]], [1.0, 1.0], [1, -1]),                 # pymcdm-style types, not booleans
    lambda: topsis([1.0, 2.0], [1.0, 1.0], [True, True]),              # not a matrix
    lambda: pareto_front([[1.0, np.nan]], [True, True]),
    lambda: pareto_front(np.ones((2, 2, 2)), [True, True]),
    lambda: rank_order([1.0, np.nan]),
    lambda: rank_order([1.0, 2.0], ties="dense"),
])
def test_bad_input_raises_input_error(call):
    with pytest.raises(InputError):
        call()


@pytest.mark.parametrize("row", [5, 19_999])
def test_non_finite_value_in_a_tall_matrix_is_found(row):
    # Tall matrices take the folded column-extremes path; a NaN in the bulk or the tail must still be caught.
    x = np.ones((20_000, 3))
    x[row, 1] = np.nan
    for call in (lambda: topsis(x, [1, 1, 1], [True] * 3), lambda: weighted_sum(x, [1, 1, 1], [True] * 3),
                 lambda: pareto_front(x, [True] * 3)):
        with pytest.raises(InputError, match=rf"\({row}, 1\)"):
            call()


def test_empty_candidate_list_gives_empty_answers():
    x = np.zeros((0, 3))
    assert topsis(x, [1, 1, 1], [True] * 3).shape == (0,)
    assert weighted_sum(x, [1, 1, 1], [True] * 3).shape == (0,)
    assert pareto_front(x, [True] * 3).shape == (0,)
    assert dominators(x, [True] * 3).shape == (0,)


# ------------------------------------------------------------------------------------ invariants (hypothesis)

_cell = st.one_of(st.integers(0, 4).map(float), st.floats(-50.0, 50.0, allow_nan=False, width=32))


@st.composite
def problems(draw, min_rows=1):
    m = draw(st.integers(min_rows, 12))
    n = draw(st.integers(1, 5))
    x = draw(hnp.arrays(np.float64, (m, n), elements=_cell))
    w = draw(hnp.arrays(np.float64, (n,), elements=st.floats(0.0, 10.0)).filter(lambda a: a.sum() > 1e-3))
    benefit = draw(hnp.arrays(np.bool_, (n,)))
    return x, w, benefit


@settings(max_examples=60, deadline=None)
@given(problems(), st.randoms(use_true_random=False))
def test_scores_and_front_follow_a_row_permutation(problem, rnd):
    x, w, benefit = problem
    perm = np.array(rnd.sample(range(len(x)), len(x)))
    for method in (topsis, weighted_sum):
        np.testing.assert_allclose(method(x[perm], w, benefit), method(x, w, benefit)[perm], rtol=1e-12, atol=1e-12)
    np.testing.assert_array_equal(pareto_front(x[perm], benefit), pareto_front(x, benefit)[perm])


@settings(max_examples=60, deadline=None)
@given(problems(), st.floats(1e-3, 1e3))
def test_scores_are_invariant_to_weight_scale(problem, factor):
    x, w, benefit = problem
    for method in (topsis, weighted_sum):
        np.testing.assert_allclose(method(x, w * factor, benefit), method(x, w, benefit), rtol=1e-12, atol=1e-12)


@settings(max_examples=60, deadline=None)
@given(problems(), st.data())
def test_a_dominating_candidate_never_scores_below_the_dominated(problem, data):
    x, w, benefit = problem
    i = data.draw(st.integers(0, len(x) - 1))
    gain = data.draw(hnp.arrays(np.float64, (x.shape[1],), elements=st.floats(0.0, 10.0)))
    better = x[i] + np.where(benefit, gain, -gain)
    xx = np.vstack([x, better])
    for method in (topsis, weighted_sum):
        s = method(xx, w, benefit)
        assert s[-1] >= s[i] - 1e-12
    if (better != x[i]).any():
        assert not pareto_front(xx, benefit)[i]


@settings(max_examples=60, deadline=None)
@given(problems())
def test_contributions_sum_to_scores(problem):
    x, w, benefit = problem
    np.testing.assert_allclose(weighted_sum_contributions(x, w, benefit).sum(axis=1), weighted_sum(x, w, benefit),
                               rtol=1e-12, atol=1e-12)
    np.testing.assert_allclose(topsis_contributions(x, w, benefit).sum(axis=1), topsis(x, w, benefit),
                               rtol=1e-9, atol=1e-12)


@settings(max_examples=60, deadline=None)
@given(problems())
def test_front_matches_reference_definition(problem):
    x, _, benefit = problem
    expected = [not any(_dominates(x[j], x[i], benefit) for j in range(len(x))) for i in range(len(x))]
    np.testing.assert_array_equal(pareto_front(x, benefit), expected)
    dom = dominators(x, benefit)
    for i, j in enumerate(dom):
        assert (j == -1) == expected[i]
        if j >= 0:
            assert _dominates(x[j], x[i], benefit)
