"""The maximum-likelihood two-parameter Weibull fit of breakdown fields (IEEE Std 930-2004 / IEC 62539:2007), with
Ross's small-sample unbiasing, Fisher and likelihood-ratio bounds, and a goodness-of-fit figure and warning."""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import cached_property

import numpy as np

from materials.breakdown.likelihood import _as_sample, _expand, _Sample, _solve_decreasing
from materials.breakdown.positions import plotting_positions
from materials.errors import InputError

#: Threshold constant of the two-population check: the Weibull plot's lower-half and upper-half slopes are
#: flagged when |ln(slope ratio)| > MIXTURE_LIMIT / sqrt(failures). The constant was calibrated by Monte Carlo
#: simulation of single-population Weibull samples (20 000 samples for each n from 10 to 1000): the 99th
#: percentile of |ln ratio|·sqrt(n) is 5.4–5.6 for n >= 20 and 6.2 at n = 10, so 6 gives about a 1 % false alarm
#: rate (slightly more at n = 10). The statistic is invariant to the true shape and scale, so one constant serves.
MIXTURE_LIMIT = 6.0

#: Fewest failures for which the two-population check is made.
MIXTURE_MIN_FAILURES = 10


def ross_factor(n_failures):
    """Ross's small-sample unbiasing factor for the maximum-likelihood Weibull shape.

    ``U(n) = (n - 2)/(n - 0.68)``; ``shape_unbiased = U(n)·shape``. Ross (1994) for complete samples, as quoted by
    Makalic & Schmidt, arXiv:2209.14567 (2022). For censored samples the same factor is used with n = number of
    failures, an approximation to Ross (1996).

    Args:
        n_failures: number of failures (>= 2); arrays accepted.

    Returns:
        The factor (0 at n = 2, tending to 1 for large n).
    """
    n = np.asarray(n_failures, dtype=float)
    if np.any(n < 2):
        raise InputError("Ross's unbiasing factor needs at least 2 failures")
    out = (n - 2.0) / (n - 0.68)
    return float(out) if out.ndim == 0 else out


def _normal_quantile(p: float) -> float:
    from statistics import NormalDist

    return NormalDist().inv_cdf(p)


@dataclass(frozen=True)
class WeibullFit:
    """A two-parameter Weibull fit of breakdown fields (maximum likelihood, IEEE Std 930-2004 practice).

    Attributes:
        shape: maximum-likelihood shape β.
        shape_unbiased: β times Ross's factor (n_failures - 2)/(n_failures - 0.68); NaN for 2 failures, where
            the factor is 0 and the correction is meaningless.
        scale: maximum-likelihood scale α (V/m), the 63.2 % breakdown field.
        n: number of specimens (failures + censored).
        n_censored: number of censored specimens (test stopped without breakdown).
        confidence: two-sided confidence level of the bounds (0.9 gives 5 % and 95 % limits).
        shape_bounds, scale_bounds: Fisher-matrix bounds, ``θ·exp(±z·SE/θ)`` (log-transformed normal
            approximation, as the `reliability` library computes them).
        log_likelihood: the maximised log-likelihood (fields in V/m).
        covariance: inverse observed information, ((var α, cov), (cov, var β)).
        iterations: Newton iterations of the shape equation.
        failure_fields, censored_fields: the data (V/m), kept for plots and lazily computed figures.

    Also (computed on first access and cached, since they need nested root finding or a sort):
    ``shape_bounds_lr`` and ``scale_bounds_lr`` (likelihood-ratio bounds), ``plot_correlation`` (goodness of
    fit) and ``mixture_warning`` (str or None).
    """

    shape: float
    shape_unbiased: float
    scale: float
    n: int
    n_censored: int
    confidence: float
    shape_bounds: tuple[float, float]
    scale_bounds: tuple[float, float]
    log_likelihood: float
    covariance: tuple[tuple[float, float], tuple[float, float]]
    iterations: int
    failure_fields: np.ndarray = field(repr=False, compare=False)
    censored_fields: np.ndarray = field(repr=False, compare=False)

    # --- counts ---------------------------------------------------------------------------------------------
    @property
    def censored(self) -> int:
        """Number of censored specimens."""
        return self.n_censored

    @property
    def n_failures(self) -> int:
        """Number of specimens that broke down."""
        return self.n - self.n_censored

    # --- distribution ---------------------------------------------------------------------------------------
    def probability(self, field_V_per_m):
        """Failure probability F(E) = 1 - exp(-(E/α)^β) at a field (V/m) on the test area."""
        from materials.breakdown.scaling import failure_probability

        e = np.clip(np.asarray(field_V_per_m, dtype=float), 0.0, None)
        return failure_probability(e, scale_V_per_m=self.scale, shape=self.shape, test_area_m2=1.0, area_m2=1.0)

    def quantile(self, p):
        """Field (V/m) at failure probability p: ``E_p = α·(-ln(1-p))^(1/β)``."""
        q = _check_probability(p)
        out = self.scale * np.power(-np.log1p(-q), 1.0 / self.shape)
        return float(out) if out.ndim == 0 else out

    @property
    def b1(self) -> float:
        """Field at 1 % failure probability (V/m)."""
        return self.quantile(0.01)

    @property
    def b10(self) -> float:
        """Field at 10 % failure probability (V/m)."""
        return self.quantile(0.10)

    def quantile_bounds(self, p, method: str = "fisher"):
        """Two-sided bounds (V/m) on the p-quantile at the fit's confidence level.

        ``method="fisher"``: delta method on ``ln E_p = ln α + ln(-ln(1-p))/β`` with the Fisher covariance,
        bounds ``E_p·exp(±z·SE)`` (as `reliability` computes time bounds). ``method="lr"``: likelihood-ratio
        bounds, where the profile log-likelihood with E_p held fixed falls by χ²₁(confidence)/2.

        Returns:
            ``(lower, upper)``, floats for a scalar p, arrays otherwise.
        """
        q = _check_probability(p)
        if method == "fisher":
            xp = self.quantile(q)
            se = np.sqrt(self._var_log_quantile(np.log(-np.log1p(-q))))
            lo, hi = xp * np.exp(-self._z * se), xp * np.exp(self._z * se)
        elif method == "lr":
            flat = np.atleast_1d(q).ravel()
            pairs = np.array([self._lr_bounds(math.log(-math.log1p(-pp))) for pp in flat])
            lo, hi = pairs[:, 0].reshape(q.shape), pairs[:, 1].reshape(q.shape)
        else:
            raise InputError(f"unknown bound method {method!r}: use 'fisher' or 'lr'", field="method")
        if np.ndim(lo) == 0:
            return float(lo), float(hi)
        return lo, hi

    # --- likelihood-ratio bounds ----------------------------------------------------------------------------
    @cached_property
    def shape_bounds_lr(self) -> tuple[float, float]:
        """Likelihood-ratio bounds on the shape: profile log-likelihood down by χ²₁(confidence)/2."""
        from scipy.optimize import brentq

        s = self._sample
        target = s.profile_shape(self.shape) - 0.5 * self._z**2

        def f(b):
            return s.profile_shape(b) - target

        step = math.exp(self._z * math.sqrt(self.covariance[1][1]) / self.shape)
        lo = _expand(f, self.shape, 1.0 / step)
        hi = _expand(f, self.shape, step)
        return (brentq(f, lo, self.shape, xtol=1e-13 * self.shape, rtol=1e-13),
                brentq(f, self.shape, hi, xtol=1e-13 * self.shape, rtol=1e-13))

    @cached_property
    def scale_bounds_lr(self) -> tuple[float, float]:
        """Likelihood-ratio bounds on the scale (V/m): profile log-likelihood down by χ²₁(confidence)/2."""
        return self._lr_bounds(0.0)

    # --- goodness of fit ------------------------------------------------------------------------------------
    @cached_property
    def _plot(self) -> tuple[np.ndarray, np.ndarray]:
        xs, F = plotting_positions(*self._data())
        return np.log(xs), np.log(-np.log1p(-F))

    @cached_property
    def plot_correlation(self) -> float:
        """Correlation coefficient of the Weibull plot (ln E against ln(-ln(1-F)), Bernard/Johnson positions).

        Near 1 for a good straight-line fit; NaN when the failures are too few or all equal.
        """
        x, y = self._plot
        if x.size < 3 or np.ptp(x) == 0:
            return math.nan
        return float(np.corrcoef(x, y)[0, 1])

    @cached_property
    def mixture_warning(self) -> str | None:
        """A warning when the Weibull plot bends as if the data held two populations, else None.

        Rule: straight lines (ln E on the Weibull variate) are fitted separately to the lower and the upper half
        of the failures on the Weibull plot; the warning is given when |ln(slope_lower/slope_upper)| exceeds
        ``MIXTURE_LIMIT/sqrt(failures)`` (about a 1 % false alarm rate for one Weibull population, calibrated by
        Monte Carlo for complete samples and used unchanged with censoring). No check below 10 failures.
        """
        x, y = self._plot
        r = x.size
        if r < MIXTURE_MIN_FAILURES:
            return None
        h = r // 2
        b_low, b_up = _slope(y[:h], x[:h]), _slope(y[h:], x[h:])
        if b_low <= 0 or b_up <= 0:
            return ("Weibull plot is flat over half of the failures; the data may hold two populations "
                    "(for example weak spots), and area scaling of such data is unreliable")
        stat = abs(math.log(b_low / b_up))
        if stat <= MIXTURE_LIMIT / math.sqrt(r):
            return None
        return (f"Weibull plot bends: shape about {1 / b_low:.3g} over the lower half of the failures and "
                f"{1 / b_up:.3g} over the upper half (beyond the 1 % limit for one population); the data may hold "
                "two populations (for example weak spots), and area scaling of such data is unreliable")

    def as_dict(self) -> dict:
        """The fit as plain numbers with SI-suffixed keys (the `breakdown fit` JSON contract)."""
        return {
            "n": self.n,
            "censored": self.n_censored,
            "shape": self.shape,
            "shape_unbiased": self.shape_unbiased,
            "scale_V_per_m": self.scale,
            "confidence": self.confidence,
            "shape_bounds": list(self.shape_bounds),
            "scale_bounds_V_per_m": list(self.scale_bounds),
            "b1_V_per_m": self.b1,
            "b10_V_per_m": self.b10,
        }

    # --- internals ------------------------------------------------------------------------------------------
    @property
    def _z(self) -> float:
        return _normal_quantile(0.5 + 0.5 * self.confidence)

    def _data(self) -> tuple[np.ndarray, np.ndarray]:
        """All fields (V/m), failures first, and their censored flags."""
        x = np.concatenate([self.failure_fields, self.censored_fields])
        c = np.concatenate([np.zeros(self.failure_fields.size, bool), np.ones(self.censored_fields.size, bool)])
        return x, c

    @cached_property
    def _sample(self) -> _Sample:
        return _Sample(*self._data())

    def _var_log_quantile(self, k):
        (va, cab), (_, vb) = self.covariance
        a, b = self.scale, self.shape
        # ln E_p = ln a + k/b: gradient (1/a, -k/b²)
        return va / a**2 + k**2 * vb / b**4 - 2.0 * k * cab / (a * b**2)

    def _lr_bounds(self, k: float) -> tuple[float, float]:
        from scipy.optimize import brentq

        s = self._sample
        a_hat = math.log(self.scale) - s.log_ref + k / self.shape
        target = s.profile_at(a_hat, k, self.shape)[0] - 0.5 * self._z**2

        def f(a):
            return s.profile_at(a, k, self.shape)[0] - target

        step = self._z * math.sqrt(max(self._var_log_quantile(k), 1e-300))
        bounds = []
        for sign in (-1.0, 1.0):
            far = a_hat + sign * step
            for _ in range(60):
                if f(far) <= 0:
                    break
                far = a_hat + 2.0 * (far - a_hat)
            else:  # pragma: no cover - the profile falls without limit for any sample with 2 distinct failures
                raise InputError("likelihood-ratio bound not found: the likelihood is too flat")
            root = brentq(f, min(far, a_hat), max(far, a_hat), xtol=1e-13, rtol=1e-13)
            bounds.append(math.exp(root + s.log_ref))
        return bounds[0], bounds[1]


def _check_probability(p) -> np.ndarray:
    q = np.asarray(p, dtype=float)
    if not np.all((q > 0) & (q < 1)):
        raise InputError("failure probability must lie strictly between 0 and 1", field="p")
    return q


def _slope(y: np.ndarray, x: np.ndarray) -> float:
    """Least-squares slope of x on y."""
    yc = y - y.mean()
    den = float((yc * yc).sum())
    return float((yc * (x - x.mean())).sum()) / den if den > 0 else math.nan


def fit_weibull(fields_V_per_m, censored=None, confidence: float = 0.9) -> WeibullFit:
    """Fit a two-parameter Weibull distribution to breakdown fields by maximum likelihood.

    The method of IEEE Std 930-2004 / IEC 62539:2007: with r failures among n specimens, the scale is eliminated
    by its closed form ``α^β = Σ_all E^β / r`` and the shape solves the profile equation
    ``1/β + (1/r)·Σ_failures ln E - Σ_all E^β ln E / Σ_all E^β = 0`` (Makalic & Schmidt 2022, with censored
    terms in the sums), whose left side decreases in β; it is solved by Newton's method inside a shrinking
    bracket. Fisher bounds come from the analytic observed information at the optimum.

    Args:
        fields_V_per_m: breakdown fields, or for censored specimens the field where the test stopped (V/m).
        censored: optional booleans, True where the specimen did not break down.
        confidence: two-sided confidence level of the bounds, in (0, 1).

    Returns:
        A :class:`WeibullFit`.

    Raises:
        InputError: fewer than 2 failures, non-positive or non-finite fields, failures that leave the shape
            unbounded (all at the largest field), or a confidence outside (0, 1).
    """
    if not 0 < confidence < 1:
        raise InputError("confidence must lie strictly between 0 and 1", field="confidence")
    x, c = _as_sample(fields_V_per_m, censored)
    s = _Sample(x, c)
    r = s.r
    if r < 2:
        raise InputError(f"a Weibull fit needs at least 2 failures, got {r}", field="fields_V_per_m")
    uf_mean = s.sum_uf / r
    if uf_mean >= -1e-15:
        raise InputError("the failures all sit at the largest field: the Weibull shape is unbounded",
                         field="fields_V_per_m")
    sd = float(np.std(s.uf))
    beta0 = math.pi / math.sqrt(6.0) / sd if sd > 0 else 1.0
    beta, (s0, m1, var), iterations = _solve_decreasing(s.shape_score, beta0)

    v = (math.log(s0) - math.log(r)) / beta  # ln(α) - ln(max field)
    alpha = math.exp(v + s.log_ref)
    sum_tl = r * (m1 - v)
    sum_tl2 = r * (var + (m1 - v) ** 2)
    info_aa = beta**2 * r / alpha**2
    info_ab = -(beta / alpha) * sum_tl
    info_bb = r / beta**2 + sum_tl2
    det = info_aa * info_bb - info_ab**2
    var_a, var_b, cov_ab = info_bb / det, info_aa / det, -info_ab / det

    z = _normal_quantile(0.5 + 0.5 * confidence)
    ka, kb = math.exp(z * math.sqrt(var_a) / alpha), math.exp(z * math.sqrt(var_b) / beta)
    loglik = r * math.log(beta) - r * beta * math.log(alpha) + (beta - 1.0) * (s.sum_uf + r * s.log_ref) - r

    return WeibullFit(
        shape=beta,
        shape_unbiased=beta * ross_factor(r) if r > 2 else math.nan,
        scale=alpha,
        n=int(x.size),
        n_censored=int(x.size - r),
        confidence=float(confidence),
        shape_bounds=(beta / kb, beta * kb),
        scale_bounds=(alpha / ka, alpha * ka),
        log_likelihood=loglik,
        covariance=((var_a, cov_ab), (cov_ab, var_b)),
        iterations=iterations,
        failure_fields=x[~c] if s.any_censored else x.copy(),
        censored_fields=x[c],
    )
