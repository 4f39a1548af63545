"""Maximum-likelihood Weibull regression with right-censoring: the engine under the life-stress fits.

The log of a Weibull time is a smallest-extreme-value variable, ``ln t = μ + σ·W`` with σ = 1/β and
``P(W ≤ w) = 1 - exp(-e^w)``; a life-stress model makes μ linear in transformed stresses, ``μ = x·b``
(Nelson, *Accelerated Testing*, Wiley 1990, ch. 4; Meeker & Escobar, *Statistical Methods for Reliability Data*,
Wiley 1998, ch. 17). Failures contribute the log density in t, censored units the log survival function; the
maximum is found by a trust-region Newton method with the analytic gradient and Hessian.
"""

from __future__ import annotations

import math

import numpy as np

from materials.errors import InputError

_EULER_GAMMA = 0.5772156649015329


def regression_terms(theta, y, X, failed, offset):
    """Log-likelihood of ln t = offset + X·b + σ·W (W standard smallest extreme value), with gradient and Hessian.

    theta = (b..., s) with s = ln σ. Failures add ``-s + z - e^z - y`` (the density in t, as `reliability`
    reports it), censored times ``-e^z``.
    """
    b, s = theta[:-1], theta[-1]
    sigma = math.exp(s)
    z = np.minimum((y - offset - X @ b) / sigma, 700.0)
    w = np.exp(z)
    d = failed.astype(float)
    ll = float(np.sum(d * (-s + z - y)) - w.sum())
    g_mu = (w - d) / sigma
    grad = np.append(X.T @ g_mu, float(np.sum(-d - d * z + w * z)))
    k = X.shape[1]
    hess = np.empty((k + 1, k + 1))
    hess[:k, :k] = -(X.T * (w / sigma**2)) @ X
    hess[:k, k] = hess[k, :k] = X.T @ (-(w * z + w - d) / sigma)
    hess[k, k] = float(np.sum(d * z - w * z * z - w * z))
    return ll, grad, hess


def fit_regression(y, X, failed, offset=0.0):
    """Maximum-likelihood fit of the Weibull regression.

    Args:
        y: log times; X: design matrix (one row per unit); failed: booleans (False = right-censored);
        offset: a known part of μ (used to profile the likelihood over one coefficient).

    Returns:
        ``(theta, loglik, information)``: theta = (b..., ln σ), the maximised log-likelihood and the observed
        information matrix (minus the Hessian) at the optimum.
    """
    from scipy.optimize import minimize

    # start: least squares on the failures (all units when too few), shifted by the extreme-value mean -γ·σ
    f = failed if failed.sum() > X.shape[1] else np.ones_like(failed)
    yo = (y - offset)[f]
    b0 = np.linalg.lstsq(X[f], yo, rcond=None)[0]
    sigma0 = max(float(np.std(yo - X[f] @ b0)) * math.sqrt(6.0) / math.pi, 1e-3)
    b0 = np.linalg.lstsq(X[f], yo + _EULER_GAMMA * sigma0, rcond=None)[0]
    x0 = np.append(b0, math.log(sigma0))

    def neg(theta):
        ll, g, _ = regression_terms(theta, y, X, failed, offset)
        return -ll, -g

    def neg_hess(theta):
        return -regression_terms(theta, y, X, failed, offset)[2]

    res = minimize(neg, x0, jac=True, hess=neg_hess, method="trust-exact", options={"gtol": 1e-10})
    ll, grad, hess = regression_terms(res.x, y, X, failed, offset)
    if not np.all(np.isfinite(res.x)) or np.max(np.abs(grad)) > 1e-5 * max(1.0, abs(ll)):
        raise InputError("the Weibull life-stress likelihood did not converge; check the data")
    return res.x, ll, -hess


def shape_test(y, failed, levels):
    """Likelihood-ratio test of one Weibull shape across stress levels (Nelson 1990, ch. 5).

    Levels with fewer than 2 distinct failure times are left out. The statistic compares separate Weibull fits
    per level with a fit of separate scales and one common shape; it is χ² with (levels - 1) degrees of freedom.

    Returns:
        ``(shapes, p)``: the separate-fit shape of each level kept, and the p-value (NaN with fewer than 2 levels).
    """
    from scipy.stats import chi2

    groups = {}
    for key in dict.fromkeys(levels):
        idx = np.array([lv == key for lv in levels])
        if np.unique(y[idx & failed]).size >= 2:
            groups[key] = idx
    shapes, ll_sep = {}, 0.0
    for key, idx in groups.items():
        theta, ll, _ = fit_regression(y[idx], np.ones((int(idx.sum()), 1)), failed[idx])
        shapes[key] = math.exp(-theta[-1])
        ll_sep += ll
    if len(groups) < 2:
        return shapes, math.nan
    sel = np.any(list(groups.values()), axis=0)
    X = np.column_stack([idx[sel] for idx in groups.values()]).astype(float)
    ll_common = fit_regression(y[sel], X, failed[sel])[1]
    stat = max(2.0 * (ll_sep - ll_common), 0.0)
    return shapes, float(chi2.sf(stat, len(groups) - 1))
