"""The score chart: a chart that a shortlist result alone can give."""

from __future__ import annotations

import numpy as np

from ranking.charts.common import new_figure

SCORE_ROWS = 30  # bars in the score chart; a longer ranking shows its head (the table has every row)


def score_chart(result: dict):
    """Horizontal bars of the ranked materials' scores (the first SCORE_ROWS), with P(first) printed.

    ``result`` is a shortlist result dict (see :func:`ranking.shortlist.shortlist`).
    """
    every = list(result.get("ranked") or [])
    ranked = every[:SCORE_ROWS]
    fig, ax = new_figure(7.0, max(2.0, 0.35 * len(ranked) + 1.2))
    if not ranked:
        ax.text(0.5, 0.5, "no material ranked", transform=ax.transAxes, ha="center", va="center")
        return fig
    names = [f"{r.get('rank', i + 1)}. {r.get('label') or r['key']}" for i, r in enumerate(ranked)]
    scores = [float(r.get("score") or 0.0) for r in ranked]
    y = np.arange(len(ranked))[::-1]
    bars = ax.barh(y, scores, color="0.6", edgecolor="black", linewidth=0.6, height=0.6, label="score")
    for b, r in zip(bars, ranked, strict=True):
        b.set_gid(f"score:{r.get('label') or r['key']}")
    for yi, r, s in zip(y, ranked, scores, strict=True):
        pt = r.get("p_top")
        if pt is not None:
            ax.text(s, yi, f"  P(first) {pt:.0%}", va="center", fontsize=7)
    ax.set_yticks(y, labels=names, fontsize=8)
    method = result.get("method", "")
    ax.set_xlabel(f"score ({method})" if method else "score")
    ax.set_xlim(0, max(scores) * 1.35 if max(scores) > 0 else 1)
    total = (result.get("counts") or {}).get("ranked", len(every))
    ax.set_title("Ranking" if total <= len(ranked) else f"Ranking: the first {len(ranked)} of {total}", loc="left",
                 fontsize=11)
    ax.grid(True, axis="x", color="0.92", linewidth=0.5)
    return fig
