"""Pareto dominance: the non-dominated rows of a decision matrix, and a non-dominated dominator of each other row."""

from __future__ import annotations

import numpy as np

from ranking.methods.matrix import ArrayLike, _benefit, _column_extremes, _matrix

# Largest boolean work array (pivots × candidates) the Pareto and dominator loops build at once.
_BLOCK_CELLS = 1 << 21
_MAX_PIVOTS = 64


def _oriented(x: np.ndarray, benefit: np.ndarray) -> np.ndarray:
    """Criteria as rows ``(n, m)``, all turned to smaller-is-better; contiguous rows keep the loops fast."""
    y = np.empty((x.shape[1], x.shape[0]))
    for j in range(x.shape[1]):
        if benefit[j]:
            np.negative(x[:, j], out=y[j])
        else:
            y[j] = x[:, j]
    return y


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


def dominators(matrix: ArrayLike, benefit: ArrayLike, *, front: np.ndarray | None = None) -> np.ndarray:
    """For each row, the index of a non-dominated row that dominates it, or -1 if the row is non-dominated.

    Of the non-dominated rows that dominate a row, the one with the lowest index is named, so the answer is
    deterministic and the named row is itself on the front ("X is dominated by Y", with Y never dominated).

    Args:
        matrix: ``(m, n)`` criteria values.
        benefit: ``(n,)`` booleans, True where larger is better.
        front: the :func:`pareto_front` mask of the same matrix, when the caller has it already.

    Returns:
        ``(m,)`` int64 row indices, -1 for non-dominated rows.
    """
    x, b = _pareto_problem(matrix, benefit)
    if front is None:
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
