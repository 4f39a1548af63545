"""TOPSIS (Hwang & Yoon 1981, pp. 128–134): closeness to the ideal point, its exact split over the criteria, and
the closeness of rows ranked among rows held fixed (known by their column aggregates only) over many draws.

All three are built from the same steps: the column scale ``w_j/||x_j||`` (:func:`_per_norm`), the ideal and
anti-ideal points (:func:`_ideals`), the weighted normalised offsets from them (:func:`_offsets`) and the
closeness from the two distances (:func:`_closeness`).
"""

from __future__ import annotations

import numpy as np

from ranking.methods.matrix import ArrayLike, _column_extremes, _combined, _problem, _safe_columns


def _per_norm(numerator, norm: np.ndarray) -> np.ndarray:
    """``numerator / norm`` per column, 0 where the column's norm is 0 (an all-zero column adds nothing)."""
    return np.divide(numerator, norm, out=np.zeros(norm.shape), where=norm > 0)


def _ideals(b, hi, lo) -> tuple[np.ndarray, np.ndarray]:
    """The ideal and the anti-ideal value of each criterion: its column's best and worst end."""
    return np.where(b, hi, lo), np.where(b, lo, hi)


def _offsets(x, ref, scale, out=None) -> np.ndarray:
    """The weighted, vector-normalised offsets ``(x - ref)·scale`` of every cell from the (anti-)ideal ``ref``."""
    d = np.subtract(x, ref, out=out)
    d *= scale
    return d


def _closeness(s_plus2: np.ndarray, s_minus2: np.ndarray) -> np.ndarray:
    """``S- / (S+ + S-)`` from the squared distances (overwritten); 1.0 where everybody is at the ideal point."""
    np.sqrt(s_plus2, out=s_plus2)
    np.sqrt(s_minus2, out=s_minus2)
    s_plus2 += s_minus2
    return np.divide(s_minus2, s_plus2, out=np.ones(s_minus2.shape), where=s_plus2 > 0)


def _vector_scale(x: np.ndarray, w: np.ndarray, hi: np.ndarray, lo: np.ndarray) -> np.ndarray:
    """``w_j / sqrt(sum_i x_ij²)`` per column (0 for an all-zero column), guarded against over/underflow."""
    norm2 = np.einsum("...ij,...ij->...j", x, x)
    amax = np.maximum(np.abs(hi), np.abs(lo))
    bad = ~np.isfinite(norm2) | ((norm2 < 1e-280) & (amax > 0))
    if bad.any():
        # Squares overflowed or underflowed: rescale by the column's largest magnitude first.
        s = np.where(amax > 0, amax, 1.0)
        xs = x / s[..., None, :]
        norm = np.sqrt(np.einsum("...ij,...ij->...j", xs, xs)) * s
    else:
        norm = np.sqrt(norm2)
    return _per_norm(w, norm)


def _topsis_distances(x, w, b):
    """Column scale ``w_j/||x_j||``, ideal and anti-ideal points (raw units, broadcastable over the rows) and the
    weighted normalised ideal–anti-ideal gap ``g_j`` per criterion."""
    hi, lo = _column_extremes(x)
    scale = _vector_scale(x, w, hi, lo)
    ideal, anti = _ideals(b, hi, lo)
    return scale[..., None, :], ideal[..., None, :], anti[..., None, :], scale * (hi - lo)


def topsis(matrix: ArrayLike, weights: ArrayLike, benefit: ArrayLike) -> np.ndarray:
    """TOPSIS closeness to the ideal solution (Hwang & Yoon 1981), dimensionless, in [0, 1], larger is better.

    Args:
        matrix: ``(m, n)`` criteria values of ``m`` candidates, or a stack ``(k, m, n)`` of ``k`` matrices
            (e.g. Monte Carlo draws), each ranked on its own.
        weights: ``(n,)`` non-negative criterion weights (normalised to sum 1), or ``(k, n)`` for a stack.
        benefit: ``(n,)`` booleans, True where larger is better.

    Returns:
        Closeness ``C_i = S-_i / (S+_i + S-_i)``, shape ``(m,)`` or ``(k, m)``. An all-zero column contributes
        nothing. If every candidate is at the ideal point (``m = 1``, or all equal on the weighted criteria)
        every closeness is 1.0. Exact ties give equal closeness.
    """
    x, w, b = _problem(matrix, weights, benefit)
    if x.shape[-2] == 0:
        return np.empty(x.shape[:-1])
    x = _safe_columns(x)
    scale, ideal, anti, _ = _topsis_distances(x, w, b)
    # One work array reused for both distances; the einsum squares and sums in one pass.
    d = _offsets(x, ideal, scale)
    s_plus = np.einsum("...ij,...ij->...i", d, d)
    _offsets(x, anti, scale, out=d)
    s_minus = np.einsum("...ij,...ij->...i", d, d)
    del d
    return _closeness(s_plus, s_minus)


def topsis_contributions(matrix: ArrayLike, weights: ArrayLike, benefit: ArrayLike) -> np.ndarray:
    """Per-criterion shares of the TOPSIS closeness; each row sums to the candidate's closeness.

    The decomposition is exact. With per-criterion squared offsets ``a_ij = (v_ij - v_j^-)²`` from the anti-ideal
    and ``p_ij = (v_ij - v_j^+)²`` from the ideal (``v`` weighted, vector-normalised), the identity
    ``C - 1/2 = (S-² - S+²) / (2 (S+ + S-)²)`` splits ``C - 1/2`` additively over criteria; the baseline 1/2 is
    split in proportion to each criterion's squared ideal–anti-ideal gap ``g_j²`` (``G² = sum g_j²``)::

        contribution_ij = g_j² / (2 G²) + (a_ij - p_ij) / (2 (S+_i + S-_i)²)

    Each contribution lies in ``[0, g_j²/G²]`` (since ``S+ + S- >= G``): 0 at the anti-ideal value, its largest
    at the ideal value; a criterion with no spread (or zero weight) contributes 0. When every candidate is at the
    ideal point (closeness 1.0) the contributions are the normalised weights.

    Args:
        matrix: ``(m, n)`` or ``(k, m, n)``, as for :func:`topsis`.
        weights: ``(n,)`` or ``(k, n)`` non-negative weights.
        benefit: ``(n,)`` booleans, True where larger is better.

    Returns:
        ``(m, n)`` (or ``(k, m, n)``) contributions, dimensionless.
    """
    x, w, b = _problem(matrix, weights, benefit)
    if x.shape[-2] == 0:
        return np.empty(x.shape)
    x = _safe_columns(x)
    scale, ideal, anti, gap = _topsis_distances(x, w, b)
    p = _offsets(x, ideal, scale)
    p *= p
    a = _offsets(x, anti, scale)
    a *= a
    total = (np.sqrt(p.sum(axis=-1)) + np.sqrt(a.sum(axis=-1)))[..., None]
    g2 = gap * gap
    big_g2 = g2.sum(axis=-1, keepdims=True)
    a -= p
    a /= np.where(total > 0, 2.0 * total * total, 1.0)
    a += np.divide(g2, 2.0 * big_g2, out=np.zeros(g2.shape), where=big_g2 > 0)[..., None, :]
    # Everybody at the ideal point: closeness 1.0 by convention, shared by weight.
    return np.where(big_g2[..., None, :] <= 0, w[..., None, :], a)


def _topsis_scorer(xf, hi, lo, fixed, b, held):
    """:func:`ranking.methods.held.survivor_scorer` for TOPSIS: the fixed columns' squared normalised distances
    once, the rest per draw."""
    sum_sq, top, bottom = held
    inv = _per_norm(1.0, np.sqrt(sum_sq[fixed] + np.einsum("ij,ij->j", xf, xf)))
    # (w·a)² = w²·a²: the fixed columns' offsets are squared once, unweighted, and weighted per draw.
    to_ideal, to_anti = (_offsets(xf, ref, inv) for ref in _ideals(b[fixed], hi, lo))
    to_ideal *= to_ideal
    to_anti *= to_anti
    to_ideal, to_anti = np.ascontiguousarray(to_ideal.T), np.ascontiguousarray(to_anti.T)
    cols = np.flatnonzero(~fixed)

    def score(columns: np.ndarray, w: np.ndarray) -> np.ndarray:
        w2 = w[:, fixed] ** 2
        s_plus, s_minus = w2 @ to_ideal, w2 @ to_anti
        for xc, c in zip(columns, cols, strict=True):
            c_hi, c_lo = _combined(xc.max(axis=1), xc.min(axis=1), top[c], bottom[c])
            scale = _per_norm(w[:, c], np.sqrt(np.einsum("ij,ij->i", xc, xc) + sum_sq[c]))[:, None]
            ideal, anti = _ideals(b[c], c_hi, c_lo)
            d = _offsets(xc, ideal[:, None], scale)
            d *= d
            s_plus += d
            _offsets(xc, anti[:, None], scale, out=d)
            d *= d
            s_minus += d
        return _closeness(s_plus, s_minus)
    return score
