"""Monte Carlo robustness of a ranking: reproducibility, probabilities, the draws against scipy.stats, screening."""

from __future__ import annotations

import numpy as np
import pytest

from materials.errors import InputError
from ranking.methods import rank_order, topsis, weighted_sum
from ranking.robustness import (MonteCarloResult, _draw_columns, _draw_values, _draw_weights, held_columns,
                                monte_carlo, survivor_scorer)


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
        for top_k in (3, 12):   # a few by repeated minima, more by a partition
            full = monte_carlo(lo, typ, hi, w, b, method=method, draws=300, top_k=top_k, seed=11)
            fast = monte_carlo(lo, typ, hi, w, b, method=method, draws=300, top_k=top_k, seed=11, rank_stats=False)
            np.testing.assert_array_equal(full.p_first, fast.p_first)
            np.testing.assert_array_equal(full.p_top_k, fast.p_top_k)
            assert np.isnan(fast.rank_mean).all()


def test_column_draws_match_scipy_stats():
    """The survivors' sampler (two uniforms, Stein & Keblis 2009) against scipy.stats, as the inverse CDF above."""
    from scipy import stats
    lo = np.array([[1.0], [2.0], [0.0], [3.0]])
    ty = np.array([[1.5], [np.nan], [0.0], [4.0]])
    hi = np.array([[4.0], [6.0], [1.0], [4.0]])  # a triangular, a uniform, a mode at each end
    x = _draw_columns(np.random.default_rng(5), 200_000, lo, ty, hi)[:, :, 0]
    refs = [stats.triang((1.5 - 1.0) / 3.0, loc=1.0, scale=3.0), stats.uniform(loc=2.0, scale=4.0),
            stats.triang(0.0, loc=0.0, scale=1.0), stats.triang(1.0, loc=3.0, scale=1.0)]
    for j, ref in enumerate(refs):
        assert x[j].min() >= lo[j, 0] and x[j].max() <= hi[j, 0]
        assert stats.kstest(x[j], ref.cdf).pvalue > 1e-3


# ------------------------------------------------------------------------------------------------- screening

def _interval_dominators(low, high, w, benefit, firm=None):
    """Brute force, all pairs: how many candidates interval-dominate each: no worse on every positive-weight
    criterion, strictly better on one of ``firm`` (default: any positive-weight criterion)."""
    w, b = np.asarray(w), np.asarray(benefit)
    firm = w > 0 if firm is None else np.asarray(firm) & (w > 0)
    worst, best = np.where(b, low, -high), np.where(b, high, -low)
    gap = worst[:, None, :] - best[None, :, :]                       # [i, j, c]: i's worst minus j's best
    no_worse = (gap[..., w > 0] >= 0).all(axis=-1)
    strictly = (gap[..., firm] > 0).any(axis=-1)
    return (no_worse & strictly).sum(axis=0)


def _screenable_problem(seed=0, m=2000, n=5, spread=0.1):
    return _ranged_problem(seed, m=m, n=n, spread=spread)


def _agree(a, c, draws):
    """Two independent binomial estimates from ``draws`` draws each: their difference has standard deviation
    sqrt(2 p (1 - p) / draws) (p pooled). Allowed: 4 of those, plus one draw for the discreteness."""
    p = (a + c) / 2
    return (np.abs(a - c) <= 4 * np.sqrt(2 * p * (1 - p) / draws) + 1 / draws).all()


@pytest.mark.parametrize("method", ["topsis", "weighted"])
def test_screening_that_screens_nothing_agrees_with_the_plain_run(method):
    # Candidates on a trade-off (the first criterion rises as the second falls): nobody dominates anybody. The
    # column-by-column draws use other random numbers than the plain run's stacked draws: equal in distribution.
    rng = np.random.default_rng(4)
    t = np.sort(rng.random(40))
    typ = np.column_stack([t, 1.0 - t, rng.random(40)]) + 1.0
    w, b = [1.0, 2.0, 0.5], [True, True, False]
    draws = 4000
    for low, high in ((typ, typ), (typ * 0.9, typ * 1.1)):
        plain = monte_carlo(low, typ, high, w, b, method=method, draws=draws, seed=3, rank_stats=False)
        screened = monte_carlo(low, typ, high, w, b, method=method, draws=draws, seed=3, rank_stats=False,
                               screen=True)
        assert plain.screened is None and not screened.screened.any()
        for field in ("p_first", "p_top_k"):
            assert _agree(getattr(plain, field), getattr(screened, field), draws), field
        # the mean score: the same closeness in every draw when nothing varies
        if (low == high).all():
            np.testing.assert_allclose(screened.score_mean, plain.score_mean, rtol=0, atol=0.02)
        again = monte_carlo(low, typ, high, w, b, method=method, draws=draws, seed=3, rank_stats=False,
                            screen=True)
        np.testing.assert_array_equal(again.p_top_k, screened.p_top_k)


def test_screening_runs_again_with_nothing_screened_if_a_firm_weight_draws_zero(monkeypatch):
    from ranking import robustness
    low, typ, high, w, b = _screenable_problem(1, m=300, n=3)
    draw = robustness._draw_weights

    def with_a_zero(rng, k, w, concentration):
        g = draw(rng, k, w, concentration)
        g[0, 0] = 0.0   # what an underflowing gamma variate would give
        return g

    assert monte_carlo(low, typ, high, w, b, draws=200, seed=5, rank_stats=False, screen=True).screened.any()
    monkeypatch.setattr(robustness, "_draw_weights", with_a_zero)
    screened = monte_carlo(low, typ, high, w, b, draws=2000, seed=5, rank_stats=False, screen=True)
    assert not screened.screened.any()
    plain = monte_carlo(low, typ, high, w, b, draws=2000, seed=5, rank_stats=False)
    for field in ("p_first", "p_top_k"):
        assert _agree(getattr(plain, field), getattr(screened, field), 2000), field


def test_a_criterion_with_alpha_below_one_gives_no_strict_advantage():
    # Three candidates equal on the main criteria, ordered only by a criterion of weight 0.002 (alpha ≈ 0.05
    # at concentration 50); the rest are behind on the main criteria.
    typ = np.array([[5.0, 5.0, 3.0], [5.0, 5.0, 2.0], [5.0, 5.0, 1.0]] + [[4.0, 4.0, 0.5]] * 5)
    w, b = [1.0, 1.0, 0.002], [True, True, True]
    screened = monte_carlo(typ, typ, typ, w, b, draws=2000, top_k=2, seed=4, rank_stats=False, screen=True)
    np.testing.assert_array_equal(screened.screened, [False] * 3 + [True] * 5)
    # Why: that weight is often drawn below 1e-16, where the third's disadvantage vanishes in rounding and the
    # tie-break sometimes ranks it second. With the weights fixed the criterion is firm and it is screened.
    plain = monte_carlo(typ, typ, typ, w, b, draws=2000, top_k=2, seed=4, rank_stats=False)
    assert plain.p_top_k[2] > 0
    fixed = monte_carlo(typ, typ, typ, w, b, draws=50, top_k=2, concentration=np.inf, rank_stats=False,
                        screen=True)
    assert fixed.screened[2] and not fixed.screened[:2].any()


@pytest.mark.parametrize("method", ["topsis", "weighted"])
def test_screened_candidates_never_reach_the_top_and_survivors_agree(method):
    low, typ, high, w, b = _screenable_problem()
    draws, k = 2000, 3
    plain = monte_carlo(low, typ, high, w, b, method=method, draws=draws, top_k=k, seed=1, rank_stats=False)
    fast = monte_carlo(low, typ, high, w, b, method=method, draws=draws, top_k=k, seed=2, rank_stats=False,
                       screen=True)
    out = fast.screened
    assert out.dtype == bool and 0 < out.sum() < out.size
    # Sound: every screened candidate has top_k interval dominators by brute force; here every criterion is
    # firm (alpha = 50 · w / sum(w) >= 1) and the search complete: it screens exactly those.
    assert (50 * w / w.sum() >= 1).all()
    np.testing.assert_array_equal(out, _interval_dominators(low, high, w, b) >= k)
    # ... and never reaches the top k in the full run, whose draws are independent of the screened run's.
    assert (plain.p_top_k[out] == 0).all()
    assert (fast.p_first[out] == 0).all() and (fast.p_top_k[out] == 0).all() and np.isnan(fast.score_mean[out]).all()
    assert fast.p_first.sum() == pytest.approx(1.0) and fast.p_top_k.sum() == pytest.approx(k)
    # Survivors: two independent binomial estimates (_agree). The screened run holds the screened candidates at
    # typical values in the normalisation, a shift far below this (they are never near the top; the differences
    # seen are within 2 standard deviations).
    keep = ~out
    for field in ("p_first", "p_top_k"):
        assert _agree(getattr(plain, field)[keep], getattr(fast, field)[keep], draws), field
    assert np.isfinite(fast.score_mean[keep]).all()


def test_screening_is_blind_to_a_power_of_two_column_scale():
    """Extreme magnitudes: the screened run rescales columns by powers of two, so 2^±600 changes nothing."""
    low, typ, high, w, b = _screenable_problem(3, m=400, n=3)
    big = np.array([2.0 ** 600, 2.0 ** -600, 1.0])
    for method in ("topsis", "weighted"):
        a = monte_carlo(low, typ, high, w, b, method=method, draws=300, rank_stats=False, screen=True)
        z = monte_carlo(low * big, typ * big, high * big, w, b, method=method, draws=300, rank_stats=False,
                        screen=True)
        assert a.screened.any()
        np.testing.assert_array_equal(z.screened, a.screened)
        np.testing.assert_array_equal(z.p_top_k, a.p_top_k)
        np.testing.assert_allclose(z.score_mean, a.score_mean, rtol=1e-12)


def test_exact_twins_never_screen_each_other():
    twin = [5.0, 2.0, 7.0]
    worse = [4.0, 3.0, 6.0]   # beaten by the twins on every criterion
    w, b = [1.0, 1.0, 1.0], [True, False, True]
    for spread in (0.0, 0.05):
        typ = np.array([twin] * 4 + [worse])
        low, high = typ * (1 - spread), typ * (1 + spread)
        r = monte_carlo(low, typ, high, w, b, draws=4000, top_k=3, concentration=np.inf, rank_stats=False,
                        screen=True)
        # Each twin has three equals (no worse, never strictly better): not dominators, so it survives; the
        # fifth has four dominators.
        np.testing.assert_array_equal(r.screened, [False] * 4 + [True])
        # The twins share the first place evenly (by the random tie-break when they have no range).
        np.testing.assert_allclose(r.p_first[:4], 0.25, atol=0.03)


def test_zero_weight_criteria_are_ignored_by_the_certificate():
    rng = np.random.default_rng(8)
    typ = rng.uniform(1.0, 2.0, (30, 3))
    typ[0] = [0.5, 0.5, 9.0]   # beaten by everybody on the first two criteria, best by far on the third
    low, high = typ * 0.95, typ * 1.05
    b = [True, True, True]
    zero = monte_carlo(low, typ, high, [1.0, 1.0, 0.0], b, draws=300, rank_stats=False, screen=True)
    assert zero.screened[0] and zero.p_top_k[0] == 0.0
    assert (_interval_dominators(low, high, [1.0, 1.0, 0.0], b)[zero.screened] >= 3).all()
    some = monte_carlo(low, typ, high, [1.0, 1.0, 0.1], b, draws=300, rank_stats=False, screen=True)
    assert not some.screened[0]


def test_screening_needs_rank_stats_off_and_results_keep_their_old_constructor():
    low, typ, high, w, benefit = _ranged_problem()
    with pytest.raises(InputError, match="rank_stats"):
        monte_carlo(low, typ, high, w, benefit, screen=True)
    nan = np.full(2, np.nan)
    old = MonteCarloResult(nan, nan, nan, nan, nan, nan, "topsis", 10, 1, 50.0, 0)
    assert old.screened is None


# ------------------------------------------------------------------------------ scorers given held aggregates

def _held_case(seed, h=7, s=9, n=4, k=5):
    rng = np.random.default_rng(seed)
    held = rng.lognormal(0.0, 1.0, (h, n))
    survivors = rng.lognormal(0.0, 1.0, (s, n))
    draws = rng.lognormal(0.0, 1.0, (k, s, n))
    w = rng.dirichlet(np.ones(n), size=k)
    return held, survivors, draws, w, rng.random(n) < 0.5


def _check_scorer(method, held, survivors, draws, w, b, varied):
    """The scorer's answer against the full method on the stacked matrix (held rows first), draw by draw."""
    varied = np.asarray(varied)
    x = np.where(varied, draws, survivors)      # survivors per draw: drawn where varied, else fixed
    full = np.concatenate([np.broadcast_to(held, (x.shape[0],) + held.shape), x], axis=1)
    reference = {"topsis": topsis, "weighted": weighted_sum}[method](full, w, b)[:, held.shape[0]:]
    score = survivor_scorer(method, survivors, varied, b, held_columns(held))
    got = score(np.ascontiguousarray(np.moveaxis(x[:, :, varied], -1, 0)), w)
    np.testing.assert_allclose(got, reference, rtol=1e-12, atol=1e-15)


@pytest.mark.parametrize("method", ["topsis", "weighted"])
@pytest.mark.parametrize("varied", [[True, False, True, False], [False] * 4, [True] * 4])
def test_scorer_given_held_aggregates_equals_the_full_method(method, varied):
    for seed in range(4):
        held, survivors, draws, w, b = _held_case(seed)
        _check_scorer(method, held, survivors, draws, w, b, varied)
        _check_scorer(method, held[:0], survivors, draws, w, b, varied)        # nothing held
        _check_scorer(method, held[:1] * 50, survivors, draws, w, b, varied)   # the held row is every max


@pytest.mark.parametrize("method", ["topsis", "weighted"])
@pytest.mark.parametrize("varied", [[True, False, True, False], [False] * 4, [True] * 4])
def test_scorer_given_held_aggregates_degenerate_cases(method, varied):
    """ranking.methods' documented answers: an all-zero column adds nothing to TOPSIS, a constant column is 1.0
    in the weighted sum, everybody at the ideal point has closeness 1.0."""
    held, survivors, draws, w, b = _held_case(11)
    zero = [a.copy() for a in (held, survivors, draws)]
    for a in zero:
        a[..., 1] = 0.0            # all-zero column
        a[..., 2] = 3.5            # constant column
    _check_scorer(method, *zero, w, b, varied)
    # Everybody identical on every criterion (so at the ideal point), held rows included.
    same = [np.full_like(a, 2.0) for a in (held, survivors, draws)]
    _check_scorer(method, *same, w, b, varied)
    # Identical on the weighted criteria only; the rest weighs nothing.
    w0 = w.copy()
    w0[:, [0, 3]] = 0.0
    w0 /= w0.sum(axis=1, keepdims=True)
    _check_scorer(method, *zero, w0, b, varied)


def test_scorer_rejects_non_finite_values_and_bad_held_aggregates():
    held, survivors, draws, w, b = _held_case(2)
    score = survivor_scorer("topsis", survivors, [True] * 4, b, held_columns(held))
    bad = np.ascontiguousarray(np.moveaxis(draws, -1, 0))
    bad[1, 2, 3] = np.nan
    with pytest.raises(InputError, match="non-finite"):
        score(bad, w)
    with pytest.raises(InputError, match="held"):
        survivor_scorer("weighted", survivors, [True] * 4, b, held_columns(held)[:2])
    held[0, 0] = np.inf
    with pytest.raises(InputError, match="non-finite"):
        held_columns(held)


def test_a_big_run_in_parts_is_the_same_on_any_number_of_processors(monkeypatch):
    # 5,000 survivors × 1,000 draws: drawn in two parts side by side; one processor or two, the same numbers, and
    # the estimates agree with the plain stacked run's within their binomial error.
    from ranking import robustness

    rng = np.random.default_rng(6)
    t = np.sort(rng.random(5000))
    typ = np.column_stack([t, 1.0 - t, rng.random(5000)]) + 1.0   # a trade-off: little can be screened
    low, high, w, b = typ * 0.9, typ * 1.1, [1.0, 2.0, 0.5], [True, True, False]
    two = monte_carlo(low, typ, high, w, b, draws=1000, seed=9, rank_stats=False, screen=True)
    assert (~two.screened).sum() * 1000 >= robustness._SPLIT_CELLS
    monkeypatch.setattr(robustness.os, "cpu_count", lambda: 1)
    one = monte_carlo(low, typ, high, w, b, draws=1000, seed=9, rank_stats=False, screen=True)
    for field in ("p_first", "p_top_k", "score_mean"):
        np.testing.assert_array_equal(getattr(one, field), getattr(two, field))
    assert two.p_first.sum() == pytest.approx(1.0) and two.p_top_k.sum() == pytest.approx(3.0)
    plain = monte_carlo(low, typ, high, w, b, draws=1000, seed=9, rank_stats=False)
    keep = ~two.screened
    for field in ("p_first", "p_top_k"):
        assert _agree(getattr(plain, field)[keep], getattr(two, field)[keep], 1000), field


@pytest.mark.parametrize("budget", [0, 3_000, 60_000, 10**9])
def test_the_precheck_changes_nothing_but_the_work(budget):
    # Candidates that cannot have top_k dominators (on some criterion fewer than top_k worst ends reach their best
    # end) are left uncompared; the mask equals the full search's at every budget, including one that stops early.
    from ranking.screening import _screen

    for seed, spread in ((0, 0.05), (1, 0.2), (2, 0.5)):
        low, typ, high, w, b = _ranged_problem(seed, m=3000, n=4, spread=spread)
        firm = 50 * w / w.sum() >= 1
        fast = _screen(low, high, w, b, firm, 3, "topsis", budget)
        full = _screen(low, high, w, b, firm, 3, "topsis", budget, precheck=False)
        np.testing.assert_array_equal(fast, full)
        if budget == 10**9:
            np.testing.assert_array_equal(fast, _interval_dominators(low, high, w, b, firm) >= 3)
