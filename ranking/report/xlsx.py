"""The report as an XLSX workbook: comparison, excluded, sources, target (or condition) and notes sheets."""

from __future__ import annotations

import math

from ranking.report.frames import comparison_frame, excluded_frame, sources_frame, target_rows
from ranking.report.model import FLAG_KINDS, LEGEND, MARKS, Report, as_report


def _number_format(values) -> str:
    vals = [abs(v) for v in values if v is not None and not (isinstance(v, float) and math.isnan(v))]
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


def write_xlsx(obj, path) -> None:
    """XLSX with sheets comparison (units in headers, frozen header row, number formats, flagged cells shaded
    with a comment), excluded, sources, target (or condition) and notes."""
    import pandas as pd
    from openpyxl.comments import Comment
    from openpyxl.styles import Alignment, Font, PatternFill
    from openpyxl.utils import get_column_letter

    rep = as_report(obj)
    df = comparison_frame(rep)
    flagged_fill = PatternFill("solid", fgColor="E6E6E6")
    with pd.ExcelWriter(path, engine="openpyxl") as xw:
        df.to_excel(xw, sheet_name="comparison", index=False)
        excluded_frame(rep).to_excel(xw, sheet_name="excluded", index=False)
        sources_frame(rep).to_excel(xw, sheet_name="sources", index=False)
        tsheet = "target" if rep.kind == "shortlist" else "condition"
        pd.DataFrame(target_rows(rep), columns=["parameter", "value"]).to_excel(xw, sheet_name=tsheet, index=False)
        pd.DataFrame({"note": notes(rep)}).to_excel(xw, sheet_name="notes", index=False)
        ws = xw.sheets["comparison"]
        headers = list(df.columns)
        key_col = headers.index("key") + 1
        ws.freeze_panes = ws.cell(row=2, column=key_col + 1).coordinate
        for j, h in enumerate(headers, 1):
            cell = ws.cell(row=1, column=j)
            cell.font = Font(bold=True)
            cell.alignment = Alignment(wrap_text=True, vertical="top")
            letter = get_column_letter(j)
            numeric = pd.api.types.is_numeric_dtype(df[h]) and h not in ("rank",)
            width = max(10, min(40, len(str(h)) // 2 + 4)) if numeric else 24 if "sources" in h else 16
            ws.column_dimensions[letter].width = width
            if h == "rank":
                fmt = "0"
            elif h.startswith("P("):
                fmt = "0%"
            elif h == "score":
                fmt = "0.000"
            elif numeric:
                fmt = _number_format(df[h].tolist())
            else:
                continue
            for i in range(2, len(df) + 2):
                ws.cell(row=i, column=j).number_format = fmt
        ws.row_dimensions[1].height = 45
        col_of = {c.name: headers.index(c.header) + 1 for c in rep.columns if c.header in headers}
        for i, r in enumerate(rep.rows, 2):
            for c in rep.columns:
                kinds = rep.flags_of(r, c.name)
                assumed = rep.assumed(r, c.name)
                if (kinds or assumed) and c.name in col_of:
                    cell = ws.cell(row=i, column=col_of[c.name])
                    text = []
                    if kinds:
                        cell.fill = flagged_fill
                        keys = [k for k in r.sources.get(c.name, []) if rep.kind_of(k) in FLAG_KINDS]
                        text.append(f"rests on {', '.join(kinds)} source(s): {', '.join(keys)}")
                    text += assumed
                    cell.comment = Comment(f"{rep.mark(r, c.name)} " + "; ".join(text), "holdoff")
        for name, widths in (("excluded", (24, 30, 18, 90)), ("sources", (6, 28, 16, 100, 6)),
                             (tsheet, (30, 60)), ("notes", (140,))):
            sh = xw.sheets[name]
            sh.freeze_panes = "A2"
            for j, w in enumerate(widths, 1):
                sh.column_dimensions[get_column_letter(j)].width = w
                sh.cell(row=1, column=j).font = Font(bold=True)


def notes(rep: Report) -> list[str]:
    """The notes sheet: cautions, what each mark means, how each column is computed."""
    out = [f"CAUTION: {c}" for c in rep.cautions]
    out += [f"{MARKS[k]} {LEGEND[k]}" + ("; shaded cells in the comparison sheet" if k in FLAG_KINDS else "")
            for k in MARKS]
    out.append("Each value's sources column lists the source keys it rests on; the sources sheet gives the "
               "full citation and the evidence kind of each key.")
    for c in rep.columns:
        if c.formula:
            out.append(f"{c.header}: {c.formula}")
    return out
