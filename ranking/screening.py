"""Screening for a Monte Carlo ranking: the candidates that can never reach the top ``k``, left out of its draws.

Candidate ``i`` *interval-dominates* ``j`` when, on every criterion of positive weight, ``i``'s worst end (low for a
benefit criterion, high for a cost criterion) is at least as good as ``j``'s best end, and strictly better on at
least one *firm* criterion: one whose Dirichlet alpha ``concentration · w`` is at least 1 (any positive weight when
the weights are fixed). In every draw ``i``'s value is then at least as good as ``j``'s on each weighted criterion
and strictly better on the firm one, whose drawn weight is positive (a draw whose gamma variates all underflow keeps
the given weights). Both methods normalise all candidates by the same column aggregates, so they are monotone under
this: in TOPSIS ``i`` is nowhere farther from the ideal nor nearer the anti-ideal, and strictly on the strict column
(not constant there, so its norm is positive and ideal ≠ anti-ideal), so ``S+_i < S+_j``, ``S-_i > S-_j`` and
``C_i > C_j``; in the weighted sum each min–max term of ``i`` is at least ``j``'s and the strict one larger (span >
0). Columns that are constant, all zero or have ideal = anti-ideal in a draw add the same to everybody and are never
the strict one. So ``i`` scores strictly higher, no random tie-break can put ``j`` above it, and a candidate with
``top_k`` such dominators is never in the top ``top_k``.

Why firm: that argument is exact arithmetic. Below alpha = 1 the gamma density piles up at 0, drawn weights
under 1e-16 are common (probability about ``1e-16 ** alpha``) and can even underflow to 0, and an advantage
weighted that little vanishes in rounding into a tie the random tie-break may resolve for ``j``. What remains is
an advantage within rounding in the values themselves (relative gaps near 1e-16).
"""

from __future__ import annotations

import numpy as np

from ranking.methods.held import METHODS

# Largest boolean work array (pivots × candidates) the dominator search builds at once.
_BLOCK_CELLS = 1 << 21
# Candidates taken per block by the dominator search (their pairs among themselves fit in one work array).
_SCREEN_BLOCK = 1024


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
    for row_w, row_b in zip(worst, best, strict=True):
        np.greater_equal(row_w[pivots][:, None], row_b[targets][None, :], out=tmp)
        ok &= tmp
    return np.count_nonzero(ok, axis=0)


def _screen(lo: np.ndarray, hi: np.ndarray, w: np.ndarray, b: np.ndarray, firm: np.ndarray, top_k: int,
            method: str, budget: int, precheck: bool = True) -> np.ndarray:
    """Mask of the candidates with at least ``top_k`` interval dominators (module notes; ``firm`` criteria are
    the ones that may give the strict advantage).

    Candidates are taken in the order of their pessimistic score (every value at its worst end, scored by
    ``method``), where a dominator always comes first: it dominates there too, so it scores strictly higher. Each
    is compared with the survivors found before it, strongest first, then with its own block, until ``top_k``
    dominators are counted. Within the budget this finds every screenable candidate: of ``j``'s dominators, the
    ``top_k`` earliest have fewer than ``top_k`` dominators themselves (theirs come earlier still and dominate
    ``j`` too), so they are survivors compared with ``j``. Rounding in the pessimistic score can only make it miss
    some; every dominator counted is checked by exact comparisons, so no candidate is screened without the
    certificate. The search stops comparing after about ``budget`` pairs (the rest then survive). ``precheck``
    leaves uncompared the candidates that cannot have ``top_k`` dominators (module notes of the loop); the mask is
    the same without it.
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
    # A candidate has top_k dominators only if, on every live criterion, at least top_k candidates' worst ends
    # reach its best end; one that fails this is never screened and is not compared (it is still a pivot, and
    # the pairs it would have cost are counted, so the search stops where a full search would).
    top = np.partition(worst[:, live], m - top_k, axis=0)[m - top_k]
    possible = (best[:, live] <= top).all(axis=1) if precheck else np.ones(m, dtype=bool)
    worst, best = np.ascontiguousarray(worst[:, live].T), np.ascontiguousarray(best[:, live].T)
    kept = np.empty(m, dtype=np.intp)     # survivors so far, in order
    n_kept, pairs = 0, 0
    out = np.zeros(m, dtype=bool)
    for start in range(0, m, _SCREEN_BLOCK):
        if pairs > budget:
            break
        block = np.arange(start, min(m, start + _SCREEN_BLOCK))
        alive = block[possible[block]]
        never = block.size - alive.size       # alive throughout, uncompared
        count = np.zeros(alive.size, dtype=np.intp)
        i, step = 0, 32
        while i < n_kept and alive.size + never:
            if not alive.size:                 # only the uncompared are left: their pairs, to the end
                pairs += (n_kept - i) * never
                break
            pivots = kept[i:min(i + step, n_kept)]
            count += _dominator_counts(worst, best, ident, pivots, alive)
            pairs += pivots.size * (alive.size + never)
            more = count < top_k
            alive, count = alive[more], count[more]
            i += pivots.size
            step = min(4 * step, max(32, _BLOCK_CELLS // max(alive.size + never, 1)))
        if alive.size + never:
            if alive.size:
                count += _dominator_counts(worst, best, ident, block, alive)
                alive = alive[count < top_k]
            pairs += block.size * (count.size + never)
        screened = np.ones(block.size, dtype=bool)
        screened[alive - start] = False
        screened[~possible[block]] = False
        out[block] = screened
        survivors = block[~screened]
        kept[n_kept:n_kept + survivors.size] = survivors
        n_kept += survivors.size
    mask = np.zeros(m, dtype=bool)
    mask[order] = out
    return mask
