"""How stable a ranking is when the weights and the property values are uncertain (Monte Carlo).

Each draw perturbs the weights and every entry of the decision matrix (:mod:`ranking.draws`), ranks the candidates
(:mod:`ranking.methods`), and the ranks are tallied over all draws. Ranks within a draw are ordinal; exact ties are
broken at random, so tied candidates share the first place evenly on average and ``p_first`` sums to 1. The same
inputs and seed give the same result.

Screening (``screen=True``) leaves out of the draws the candidates that can never reach the top ``k``: those with
``k`` interval dominators (:mod:`ranking.screening`, which gives the argument). The survivors are then scored among
the screened candidates held at their typical values (:func:`ranking.methods.survivor_scorer`), one drawn column
at a time, which is also the fast way through a big set of which little can be screened.
"""

from __future__ import annotations

import os
from collections.abc import Callable
from concurrent.futures import ThreadPoolExecutor
from dataclasses import dataclass

import numpy as np

from materials.errors import InputError
from ranking.draws import _bounds, _draw_columns, _draw_values, _draw_weights
from ranking.methods import METHODS, ArrayLike, held_columns, survivor_scorer
from ranking.methods.held import check_method
from ranking.methods.matrix import _benefit, _weights
from ranking.screening import _screen

# Cells (draws × candidates × criteria) drawn and ranked at once; bounds memory for large problems.
_CHUNK_CELLS = 1 << 21
# Cells (draws × survivors) of one drawn column at once in a screened run: small enough to stay in cache.
_SCREEN_CELLS = 1 << 15
# A screened run of at least this many cells (draws × survivors) is drawn in _STREAMS parts side by side.
_SPLIT_CELLS = 1 << 22
_STREAMS = 2


@dataclass(frozen=True)
class MonteCarloResult:
    """Rank statistics per candidate over the draws (arrays of shape ``(m,)``; ranks are 1 = best)."""

    p_first: np.ndarray      # share of draws ranked first
    p_top_k: np.ndarray      # share of draws ranked within the top ``top_k``
    rank_mean: np.ndarray    # mean rank
    rank_p05: np.ndarray     # 5th percentile of the rank (an observed rank, inverted-CDF quantile)
    rank_p95: np.ndarray     # 95th percentile of the rank
    score_mean: np.ndarray   # mean score of the method (NaN for screened-out candidates)
    method: str
    draws: int
    top_k: int
    concentration: float
    seed: int
    screened: np.ndarray | None = None  # True = screened out (never drawn); None when screening was not asked for


class _ZeroWeight(Exception):
    """A weight draw put exactly 0 on a firm criterion: the screening certificate may not hold for it."""


def _smallest(key: np.ndarray, kk: int) -> np.ndarray:
    """Indices of the ``kk`` smallest keys of each row, in no particular order (lowest index among equal keys).

    For a few, repeated minima (a pass each) beat a partition by far; more go to ``argpartition``.
    """
    if kk > 8:
        return np.argpartition(key, kk - 1, axis=-1)[:, :kk]
    work = key.copy()
    rows = np.arange(key.shape[0])
    out = np.empty((key.shape[0], kk), dtype=np.intp)
    for t in range(kk):
        out[:, t] = work.argmin(axis=-1)
        work[rows, out[:, t]] = np.inf
    return out


def _tally(rng: np.random.Generator, draws: int, chunk: int, m: int, kk: int, rank_stats: bool,
           scores: Callable[[int], np.ndarray]):
    """Run the draws in chunks; ``scores(k)`` draws and scores ``k`` of them ``(k, m)``, then ties are drawn.

    Returns the counts of first places and top-``kk`` places, the score sums and the ranks (or None).
    """
    ranks = np.empty((draws, m), dtype=np.int32) if rank_stats else None
    first = np.zeros(m)
    in_top = np.zeros(m)
    score_sum = np.zeros(m)
    positions = np.broadcast_to(np.arange(1, m + 1, dtype=np.int32), (min(chunk, draws), m))
    for start in range(0, draws, chunk):
        k = min(chunk, draws - start)
        s = scores(k)
        tie = rng.random((k, m))
        if rank_stats:
            order = np.lexsort((tie, -s), axis=-1)
            np.put_along_axis(ranks[start:start + k], order, positions[:k], axis=-1)
            top = order[:, :kk]
        else:
            # The same order as the sort (score, then the random tie-break), found without sorting all.
            key = -s
            part = _smallest(key, kk) if kk < m else np.tile(np.arange(m), (k, 1))
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
    return first, in_top, score_sum, ranks


def _screened_tally(rng, draws, kk, lo, ty, hi, w, b, firm, method, concentration, out):
    """The draws of the survivors (``~out``) only, the screened candidates held at their typical values, column
    by column (:func:`ranking.methods.survivor_scorer`): the columns without ranges are scored once, and each
    drawn column is one contiguous slab. With nothing screened every candidate is a survivor."""
    # Columns to magnitudes in [1, 2): powers of two are exact and neither method depends on a column's scale;
    # this keeps sums of squares finite.
    amax = np.maximum(np.abs(lo), np.abs(hi)).max(axis=0)
    unit = np.where(amax > 0, np.ldexp(1.0, np.frexp(amax)[1] - 1), 1.0)
    lo, ty, hi = lo / unit, ty / unit, hi / unit
    # A held entry without a typical value sits at the middle of its range.
    held = np.where(np.isnan(ty), 0.5 * lo + 0.5 * hi, ty)[out]
    keep = ~out
    lo, ty, hi = lo[keep], ty[keep], hi[keep]
    varied = (hi > lo).any(axis=0)
    scorer = survivor_scorer(method, np.where(np.isnan(ty), lo, ty), varied, b, held_columns(held))
    lo_v, ty_v, hi_v = (np.ascontiguousarray(a[:, varied].T) for a in (lo, ty, hi))

    check = out.any()
    s = lo.shape[0]

    def run(g: np.random.Generator, n_draws: int):
        def scores(k):
            wk = _draw_weights(g, k, w, concentration)
            if check and not (wk[:, firm] > 0).all():
                raise _ZeroWeight
            return scorer(_draw_columns(g, k, lo_v, ty_v, hi_v), wk)

        return _tally(g, n_draws, max(1, _SCREEN_CELLS // s), s, kk, False, scores)

    if s * draws < _SPLIT_CELLS:
        return run(rng, draws)
    # A big run: the draws in _STREAMS fixed parts, each from its own child generator of ``rng`` (so the result
    # depends on the seed and the problem, never on the number of processors), run side by side in threads
    # (numpy releases the interpreter lock in its array loops) and added up in order.
    parts = [draws // _STREAMS + (i < draws % _STREAMS) for i in range(_STREAMS)]
    with ThreadPoolExecutor(max_workers=min(_STREAMS, os.cpu_count() or 1)) as pool:
        done = list(pool.map(run, rng.spawn(_STREAMS), parts))
    first, in_top, score_sum, _ = done[0]
    for f, t, ssum, _ in done[1:]:
        first, in_top, score_sum = first + f, in_top + t, score_sum + ssum
    return first, in_top, score_sum, None


def monte_carlo(matrix_low: ArrayLike | None, matrix_typ: ArrayLike | None, matrix_high: ArrayLike | None,
                weights: ArrayLike, benefit: ArrayLike, *, method: str = "topsis", draws: int = 1000,
                concentration: float = 50.0, top_k: int = 3, seed: int = 0,
                rank_stats: bool = True, screen: bool = False) -> MonteCarloResult:
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
        screen: leave out of the draws the candidates with at least ``top_k`` interval dominators
            (:mod:`ranking.screening`), which never reach the top ``top_k``: their ``p_first`` and ``p_top_k`` are
            exactly 0 and their ``score_mean`` NaN (not computed). They stay in every draw's normalisation (TOPSIS
            column norms, ideal and anti-ideal; weighted-sum min and max) at their typical values (the middle of
            the range where there is none), so the survivors' normalisation moves a little less than in a full
            run. Needs ``rank_stats=False`` (the screened candidates' ranks are not computed). The survivors'
            draws go column by column (:func:`_draw_columns`, the same distributions as the unscreened run's
            draws from other random numbers), also when nothing is screened: the estimates then agree with the
            unscreened run's within their binomial error. Should a weight draw still put exactly 0 on a firm
            criterion (:mod:`ranking.screening`; not expected for an alpha of 1 or more), the call runs again
            with nothing screened.

    Returns:
        A :class:`MonteCarloResult`; its ``screened`` mask is None unless ``screen`` is True.
    """
    check_method(method)
    if int(draws) != draws or draws < 1:
        raise InputError(f"draws must be a positive whole number, got {draws}")
    if int(top_k) != top_k or top_k < 1:
        raise InputError(f"top_k must be a positive whole number, got {top_k}")
    if not concentration > 0:
        raise InputError(f"concentration must be positive, got {concentration}")
    if screen and rank_stats:
        raise InputError("screening needs rank_stats=False: screened candidates' ranks are not computed")
    draws, top_k = int(draws), int(top_k)
    lo, ty, hi = _bounds(matrix_low, matrix_typ, matrix_high)
    m, n = lo.shape
    if m == 0:
        raise InputError("no candidates to rank")
    b = _benefit(benefit, n)
    w = _weights(weights, lo)
    kk = min(top_k, m)

    out = np.zeros(m, dtype=bool)
    if screen:
        firm = (w > 0) if np.isinf(concentration) else concentration * w >= 1.0
        if kk < m:
            out = _screen(lo, hi, w, b, firm, kk, method, budget=draws * m)
        try:
            # At least kk candidates survive: the first kk in any order that puts dominators first do.
            tallies = _screened_tally(np.random.default_rng(seed), draws, kk, lo, ty, hi, w, b, firm, method,
                                      concentration, out)
        except _ZeroWeight:
            out[:] = False
            tallies = _screened_tally(np.random.default_rng(seed), draws, kk, lo, ty, hi, w, b, firm, method,
                                      concentration, out)
    else:
        rng = np.random.default_rng(seed)
        score = METHODS[method]

        def scores(k):
            wk = _draw_weights(rng, k, w, concentration)
            return score(_draw_values(rng, k, lo, ty, hi), wk, b)

        tallies = _tally(rng, draws, max(1, _CHUNK_CELLS // (m * n)), m, kk, rank_stats, scores)
    first, in_top, score_sum, ranks = tallies
    if out.any():
        keep = ~out
        first, in_top, score_sum = (_spread(a, keep, fill) for a, fill in
                                    ((first, 0.0), (in_top, 0.0), (score_sum, np.nan)))

    nan = np.full(m, np.nan)
    return MonteCarloResult(
        p_first=first / draws,
        p_top_k=in_top / draws,
        rank_mean=ranks.mean(axis=0) if rank_stats else nan,
        rank_p05=np.percentile(ranks, 5, axis=0, method="inverted_cdf").astype(float) if rank_stats else nan,
        rank_p95=np.percentile(ranks, 95, axis=0, method="inverted_cdf").astype(float) if rank_stats else nan,
        score_mean=score_sum / draws,
        method=method, draws=draws, top_k=top_k, concentration=float(concentration), seed=seed,
        screened=out if screen else None,
    )


def _spread(values: np.ndarray, keep: np.ndarray, fill: float) -> np.ndarray:
    """Values of the kept candidates back at their places among all, ``fill`` elsewhere."""
    full = np.full(keep.shape, fill)
    full[keep] = values
    return full
