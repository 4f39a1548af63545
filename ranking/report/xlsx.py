"""The report as an XLSX workbook, written row by row (openpyxl's write-only mode): comparison, excluded, sources,
target (or condition) and notes sheets. Each value has its evidence in the column beside it (no comment per cell);
the notes sheet holds the legend of the evidence classes and marks."""

from __future__ import annotations

import math

from ranking.report.frames import (
    BOOLEAN,
    comparison_records,
    excluded_frame,
    sources_frame,
    target_rows,
)
from ranking.report.marks import LEGEND, MARKS, ORDER
from ranking.report.model import Report, as_report


def _number_format(values) -> str:
    vals = [abs(v) for v in values if isinstance(v, (int, float)) and not (isinstance(v, float) and math.isnan(v))]
    if not vals:
        return "General"
    big, small = max(vals), min((v for v in vals if v > 0), default=0.0)
    if big >= 1e5 or (0 < small < 1e-3):
        return "0.00E+00"
    if big >= 100:
        return "0.0"
    if big >= 1 or small >= 0.1:
        return "0.000"
    return "0.0000"


# Rows sampled to choose a numeric column's format (the sheet is written in one pass).
FORMAT_SAMPLE = 200


def write_xlsx(obj, path) -> None:
    """XLSX in write-only mode: the comparison sheet (units in headers, frozen header row and key column, number
    formats, an evidence column beside each value), excluded (grouped by reason), sources, target (or condition)
    and notes (cautions, the legend of the evidence marks, the formulas)."""
    import itertools

    from openpyxl import Workbook
    from openpyxl.cell import WriteOnlyCell
    from openpyxl.styles import Alignment, Font
    from openpyxl.utils import get_column_letter

    rep = as_report(obj)
    wb = Workbook(write_only=True)
    bold = Font(bold=True)
    records = comparison_records(rep)
    head = list(itertools.islice(records, FORMAT_SAMPLE))
    headers = list(head[0]) if head else ["key", "name", "family"]
    value_headers = {c.header for c in rep.columns if c.name not in BOOLEAN}
    fmts = {}
    for h in headers:
        if h == "rank":
            fmts[h] = "0"
        elif h.startswith("P("):
            fmts[h] = "0%"
        elif h == "score":
            fmts[h] = "0.000"
        elif h in value_headers or h == "layer thickness [µm]":
            fmts[h] = _number_format([d.get(h) for d in head])
    ws = wb.create_sheet("comparison")
    key_col = headers.index("key") + 1 if "key" in headers else 1
    ws.freeze_panes = f"{get_column_letter(key_col + 1)}2"
    for j, h in enumerate(headers, 1):
        width = 12 if h in fmts else 30 if ("sources" in h or h in ("binding", "versus winner", "notes")) else 16
        ws.column_dimensions[get_column_letter(j)].width = width
    ws.row_dimensions[1].height = 45
    top = []
    for h in headers:
        cell = WriteOnlyCell(ws, value=h)
        cell.font = bold
        cell.alignment = Alignment(wrap_text=True, vertical="top")
        top.append(cell)
    ws.append(top)
    for d in itertools.chain(head, records):
        row = []
        for h in headers:
            v = d.get(h)
            if isinstance(v, float) and not math.isfinite(v):
                v = None
            if h in fmts and v is not None:
                cell = WriteOnlyCell(ws, value=v)
                cell.number_format = fmts[h]
                row.append(cell)
            else:
                row.append(v)
        ws.append(row)
    _sheet(wb, "excluded", excluded_frame(rep), (70, 12, 100))
    _sheet(wb, "sources", sources_frame(rep), (6, 28, 16, 100, 6))
    tsheet = "target" if rep.kind == "shortlist" else "condition"
    _rows(wb, tsheet, ["parameter", "value"], target_rows(rep), (30, 60))
    _rows(wb, "notes", ["note"], [[n] for n in notes(rep)], (140,))
    wb.save(path)


def _sheet(wb, name, df, widths) -> None:
    _rows(wb, name, list(df.columns), df.itertuples(index=False, name=None), widths)


def _rows(wb, name, header, rows, widths) -> None:
    from openpyxl.cell import WriteOnlyCell
    from openpyxl.styles import Font
    from openpyxl.utils import get_column_letter

    ws = wb.create_sheet(name)
    ws.freeze_panes = "A2"
    for j, w in enumerate(widths, 1):
        ws.column_dimensions[get_column_letter(j)].width = w
    cells = []
    for h in header:
        c = WriteOnlyCell(ws, value=h)
        c.font = Font(bold=True)
        cells.append(c)
    ws.append(cells)
    for r in rows:
        ws.append(list(r))


def notes(rep: Report) -> list[str]:
    """The notes sheet: cautions, what each evidence class and mark means, how each column is computed."""
    out = [f"CAUTION: {c}" for c in rep.cautions]
    out.append("Evidence (the '…: evidence' column beside each value; the mark other formats print after the "
               "number):")
    out += [f"{MARKS[k]} {LEGEND[k]}" for k in reversed(ORDER)]
    out.append("Each value's sources column lists the source keys it rests on; the sources sheet gives the "
               "full citation and the evidence kind of each key.")
    for c in rep.columns:
        if c.formula:
            out.append(f"{c.header}: {c.formula}")
    return out
