"""Multi-criteria ranking methods on a decision matrix (rows = candidates, columns = criteria).

Pure numpy, vectorised. Every function takes a float matrix ``(m, n)``, weights ``(n,)`` (any non-negative scale;
normalised here to sum 1) and ``benefit`` ``(n,)`` booleans (True = larger is better, False = smaller is better).
Values are in whatever units the criteria carry (SI upstream); the methods are scale-free per column.

Methods followed:

* TOPSIS — Hwang & Yoon (1981), *Multiple Attribute Decision Making*, Springer, pp. 128–134: vector normalisation
  ``r = x / sqrt(sum x²)`` per column, weighting, ideal and anti-ideal points, Euclidean distances ``S+``/``S-``,
  closeness ``C = S- / (S+ + S-)``.
* Weighted sum (simple additive weighting) with min–max normalisation per column, as in pymcdm's
  ``WSM(minmax_normalization)``.
* Pareto dominance (non-dominated set), with duplicates of a non-dominated row all kept.

Degenerate inputs get documented answers instead of NaN: an all-zero column adds nothing to TOPSIS; a constant
column scores 1.0 for everybody in the weighted sum (pymcdm does the same); when every candidate sits at the ideal
point (one candidate, or all identical on the weighted criteria) TOPSIS gives everybody closeness 1.0.

Monte Carlo ranking (:mod:`ranking.robustness`) scores its draws with the same functions: whole stacks of
matrices, or (:func:`survivor_scorer`) the few rows that may reach the top among rows held fixed.
"""

from ranking.methods.held import METHODS, survivor_scorer
from ranking.methods.matrix import ArrayLike, held_columns
from ranking.methods.pareto import dominator_of, dominators, front_and_dominators, pareto_front
from ranking.methods.ranks import rank_order
from ranking.methods.topsis import topsis, topsis_contributions
from ranking.methods.weighted import weighted_sum, weighted_sum_contributions

__all__ = ["METHODS", "ArrayLike", "dominator_of", "dominators", "front_and_dominators", "held_columns",
           "pareto_front", "rank_order", "survivor_scorer", "topsis", "topsis_contributions", "weighted_sum",
           "weighted_sum_contributions"]
