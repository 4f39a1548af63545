"""Life of insulation under electrical and thermal stress: acceleration laws, ramp tests and endurance fits.

- Inverse power law in voltage or field, ``L ∝ S^-n`` (Nelson, *Accelerated Testing*, Wiley 1990, ch. 2).
- Arrhenius, ``L ∝ exp(Ea/(k·T))``, and its halving-interval form: life halves every ``halving_K`` kelvin
  (the "10-degree rule" family; Montsinger, Trans. AIEE 49, 776-792 (1930)).
- The combined voltage-temperature law used for multilayer ceramic capacitor life testing
  ``t1/t2 = (V2/V1)^n · exp[(Ea/k)(1/T1 - 1/T2)]`` (T.I. Prokopowicz & A.R. Vaskas, "Research and development,
  intrinsic reliability, subminiature ceramic capacitors", final report ECOM-90705-F, NTIS AD-864068, 1969).
- Ramp (progressive-stress) tests under cumulative exposure: a material whose constant-stress life is Weibull in
  time with shape β_t and scale ∝ E^-n breaks down, under a field rising at a constant rate R, with a Weibull
  distribution of the breakdown field whose shape is (n+1)·β_t (Starr & Endicott, "Progressive stress - a new
  accelerated approach to voltage endurance", Trans. AIEE III 80, 515-522 (1961); Nelson 1990, ch. 10).
- Weibull-power-law (and Weibull-power-Arrhenius) maximum likelihood with right-censoring, Fisher and
  likelihood-ratio bounds, and a likelihood-ratio test of a common Weibull shape across stress levels
  (Nelson 1990, ch. 4-5; Meeker & Escobar, *Statistical Methods for Reliability Data*, Wiley 1998, ch. 17).

SI in and out: seconds, kelvin, volts or V/m (any consistent stress unit for ratios), eV for activation energy.
Arrays broadcast wherever a number is accepted.
"""

from __future__ import annotations

import math
from dataclasses import dataclass, field
from functools import cached_property

import numpy as np

from materials.breakdown.fit import _check_probability, _normal_quantile
from materials.energy import _out
from materials.errors import InputError
from materials.weibull_regression import fit_regression, shape_test

#: Boltzmann constant in eV/K: k/e with both SI-exact (2019 redefinition).
BOLTZMANN_EV_PER_K = 1.380649e-23 / 1.602176634e-19

#: Significance level of the likelihood-ratio test for a common Weibull shape across stress levels.
SHAPE_TEST_LEVEL = 0.05


def _positive(value, name: str) -> np.ndarray:
    a = np.asarray(value, dtype=float)
    if not np.all(a > 0):
        raise InputError(f"{name} must be positive", field=name)
    return a


# --- acceleration laws ---------------------------------------------------------------------------------------

def power_law_ratio(*, stress_test, stress_use, n):
    """Life ratio L_use/L_test of the inverse power law ``L ∝ S^-n`` (stress S: voltage or field).

    ``L_use/L_test = (S_test/S_use)^n`` (Nelson 1990, ch. 2).
    """
    s_test, s_use = _positive(stress_test, "stress_test"), _positive(stress_use, "stress_use")
    return _out(np.power(s_test / s_use, np.asarray(n, dtype=float)))


def power_law_exponent(*, life_ratio, stress_test, stress_use):
    """Exponent n of the inverse power law from one acceleration factor: ``n = ln(L_use/L_test)/ln(S_test/S_use)``."""
    r = _positive(life_ratio, "life_ratio")
    s_test, s_use = _positive(stress_test, "stress_test"), _positive(stress_use, "stress_use")
    if np.any(s_test == s_use):
        raise InputError("test and use stresses are equal: the exponent is undefined", field="stress_test")
    return _out(np.log(r) / np.log(s_test / s_use))


def arrhenius_ratio(*, t_test_K, t_use_K, ea_eV):
    """Life ratio L_use/L_test of the Arrhenius law ``L ∝ exp(Ea/(k·T))``.

    ``L_use/L_test = exp[(Ea/k)(1/T_use - 1/T_test)]`` with k in eV/K.
    """
    t_test, t_use = _positive(t_test_K, "t_test_K"), _positive(t_use_K, "t_use_K")
    ea = np.asarray(ea_eV, dtype=float)
    return _out(np.exp(ea / BOLTZMANN_EV_PER_K * (1.0 / t_use - 1.0 / t_test)))


def halving_ratio(*, t_test_K, t_use_K, halving_K):
    """Life ratio L_use/L_test when life halves every ``halving_K`` kelvin: ``2^((T_test - T_use)/halving_K)``."""
    t_test, t_use = _positive(t_test_K, "t_test_K"), _positive(t_use_K, "t_use_K")
    h = _positive(halving_K, "halving_K")
    return _out(np.exp2((t_test - t_use) / h))


def life_ratio(*, v_test, v_use, t_test_K, t_use_K, n, ea_eV=None, halving_K=None):
    """Life at use conditions over life at test conditions, voltage and temperature together.

    ``L_use/L_test = (V_test/V_use)^n · exp[(Ea/k)(1/T_use - 1/T_test)]`` (Prokopowicz & Vaskas 1969), or with
    the temperature factor ``2^((T_test - T_use)/halving_K)`` when a halving interval is given instead of Ea.
    Exactly one of ``ea_eV`` and ``halving_K`` is required unless the two temperatures are equal.
    """
    if ea_eV is not None and halving_K is not None:
        raise InputError("give either an activation energy or a halving interval, not both", field="ea_eV")
    volt = power_law_ratio(stress_test=v_test, stress_use=v_use, n=n)
    if ea_eV is not None:
        return _out(volt * arrhenius_ratio(t_test_K=t_test_K, t_use_K=t_use_K, ea_eV=ea_eV))
    if halving_K is not None:
        return _out(volt * halving_ratio(t_test_K=t_test_K, t_use_K=t_use_K, halving_K=halving_K))
    if np.any(np.asarray(t_test_K, dtype=float) != np.asarray(t_use_K, dtype=float)):
        raise InputError("test and use temperatures differ: give ea_eV or halving_K", field="ea_eV")
    return _out(volt)


def b_life(*, scale_s, shape, fraction):
    """Weibull life at a failure fraction p: ``t_p = η·(-ln(1-p))^(1/β)`` (B10 life: p = 0.1)."""
    eta, beta = _positive(scale_s, "scale_s"), _positive(shape, "shape")
    q = _check_probability(fraction)
    return _out(eta * np.power(-np.log1p(-q), 1.0 / beta))


# --- ramp tests ------------------------------------------------------------------------------------------------

@dataclass(frozen=True)
class ConstantStressLife:
    """Constant-stress Weibull life converted from a ramp test, with its sensitivity to the exponent n.

    Attributes:
        scale_s: Weibull scale η (s) of the time to failure at the field.
        shape: Weibull shape β_t in time.
        scale_sensitivity: ``d ln η / d n`` = ln(α/E) - 1/(n+1): the relative change of η per unit of n.
        shape_sensitivity: ``d ln β_t / d n`` = -1/(n+1).
    """

    scale_s: np.ndarray | float
    shape: np.ndarray | float
    scale_sensitivity: np.ndarray | float
    shape_sensitivity: np.ndarray | float

    def b_life(self, fraction):
        """Time (s) to the failure fraction p at the field."""
        return b_life(scale_s=self.scale_s, shape=self.shape, fraction=fraction)


def ramp_to_constant(*, ramp_scale_V_per_m, ramp_shape, ramp_rate_V_per_m_s, n, field_V_per_m):
    """Constant-stress life at a field from a ramp-test Weibull fit, under cumulative exposure.

    With constant-stress life Weibull in time, ``η(E) = η_r·(E/E_r)^-n``, shape β_t, and a field ``E = R·t``,
    the exposure accumulated by time t is ``∫(R·s/E_r)^n ds / η_r = E^(n+1)/((n+1)·R·E_r^n·η_r)``, so the
    breakdown field is Weibull with shape ``β_E = (n+1)·β_t`` and scale α where
    ``α^(n+1) = (n+1)·R·E_r^n·η_r`` (Starr & Endicott 1961). Inverting:
    ``β_t = β_E/(n+1)`` and ``η(E) = α/((n+1)·R) · (α/E)^n``.

    Args:
        ramp_scale_V_per_m: Weibull scale α of the ramp breakdown field (V/m).
        ramp_shape: Weibull shape β_E of the ramp breakdown field.
        ramp_rate_V_per_m_s: field rise rate R of the ramp (V/(m·s)).
        n: exponent of the inverse power law of life (> 0).
        field_V_per_m: constant field at which the life is wanted (V/m).
    """
    alpha = _positive(ramp_scale_V_per_m, "ramp_scale_V_per_m")
    beta_e = _positive(ramp_shape, "ramp_shape")
    rate = _positive(ramp_rate_V_per_m_s, "ramp_rate_V_per_m_s")
    nn = _positive(n, "n")
    e = _positive(field_V_per_m, "field_V_per_m")
    scale = alpha / ((nn + 1.0) * rate) * np.power(alpha / e, nn)
    return ConstantStressLife(
        scale_s=_out(scale),
        shape=_out(beta_e / (nn + 1.0)),
        scale_sensitivity=_out(np.log(alpha / e) - 1.0 / (nn + 1.0)),
        shape_sensitivity=_out(-1.0 / (nn + 1.0)),
    )


def constant_to_ramp(*, scale_s, shape, field_V_per_m, n, ramp_rate_V_per_m_s):
    """Ramp-test Weibull (scale in V/m, shape) expected from a constant-stress life, the inverse of
    :func:`ramp_to_constant`: ``β_E = (n+1)·β_t``, ``α^(n+1) = (n+1)·R·E^n·η(E)``."""
    eta, beta_t = _positive(scale_s, "scale_s"), _positive(shape, "shape")
    e, nn = _positive(field_V_per_m, "field_V_per_m"), _positive(n, "n")
    rate = _positive(ramp_rate_V_per_m_s, "ramp_rate_V_per_m_s")
    log_alpha = (np.log(nn + 1.0) + np.log(rate) + nn * np.log(e) + np.log(eta)) / (nn + 1.0)
    return _out(np.exp(log_alpha)), _out((nn + 1.0) * beta_t)


# --- endurance fit -----------------------------------------------------------------------------------------------

@dataclass(frozen=True)
class EnduranceFit:
    """Weibull-inverse-power-law (optionally with Arrhenius temperature) fit of times to failure.

    Model: time to failure at stress S (and temperature T) is Weibull with shape β and scale
    ``η(S, T) = η_ref·(S/S_ref)^-n·exp[(Ea/k)(1/T - 1/T_ref)]``.

    Attributes:
        n: exponent of the inverse power law (life ∝ S^-n).
        shape: common Weibull shape β.
        scale_ref_s: η (s) at the reference stress (and temperature).
        stress_ref: reference stress, the geometric mean of the stresses (same unit as the data).
        temperature_ref_K: reference temperature, 1/mean(1/T) (None without temperatures).
        ea_eV: activation energy (None without temperatures).
        confidence: two-sided level of the bounds.
        n_bounds, ea_bounds_eV: Fisher bounds, estimate ± z·SE.
        shape_bounds, scale_ref_bounds_s: Fisher bounds on the log scale, θ·exp(±z·SE/θ).
        log_likelihood: maximised log-likelihood (density in t, times in s).
        covariance: inverse observed information of (ln η_ref, n, [Ea], ln(1/β)).
        n_failures, n_censored: counts.
        shape_by_level: separate-fit Weibull shapes keyed by stress (or (stress, T)) level, for levels with at
            least 2 distinct failure times.
        shape_test_p: p-value of the likelihood-ratio test that those levels share one shape (NaN if < 2 levels).
        shape_warning: a sentence when the test rejects a common shape at SHAPE_TEST_LEVEL, else None.
    """

    n: float
    shape: float
    scale_ref_s: float
    stress_ref: float
    temperature_ref_K: float | None
    ea_eV: float | None
    confidence: float
    n_bounds: tuple[float, float]
    shape_bounds: tuple[float, float]
    scale_ref_bounds_s: tuple[float, float]
    ea_bounds_eV: tuple[float, float] | None
    log_likelihood: float
    covariance: np.ndarray = field(repr=False)
    n_failures: int = 0
    n_censored: int = 0
    shape_by_level: dict = field(default_factory=dict, repr=False)
    shape_test_p: float = math.nan
    shape_warning: str | None = None
    _data: tuple = field(default=(), repr=False, compare=False)

    def _row(self, stress, temperature_K):
        """Design row(s) (1, -ln(S/S_ref)[, (1/T - 1/T_ref)/k]) on the last axis."""
        if (self.ea_eV is None) != (temperature_K is None):
            raise InputError("give temperature_K exactly when the fit has a temperature term", field="temperature_K")
        x1 = -np.log(_positive(stress, "stress") / self.stress_ref)
        cols = [np.ones_like(x1), x1]
        if self.ea_eV is not None:
            t = _positive(temperature_K, "temperature_K")
            cols.append((1.0 / t - 1.0 / self.temperature_ref_K) / BOLTZMANN_EV_PER_K)
        return np.stack(np.broadcast_arrays(*cols), axis=-1)

    @property
    def _coef(self) -> np.ndarray:
        c = [math.log(self.scale_ref_s), self.n]
        return np.array(c + ([self.ea_eV] if self.ea_eV is not None else []))

    def scale_at(self, stress, temperature_K=None):
        """Weibull scale η (s) at a stress (and temperature)."""
        return _out(np.exp(self._row(stress, temperature_K) @ self._coef))

    def mean_life_at(self, stress, temperature_K=None):
        """Mean time to failure η·Γ(1 + 1/β) (s) at a stress (and temperature)."""
        return _out(self.scale_at(stress, temperature_K) * math.gamma(1.0 + 1.0 / self.shape))

    def b_life(self, fraction, stress, temperature_K=None):
        """Time (s) by which the fraction p has failed at a stress (and temperature)."""
        return b_life(scale_s=self.scale_at(stress, temperature_K), shape=self.shape, fraction=fraction)

    def b_life_bounds(self, fraction, stress, temperature_K=None):
        """Fisher bounds (s) on the B-life: delta method on ``ln t_p = x·b + σ·ln(-ln(1-p))``."""
        row = self._row(stress, temperature_K)
        k = np.log(-np.log1p(-_check_probability(fraction)))
        lead = np.broadcast_shapes(row.shape[:-1], k.shape)
        grad = np.concatenate([np.broadcast_to(row, lead + row.shape[-1:]),
                               np.broadcast_to(k / self.shape, lead)[..., None]], axis=-1)
        se = np.sqrt(np.einsum("...i,ij,...j->...", grad, self.covariance, grad))
        tp = np.asarray(self.b_life(fraction, stress, temperature_K))
        z = _normal_quantile(0.5 + 0.5 * self.confidence)
        return _out(tp * np.exp(-z * se)), _out(tp * np.exp(z * se))

    @cached_property
    def n_bounds_lr(self) -> tuple[float, float]:
        """Likelihood-ratio bounds on n: the profile log-likelihood falls by χ²₁(confidence)/2."""
        from scipy.optimize import brentq

        y, X, failed = self._data
        z = _normal_quantile(0.5 + 0.5 * self.confidence)
        target = self.log_likelihood - 0.5 * z * z
        rest = [i for i in range(X.shape[1]) if i != 1]

        def f(n):
            return fit_regression(y, X[:, rest], failed, offset=n * X[:, 1])[1] - target

        se = math.sqrt(self.covariance[1, 1])
        out = []
        for sign in (-1.0, 1.0):
            step = sign * max(z * se, 1e-3)
            for _ in range(60):
                if f(self.n + step) < 0:
                    break
                step *= 2.0
            else:  # pragma: no cover - the profile falls without limit for usable data
                raise InputError("likelihood-ratio bound on n not found: the likelihood is too flat")
            a, b = sorted((self.n, self.n + step))
            out.append(brentq(f, a, b, xtol=1e-10 * max(1.0, abs(self.n))))
        return out[0], out[1]


def _levels(stress, temps) -> list:
    return stress.tolist() if temps is None else list(zip(stress.tolist(), temps.tolist(), strict=True))


def fit_endurance(times_s, stress, *, censored=None, temperatures_K=None, confidence: float = 0.9) -> EnduranceFit:
    """Fit the Weibull-inverse-power-law (Weibull-power-Arrhenius with temperatures) model by maximum likelihood.

    The log time follows a smallest-extreme-value regression ``ln t = ln η_ref - n·ln(S/S_ref)
    [+ (Ea/k)(1/T - 1/T_ref)] + W/β`` (Nelson 1990, ch. 4; Meeker & Escobar 1998, ch. 17), solved by a
    trust-region Newton method with the analytic gradient and Hessian; right-censored times enter through the
    survival function. Bounds come from the observed information.

    Args:
        times_s: times to failure, or for censored units the time the test stopped (s).
        stress: voltage or field of each unit (one unit throughout; n does not depend on it).
        censored: optional booleans, True where the unit had not failed.
        temperatures_K: optional temperature of each unit; adds the Arrhenius term.
        confidence: two-sided level of the bounds, in (0, 1).
    """
    if not 0 < confidence < 1:
        raise InputError("confidence must lie strictly between 0 and 1", field="confidence")
    t = np.asarray(times_s, dtype=float).ravel()
    s = np.asarray(stress, dtype=float).ravel()
    if t.size == 0 or s.size != t.size:
        raise InputError(f"{s.size} stresses for {t.size} times", field="stress")
    if not (np.all(t > 0) and np.all(np.isfinite(t))):
        raise InputError("times must be positive finite numbers", field="times_s")
    _positive(s, "stress")
    failed = np.ones(t.size, bool) if censored is None else ~np.asarray(censored, dtype=bool).ravel()
    if failed.size != t.size:
        raise InputError(f"{failed.size} censored flags for {t.size} times", field="censored")
    if np.unique(s[failed]).size < 2:
        raise InputError("a life-stress fit needs failures at 2 or more stress levels", field="stress")
    s_ref = float(np.exp(np.mean(np.log(s))))
    cols = [np.ones(t.size), -np.log(s / s_ref)]
    temps, t_ref = None, None
    if temperatures_K is not None:
        temps = np.asarray(temperatures_K, dtype=float).ravel()
        if temps.size != t.size:
            raise InputError(f"{temps.size} temperatures for {t.size} times", field="temperatures_K")
        _positive(temps, "temperatures_K")
        if np.unique(temps[failed]).size < 2:
            raise InputError("an Arrhenius term needs failures at 2 or more temperatures", field="temperatures_K")
        t_ref = float(1.0 / np.mean(1.0 / temps))
        cols.append((1.0 / temps - 1.0 / t_ref) / BOLTZMANN_EV_PER_K)
    X = np.column_stack(cols)
    if np.linalg.matrix_rank(X[failed]) < X.shape[1]:
        raise InputError("stress and temperature vary together: n and Ea cannot be separated", field="stress")
    y = np.log(t)
    theta, ll, info = fit_regression(y, X, failed)
    cov = np.linalg.inv(info)
    se = np.sqrt(np.diag(cov))
    z = _normal_quantile(0.5 + 0.5 * confidence)
    beta, eta = math.exp(-theta[-1]), math.exp(theta[0])
    shapes, p = shape_test(y, failed, _levels(s, temps))
    warning = None
    if p < SHAPE_TEST_LEVEL:
        spread = ", ".join(f"{k}: {v:.3g}" for k, v in shapes.items())
        warning = (f"Weibull shape differs between stress levels (likelihood-ratio p = {p:.2g}; {spread}): "
                   "one failure mode across the levels is doubtful, and extrapolation with a common shape is unsafe")
    return EnduranceFit(
        n=float(theta[1]),
        shape=beta,
        scale_ref_s=eta,
        stress_ref=s_ref,
        temperature_ref_K=t_ref,
        ea_eV=float(theta[2]) if temps is not None else None,
        confidence=float(confidence),
        n_bounds=(float(theta[1] - z * se[1]), float(theta[1] + z * se[1])),
        shape_bounds=(beta * math.exp(-z * se[-1]), beta * math.exp(z * se[-1])),
        scale_ref_bounds_s=(eta * math.exp(-z * se[0]), eta * math.exp(z * se[0])),
        ea_bounds_eV=(float(theta[2] - z * se[2]), float(theta[2] + z * se[2])) if temps is not None else None,
        log_likelihood=ll,
        covariance=cov,
        n_failures=int(failed.sum()),
        n_censored=int((~failed).sum()),
        shape_by_level=shapes,
        shape_test_p=p,
        shape_warning=warning,
        _data=(y, X, failed),
    )
