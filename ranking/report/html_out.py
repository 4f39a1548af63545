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


# Rows in the HTML table; beyond them the page links the full table as an attached CSV.
HTML_ROWS = 15


def css_string(text: str):
    """``text`` as a quoted CSS string (for ``content:`` in the page footer), safe inside a <style> element."""
    from markupsafe import Markup

    out = []
    for ch in str(text):
        out.append(f"\\{ord(ch):x} " if ch in '"\\<>&\n\r' or ord(ch) < 32 else ch)
    return Markup('"' + "".join(out) + '"')


def _attached_csv(rep) -> str:
    """The whole comparison table as a ``data:`` URI (CSV), so that a page showing its head carries every row."""
    import base64
    import io

    from ranking.report.frames import comparison_frame

    buf = io.StringIO()
    comparison_frame(rep).to_csv(buf, index=False, float_format="%.6g")
    return "data:text/csv;charset=utf-8;base64," + base64.b64encode(buf.getvalue().encode("utf-8")).decode("ascii")


def to_html(obj, *, charts: bool = True, limit: int = HTML_ROWS) -> str:
    """The report as a review document: one self-contained HTML page (inline CSS and SVG, no scripts, no external
    requests) that prints on A4 portrait. Pages 1–2: target, ranking (the first ``limit`` rows; every row in an
    attached CSV), the evidence legend, why the leaders lead, the charts. Appendix: exclusions grouped by reason,
    notes per row, how the columns are computed, cautions, numbered references [n], a prepared/checked block. Each
    printed page carries a footer with the title, target, date, version and page x/y (CSS paged media).

    Every value is HTML-escaped by jinja2's autoescape; the charts are matplotlib's own SVG, inlined as is.
    """
    from markupsafe import Markup

    from ranking.report.figures import report_charts

    rep = as_report(obj)
    figs = []
    if charts:
        figs = [{"title": title, "caption": cap, "svg": Markup(svg_inline(fig, f"c{i}-"))}
                for i, (title, cap, fig) in enumerate(report_charts(rep), 1)]
    doc = document(rep, charts=figs, limit=limit)
    doc["attached"] = _attached_csv(rep) if len(rep.rows) > limit else None
    doc["footer"] = {"left": css_string(f"{rep.title} — {doc['summary']}"),
                     "right": css_string(f"{doc['date']} · holdoff {doc['version']}")}
    return environment(html=True).get_template("report.html.j2").render(doc)
