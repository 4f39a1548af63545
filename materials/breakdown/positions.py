"""Weibull-plot positions of breakdown failures: Bernard's median ranks, Johnson's adjusted ranks with censoring."""

from __future__ import annotations

import numpy as np

from materials.breakdown.likelihood import _as_sample
from materials.errors import InputError

#: Bernard's median-rank constant: F = (i - a)/(n + 1 - 2a) with a = 0.3 (Fothergill 1990 found it the most
#: accurate of the usual approximations).
BERNARD_A = 0.3


def _bernard(ranks, n: int):
    """Bernard's formula ``(rank - a)/(n + 1 - 2a)`` on (possibly adjusted, fractional) ranks."""
    return (ranks - BERNARD_A) / (n + 1.0 - 2.0 * BERNARD_A)


def bernard_positions(n: int) -> np.ndarray:
    """Bernard's median-rank plotting positions ``F_i = (i - 0.3)/(n + 0.4)``, i = 1..n (Fothergill 1990)."""
    if n < 1:
        raise InputError("plotting positions need at least one failure")
    return _bernard(np.arange(1, n + 1, dtype=float), n)


def plotting_positions(fields_V_per_m, censored=None) -> tuple[np.ndarray, np.ndarray]:
    """Weibull-plot positions of the failures.

    Complete samples get Bernard's median ranks ``(i - 0.3)/(n + 0.4)``. With right-censoring the failure ranks
    are replaced by Johnson's adjusted ranks (L.G. Johnson, "The Statistical Treatment of Fatigue Experiments",
    1964): each failure's rank increases the previous one by ``(n + 1 - previous)/(1 + items at or beyond it)``,
    and Bernard's formula is applied to the adjusted rank. At equal fields a failure is ranked before a censored
    specimen (the censored one is taken to have survived slightly longer).

    Args:
        fields_V_per_m: breakdown (or test-stop) fields, V/m.
        censored: optional booleans, True where the test stopped without breakdown.

    Returns:
        ``(fields, F)``: the failure fields sorted ascending (V/m) and their cumulative probabilities.
    """
    x, c = _as_sample(fields_V_per_m, censored)
    n = x.size
    order = np.lexsort((c, x))
    xs, cs = x[order], c[order]
    failed = ~cs
    if not failed.any():
        raise InputError("no failures to plot: every specimen is censored", field="censored")
    at_or_beyond = (n - np.flatnonzero(failed)).astype(float)
    # Johnson's recurrence r_j = r_{j-1} + (n+1-r_{j-1})/(1+m_j) closes to
    # n+1-r_j = (n+1)·prod(m_k/(1+m_k)), which vectorises with a cumulative product.
    ranks = (n + 1.0) * (1.0 - np.cumprod(at_or_beyond / (at_or_beyond + 1.0)))
    return xs[failed], _bernard(ranks, n)
