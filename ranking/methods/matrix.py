"""The decision matrix, weights and benefit flags checked, and the column aggregates both scoring methods use
(max, min, sum of squares), also of rows held fixed outside the matrix."""

from __future__ import annotations

from collections.abc import Sequence

import numpy as np

from materials.errors import InputError

ArrayLike = np.ndarray | Sequence

# Rows folded together when a tall matrix is reduced over its candidates (see _column_reduce).
_FOLD_ROWS = 4096
_NON_FINITE = "decision matrix has a non-finite value (NaN or infinity)"


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
        raise InputError(f"{_NON_FINITE} at index {tuple(where.tolist())}")
    return hi, lo


def _safe_columns(x: np.ndarray) -> np.ndarray:
    """Columns of extreme magnitude rescaled by their largest value (both methods are invariant to column scale).

    Without this, ``w/||x||`` of a column of subnormal numbers overflows to infinity.
    """
    amax = np.max(np.abs(x), axis=-2)
    odd = (amax > 0) & np.isfinite(amax) & ((amax < 1e-100) | (amax > 1e100))
    if not odd.any():
        return x
    return x / np.where(odd, amax, 1.0)[..., None, :]


def held_columns(held: ArrayLike) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """What both methods need of rows held fixed: per column the sum of squares, the max and the min.

    Args:
        held: ``(h, n)`` values of the held rows (``h`` may be 0).

    Returns:
        ``(sum_sq, hi, lo)``, each ``(n,)``; ``(0, -inf, inf)`` when no rows are held.
    """
    x = _matrix(held, allow_stack=False)
    if x.shape[0] == 0:
        n = x.shape[1]
        return np.zeros(n), np.full(n, -np.inf), np.full(n, np.inf)
    hi, lo = _column_extremes(x)
    return np.einsum("ij,ij->j", x, x), hi, lo


def _combined(hi: np.ndarray, lo: np.ndarray, top, bottom) -> tuple[np.ndarray, np.ndarray]:
    """Column max and min of survivors and held rows together, checked finite."""
    hi, lo = np.maximum(hi, top), np.minimum(lo, bottom)
    if not (np.isfinite(hi).all() and np.isfinite(lo).all()):
        raise InputError(_NON_FINITE)
    return hi, lo
