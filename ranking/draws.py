"""Random draws of a Monte Carlo ranking: weights around the given ones, and values within their ranges.

* Weights from a Dirichlet distribution centred on the given weights, ``alpha = concentration · w / sum(w)``
  (mean = the normalised weights; larger concentration = tighter; a zero weight stays zero; ``inf`` keeps the
  weights fixed).
* Each entry from a triangular distribution on ``(low, typical, high)``, or uniform on ``[low, high]`` where the
  typical value is missing (NaN), independently per entry and per draw; an entry with no range (low or high NaN,
  or ``low == high``) stays at its typical value.
"""

from __future__ import annotations

import numpy as np

from materials.errors import InputError
from ranking.methods.matrix import _matrix


def _bounds(low, typ, high):
    """Checked ``(low, typ, high)`` arrays; missing bounds fall back on the typical value."""
    if typ is None and (low is None or high is None):
        raise InputError("give the typical matrix, or both the low and the high matrix")
    arrays = [None if a is None else _matrix(a, allow_stack=False) for a in (low, typ, high)]
    shape = next(a.shape for a in arrays if a is not None)
    for name, a in zip(("low", "typical", "high"), arrays, strict=True):
        if a is not None and a.shape != shape:
            raise InputError(f"the {name} matrix has shape {a.shape}, expected {shape}")
    nan = np.full(shape, np.nan)
    lo, ty, hi = (nan if a is None else a for a in arrays)
    if np.isinf(lo).any() or np.isinf(ty).any() or np.isinf(hi).any():
        raise InputError("property ranges must be finite")
    lo = np.where(np.isnan(lo), ty, lo)
    hi = np.where(np.isnan(hi), ty, hi)
    if np.isnan(lo).any() or np.isnan(hi).any():
        where = tuple(np.argwhere(np.isnan(lo) | np.isnan(hi))[0].tolist())
        raise InputError(f"entry {where} has neither a typical value nor a full low–high range")
    if (lo > hi).any():
        raise InputError(f"entry {tuple(np.argwhere(lo > hi)[0].tolist())} has low > high")
    outside = ~np.isnan(ty) & ((ty < lo) | (ty > hi))
    if outside.any():
        raise InputError(f"entry {tuple(np.argwhere(outside)[0].tolist())} has a typical value outside low–high")
    return lo, ty, hi


def _draw_values(rng: np.random.Generator, k: int, lo, ty, hi) -> np.ndarray:
    """``k`` matrices, triangular on (lo, ty, hi) per entry, uniform where ``ty`` is NaN (inverse CDF).

    Columns without any range are not drawn (they are the same in every draw), which keeps big stores cheap.
    """
    varied = (hi > lo).any(axis=0)
    if not varied.all():
        out = np.broadcast_to(np.where(np.isnan(ty), lo, ty), (k,) + lo.shape).copy()
        if varied.any():
            out[:, :, varied] = _draw_values(rng, k, lo[:, varied], ty[:, varied], hi[:, varied])
        return out
    u = rng.random((k,) + lo.shape)
    width = hi - lo
    uniform = np.isnan(ty)
    mode = np.where(uniform, lo, ty)
    split = np.divide(mode - lo, width, out=np.zeros(width.shape), where=width > 0)
    # The inverse CDF on each side of the mode, worked in place: lo + sqrt(u·w·(mode − lo)) left of the split,
    # hi − sqrt((1 − u)·w·(hi − mode)) right of it.
    out = np.subtract(1.0, u)
    out *= width * (hi - mode)
    np.sqrt(out, out=out)
    np.subtract(hi, out, out=out)
    left = u * (width * (mode - lo))
    np.sqrt(left, out=left)
    left += lo
    np.copyto(out, left, where=u < split)
    if uniform.any():
        np.copyto(out, lo + u * width, where=uniform)
    return out


def _draw_columns(rng: np.random.Generator, k: int, lo, ty, hi) -> np.ndarray:
    """``k`` draws of the same model as :func:`_draw_values` for columns given as rows ``(c, s)``: ``(c, k, s)``.

    One contiguous ``(k, s)`` slab per column. The triangular comes from two uniforms without a branch,
    ``lo + width · (split · max(u, v) + (1 - split) · min(u, v))`` (Stein & Keblis 2009, *Math. Comput.
    Modelling* 49, 1143), which is cheaper here than the inverse CDF; uniform entries use ``u`` alone.
    """
    c, s = lo.shape
    out = np.empty((c, k, s))
    width = hi - lo
    uniform = np.isnan(ty)
    split = np.divide(np.where(uniform, lo, ty) - lo, width, out=np.zeros(width.shape), where=width > 0)
    for j in range(c):
        if not (width[j] > 0).any():
            out[j] = lo[j]   # a column without ranges (self-healing, drift, confidence) has nothing to draw
            continue
        u, v = rng.random((k, s)), rng.random((k, s))
        big = np.maximum(u, v)
        np.minimum(u, v, out=u)
        big *= split[j]
        u *= 1.0 - split[j]
        big += u
        if uniform[j].any():
            big = np.where(uniform[j], v, big)
        big *= width[j]
        np.add(big, lo[j], out=out[j])
    return out


def _draw_weights(rng: np.random.Generator, k: int, w: np.ndarray, concentration: float) -> np.ndarray:
    """``k`` weight vectors from Dirichlet(concentration · w) via normalised gamma variates (zero alpha → 0)."""
    if np.isinf(concentration):
        return np.broadcast_to(w, (k, w.size)).copy()
    alpha = concentration * w
    g = np.zeros((k, w.size))
    live = alpha > 0
    g[:, live] = rng.standard_gamma(alpha[live], size=(k, int(live.sum())))
    total = g.sum(axis=1, keepdims=True)
    # Tiny alphas can underflow every gamma variate of a draw to 0; such a draw keeps the given weights.
    return np.where(total > 0, g / np.where(total > 0, total, 1.0), w)
