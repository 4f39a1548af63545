"""Monte Carlo robustness of a ranking: reproducibility, probabilities, and the draws against scipy.stats."""

from __future__ import annotations

import numpy as np
import pytest

from materials.errors import InputError
from ranking.methods import rank_order, topsis, weighted_sum
from ranking.robustness import _draw_values, _draw_weights, monte_carlo


def _ranged_problem(seed=0, m=12, n=4, spread=0.2):
    rng = np.random.default_rng(seed)
    typ = rng.lognormal(0.0, 1.0, (m, n))
    return typ * (1 - spread), typ, typ * (1 + spread), rng.random(n) + 0.1, rng.random(n) < 0.5


@pytest.mark.parametrize("method", ["topsis", "weighted"])
def test_same_seed_same_result_other_seed_differs(method):
    low, typ, high, w, benefit = _ranged_problem()
    a = monte_carlo(low, typ, high, w, benefit, method=method, draws=300, seed=11)
    b = monte_carlo(low, typ, high, w, benefit, method=method, draws=300, seed=11)
    c = monte_carlo(low, typ, high, w, benefit, method=method, draws=300, seed=12)
    for field in ("p_first", "p_top_k", "rank_mean", "rank_p05", "rank_p95", "score_mean"):
        np.testing.assert_array_equal(getattr(a, field), getattr(b, field))
    assert not np.array_equal(a.rank_mean, c.rank_mean)


@pytest.mark.parametrize("method", ["topsis", "weighted"])
def test_probabilities_add_up(method):
    low, typ, high, w, benefit = _ranged_problem(1, m=9)
    r = monte_carlo(low, typ, high, w, benefit, method=method, draws=500, top_k=3, concentration=5.0)
    assert r.p_first.sum() == pytest.approx(1.0)
    assert r.p_top_k.sum() == pytest.approx(3.0)
    assert r.rank_mean.sum() == pytest.approx(9 * 10 / 2)
    assert ((r.rank_p05 >= 1) & (r.rank_p05 <= r.rank_mean) & (r.rank_mean <= r.rank_p95)
            & (r.rank_p95 <= 9)).all()
    assert r.draws == 500 and r.top_k == 3 and r.method == method


@pytest.mark.parametrize("method", ["topsis", "weighted"])
def test_strictly_dominant_candidate_is_always_first(method):
    low, typ, high, w, benefit = _ranged_problem(2, m=10)
    # Candidate 4's worst value beats everybody's best value on every criterion.
    best = np.where(benefit, high.max(axis=0) * 1.5, low.min(axis=0) * 0.5)
    low[4], typ[4], high[4] = best * 0.99, best, best * 1.01
    r = monte_carlo(low, typ, high, w, benefit, method=method, draws=400, concentration=2.0)
    assert r.p_first[4] == 1.0
    assert r.p_first.sum() == 1.0


def test_fixed_inputs_reproduce_the_plain_ranking():
    _, typ, _, w, benefit = _ranged_problem(3, m=15)
    for method, score in (("topsis", topsis), ("weighted", weighted_sum)):
        r = monte_carlo(None, typ, None, w, benefit, method=method, draws=20, concentration=np.inf)
        ranks = rank_order(score(typ, w, benefit)).astype(float)
        np.testing.assert_array_equal(r.rank_mean, ranks)
        np.testing.assert_array_equal(r.rank_p05, ranks)
        np.testing.assert_allclose(r.score_mean, score(typ, w, benefit), rtol=1e-12)


def test_exact_ties_share_first_place():
    typ = np.array([[5.0, 2.0], [5.0, 2.0], [1.0, 9.0]])
    r = monte_carlo(typ, typ, typ, [1, 1], [True, False], draws=4000, concentration=np.inf)
    np.testing.assert_allclose(r.p_first, [0.5, 0.5, 0.0], atol=0.03)


def test_triangular_and_uniform_draws_match_scipy_stats():
    from scipy import stats
    lo = np.array([[1.0, 2.0, 0.0]])
    ty = np.array([[1.5, np.nan, 0.0]])   # a triangular, a uniform (no typical), a mode at the lower end
    hi = np.array([[4.0, 6.0, 1.0]])
    x = _draw_values(np.random.default_rng(5), 200_000, lo, ty, hi)[:, 0, :]
    refs = [stats.triang((1.5 - 1.0) / 3.0, loc=1.0, scale=3.0), stats.uniform(loc=2.0, scale=4.0),
            stats.triang(0.0, loc=0.0, scale=1.0)]
    for j, ref in enumerate(refs):
        assert x[:, j].min() >= lo[0, j] and x[:, j].max() <= hi[0, j]
        assert stats.kstest(x[:, j], ref.cdf).pvalue > 1e-3


def test_weight_draws_match_scipy_dirichlet_moments():
    from scipy import stats
    w = np.array([0.5, 0.3, 0.2, 0.0])
    g = _draw_weights(np.random.default_rng(6), 100_000, w, 20.0)
    alpha = 20.0 * w[:3]
    np.testing.assert_allclose(g.sum(axis=1), 1.0, rtol=1e-12)
    assert (g[:, 3] == 0).all()
    np.testing.assert_allclose(g[:, :3].mean(axis=0), stats.dirichlet.mean(alpha), atol=3e-3)
    np.testing.assert_allclose(g[:, :3].var(axis=0), stats.dirichlet.var(alpha), rtol=0.05)


def test_many_draws_run_in_chunks_and_still_add_up():
    low, typ, high, w, benefit = _ranged_problem(7, m=300, n=6)
    r = monte_carlo(low, typ, high, w, benefit, draws=2000, top_k=5)
    assert r.p_first.sum() == pytest.approx(1.0) and r.p_top_k.sum() == pytest.approx(5.0)


@pytest.mark.parametrize("kwargs", [
    {"method": "pareto"}, {"draws": 0}, {"draws": 2.5}, {"top_k": 0}, {"concentration": 0.0},
    {"concentration": float("nan")},
])
def test_bad_options_raise_input_error(kwargs):
    low, typ, high, w, benefit = _ranged_problem()
    with pytest.raises(InputError):
        monte_carlo(low, typ, high, w, benefit, **kwargs)


def test_bad_ranges_raise_input_error():
    low, typ, high, w, benefit = _ranged_problem()
    with pytest.raises(InputError, match="low > high"):
        monte_carlo(high, None, low, w, benefit)
    with pytest.raises(InputError, match="outside"):
        monte_carlo(low, high * 2, high, w, benefit)
    with pytest.raises(InputError, match="shape"):
        monte_carlo(low[:-1], typ, high, w, benefit)
    gap = typ.copy()
    gap[0, 0] = np.nan
    with pytest.raises(InputError, match="neither"):
        monte_carlo(None, gap, None, w, benefit)


def test_partition_path_matches_the_full_sort():
    """Without rank statistics, the top-k found by a partition equals the one found by the full sort."""
    rng = np.random.default_rng(3)
    typ = rng.uniform(1, 10, (40, 4))
    typ[5] = typ[6]  # an exact tie
    lo, hi = typ * 0.9, typ * 1.1
    w = np.array([3.0, 1.0, 1.0, 2.0])
    b = np.array([True, False, True, False])
    for method in ("topsis", "weighted"):
        full = monte_carlo(lo, typ, hi, w, b, method=method, draws=300, top_k=3, seed=11)
        fast = monte_carlo(lo, typ, hi, w, b, method=method, draws=300, top_k=3, seed=11, rank_stats=False)
        np.testing.assert_array_equal(full.p_first, fast.p_first)
        np.testing.assert_array_equal(full.p_top_k, fast.p_top_k)
        assert np.isnan(fast.rank_mean).all()
