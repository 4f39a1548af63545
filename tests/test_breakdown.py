"""Weibull breakdown statistics, checked side by side with scipy and reliability and against published values."""

import math
import os

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from materials.breakdown import (
    bernard_positions,
    fit_weibull,
    plotting_positions,
    ross_factor,
    scale_to_area,
    scale_to_thickness,
)
from materials.errors import InputError

os.environ.setdefault("MPLBACKEND", "Agg")

V_PER_UM = 1e6


def sample(seed, n, shape=12.0, scale=600e6):
    return scale * np.random.default_rng(seed).weibull(shape, n)


def censor_above(x, stop):
    """Type-I censoring: tests stopped at the field `stop`."""
    flags = x > stop
    return np.where(flags, stop, x), flags


@pytest.fixture(scope="module")
def reliability_fit():
    from reliability.Fitters import Fit_Weibull_2P

    def fit(x, flags, ci, quantiles=None):
        return Fit_Weibull_2P(failures=x[~flags], right_censored=x[flags] if flags.any() else None,
                              show_probability_plot=False, print_results=False, CI=ci, quantiles=quantiles)

    return fit


# --- maximum likelihood vs reference libraries -----------------------------------------------------------------

@pytest.mark.parametrize("seed, n, shape", [(1, 10, 8.0), (2, 30, 12.0), (3, 200, 25.0), (4, 2000, 4.0)])
def test_fit_matches_scipy_weibull_min_fit(seed, n, shape):
    # scipy.stats.weibull_min.fit(x, floc=0); its optimiser agrees to ~1e-6, so rtol 1e-5
    from scipy.stats import weibull_min

    x = sample(seed, n, shape)
    ref_shape, _, ref_scale = weibull_min.fit(x, floc=0)
    fit = fit_weibull(x)
    assert fit.shape == pytest.approx(ref_shape, rel=1e-5)
    assert fit.scale == pytest.approx(ref_scale, rel=1e-5)


@pytest.mark.parametrize("seed, n, stop, ci", [(5, 25, None, 0.9), (6, 40, 640e6, 0.9), (7, 60, 600e6, 0.95),
                                               (8, 15, 620e6, 0.8)])
def test_fit_and_fisher_bounds_match_reliability(reliability_fit, seed, n, stop, ci):
    # reliability 0.9 Fit_Weibull_2P (MLE, Fisher-matrix bounds, log-transformed, two-sided at CI);
    # its optimiser stops ~1e-7 from the optimum, so rtol 1e-5
    x = sample(seed, n)
    x, flags = censor_above(x, stop) if stop else (x, np.zeros(n, bool))
    ref = reliability_fit(x, flags, ci)
    fit = fit_weibull(x, flags, confidence=ci)
    assert fit.n == n and fit.censored == int(flags.sum())
    assert fit.shape == pytest.approx(ref.beta, rel=1e-5)
    assert fit.scale == pytest.approx(ref.alpha, rel=1e-5)
    np.testing.assert_allclose(fit.shape_bounds, (ref.beta_lower, ref.beta_upper), rtol=1e-5)
    np.testing.assert_allclose(fit.scale_bounds, (ref.alpha_lower, ref.alpha_upper), rtol=1e-5)
    assert fit.log_likelihood == pytest.approx(ref.loglik, rel=1e-9)


def test_quantile_bounds_match_reliability(reliability_fit):
    # reliability's quantiles table: bounds on time (field) from the delta method on ln t
    x, flags = censor_above(sample(9, 50), 630e6)
    ref = reliability_fit(x, flags, 0.9, quantiles=[0.01, 0.1, 0.5])
    fit = fit_weibull(x, flags, confidence=0.9)
    lo, hi = fit.quantile_bounds([0.01, 0.1, 0.5])
    np.testing.assert_allclose(fit.quantile([0.01, 0.1, 0.5]), ref.quantiles["Point Estimate"], rtol=1e-5)
    np.testing.assert_allclose(lo, ref.quantiles["Lower Estimate"], rtol=1e-5)
    np.testing.assert_allclose(hi, ref.quantiles["Upper Estimate"], rtol=1e-5)


def test_plotting_positions_match_reliability():
    # reliability.Probability_plotting.plotting_positions: Johnson adjusted ranks with a = 0.3 (Bernard)
    from reliability.Probability_plotting import plotting_positions as ref_positions

    x, flags = censor_above(sample(10, 40), 610e6)
    x[3], flags[3] = 450e6, True  # a censored specimen among the failures
    ref_x, ref_f = ref_positions(failures=x[~flags], right_censored=x[flags], sort=True)
    got_x, got_f = plotting_positions(x, flags)
    np.testing.assert_array_equal(got_x, ref_x)
    np.testing.assert_allclose(got_f, ref_f, rtol=1e-12)


def test_complete_samples_get_bernard_positions():
    # Fothergill, IEEE Trans. Electr. Insul. 25(3), 489 (1990): F = (i - 0.3)/(n + 0.4)
    x = sample(11, 10)
    fields, f = plotting_positions(x)
    np.testing.assert_array_equal(fields, np.sort(x))
    np.testing.assert_allclose(f, (np.arange(1, 11) - 0.3) / 10.4, rtol=1e-14)
    np.testing.assert_allclose(bernard_positions(10), f, rtol=1e-14)


# --- likelihood-ratio bounds vs an independent scipy computation ---------------------------------------------

def _loglik(x, flags, shape, scale):
    from scipy.stats import weibull_min

    return (weibull_min.logpdf(x[~flags], shape, scale=scale).sum()
            + weibull_min.logsf(x[flags], shape, scale=scale).sum())


def _profile(x, flags, fixed, a_hat, b_hat):
    """max over the free parameter with `fixed` giving (shape, scale) from it (scipy minimize_scalar)."""
    from scipy.optimize import minimize_scalar

    res = minimize_scalar(lambda t: -_loglik(x, flags, *fixed(math.exp(t))),
                          bounds=(math.log(b_hat) - 3, math.log(b_hat) + 3), method="bounded",
                          options={"xatol": 1e-12})
    return -res.fun


def test_likelihood_ratio_bounds_sit_where_the_profile_drops_by_half_chi2():
    # scipy.stats.chi2.ppf(confidence, 1)/2 is the drop of the profile log-likelihood at each LR bound
    from scipy.stats import chi2

    x, flags = censor_above(sample(12, 30), 640e6)
    fit = fit_weibull(x, flags, confidence=0.9)
    drop = chi2.ppf(0.9, 1) / 2
    top = _loglik(x, flags, fit.shape, fit.scale)
    assert top == pytest.approx(fit.log_likelihood, rel=1e-12)
    for b in fit.shape_bounds_lr:
        prof = _profile(x, flags, lambda a, b=b: (b, a), fit.scale, fit.scale)
        assert top - prof == pytest.approx(drop, rel=1e-6)
    for a in fit.scale_bounds_lr:
        prof = _profile(x, flags, lambda b, a=a: (b, a), fit.shape, fit.shape)
        assert top - prof == pytest.approx(drop, rel=1e-6)
    c = -math.log1p(-0.1)
    for xp in fit.quantile_bounds(0.1, method="lr"):
        prof = _profile(x, flags, lambda b, xp=xp: (b, xp / c ** (1 / b)), fit.shape, fit.shape)
        assert top - prof == pytest.approx(drop, rel=1e-6)


def test_lr_and_fisher_bounds_agree_for_large_samples():
    fit = fit_weibull(sample(13, 5000))
    np.testing.assert_allclose(fit.shape_bounds_lr, fit.shape_bounds, rtol=2e-3)
    np.testing.assert_allclose(fit.scale_bounds_lr, fit.scale_bounds, rtol=2e-3)
    np.testing.assert_allclose(fit.quantile_bounds(0.01, "lr"), fit.quantile_bounds(0.01), rtol=2e-3)


# --- unbiasing, quantiles, goodness of fit -------------------------------------------------------------------

@pytest.mark.parametrize("n, factor", [(5, 0.6944), (8, 0.8197), (10, 0.8584), (12, 0.8834), (15, 0.9078),
                                       (20, 0.9317), (25, 0.9457), (30, 0.9550), (50, 0.9732)])
def test_ross_factor_values(n, factor):
    # Ross (1994) (n - 2)/(n - 0.68), as quoted by Makalic & Schmidt, arXiv:2209.14567 (2022)
    assert ross_factor(n) == pytest.approx(factor, abs=5e-5)


def test_unbiased_shape_uses_the_number_of_failures():
    x, flags = censor_above(sample(14, 20), 610e6)
    fit = fit_weibull(x, flags)
    r = int((~flags).sum())
    assert fit.n_failures == r
    assert fit.shape_unbiased == pytest.approx(fit.shape * (r - 2) / (r - 0.68), rel=1e-14)
    assert math.isnan(fit_weibull([500e6, 600e6]).shape_unbiased)


def test_quantiles_invert_the_cdf():
    fit = fit_weibull(sample(15, 40))
    p = np.array([0.001, 0.01, 0.1, 0.632, 0.99])
    np.testing.assert_allclose(fit.probability(fit.quantile(p)), p, rtol=1e-12)
    assert fit.b1 == pytest.approx(fit.scale * (-math.log(0.99)) ** (1 / fit.shape))
    assert fit.b10 == fit.quantile(0.1)
    assert fit.probability(0.0) == 0.0


def test_large_sample_recovers_the_parameters():
    fit = fit_weibull(sample(16, 100_000, shape=15.0, scale=700e6))
    assert fit.shape == pytest.approx(15.0, rel=0.01)
    assert fit.scale == pytest.approx(700e6, rel=0.001)
    assert fit.plot_correlation > 0.999


def test_single_population_gives_no_mixture_warning_and_a_straight_plot():
    fit = fit_weibull(sample(17, 200))
    assert fit.mixture_warning is None
    assert fit.plot_correlation > 0.98


def test_two_populations_give_a_mixture_warning():
    # weak-spot population (low shape, low scale) under a strong one, as in large-area film tests
    rng = np.random.default_rng(18)
    x = np.concatenate([300e6 * rng.weibull(2.5, 60), 650e6 * rng.weibull(20.0, 140)])
    fit = fit_weibull(x)
    assert fit.mixture_warning is not None and "two populations" in fit.mixture_warning


def test_mixture_rule_false_alarm_rate_is_about_one_percent():
    # the rule's constant was calibrated by simulation for a 1 % false-alarm rate; a fresh check
    rng = np.random.default_rng(19)
    alarms = sum(fit_weibull(rng.weibull(7.0, 30)).mixture_warning is not None for _ in range(400))
    assert alarms <= 12


def test_too_few_failures_skip_the_mixture_check():
    assert fit_weibull(sample(20, 9)).mixture_warning is None


def test_as_dict_has_the_json_contract_keys():
    d = fit_weibull(sample(21, 12)).as_dict()
    assert set(d) == {"n", "censored", "shape", "shape_unbiased", "scale_V_per_m", "confidence", "shape_bounds",
                      "scale_bounds_V_per_m", "b1_V_per_m", "b10_V_per_m"}


# --- invariants (hypothesis) ---------------------------------------------------------------------------------

sizes = st.integers(3, 120)
seeds = st.integers(0, 2**31)
shapes = st.floats(1.5, 60.0)


@settings(max_examples=30, deadline=None)
@given(seed=seeds, n=sizes, shape=shapes, stop_q=st.floats(0.5, 1.0))
def test_fit_is_invariant_to_data_order(seed, n, shape, stop_q):
    x = sample(seed, n, shape)
    x, flags = censor_above(x, np.quantile(x, stop_q))
    if (~flags).sum() < 2 or np.ptp(x[~flags]) == 0:
        return
    perm = np.random.default_rng(seed + 1).permutation(n)
    a, b = fit_weibull(x, flags), fit_weibull(x[perm], flags[perm])
    assert b.shape == pytest.approx(a.shape, rel=1e-10)
    assert b.scale == pytest.approx(a.scale, rel=1e-12)


@settings(max_examples=30, deadline=None)
@given(seed=seeds, n=sizes, shape=shapes, k=st.floats(1e-3, 1e3))
def test_scaling_fields_scales_the_scale_only(seed, n, shape, k):
    x = sample(seed, n, shape)
    a, b = fit_weibull(x), fit_weibull(k * x)
    assert b.shape == pytest.approx(a.shape, rel=1e-9)
    assert b.scale == pytest.approx(k * a.scale, rel=1e-9)


# --- area and thickness scaling ------------------------------------------------------------------------------

@pytest.mark.parametrize("shape, ratio, factor", [(5, 10, 0.631), (5, 100, 0.398), (5, 1e4, 0.158),
                                                  (10, 10, 0.794), (10, 100, 0.631), (10, 1e4, 0.398),
                                                  (15, 10, 0.858), (15, 100, 0.736), (15, 1e4, 0.541),
                                                  (20, 10, 0.891), (20, 100, 0.794), (20, 1e4, 0.631)])
def test_weakest_link_area_factors(shape, ratio, factor):
    # E2 = E1·(A1/A2)^(1/β), the area law of thin-film capacitors (ElectroComponent Sci. Technol. 9(2), 111 (1981))
    assert scale_to_area(1.0, area_from_m2=1e-4, area_to_m2=ratio * 1e-4, shape=shape) == pytest.approx(
        factor, abs=6e-4)


def test_600_V_per_um_on_1_cm2_is_239_V_per_um_on_1_m2():
    # worked example of the same law with β = 10 (reference notes §4)
    got = scale_to_area(600 * V_PER_UM, area_from_m2=1e-4, area_to_m2=1.0, shape=10)
    assert got / V_PER_UM == pytest.approx(239, abs=0.5)


@settings(max_examples=50, deadline=None)
@given(e=st.floats(1e3, 1e10), a1=st.floats(1e-8, 1e3), a2=st.floats(1e-8, 1e3), shape=st.floats(0.5, 100))
def test_area_scaling_there_and_back_is_identity(e, a1, a2, shape):
    there = scale_to_area(e, area_from_m2=a1, area_to_m2=a2, shape=shape)
    assert scale_to_area(there, area_from_m2=a2, area_to_m2=a1, shape=shape) == pytest.approx(e, rel=1e-12)


def test_area_scaling_is_vectorised():
    out = scale_to_area(np.array([500e6, 600e6]), area_from_m2=1e-4, area_to_m2=np.array([[1e-3], [1e-2]]),
                        shape=10)
    assert out.shape == (2, 2)


def test_thickness_law():
    # E ∝ d^(-a) (Zhao & Liu, Nanomaterials 10, 2473 (2020))
    got = scale_to_thickness(600e6, thickness_from_m=3e-6, thickness_to_m=12e-6, exponent=0.5)
    assert got == pytest.approx(300e6, rel=1e-14)


# --- errors --------------------------------------------------------------------------------------------------

@pytest.mark.parametrize("fields, flags, message", [
    ([500e6], None, "at least 2 failures"),
    ([500e6, 600e6, 700e6], [False, True, True], "at least 2 failures"),
    ([500e6, -1.0], None, "positive"),
    ([500e6, 0.0], None, "positive"),
    ([500e6, np.inf], None, "finite"),
    ([500e6, np.nan], None, "finite"),
    ([], None, "no breakdown"),
    ([500e6, 600e6], [False], "censored flags"),
    ([500e6, 500e6], None, "unbounded"),
])
def test_bad_samples_are_refused(fields, flags, message):
    with pytest.raises(InputError, match=message):
        fit_weibull(fields, flags)


def test_bad_arguments_are_refused():
    fit = fit_weibull(sample(22, 10))
    for bad in (0.0, 1.0, 1.5):
        with pytest.raises(InputError):
            fit.quantile(bad)
    with pytest.raises(InputError):
        fit_weibull(sample(22, 10), confidence=1.0)
    with pytest.raises(InputError):
        fit.quantile_bounds(0.1, method="bootstrap")
    with pytest.raises(InputError):
        scale_to_area(1.0, area_from_m2=0.0, area_to_m2=1.0, shape=10)
    with pytest.raises(InputError):
        scale_to_thickness(1.0, thickness_from_m=-1.0, thickness_to_m=1.0, exponent=0.5)
