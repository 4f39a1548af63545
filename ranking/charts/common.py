"""What every chart shares: physical constants, the monochrome style cycle, a figure outside pyplot's state, and
writing a figure as PNG or SVG (a file, or SVG text to inline in HTML)."""

from __future__ import annotations

import math
from pathlib import Path

from materials.numfmt import fmt_number
from ranking.outfile import check_output

from materials.energy import EPSILON_0  # noqa: E402,F401 - the program's one ε0 (checked against scipy.constants)
J_PER_M3_PER_J_PER_CM3 = 1e6
V_PER_M_PER_V_PER_UM = 1e6

# A monochrome cycle: series differ by line style and marker, never by a family colour.
_GREYS = ("black", "0.35", "0.55")
_STYLES = ("-", "--", "-.", ":")
_MARKERS = ("o", "s", "^", "D", "v", "P", "X", "<", ">")


def style(i: int) -> dict:
    """Colour, line style and marker of the i-th series."""
    return {"color": _GREYS[i % len(_GREYS)], "linestyle": _STYLES[i % len(_STYLES)],
            "marker": _MARKERS[i % len(_MARKERS)]}


def new_figure(width_in: float = 7.0, height_in: float = 5.0):
    """A new figure that belongs to no pyplot state (so nothing leaks between calls or threads)."""
    from matplotlib.figure import Figure

    fig = Figure(figsize=(width_in, height_in), dpi=100, layout="constrained")
    return fig, fig.add_subplot()


FORMATS = ("png", "svg")  # chart files, by extension
# Matplotlib's SVG metadata block links to external vocabularies; a self-contained report wants none of it.
SVG_METADATA = {"Creator": None, "Date": None, "Format": None, "Type": None}


def save(fig, path, *, force: bool = False) -> Path:
    """Write ``fig`` to ``path`` as PNG or SVG (by extension); refuse to overwrite unless ``force``."""
    path, ext = check_output(path, FORMATS, force=force)
    if ext == "png":
        fig.savefig(path, format="png", dpi=150)
    else:
        fig.savefig(path, format="svg", metadata=SVG_METADATA)
    return path


def svg_text(fig) -> str:
    """The figure as an SVG string without the XML prolog or doctype, ready to inline in HTML."""
    import io
    import re

    buf = io.StringIO()
    fig.savefig(buf, format="svg", metadata=SVG_METADATA)
    text = buf.getvalue()
    text = re.sub(r"<\?xml[^>]*\?>\s*", "", text)
    text = re.sub(r"<!DOCTYPE[^>]*>\s*", "", text, flags=re.S)
    text = re.sub(r"<metadata>.*?</metadata>\s*", "", text, flags=re.S)
    return text.strip()


def plain_log_axis(axis, lo: float, hi: float) -> None:
    """Plain numbers (5, 10, 200) on a log axis; over a narrow span label ticks between the decades too."""
    from matplotlib import ticker

    fmt = ticker.FuncFormatter(lambda v, _pos: fmt_number(v, 6))
    axis.set_major_formatter(fmt)
    span = math.log10(hi / lo)
    if span < 2.5:
        subs = (1.5, 2.0, 3.0, 4.0, 5.0, 6.0, 8.0) if span < 1 else (2.0, 5.0)
        axis.set_minor_locator(ticker.LogLocator(subs=subs))
        axis.set_minor_formatter(fmt)
    else:
        axis.set_minor_formatter(ticker.NullFormatter())


THIN_LIMIT = 400  # points one series draws; a denser series is thinned for the picture (numbers use all of them)


def thin(n: int, limit: int = THIN_LIMIT, keep=()):
    """Indices of at most ``limit`` (plus ``keep``) evenly spread points of a series of ``n``, both ends kept."""
    import numpy as np

    if n <= limit:
        return np.arange(n)
    idx = np.unique(np.r_[np.linspace(0, n - 1, limit).round().astype(int), np.asarray(keep, dtype=int)])
    return idx
