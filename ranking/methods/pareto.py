"""Pareto dominance: the non-dominated rows of a decision matrix, and a non-dominated dominator of each other row.

Row ``a`` dominates row ``b`` when ``a`` is no worse on every criterion and strictly better on at least one;
identical rows do not dominate each other. Rows are first made distinct (``np.unique``, which also sorts them
lexicographically, every criterion turned to smaller-is-better): among distinct rows, "no worse everywhere" is
domination, and a dominator always sorts before the row it dominates.

* Two criteria: one sort and a running minimum, ``O(m log m)``.
* Three criteria: a sweep in that order over a staircase of the rows kept so far, ``O(m log m)`` searches (Kung,
  Luccio & Preparata 1975, *J. ACM* 22, 469).
* More: the same paper's divide and conquer. The sorted rows are halved; the front of the later half loses the
  rows dominated by the front of the earlier half (no later row dominates an earlier one). That filter splits on
  one criterion at its median and recurses on the next criterion where the split already settles the order,
  ``O(m log^(n-1) m)``; small blocks are compared pair by pair.

:func:`dominators` answers, for every dominated row, the lowest-index front row that dominates it, with the same
filter (taking a minimum instead of "any"); :func:`dominator_of` does it for a few rows.
"""

from __future__ import annotations

import bisect

import numpy as np

from ranking.methods.matrix import ArrayLike, _benefit, _column_extremes, _matrix

# Pairs (rows of one block × rows of the other) below which the filter compares all pairs at once.
_PAIRS = 1 << 14
# Rows below which the pivot pass is not worth its cost.
_FEW = 256
_NONE = np.iinfo(np.int64).max


def _oriented(x: np.ndarray, benefit: np.ndarray) -> np.ndarray:
    """``(m, n)`` with every criterion smaller-is-better, each column contiguous (Fortran order); ``+ 0.0`` makes
    -0.0 and 0.0 the same value."""
    y = np.empty((x.shape[1], x.shape[0]))
    for j in range(x.shape[1]):
        np.add(-x[:, j] if benefit[j] else x[:, j], 0.0, out=y[j])
    return y.T


def _distinct(y: np.ndarray):
    """The distinct rows of ``y`` in lexicographic order, and each row's index among them."""
    m = y.shape[0]
    order = np.lexsort(y.T[::-1])
    s = np.ascontiguousarray(y[order])
    new = np.ones(m, bool)
    new[1:] = (s[1:] != s[:-1]).any(axis=1)
    group = np.cumsum(new) - 1
    inverse = np.empty(m, dtype=np.int64)
    inverse[order] = group
    return s[new], inverse


def _pivot_cut(y: np.ndarray) -> np.ndarray:
    """Rows dominated by one of a few strong rows (the best normalised sum, the best on each criterion with the
    best sum among its ties): one vectorised pass that removes most rows of a large, scattered set."""
    cols = [y[:, j] for j in range(y.shape[1])]
    lo, hi = [c.min() for c in cols], [c.max() for c in cols]
    key = np.zeros(y.shape[0])
    for j, c in enumerate(cols):
        key += (c - lo[j]) / (hi[j] - lo[j] if hi[j] > lo[j] else 1.0)
    picks = {int(np.argmin(key))}
    for j, c in enumerate(cols):
        at = np.flatnonzero(c == lo[j])
        picks.add(int(at[np.argmin(key[at])]))
    cut = np.zeros(y.shape[0], bool)
    le, lt = np.empty(y.shape[0], bool), np.empty(y.shape[0], bool)
    for p in picks:
        le[:], lt[:] = True, False
        for j, c in enumerate(cols):
            le &= y[p, j] <= c
            lt |= y[p, j] < c
        cut |= le & lt
    return cut


def _front_2(u: np.ndarray) -> np.ndarray:
    """Distinct rows sorted by (first, second): kept where the second is below every earlier row's."""
    before = np.minimum.accumulate(u[:, 1])
    keep = np.ones(u.shape[0], bool)
    keep[1:] = u[1:, 1] < before[:-1]
    return keep


def _front_3(u: np.ndarray) -> np.ndarray:
    """Distinct rows in lexicographic order swept against a staircase of the kept rows' (second, third): second
    ascending, third strictly descending, so the last step at or left of a row's second holds the least third."""
    keep = np.zeros(u.shape[0], bool)
    xs: list[float] = []
    ys: list[float] = []
    for i, (b, c) in enumerate(u[:, 1:].tolist()):
        at = bisect.bisect_right(xs, b)
        if at and ys[at - 1] <= c:
            continue
        keep[i] = True
        end = at
        while end < len(xs) and ys[end] >= c:
            end += 1
        lo = at - 1 if at and xs[at - 1] == b else at
        xs[lo:end] = [b]
        ys[lo:end] = [c]
    return keep


def _least(a: np.ndarray, va: np.ndarray, b: np.ndarray, k: int) -> np.ndarray:
    """For each row of ``b``, the least ``va`` of the rows of ``a`` no worse on criteria ``k:`` (``_NONE`` if none).

    The caller guarantees every row of ``a`` no worse than every row of ``b`` on the criteria before ``k``.
    """
    out = np.full(b.shape[0], _NONE, dtype=np.int64)
    if not a.shape[0] or not b.shape[0]:
        return out
    n = a.shape[1]
    if k == n - 1:
        order = np.argsort(a[:, k], kind="stable")
        best = np.minimum.accumulate(va[order])
        pos = np.searchsorted(a[order, k], b[:, k], side="right")
        hit = pos > 0
        out[hit] = best[pos[hit] - 1]
        return out
    if a.shape[0] * b.shape[0] <= _PAIRS:
        ok = a[:, k, None] <= b[None, :, k]
        for j in range(k + 1, n):
            ok &= a[:, j, None] <= b[None, :, j]
        return np.where(ok, va[:, None], _NONE).min(axis=0)
    col = np.concatenate([a[:, k], b[:, k]])
    top = col.max()
    if col.min() == top:
        return _least(a, va, b, k + 1)
    mid = np.median(col)
    if mid >= top:
        mid = col[col < top].max()
    a_lo, b_lo = a[:, k] <= mid, b[:, k] <= mid
    a_hi, b_hi = ~a_lo, ~b_lo
    out[b_lo] = _least(a[a_lo], va[a_lo], b[b_lo], k)
    out[b_hi] = np.minimum(_least(a[a_hi], va[a_hi], b[b_hi], k), _least(a[a_lo], va[a_lo], b[b_hi], k + 1))
    return out


def _front_n(u: np.ndarray) -> np.ndarray:
    """Distinct rows in lexicographic order: the front of the later half of each block is filtered by the front of
    the earlier half, the two ordered on the first criterion already."""
    m = u.shape[0]
    if m * m <= _PAIRS:
        ok = np.ones((m, m), bool)
        for j in range(u.shape[1]):
            ok &= u[:, j, None] <= u[None, :, j]
        np.fill_diagonal(ok, False)
        return ~ok.any(axis=0)
    half = m // 2
    left, right = _front_n(u[:half]), _front_n(u[half:])
    lf = u[:half][left]
    idx = np.flatnonzero(right)
    hit = _least(lf, np.zeros(lf.shape[0], dtype=np.int64), u[half:][idx], 1) != _NONE
    right[idx[hit]] = False
    return np.concatenate([left, right])


def _front_distinct(u: np.ndarray) -> np.ndarray:
    if u.shape[1] == 1:
        keep = np.zeros(u.shape[0], bool)
        keep[:1] = True
        return keep
    if u.shape[1] == 2:
        return _front_2(u)
    if u.shape[1] == 3:
        return _front_3(u)
    return _front_n(u)


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
    in paretoset's terms). Exact (no tolerance). ``O(m log m)`` for two and three criteria, divide and conquer
    for more (module notes).

    Args:
        matrix: ``(m, n)`` criteria values.
        benefit: ``(n,)`` booleans, True where larger is better.

    Returns:
        ``(m,)`` bool, True for non-dominated rows.
    """
    return front_and_dominators(matrix, benefit, dominated_by=False)[0]


def front_and_dominators(matrix: ArrayLike, benefit: ArrayLike, *, dominated_by: bool = True):
    """The front mask and, with ``dominated_by``, :func:`dominators` of the same rows from the one pass.

    Returns:
        ``(front, dom)``: ``(m,)`` bool and ``(m,)`` int64 (None without ``dominated_by``).
    """
    x, b = _pareto_problem(matrix, benefit)
    if x.shape[0] == 0:
        return np.zeros(0, bool), (np.zeros(0, np.int64) if dominated_by else None)
    y = _oriented(x, b)
    cut = _pivot_cut(y) if y.shape[0] > _FEW else np.zeros(y.shape[0], bool)
    rest = np.flatnonzero(~cut)
    u, inverse = _distinct(y[rest])
    keep = _front_distinct(u)
    front = np.zeros(y.shape[0], bool)
    front[rest] = keep[inverse]
    if not dominated_by:
        return front, None
    return front, dominator_of(x, b, front, np.flatnonzero(~front), size=x.shape[0])


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
    if front is None:
        return front_and_dominators(matrix, benefit)[1]
    x, b = _pareto_problem(matrix, benefit)
    return dominator_of(x, b, front, np.flatnonzero(~np.asarray(front, bool)), size=x.shape[0])


def dominator_of(matrix: ArrayLike, benefit: ArrayLike, front: np.ndarray, rows, *, size: int | None = None):
    """:func:`dominators` for the ``rows`` asked only (indices), given the front mask: ``(len(rows),)`` int64, or
    with ``size`` an ``(size,)`` array holding them at their places and -1 elsewhere."""
    x, b = _pareto_problem(matrix, benefit)
    rows = np.asarray(rows, dtype=np.int64).reshape(-1)
    front = np.asarray(front, bool)
    y = _oriented(x, b)
    on = np.flatnonzero(front)
    ask = rows[~front[rows]]
    res = np.full(rows.size, -1, dtype=np.int64)
    if ask.size and on.size:
        got = _least(np.ascontiguousarray(y[on]), on, np.ascontiguousarray(y[ask]), 0)
        res[~front[rows]] = np.where(got == _NONE, -1, got)
    if size is None:
        return res
    out = np.full(size, -1, dtype=np.int64)
    out[rows] = res
    return out
