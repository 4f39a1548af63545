"""Charts of a comparison: the headroom of a shortlist, design energy against temperature, Weibull plots, P–E
loops and the scores of a shortlist; one module per kind of chart, :mod:`~ranking.charts.common` for what they share.

Every function returns a matplotlib ``Figure`` (Agg backend, nothing is shown) so that tests can inspect it and
callers can save it with :func:`save`. The look is deliberately plain: black and grey lines, default markers,
labelled axes with units, a legend. Artists that tests look for carry a ``gid``: ``headroom:LABEL`` and
``design:LABEL`` for a candidate's bar and design tick, ``table:LABEL`` for a table value drawn, ``fit:LABEL`` /
``band:LABEL`` / ``data:LABEL`` on a Weibull plot, ``ceiling:KEY`` and ``target`` on a ceiling chart,
``recovered`` / ``lost`` on a loop chart, ``score:LABEL`` for a bar of the score chart. Gids become element ids
in SVG, so each is unique within its figure.
"""

from ranking.charts.ceiling import (
    as_target,
    ceiling_chart,
    data_temperatures,
    design_temperature_chart,
    rated_range,
    target_at,
)
from ranking.charts.common import (
    EPSILON_0,
    FORMATS,
    J_PER_M3_PER_J_PER_CM3,
    SVG_METADATA,
    V_PER_M_PER_V_PER_UM,
    save,
    svg_text,
)
from ranking.charts.loop import loop_chart
from ranking.charts.headroom import HEADROOM_ROWS, headroom_chart, worst_ceilings
from ranking.charts.score import SCORE_ROWS, score_chart
from ranking.charts.weibull import weibull_chart

__all__ = [
    "EPSILON_0", "FORMATS", "HEADROOM_ROWS", "J_PER_M3_PER_J_PER_CM3", "SCORE_ROWS", "SVG_METADATA",
    "V_PER_M_PER_V_PER_UM", "as_target", "ceiling_chart", "data_temperatures", "design_temperature_chart",
    "headroom_chart",
    "loop_chart", "rated_range", "save", "score_chart", "svg_text", "target_at", "weibull_chart", "worst_ceilings",
]
