"""Comparison reports: one table model, written as CSV, XLSX, Markdown, HTML or JSON.

:mod:`~ranking.report.model` holds the :class:`Report` (built from a shortlist result or from materials compared
at one condition) and the marks every format explains; :mod:`~ranking.report.frames` its tables;
:mod:`~ranking.report.document` what the Markdown and HTML templates show; one module per format writes it, and
:func:`write` picks the format from the file's extension and refuses to overwrite.
"""

from materials.numfmt import fmt_number, pretty_unit
from ranking.report.document import cell_value, document, md_escape
from ranking.report.export import ALIASES, FORMATS, export_result, write
from ranking.report.figures import report_charts
from ranking.report.frames import comparison_frame, excluded_frame, row_flags, sources_frame, target_rows
from ranking.report.html_out import svg_inline, to_html
from ranking.report.json_out import load_json, plain, to_json
from ranking.report.markdown_out import to_markdown
from ranking.report.model import (
    ASSUMPTION_COLUMNS,
    CAUTION,
    CEILING,
    COMPARED,
    FLAG_KINDS,
    LEGEND,
    MARKS,
    Column,
    Report,
    Row,
    as_report,
    from_materials,
    from_shortlist,
)
from ranking.report.xlsx import write_xlsx

__all__ = [
    "ALIASES", "ASSUMPTION_COLUMNS", "CAUTION", "CEILING", "COMPARED", "FLAG_KINDS", "FORMATS", "LEGEND", "MARKS",
    "Column", "Report", "Row", "as_report", "cell_value", "comparison_frame", "document",
    "excluded_frame", "export_result", "fmt_number", "from_materials", "from_shortlist", "load_json", "md_escape",
    "plain", "pretty_unit", "report_charts", "row_flags", "sources_frame", "svg_inline", "target_rows", "to_html",
    "to_json", "to_markdown", "write", "write_xlsx",
]
