"""Weighted sum of min–max-normalised criteria (simple additive weighting, as pymcdm's
``WSM(minmax_normalization)``), its split over the criteria, and the score of rows ranked among rows held fixed
(known by their column aggregates only) over many draws. All three take their terms from :func:`_minmax_scaled`."""

from __future__ import annotations

import numpy as np

from materials.errors import InputError
from ranking.methods.matrix import ArrayLike, _column_extremes, _combined, _problem, _safe_columns


def _minmax_scaled(x, w, b, hi, lo) -> np.ndarray:
    """``w·r`` of every cell, ``r`` its min–max value; ``w``, ``b`` and the column max ``hi`` and min ``lo``
    broadcast against ``x``."""
    span = hi - lo
    if not np.isfinite(span).all():
        raise InputError("a criterion's range (max - min) is too large to represent")
    constant = span == 0
    inv = np.divide(1.0, span, out=np.zeros(span.shape), where=~constant)
    # Benefit: (x - min)/span; cost: (max - x)/span = (x - max)·(-1/span); a constant column is 1 (as pymcdm).
    terms = x - np.where(b, lo, hi)
    terms *= w * np.where(b, inv, -inv)
    terms += w * constant
    return terms


def _minmax_terms(matrix, weights, benefit):
    """Weighted min–max-normalised values ``w_j r_ij`` of every cell."""
    x, w, b = _problem(matrix, weights, benefit)
    if x.shape[-2] == 0:
        return np.empty(x.shape)
    x = _safe_columns(x)
    hi, lo = _column_extremes(x)
    return _minmax_scaled(x, w[..., None, :], b, hi[..., None, :], lo[..., None, :])


def weighted_sum(matrix: ArrayLike, weights: ArrayLike, benefit: ArrayLike) -> np.ndarray:
    """Weighted sum of min–max-normalised criteria, dimensionless, in [0, 1], larger is better.

    Benefit columns normalise as ``(x - min)/(max - min)``, cost columns as ``(max - x)/(max - min)``; a constant
    column normalises to 1.0 for every candidate (as pymcdm's ``minmax_normalization``), which shifts all scores
    equally and leaves the order alone. Weights are normalised to sum 1.

    Args:
        matrix: ``(m, n)`` or a stack ``(k, m, n)``.
        weights: ``(n,)`` or ``(k, n)`` non-negative weights.
        benefit: ``(n,)`` booleans, True where larger is better.

    Returns:
        Scores ``(m,)`` or ``(k, m)``.
    """
    return _minmax_terms(matrix, weights, benefit).sum(axis=-1)


def weighted_sum_contributions(matrix: ArrayLike, weights: ArrayLike, benefit: ArrayLike) -> np.ndarray:
    """Per-criterion terms ``w_j r_ij`` of :func:`weighted_sum`; each row sums exactly to the score.

    Returns:
        ``(m, n)`` (or ``(k, m, n)``) contributions, dimensionless.
    """
    return _minmax_terms(matrix, weights, benefit)



def _weighted_scorer(xf, hi, lo, fixed, b, held):
    """:func:`ranking.methods.held.survivor_scorer` for the weighted sum: the fixed columns' min–max values once,
    the rest per draw."""
    _, top, bottom = held
    # The fixed columns' min–max values once, unweighted; each draw weights them.
    values = np.ascontiguousarray(_minmax_scaled(xf, 1.0, b[fixed], hi, lo).T)
    cols = np.flatnonzero(~fixed)

    def score(columns: np.ndarray, w: np.ndarray) -> np.ndarray:
        total = w[:, fixed] @ values
        for xc, c in zip(columns, cols, strict=True):
            c_hi, c_lo = _combined(xc.max(axis=1), xc.min(axis=1), top[c], bottom[c])
            total += _minmax_scaled(xc, w[:, c, None], b[c], c_hi[:, None], c_lo[:, None])
        return total
    return score
