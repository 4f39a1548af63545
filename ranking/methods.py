"""Multi-criteria ranking methods on a decision matrix (rows = candidates, columns = criteria).

Pure numpy, vectorised. Every function takes a float matrix ``(m, n)``, weights ``(n,)`` (any non-negative scale;
normalised here to sum 1) and ``benefit`` ``(n,)`` booleans (True = larger is better, False = smaller is better).
Values are in whatever units the criteria carry (SI upstream); the methods are scale-free per column.

Methods followed:

* TOPSIS — Hwang & Yoon (1981), *Multiple Attribute Decision Making*, Springer, pp. 128–134: vector normalisation
  ``r = x / sqrt(sum x²)`` per column, weighting, ideal and anti-ideal points, Euclidean distances ``S+``/``S-``,
  closeness ``C = S- / (S+ + S-)``.
* Weighted sum (simple additive weighting) with min–max normalisation per column, as in pymcdm's
  ``WSM(minmax_normalization)``.
* Pareto dominance (non-dominated set), with duplicates of a non-dominated row all kept.

Degenerate inputs get documented answers instead of NaN: an all-zero column adds nothing to TOPSIS; a constant
column scores 1.0 for everybody in the weighted sum (pymcdm does the same); when every candidate sits at the ideal
point (one candidate, or all identical on the weighted criteria) TOPSIS gives everybody closeness 1.0.
"""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from materials.errors import InputError

ArrayLike = np.ndarray | Sequence

# Largest boolean work array (pivots × candidates) the Pareto and dominator loops build at once.
_BLOCK_CELLS = 1 << 21
_MAX_PIVOTS = 64
_FOLD_ROWS = 4096


# --------------------------------------------------------------------------------------------------- validation

def _matrix(matrix: ArrayLike, *, allow_stack: bool = True) -> np.ndarray:
    try:
        x = np.asarray(matrix, dtype=np.float64)
    except (TypeError, ValueError) as exc:
        raise InputError(f"decision matrix is not numeric: {exc}") from None
    if x.ndim not in ((2, 3) if allow_stack else (2,)):
        shapes = "(m, n) or a stack (k, m, n)" if allow_stack else "(m, n)"
        raise InputError(f"decision matrix must have shape {shapes}, got {x.shape}")
    if x.shape[-1] == 0:
        raise InputError("decision matrix has no criteria (no columns)")
    return x


def _benefit(benefit: ArrayLike, n: int) -> np.ndarray:
    b = np.asarray(benefit)
    if b.shape != (n,):
        raise InputError(f"benefit must have one flag per criterion, shape ({n},), got {b.shape}")
    if b.dtype != np.bool_:
        # Guard against pymcdm-style types (1 / -1): -1 would silently read as True.
        if not np.isin(b, (0, 1)).all():
            raise InputError("benefit must be booleans (True = larger is better, False = smaller is better)")
        b = b.astype(bool)
    return b


def _weights(weights: ArrayLike, x: np.ndarray) -> np.ndarray:
    """Weights normalised to sum 1: ``(n,)``, or ``(k, n)`` for a stack of ``k`` matrices."""
    n = x.shape[-1]
    w = np.asarray(weights, dtype=np.float64)
    allowed = [(n,)] + ([(x.shape[0], n)] if x.ndim == 3 else [])
    if w.shape not in allowed:
        raise InputError(f"weights must have shape {' or '.join(map(str, allowed))}, got {w.shape}")
    if not np.isfinite(w).all():
        raise InputError("weights must be finite numbers (found NaN or infinity)")
    if (w < 0).any():
        raise InputError("weights must not be negative")
    total = w.sum(axis=-1, keepdims=True)
    if (total <= 0).any():
        raise InputError("weights are all zero: at least one criterion needs a positive weight")
    return w / total


def _problem(matrix: ArrayLike, weights: ArrayLike, benefit: ArrayLike):
    x = _matrix(matrix)
    return x, _weights(weights, x), _benefit(benefit, x.shape[-1])


def _column_reduce(x: np.ndarray, ufunc: np.ufunc) -> np.ndarray:
    """``ufunc.reduce`` over the candidate axis.

    numpy reduces a tall, narrow C-ordered matrix over axis 0 about 8× slower than over long rows, so the bulk is
    first folded as ``(m / B, B·n)`` rows (a view), then the ``(B, n)`` partial result is reduced.
    """
    if x.ndim == 2 and x.flags.c_contiguous and x.shape[0] >= 2 * _FOLD_ROWS:
        m, n = x.shape
        bulk = (m // _FOLD_ROWS) * _FOLD_ROWS
        part = ufunc.reduce(x[:bulk].reshape(-1, _FOLD_ROWS * n), axis=0).reshape(_FOLD_ROWS, n)
        return ufunc.reduce(np.concatenate([part, x[bulk:]]), axis=0)
    return ufunc.reduce(x, axis=-2)


def _column_extremes(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Column max and min along the candidate axis; NaN and ±inf propagate into them, so they double as the check."""
    hi = _column_reduce(x, np.maximum)
    lo = _column_reduce(x, np.minimum)
    if not (np.isfinite(hi).all() and np.isfinite(lo).all()):
        where = np.argwhere(~np.isfinite(x))[0]
        raise InputError(f"decision matrix has a non-finite value (NaN or infinity) at index {tuple(where.tolist())}")
    return hi, lo


def _oriented(x: np.ndarray, benefit: np.ndarray) -> np.ndarray:
    """Criteria as rows ``(n, m)``, all turned to smaller-is-better; contiguous rows keep the loops fast."""
    y = np.empty((x.shape[1], x.shape[0]))
    for j in range(x.shape[1]):
        if benefit[j]:
            np.negative(x[:, j], out=y[j])
        else:
            y[j] = x[:, j]
    return y


# ------------------------------------------------------------------------------------------------------ TOPSIS

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
    return np.divide(w, norm, out=np.zeros(norm.shape), where=norm > 0)


def _safe_columns(x: np.ndarray) -> np.ndarray:
    """Columns of extreme magnitude rescaled by their largest value (both methods are invariant to column scale).

    Without this, ``w/||x||`` of a column of subnormal numbers overflows to infinity.
    """
    amax = np.max(np.abs(x), axis=-2)
    odd = (amax > 0) & np.isfinite(amax) & ((amax < 1e-100) | (amax > 1e100))
    if not odd.any():
        return x
    return x / np.where(odd, amax, 1.0)[..., None, :]


def _topsis_distances(x, w, b):
    """Column scale ``w_j/||x_j||``, ideal and anti-ideal points (raw units, broadcastable over the rows) and the
    weighted normalised ideal–anti-ideal gap ``g_j`` per criterion."""
    hi, lo = _column_extremes(x)
    scale = _vector_scale(x, w, hi, lo)
    ideal = np.where(b, hi, lo)[..., None, :]
    anti = np.where(b, lo, hi)[..., None, :]
    return scale[..., None, :], ideal, anti, scale * (hi - lo)


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
    d = np.subtract(x, ideal)
    d *= scale
    s_plus = np.einsum("...ij,...ij->...i", d, d)
    np.subtract(x, anti, out=d)
    d *= scale
    s_minus = np.einsum("...ij,...ij->...i", d, d)
    del d
    np.sqrt(s_plus, out=s_plus)
    np.sqrt(s_minus, out=s_minus)
    s_plus += s_minus
    return np.divide(s_minus, s_plus, out=np.ones(s_minus.shape), where=s_plus > 0)


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
    p = (x - ideal) * scale
    p *= p
    a = (x - anti) * scale
    a *= a
    total = (np.sqrt(p.sum(axis=-1)) + np.sqrt(a.sum(axis=-1)))[..., None]
    g2 = gap * gap
    big_g2 = g2.sum(axis=-1, keepdims=True)
    a -= p
    a /= np.where(total > 0, 2.0 * total * total, 1.0)
    a += np.divide(g2, 2.0 * big_g2, out=np.zeros(g2.shape), where=big_g2 > 0)[..., None, :]
    # Everybody at the ideal point: closeness 1.0 by convention, shared by weight.
    return np.where(big_g2[..., None, :] <= 0, w[..., None, :], a)


# ------------------------------------------------------------------------------------------------ weighted sum

def _minmax_terms(matrix, weights, benefit):
    """Weighted min–max-normalised values ``w_j r_ij`` of every cell."""
    x, w, b = _problem(matrix, weights, benefit)
    if x.shape[-2] == 0:
        return np.empty(x.shape)
    x = _safe_columns(x)
    hi, lo = _column_extremes(x)
    span = hi - lo
    if not np.isfinite(span).all():
        raise InputError("a criterion's range (max - min) is too large to represent")
    constant = span == 0
    inv = np.divide(1.0, span, out=np.zeros(span.shape), where=~constant)
    coef = w * np.where(b, inv, -inv)
    # Benefit: (x - min)/span; cost: (max - x)/span = (x - max)·(-1/span); a constant column is 1 (as pymcdm).
    terms = x - np.where(b, lo, hi)[..., None, :]
    terms *= coef[..., None, :]
    terms += (w * constant)[..., None, :]
    return terms


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


# ------------------------------------------------------------------------------------------------------ Pareto

def _dominates(pivots: np.ndarray, y: np.ndarray) -> np.ndarray:
    """``out[p, i]``: pivot column ``p`` dominates column ``i`` of ``y`` (both smaller-is-better, criteria as rows)."""
    no_worse = np.ones((pivots.shape[1], y.shape[1]), bool)
    differs = np.zeros_like(no_worse)
    for j in range(y.shape[0]):
        row, piv = y[j][None, :], pivots[j][:, None]
        no_worse &= row >= piv
        differs |= row != piv
    no_worse &= differs
    return no_worse


def _front_2d(y: np.ndarray) -> np.ndarray:
    """Exact sweep for two criteria: sort by the first, keep a running minimum of the second."""
    m = y.shape[1]
    order = np.lexsort((y[1], y[0]))
    first, second = y[0][order], y[1][order]
    new_group = np.ones(m, bool)
    new_group[1:] = first[1:] != first[:-1]
    start = np.maximum.accumulate(np.where(new_group, np.arange(m), 0))
    best_before = np.minimum.accumulate(second)[np.maximum(start - 1, 0)]
    best_before[start == 0] = np.inf
    keep = (second == second[start]) & (second < best_before)
    mask = np.empty(m, bool)
    mask[order] = keep
    return mask


def _front_nd(y: np.ndarray) -> np.ndarray:
    """Elimination by pivots in order of a normalised coordinate sum (a dominator always has a smaller sum)."""
    n, m = y.shape
    lo, hi = y.min(axis=1), y.max(axis=1)
    span = np.where(hi > lo, hi - lo, 1.0)
    key = np.zeros(m)
    for j in range(n):
        key += (y[j] - lo[j]) / span[j]
    idx = np.arange(m)
    # The best-sum point alone removes most of a random set in one vectorised pass; sort only what is left.
    kill = _dominates(y[:, [int(np.argmin(key))]], y)[0]
    if kill.any():
        keep = ~kill
        y, idx, key = y[:, keep], idx[keep], key[keep]
    order = np.argsort(key, kind="stable")
    y, idx = y[:, order], idx[order]
    # Any order is correct (every survivor serves as a pivot once); the order only decides how much is removed
    # early. Pivots go in blocks that grow while they remove nothing and shrink when they do.
    i, block = 0, 1
    while i < y.shape[1]:
        pivots = y[:, i:i + block]
        kill = _dominates(pivots, y).any(axis=0)
        done = i + pivots.shape[1]
        if kill.any():
            keep = ~kill
            i = int(np.count_nonzero(keep[:done]))
            y, idx = y[:, keep], idx[keep]
            block = max(1, block // 2)
        else:
            i = done
            block = min(_MAX_PIVOTS, 2 * block, max(1, _BLOCK_CELLS // y.shape[1]))
    mask = np.zeros(m, bool)
    mask[idx] = True
    return mask


def _pareto_problem(matrix, benefit):
    x = _matrix(matrix, allow_stack=False)
    b = _benefit(benefit, x.shape[1])
    if x.shape[0]:
        _column_extremes(x)
    return x, b


def pareto_front(matrix: ArrayLike, benefit: ArrayLike) -> np.ndarray:
    """Boolean mask of the non-dominated (Pareto-optimal) rows.

    Row ``a`` dominates row ``b`` when ``a`` is no worse on every criterion and strictly better on at least one.
    Identical rows do not dominate each other, so every copy of a non-dominated row is kept (``distinct=False``
    in paretoset's terms). Exact (no tolerance). Two criteria use an ``O(m log m)`` sweep; more use pivot
    elimination, ``O(m·F)`` for a front of ``F`` rows.

    Args:
        matrix: ``(m, n)`` criteria values.
        benefit: ``(n,)`` booleans, True where larger is better.

    Returns:
        ``(m,)`` bool, True for non-dominated rows.
    """
    x, b = _pareto_problem(matrix, benefit)
    if x.shape[0] == 0:
        return np.zeros(0, bool)
    y = _oriented(x, b)
    if y.shape[0] == 1:
        return y[0] == y[0].min()
    if y.shape[0] == 2:
        return _front_2d(y)
    return _front_nd(y)


def dominators(matrix: ArrayLike, benefit: ArrayLike) -> np.ndarray:
    """For each row, the index of a non-dominated row that dominates it, or -1 if the row is non-dominated.

    Of the non-dominated rows that dominate a row, the one with the lowest index is named, so the answer is
    deterministic and the named row is itself on the front ("X is dominated by Y", with Y never dominated).

    Args:
        matrix: ``(m, n)`` criteria values.
        benefit: ``(n,)`` booleans, True where larger is better.

    Returns:
        ``(m,)`` int64 row indices, -1 for non-dominated rows.
    """
    x, b = _pareto_problem(matrix, benefit)
    front = pareto_front(x, b)
    out = np.full(x.shape[0], -1, dtype=np.int64)
    todo = np.flatnonzero(~front)
    if todo.size == 0:
        return out
    y = _oriented(x, b)
    front_idx = np.flatnonzero(front)
    step = max(1, _BLOCK_CELLS // todo.size)
    for start in range(0, front_idx.size, step):
        block = front_idx[start:start + step]
        dom = _dominates(y[:, block], y[:, todo])
        hit = dom.any(axis=0)
        out[todo[hit]] = block[dom.argmax(axis=0)[hit]]
        todo = todo[~hit]
        if todo.size == 0:
            break
    return out


# ------------------------------------------------------------------------------------------------------- ranks

def rank_order(scores: ArrayLike, *, ties: str = "ordinal") -> np.ndarray:
    """Ranks 1..m from scores, larger score = rank 1, along the last axis.

    Args:
        scores: ``(m,)`` scores (or ``(k, m)``, ranked per row).
        ties: ``"ordinal"`` (default): ranks are a permutation of 1..m, exact ties broken by index (the lower
            index ranks first). ``"min"``: tied scores share the best rank of their group (1, 2, 2, 4).

    Returns:
        int64 ranks, same shape as ``scores``.
    """
    s = np.asarray(scores, dtype=np.float64)
    if s.ndim == 0:
        raise InputError("scores must be an array with one score per candidate")
    if np.isnan(s).any():
        raise InputError("scores contain NaN")
    if ties not in ("ordinal", "min"):
        raise InputError(f"ties must be 'ordinal' or 'min', got {ties!r}")
    m = s.shape[-1]
    order = np.argsort(-s, axis=-1, kind="stable")
    positions = np.broadcast_to(np.arange(m), s.shape)
    if ties == "ordinal":
        by_position = positions + 1
    else:
        ranked = np.take_along_axis(s, order, axis=-1)
        new = np.ones(s.shape, bool)
        new[..., 1:] = ranked[..., 1:] != ranked[..., :-1]
        by_position = np.maximum.accumulate(np.where(new, positions, 0), axis=-1) + 1
    ranks = np.empty(s.shape, dtype=np.int64)
    np.put_along_axis(ranks, order, by_position, axis=-1)
    return ranks
