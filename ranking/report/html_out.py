"""The report as one self-contained HTML page (template ``templates/report.html.j2``, style ``report.css``)."""

from __future__ import annotations

import re

from ranking.report.document import document, environment
from ranking.report.model import as_report


def svg_inline(fig, prefix: str) -> str:
    """The figure's SVG with its element ids prefixed, so that several charts can share one page."""
    from ranking.charts import svg_text

    svg = svg_text(fig)
    svg = re.sub(r'\bid="([^"]+)"', lambda m: f'id="{prefix}{m.group(1)}"', svg)
    svg = re.sub(r'(xlink:href|href)="#([^"]+)"', lambda m: f'{m.group(1)}="#{prefix}{m.group(2)}"', svg)
    svg = re.sub(r"url\(#([^)]+)\)", lambda m: f"url(#{prefix}{m.group(1)})", svg)
    return svg


def to_html(obj, *, charts: bool = True) -> str:
    """The report as one self-contained HTML page (inline CSS and SVG, no scripts, no external requests) that
    prints on A4: target, ranking with footnoted sources, excluded list, charts, cautions, sources.

    Every value is HTML-escaped by jinja2's autoescape; the charts are matplotlib's own SVG, inlined as is.
    """
    from markupsafe import Markup

    from ranking.report.figures import report_charts

    rep = as_report(obj)
    figs = []
    if charts:
        figs = [{"title": title, "caption": cap, "svg": Markup(svg_inline(fig, f"c{i}-"))}
                for i, (title, cap, fig) in enumerate(report_charts(rep), 1)]
    return environment(html=True).get_template("report.html.j2").render(document(rep, charts=figs))
