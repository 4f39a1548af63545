"""The Weibull likelihood of a breakdown sample (right-censored), and the root finding the fit and its bounds use."""

from __future__ import annotations

import math

import numpy as np

from materials.errors import InputError


def _as_sample(fields_V_per_m, censored) -> tuple[np.ndarray, np.ndarray]:
    x = np.asarray(fields_V_per_m, dtype=float).ravel()
    if x.size == 0:
        raise InputError("no breakdown fields given", field="fields_V_per_m")
    if not np.all(np.isfinite(x)):
        raise InputError("breakdown fields must be finite numbers", field="fields_V_per_m")
    if np.any(x <= 0):
        raise InputError("breakdown fields must be positive", field="fields_V_per_m")
    if censored is None:
        c = np.zeros(x.size, dtype=bool)
    else:
        c = np.asarray(censored).ravel()
        if c.size != x.size:
            raise InputError(f"{c.size} censored flags for {x.size} fields", field="censored")
        c = c.astype(bool)
    return x, c


def _solve_decreasing(func, x0: float, *, rtol: float = 1e-14, maxiter: int = 200):
    """Root of a decreasing function on (0, inf) by Newton's method kept inside a shrinking bracket.

    ``func(x)`` returns ``(g, dg, extra)``. Returns ``(x, extra, iterations)`` for the last evaluated x.
    """
    lo, hi = 0.0, math.inf
    x = x0
    for it in range(1, maxiter + 1):
        g, dg, extra = func(x)
        if not math.isfinite(g):
            # an overflow means x is far beyond the root on the negative side
            hi = x
            x = 0.5 * (lo + hi)
            continue
        if g > 0:
            lo = x
        else:
            hi = x
        if g == 0:
            return x, extra, it
        new = x - g / dg if dg < 0 and math.isfinite(dg) else math.nan
        if not (lo < new < hi):
            new = 0.5 * (lo + hi) if math.isfinite(hi) else 2.0 * x
        if abs(new - x) <= rtol * x:
            return x, extra, it
        x = new
    raise InputError("the Weibull likelihood equation did not converge; check the data")  # pragma: no cover


class _Sample:
    """A sample prepared for likelihood work: logs shifted by the largest field so exponentials cannot overflow."""

    def __init__(self, x: np.ndarray, c: np.ndarray):
        self.log_ref = float(np.log(x.max()))
        self.u = np.log(x) - self.log_ref  # all <= 0
        self.any_censored = bool(c.any())
        self.uf = self.u[~c] if self.any_censored else self.u
        self.r = int(self.uf.size)
        self.sum_uf = float(self.uf.sum())

    def shape_score(self, beta: float):
        """Profile score of the shape (the scale eliminated), its derivative and the moment sums."""
        e = np.exp(beta * self.u)
        ue = self.u * e
        # multiply-and-sum rather than a BLAS dot, whose threads stall badly on a busy machine
        s0, s1, s2 = float(e.sum()), float(ue.sum()), float((self.u * ue).sum())
        m1 = s1 / s0
        var = max(s2 / s0 - m1 * m1, 0.0)
        g = 1.0 / beta + self.sum_uf / self.r - m1
        return g, -1.0 / beta**2 - var, (s0, m1, var)

    def profile_shape(self, beta: float) -> float:
        """Log-likelihood maximised over the scale at this shape (constants dropped as in :meth:`profile_at`)."""
        s0 = float(np.exp(beta * self.u).sum())
        r = self.r
        return r * math.log(beta) - r * (math.log(s0) - math.log(r)) + (beta - 1.0) * self.sum_uf - r

    def _constrained(self, a: float, k: float):
        """Log-likelihood along ``ln(scale) = a - k/shape`` (shifted logs) and its maximiser over the shape.

        With k = ln(-ln(1-p)) the constraint fixes the p-quantile at exp(a); k = 0 fixes the scale. The
        log-likelihood is concave in the shape along the constraint, so the score is monotone.
        """
        w = self.u - a
        wmax = float(w.max())
        r = self.r

        def score(beta):
            e = np.exp(beta * (w - wmax))
            c = k + beta * wmax
            if c > 700.0:
                return -math.inf, -math.inf, None
            scale = math.exp(c)
            we = w * e
            g = r / beta - r * a + self.sum_uf - scale * float(we.sum())
            dg = -r / beta**2 - scale * float((w * we).sum())
            return g, dg, scale * float(e.sum())

        return score

    def profile_at(self, a: float, k: float, beta0: float) -> tuple[float, float]:
        """Profile log-likelihood with the quantile ``ln x_p = a`` (shifted) held fixed; returns (value, shape)."""
        beta, total, _ = _solve_decreasing(self._constrained(a, k), beta0, rtol=1e-12)
        if total is None:  # pragma: no cover - only for absurd trial points
            return -math.inf, beta
        r = self.r
        value = r * math.log(beta) - r * beta * a + r * k + (beta - 1.0) * self.sum_uf - total
        return value, beta


def _expand(f, x0: float, factor: float) -> float:
    """Multiply x0 by factor until f changes sign (f(x0) > 0)."""
    x = x0 * factor
    for _ in range(200):
        if f(x) < 0:
            return x
        x *= factor
    raise InputError("likelihood-ratio bound not found: the likelihood is too flat")  # pragma: no cover
