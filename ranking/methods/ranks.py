"""Ranks from scores."""

from __future__ import annotations

import numpy as np

from materials.errors import InputError
from ranking.methods.matrix import ArrayLike


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
