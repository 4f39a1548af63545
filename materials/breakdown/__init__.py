"""Breakdown statistics of insulation, after IEEE Std 930-2004 / IEC 62539:2007 practice.

Two-parameter Weibull model of the breakdown field, ``F(E) = 1 - exp(-(E/scale)**shape)``:

- maximum-likelihood fit with right-censoring (specimens whose test stopped without breakdown), solved with
  the profile equation for the shape (safeguarded Newton on a monotone score) and the closed form for the scale;
- small-sample unbiasing of the shape with Ross's factor ``(n - 2)/(n - 0.68)``;
- confidence bounds from the Fisher (observed information) matrix, log-transformed normal approximation, and
  likelihood-ratio bounds from the profile likelihood;
- plotting positions (Bernard's median ranks; Johnson's adjusted ranks with censoring), a goodness-of-fit figure
  and a warning when the Weibull plot bends like two populations;
- weakest-link scaling of a field with electrode area, and the empirical thickness law.

Fields are in V/m, areas in m², thicknesses in m. Every function accepts numpy arrays where a field is expected.
"""

from materials.breakdown.fit import MIXTURE_LIMIT, MIXTURE_MIN_FAILURES, WeibullFit, fit_weibull, ross_factor
from materials.breakdown.positions import BERNARD_A, bernard_positions, plotting_positions
from materials.breakdown.scaling import scale_to_area, scale_to_thickness

__all__ = ["BERNARD_A", "MIXTURE_LIMIT", "MIXTURE_MIN_FAILURES", "WeibullFit", "bernard_positions", "fit_weibull",
           "plotting_positions", "ross_factor", "scale_to_area", "scale_to_thickness"]
