"""The report as GitHub-flavoured Markdown (template ``templates/report.md.j2``)."""

from __future__ import annotations

from ranking.report.document import document, environment
from ranking.report.model import as_report


def to_markdown(obj) -> str:
    """The report as GitHub-flavoured Markdown: tables with footnote references to a numbered source list.

    Every value is escaped for Markdown (:func:`ranking.report.document.md_escape`): a pipe cannot split a table
    cell, an asterisk cannot start emphasis, ``<`` cannot open raw HTML.
    """
    return environment(html=False).get_template("report.md.j2").render(document(as_report(obj)))
