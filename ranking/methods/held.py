"""Scores of rows ranked among rows held fixed, of which only the column aggregates are known, over many draws at
once: what the Monte Carlo needs when it draws only the candidates that may reach the top."""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from materials.errors import InputError
from ranking.methods.matrix import ArrayLike, _benefit, _column_extremes, _combined, _matrix
from ranking.methods.topsis import _topsis_scorer, topsis
from ranking.methods.weighted import _weighted_scorer, weighted_sum

#: The scoring methods by name: each takes ``(matrix, weights, benefit)``, also as stacks of draws.
METHODS = {"topsis": topsis, "weighted": weighted_sum}
_HELD = {"topsis": _topsis_scorer, "weighted": _weighted_scorer}


def check_method(method: str) -> None:
    """Refuse a method name that is not one of :data:`METHODS`."""
    if method not in METHODS:
        raise InputError(f"method must be one of {', '.join(METHODS)}, got {method!r}")


def survivor_scorer(method: str, survivors: ArrayLike, varied: ArrayLike, benefit: ArrayLike,
                    held: tuple[np.ndarray, np.ndarray, np.ndarray]) -> Callable[[np.ndarray, np.ndarray], np.ndarray]:
    """Scores of survivor rows ranked together with held rows, knowing only the held rows' column aggregates.

    Both methods sum over criteria terms that depend on the cell and on its column's sum of squares, max and min
    (TOPSIS: ``(w_j (x_ij - ideal_j) / ||x_j||)²`` and the same to the anti-ideal; the weighted sum: ``w_j`` times
    the min–max value), and a whole column's aggregates combine the held rows' with the survivors'. So a draw
    costs ``O(survivors)``, and the terms of the columns that are not drawn are computed once, here. The scores
    equal :func:`ranking.methods.topsis` / :func:`ranking.methods.weighted_sum` of the whole matrix (held rows
    and survivors) on the survivors' rows, degenerate answers included. Values should be of moderate magnitude
    (below about 1e150; :func:`ranking.robustness.monte_carlo` first rescales each column by a power of two).

    Args:
        method: ``"topsis"`` or ``"weighted"``.
        survivors: ``(s, n)`` the survivors' values; those in the varied columns are not read.
        varied: ``(n,)`` booleans, True for the columns given anew in each call.
        benefit: ``(n,)`` booleans, True where larger is better.
        held: :func:`held_columns` of the held rows.

    Returns:
        ``score(columns, w)`` giving the ``(k, s)`` scores of ``k`` draws: ``columns`` ``(c, k, s)`` holds the
        survivors' values of the ``c`` varied columns (one ``(k, s)`` slab per column, in column order), ``w``
        ``(k, n)`` the weights of each draw, summing to 1.
    """
    check_method(method)
    x = _matrix(survivors, allow_stack=False)
    n = x.shape[1]
    b, varied = _benefit(benefit, n), _benefit(varied, n)
    held = tuple(np.asarray(a, dtype=np.float64) for a in held)
    if len(held) != 3 or any(a.shape != (n,) for a in held):
        raise InputError(f"held must be (sum of squares, max, min) of shape ({n},) each, as held_columns gives")
    fixed = ~varied
    xf = x[:, fixed]
    hi, lo = _column_extremes(xf) if fixed.any() else (np.empty(0), np.empty(0))
    hi, lo = _combined(hi, lo, held[1][fixed], held[2][fixed])
    return _HELD[method](xf, hi, lo, fixed, b, held)
