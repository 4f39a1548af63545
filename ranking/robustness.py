"""How stable a ranking is when the weights and the property values are uncertain (Monte Carlo).

Each draw perturbs the weights and every entry of the decision matrix, ranks the candidates, and the ranks are
tallied over all draws:

* weights from a Dirichlet distribution centred on the given weights, ``alpha = concentration · w / sum(w)``
  (mean = the normalised weights; larger concentration = tighter; a zero weight stays zero; ``inf`` keeps the
  weights fixed);
* each entry from a triangular distribution on ``(low, typical, high)``, or uniform on ``[low, high]`` where the
  typical value is missing (NaN), independently per entry and per draw; an entry with no range (low or high NaN,
  or ``low == high``) stays at its typical value.

Ranks within a draw are ordinal; exact ties are broken at random, so tied candidates share the first place evenly
on average and ``p_first`` sums to 1. The same inputs and seed give the same result.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from materials.errors import InputError
from ranking.methods import ArrayLike, _benefit, _matrix, _weights, topsis, weighted_sum

METHODS = {"topsis": topsis, "weighted": weighted_sum}
# Cells (draws × candidates × criteria) drawn and ranked at once; bounds memory for large problems.
_CHUNK_CELLS = 1 << 21


@dataclass(frozen=True)
class MonteCarloResult:
    """Rank statistics per candidate over the draws (arrays of shape ``(m,)``; ranks are 1 = best)."""

    p_first: np.ndarray      # share of draws ranked first
    p_top_k: np.ndarray      # share of draws ranked within the top ``top_k``
    rank_mean: np.ndarray    # mean rank
    rank_p05: np.ndarray     # 5th percentile of the rank (an observed rank, inverted-CDF quantile)
    rank_p95: np.ndarray     # 95th percentile of the rank
    score_mean: np.ndarray   # mean score of the method
    method: str
    draws: int
    top_k: int
    concentration: float
    seed: int


def _bounds(low, typ, high):
    """Checked ``(low, typ, high)`` arrays; missing bounds fall back on the typical value."""
    if typ is None and (low is None or high is None):
        raise InputError("give the typical matrix, or both the low and the high matrix")
    arrays = [None if a is None else _matrix(a, allow_stack=False) for a in (low, typ, high)]
    shape = next(a.shape for a in arrays if a is not None)
    for name, a in zip(("low", "typical", "high"), arrays):
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
    left = lo + np.sqrt(u * (width * (mode - lo)))
    right = hi - np.sqrt((1.0 - u) * (width * (hi - mode)))
    out = np.where(u < split, left, right)
    return np.where(uniform, lo + u * width, out)


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


def monte_carlo(matrix_low: ArrayLike | None, matrix_typ: ArrayLike | None, matrix_high: ArrayLike | None,
                weights: ArrayLike, benefit: ArrayLike, *, method: str = "topsis", draws: int = 1000,
                concentration: float = 50.0, top_k: int = 3, seed: int = 0,
                rank_stats: bool = True) -> MonteCarloResult:
    """Monte Carlo rank statistics under uncertain weights and property values.

    Args:
        matrix_low: ``(m, n)`` lower ends of each value's range (NaN or None: no lower end, use the typical).
        matrix_typ: ``(m, n)`` typical values (NaN or None: draw uniformly on ``[low, high]``).
        matrix_high: ``(m, n)`` upper ends (NaN or None: use the typical).
        weights: ``(n,)`` non-negative weights (normalised to sum 1).
        benefit: ``(n,)`` booleans, True where larger is better.
        method: ``"topsis"`` (:func:`ranking.methods.topsis`) or ``"weighted"``
            (:func:`ranking.methods.weighted_sum`).
        draws: number of draws.
        concentration: Dirichlet concentration (sum of alphas) of the weights; ``inf`` keeps them fixed.
        top_k: size of the top group counted in ``p_top_k``.
        seed: seed of the numpy Generator (PCG64).
        rank_stats: also compute every candidate's full rank in every draw (rank mean and percentiles); without
            it only the top ``top_k`` of each draw are found (a partition, not a sort: much faster for big sets),
            and the rank statistics are NaN.

    Returns:
        A :class:`MonteCarloResult`.
    """
    if method not in METHODS:
        raise InputError(f"method must be one of {', '.join(METHODS)}, got {method!r}")
    if int(draws) != draws or draws < 1:
        raise InputError(f"draws must be a positive whole number, got {draws}")
    if int(top_k) != top_k or top_k < 1:
        raise InputError(f"top_k must be a positive whole number, got {top_k}")
    if not concentration > 0:
        raise InputError(f"concentration must be positive, got {concentration}")
    draws, top_k = int(draws), int(top_k)
    lo, ty, hi = _bounds(matrix_low, matrix_typ, matrix_high)
    m, n = lo.shape
    if m == 0:
        raise InputError("no candidates to rank")
    b = _benefit(benefit, n)
    w = _weights(weights, lo)
    score = METHODS[method]
    rng = np.random.default_rng(seed)

    ranks = np.empty((draws, m), dtype=np.int32) if rank_stats else None
    first = np.zeros(m)
    in_top = np.zeros(m)
    kk = min(top_k, m)
    score_sum = np.zeros(m)
    chunk = max(1, _CHUNK_CELLS // (m * n))
    positions = np.broadcast_to(np.arange(1, m + 1, dtype=np.int32), (min(chunk, draws), m))
    for start in range(0, draws, chunk):
        k = min(chunk, draws - start)
        wk = _draw_weights(rng, k, w, concentration)
        s = score(_draw_values(rng, k, lo, ty, hi), wk, b)
        tie = rng.random((k, m))
        if rank_stats:
            order = np.lexsort((tie, -s), axis=-1)
            np.put_along_axis(ranks[start:start + k], order, positions[:k], axis=-1)
            top = order[:, :kk]
        else:
            # The same order as the sort (score, then the random tie-break), found by a partition.
            key = -s
            part = np.argpartition(key, kk - 1, axis=-1)[:, :kk] if kk < m else np.tile(np.arange(m), (k, 1))
            pk, pt = np.take_along_axis(key, part, -1), np.take_along_axis(tie, part, -1)
            # A candidate tied with the k-th on score may sit outside the partition; add such ties back.
            kth = pk.max(axis=-1, keepdims=True)
            if ((key == kth).sum(axis=-1) > (pk == kth).sum(axis=-1)).any():
                order = np.lexsort((tie, key), axis=-1)
                top = order[:, :kk]
            else:
                top = np.take_along_axis(part, np.lexsort((pt, pk), axis=-1), -1)
        rows = np.arange(k)[:, None]
        np.add.at(first, top[:, 0], 1.0)
        hit = np.zeros((k, m), dtype=bool)
        hit[rows, top] = True
        in_top += hit.sum(axis=0)
        score_sum += s.sum(axis=0)

    nan = np.full(m, np.nan)
    return MonteCarloResult(
        p_first=first / draws,
        p_top_k=in_top / draws,
        rank_mean=ranks.mean(axis=0) if rank_stats else nan,
        rank_p05=np.percentile(ranks, 5, axis=0, method="inverted_cdf").astype(float) if rank_stats else nan,
        rank_p95=np.percentile(ranks, 95, axis=0, method="inverted_cdf").astype(float) if rank_stats else nan,
        score_mean=score_sum / draws,
        method=method, draws=draws, top_k=top_k, concentration=float(concentration), seed=seed,
    )
