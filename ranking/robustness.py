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

Screening (``screen=True``) leaves out of the draws the candidates that can never reach the top ``k``. Candidate
``i`` *interval-dominates* ``j`` when, on every criterion of positive weight, ``i``'s worst end (low for a benefit
criterion, high for a cost criterion) is at least as good as ``j``'s best end, and strictly better on at least one
*firm* criterion: one whose Dirichlet alpha ``concentration · w`` is at least 1 (any positive weight when the
weights are fixed). In every draw ``i``'s value is then at least as good as ``j``'s on each weighted criterion and
strictly better on the firm one, whose drawn weight is positive (a draw whose gamma variates all underflow keeps
the given weights). Both methods normalise all candidates by the same column aggregates, so they are monotone
under this: in TOPSIS ``i`` is nowhere farther from the ideal nor nearer the anti-ideal, and strictly on the
strict column (not constant there, so its norm is positive and ideal ≠ anti-ideal), so ``S+_i < S+_j``,
``S-_i > S-_j`` and ``C_i > C_j``; in the weighted sum each min–max term of ``i`` is at least ``j``'s and the
strict one larger (span > 0). Columns that are constant, all zero or have ideal = anti-ideal in a draw add the
same to everybody and are never the strict one. So ``i`` scores strictly higher, no random tie-break can put
``j`` above it, and a candidate with ``top_k`` such dominators is never in the top ``top_k``.

Why firm: that argument is exact arithmetic. Below alpha = 1 the gamma density piles up at 0, drawn weights
under 1e-16 are common (probability about ``1e-16 ** alpha``) and can even underflow to 0, and an advantage
weighted that little vanishes in rounding into a tie the random tie-break may resolve for ``j``. What remains is
an advantage within rounding in the values themselves (relative gaps near 1e-16).
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from materials.errors import InputError
from ranking.methods import (_BLOCK_CELLS, ArrayLike, _benefit, _column_extremes, _matrix, _weights, topsis,
                             weighted_sum)

METHODS = {"topsis": topsis, "weighted": weighted_sum}
# Cells (draws × candidates × criteria) drawn and ranked at once; bounds memory for large problems.
_CHUNK_CELLS = 1 << 21
# Cells (draws × survivors) of one drawn column at once in a screened run: small enough to stay in cache.
_SCREEN_CELLS = 1 << 15
# Candidates taken per block by the dominator search (their pairs among themselves fit in one work array).
_SCREEN_BLOCK = 1024


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


# ------------------------------------------------------------------------------------------------- screening

def _dominator_counts(worst: np.ndarray, best: np.ndarray, ident: np.ndarray, pivots, targets) -> np.ndarray:
    """How many of ``pivots`` interval-dominate each of ``targets`` (index arrays into the columns).

    ``worst`` and ``best`` hold the ends as rows ``(criteria, m)``, turned larger-is-better. Given "no worse on
    every criterion", strictness fails only when the pivot's worst ends equal the target's best ends exactly on
    the firm criteria; ``ident`` numbers the distinct rows of those so that this costs one comparison: column 0
    the worst-end rows, column 1 the best-end rows.
    """
    ok = np.empty((len(pivots), len(targets)), dtype=bool)
    tmp = np.empty_like(ok)
    np.not_equal(ident[pivots, 0][:, None], ident[targets, 1][None, :], out=ok)
    for row_w, row_b in zip(worst, best):
        np.greater_equal(row_w[pivots][:, None], row_b[targets][None, :], out=tmp)
        ok &= tmp
    return np.count_nonzero(ok, axis=0)


def _screen(lo: np.ndarray, hi: np.ndarray, w: np.ndarray, b: np.ndarray, firm: np.ndarray, top_k: int,
            method: str, budget: int) -> np.ndarray:
    """Mask of the candidates with at least ``top_k`` interval dominators (module notes; ``firm`` criteria are
    the ones that may give the strict advantage).

    Candidates are taken in the order of their pessimistic score (every value at its worst end, scored by
    ``method``), where a dominator always comes first: it dominates there too, so it scores strictly higher. Each
    is compared with the survivors found before it, strongest first, then with its own block, until ``top_k``
    dominators are counted. Within the budget this finds every screenable candidate: of ``j``'s dominators, the
    ``top_k`` earliest have fewer than ``top_k`` dominators themselves (theirs come earlier still and dominate
    ``j`` too), so they are survivors compared with ``j``. Rounding in the pessimistic score can only make it miss
    some; every dominator counted is checked by exact comparisons, so no candidate is screened without the
    certificate. The search stops comparing after about ``budget`` pairs (the rest then survive).
    """
    m = lo.shape[0]
    order = np.argsort(-METHODS[method](np.where(b, lo, hi), w, b), kind="stable")
    worst = np.where(b, lo, -hi)[order]
    best = np.where(b, hi, -lo)[order]
    # Only criteria of positive weight count; one whose ends are all equal (min worst = max best) never decides.
    live = (w > 0) & (worst.min(axis=0) < best.max(axis=0))
    firm = firm & live
    if not firm.any():
        return np.zeros(m, dtype=bool)
    # "+ 0.0" turns -0.0 into 0.0, so equal rows are equal bytes.
    rows = np.ascontiguousarray(np.concatenate([worst[:, firm], best[:, firm]]) + 0.0)
    ident = np.unique(rows.view(np.dtype((np.void, rows.itemsize * rows.shape[1]))).ravel(),
                      return_inverse=True)[1].reshape(2, m).T
    worst, best = np.ascontiguousarray(worst[:, live].T), np.ascontiguousarray(best[:, live].T)
    kept = np.empty(m, dtype=np.intp)     # survivors so far, in order
    n_kept, pairs = 0, 0
    out = np.zeros(m, dtype=bool)
    for start in range(0, m, _SCREEN_BLOCK):
        if pairs > budget:
            break
        block = np.arange(start, min(m, start + _SCREEN_BLOCK))
        alive, count = block, np.zeros(block.size, dtype=np.intp)
        i, step = 0, 32
        while i < n_kept and alive.size:
            pivots = kept[i:min(i + step, n_kept)]
            count += _dominator_counts(worst, best, ident, pivots, alive)
            pairs += pivots.size * alive.size
            more = count < top_k
            alive, count = alive[more], count[more]
            i += pivots.size
            step = min(4 * step, max(32, _BLOCK_CELLS // max(alive.size, 1)))
        if alive.size:
            count += _dominator_counts(worst, best, ident, block, alive)
            pairs += block.size * alive.size
            alive = alive[count < top_k]
        out[block] = True
        out[alive] = False
        kept[n_kept:n_kept + alive.size] = alive
        n_kept += alive.size
    mask = np.zeros(m, dtype=bool)
    mask[order] = out
    return mask


# ---------------------------------------------------------------------------------- scoring among held rows

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
        raise InputError("decision matrix has a non-finite value (NaN or infinity)")
    return hi, lo


def survivor_scorer(method: str, survivors: ArrayLike, varied: ArrayLike, benefit: ArrayLike,
                    held: tuple[np.ndarray, np.ndarray, np.ndarray]) -> Callable[[np.ndarray, np.ndarray], np.ndarray]:
    """Scores of survivor rows ranked together with held rows, knowing only the held rows' column aggregates.

    Both methods sum over criteria terms that depend on the cell and on its column's sum of squares, max and min
    (TOPSIS: ``(w_j (x_ij - ideal_j) / ||x_j||)²`` and the same to the anti-ideal; the weighted sum: ``w_j`` times
    the min–max value), and a whole column's aggregates combine the held rows' with the survivors'. So a draw
    costs ``O(survivors)``, and the terms of the columns that are not drawn are computed once, here. The scores
    equal :func:`ranking.methods.topsis` / :func:`ranking.methods.weighted_sum` of the whole matrix (held rows
    and survivors) on the survivors' rows, degenerate answers included. Values should be of moderate magnitude
    (below about 1e150; :func:`monte_carlo` first rescales each column by a power of two).

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
    if method not in METHODS:
        raise InputError(f"method must be one of {', '.join(METHODS)}, got {method!r}")
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
    prepare = _topsis_scorer if method == "topsis" else _weighted_scorer
    return prepare(xf, hi, lo, fixed, b, held)


def _topsis_scorer(xf, hi, lo, fixed, b, held):
    """:func:`survivor_scorer` for TOPSIS: fixed columns' squared normalised distances, once; the rest per draw."""
    sum_sq, top, bottom = held
    norm = np.sqrt(sum_sq[fixed] + np.einsum("ij,ij->j", xf, xf))
    inv = np.divide(1.0, norm, out=np.zeros(norm.shape), where=norm > 0)
    to_ideal = np.ascontiguousarray((((xf - np.where(b[fixed], hi, lo)) * inv) ** 2).T)
    to_anti = np.ascontiguousarray((((xf - np.where(b[fixed], lo, hi)) * inv) ** 2).T)
    cols = np.flatnonzero(~fixed)

    def score(columns: np.ndarray, w: np.ndarray) -> np.ndarray:
        w2 = w[:, fixed] ** 2
        s_plus, s_minus = w2 @ to_ideal, w2 @ to_anti
        for xc, c in zip(columns, cols):
            c_hi, c_lo = _combined(xc.max(axis=1), xc.min(axis=1), top[c], bottom[c])
            norm = np.sqrt(np.einsum("ij,ij->i", xc, xc) + sum_sq[c])
            scale = np.divide(w[:, c], norm, out=np.zeros(norm.shape), where=norm > 0)[:, None]
            ideal, anti = (c_hi, c_lo) if b[c] else (c_lo, c_hi)
            d = xc - ideal[:, None]
            d *= scale
            d *= d
            s_plus += d
            np.subtract(xc, anti[:, None], out=d)
            d *= scale
            d *= d
            s_minus += d
        np.sqrt(s_plus, out=s_plus)
        np.sqrt(s_minus, out=s_minus)
        s_plus += s_minus
        # Everybody at the ideal point: closeness 1.0, as ranking.methods.topsis.
        return np.divide(s_minus, s_plus, out=np.ones(s_minus.shape), where=s_plus > 0)
    return score


def _weighted_scorer(xf, hi, lo, fixed, b, held):
    """:func:`survivor_scorer` for the weighted sum: fixed columns' min–max values, once; the rest per draw."""
    _, top, bottom = held
    span = hi - lo
    inv = np.divide(1.0, span, out=np.zeros(span.shape), where=span > 0)
    # Benefit: (x - min)/span; cost: (max - x)/span; a constant column is 1 (as ranking.methods.weighted_sum).
    values = np.ascontiguousarray(((xf - np.where(b[fixed], lo, hi)) * np.where(b[fixed], inv, -inv)
                                   + (span == 0)).T)
    cols = np.flatnonzero(~fixed)

    def score(columns: np.ndarray, w: np.ndarray) -> np.ndarray:
        total = w[:, fixed] @ values
        for xc, c in zip(columns, cols):
            c_hi, c_lo = _combined(xc.max(axis=1), xc.min(axis=1), top[c], bottom[c])
            span = c_hi - c_lo
            if not np.isfinite(span).all():
                raise InputError("a criterion's range (max - min) is too large to represent")
            constant = span == 0
            inv = np.divide(1.0, span, out=np.zeros(span.shape), where=~constant)
            t = xc - (c_lo if b[c] else c_hi)[:, None]
            t *= (w[:, c] * (inv if b[c] else -inv))[:, None]
            t += (w[:, c] * constant)[:, None]
            total += t
        return total
    return score


# ------------------------------------------------------------------------------------------------- the draws

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
    """The draws of the survivors (``~out``) only, the screened candidates held at their typical values."""
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

    def scores(k):
        wk = _draw_weights(rng, k, w, concentration)
        if not (wk[:, firm] > 0).all():
            raise _ZeroWeight
        return scorer(_draw_columns(rng, k, lo_v, ty_v, hi_v), wk)

    s = lo.shape[0]
    return _tally(rng, draws, max(1, _SCREEN_CELLS // s), s, kk, False, scores)


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
        screen: leave out of the draws the candidates with at least ``top_k`` interval dominators (module
            notes), which never reach the top ``top_k``: their ``p_first`` and ``p_top_k`` are exactly 0 and
            their ``score_mean`` NaN (not computed). They stay in every draw's normalisation (TOPSIS column norms,
            ideal and anti-ideal; weighted-sum min and max) at their typical values (the middle of the range
            where there is none), so the survivors' normalisation moves a little less than in a full run. Needs
            ``rank_stats=False`` (the screened candidates' ranks are not computed). If nothing is screened the
            result is the unscreened run's, bit for bit. Should a weight draw still put exactly 0 on a firm
            criterion (module notes; not expected for an alpha of 1 or more), the call falls back on the
            unscreened run, with nothing screened.

    Returns:
        A :class:`MonteCarloResult`; its ``screened`` mask is None unless ``screen`` is True.
    """
    if method not in METHODS:
        raise InputError(f"method must be one of {', '.join(METHODS)}, got {method!r}")
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
    tallies = None
    if screen and kk < m:
        firm = (w > 0) if np.isinf(concentration) else concentration * w >= 1.0
        out = _screen(lo, hi, w, b, firm, kk, method, budget=draws * m)
        if out.any():
            try:
                # At least kk candidates survive: the first kk in any order that puts dominators first do.
                tallies = _screened_tally(np.random.default_rng(seed), draws, kk, lo, ty, hi, w, b, firm, method,
                                          concentration, out)
            except _ZeroWeight:
                out[:] = False
    if tallies is None:
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
