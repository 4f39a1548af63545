"""What the Markdown and HTML templates show of a report, as plain data: numbers already written as text,
marks, footnote numbers, notes. The templates add the markup; nothing here is escaped."""

from __future__ import annotations

from functools import lru_cache

from materials.numfmt import fmt_number, pretty_unit, to_display
from ranking.report.frames import BOOLEAN, row_flags, target_rows
from ranking.report.marks import KIND_CLASS, LEGEND, MARKS
from ranking.report.model import FLAG_KINDS, Column, Report, Row


def cell_value(r: Row, c: Column) -> str:
    """One value as a table shows it: the number in the column's display unit, yes/no for self-healing."""
    v = to_display(r.values.get(c.name), c.unit, c.display_unit)
    if c.name in BOOLEAN and v is not None:
        return "yes" if v >= 0.5 else "no"
    return fmt_number(v)


def version() -> str:
    """The installed program's version ("dev" in an uninstalled checkout)."""
    from importlib.metadata import PackageNotFoundError, version as installed

    try:
        return installed("holdoff")
    except PackageNotFoundError:  # an uninstalled checkout has no metadata
        return "dev"


def generated() -> str:
    """Today's date and the program's version, for the head of a document."""
    import datetime

    return f"{datetime.date.today().isoformat()}, holdoff {version()}"


def _cell(rep: Report, r: Row, c: Column, nums: dict) -> dict:
    kinds = rep.flags_of(r, c.name)
    cls = rep.evidence(r, c.name)
    note = r.notes.get(c.name)
    title = note if note and c.name not in r.values else "; ".join(([LEGEND[cls]] if cls else [])
                                                                     + rep.assumed(r, c.name))
    rng = None
    if rep.kind == "comparison" and c.name in r.low and r.low.get(c.name) != r.high.get(c.name):
        rng = tuple(fmt_number(to_display(x, c.unit, c.display_unit), 3) for x in (r.low[c.name], r.high[c.name]))
    return {"value": cell_value(r, c), "mark": MARKS[cls] if cls else "", "cls": cls or "none",
            "flagged": bool(kinds), "title": title,
            "refs": [{"n": nums[k], "key": k, "kind": rep.kind_of(k)} for k in r.sources.get(c.name, []) if k in nums],
            "range": rng}


def _notes(rep: Report, r: Row) -> list[dict]:
    """Why a row stands where it does: ``label: text`` items, the winner comparison, the dominating row."""
    out = []

    def add(label=None, text="", dominated_by=None):
        out.append({"label": label, "text": text, "dominated_by": dominated_by})

    if r.binding:
        add("binds", r.binding)
    if r.versus_winner:
        add(text=r.versus_winner)
    if r.dominated_by:
        add(dominated_by=r.dominated_by)
    fl = row_flags(rep, r)
    if fl:
        add("flags", fl)
    for k, v in r.notes.items():
        add(k, v)
    return out


def _share(p) -> str:
    return "—" if p is None or p != p else f"{p:.0%}"


def _summary(rep: Report) -> str:
    """The target (or condition) in one line, for a page footer."""
    wanted = ("voltage", "temperature range", "energy", "design energy density", "temperature")
    return ", ".join(v for k, v in target_rows(rep) if k in wanted)


def document(rep: Report, *, charts: list | None = None, limit: int | None = None) -> dict:
    """The report as the templates read it (see ``templates/report.md.j2`` and ``templates/report.html.j2``);
    ``limit`` keeps the first so many rows in the table (``total`` says how many there are)."""
    from ranking.report.exclusions import group_exclusions

    nums = rep.source_numbers()
    rows = []
    for r in rep.rows[:limit] if limit is not None else rep.rows:
        rows.append({"rank": r.rank, "key": r.key, "name": r.name, "family": r.family, "label": r.label or r.key,
                     "layer": fmt_number(None if r.thickness_m is None else r.thickness_m * 1e6),
                     "score": fmt_number(r.score, 3), "p_top": _share(r.p_top), "p_top_k": _share(r.p_top_k),
                     "cells": [_cell(rep, r, c, nums) for c in rep.columns], "notes": _notes(rep, r)})
    sources = []
    for k, n in sorted(nums.items(), key=lambda kv: kv[1]):
        s = rep.sources.get(k) or {}
        kind = s.get("kind", "unknown")
        sources.append({"n": n, "key": k, "kind": kind, "mark": MARKS.get(KIND_CLASS.get(kind, ""), ""),
                        "flagged": kind in FLAG_KINDS,
                        "citation": s.get("citation", "")})
    return {
        "title": rep.title, "generated": generated(), "date": generated().split(",")[0], "version": version(),
        "summary": _summary(rep), "total": len(rep.rows), "top_k": f"P(top {rep.top_k})" if rep.top_k else "P(top k)",
        "groups": group_exclusions(rep.excluded), "n_excluded": len(rep.excluded),
        "cautions": rep.cautions, "shortlist": rep.kind == "shortlist",
        "target_rows": target_rows(rep), "layers": rep.has_thickness,
        "columns": [{"label": c.label, "unit": pretty_unit(c.display_unit), "header": c.header, "formula": c.formula}
                    for c in rep.columns],
        "rows": rows,
        "marks": [{"mark": MARKS[k], "legend": LEGEND[k], "cls": k, "shaded": k in FLAG_KINDS}
                  for k in rep.marks_used()],
        "excluded": rep.excluded, "sources": sources, "charts": charts or [],
    }


@lru_cache(maxsize=None)
def environment(html: bool):
    """The jinja2 environment of the report templates: HTML escaped by jinja2's autoescape; Markdown through
    :func:`md_escape` applied to every value printed (the ``finalize`` hook)."""
    import jinja2

    return jinja2.Environment(
        loader=jinja2.PackageLoader("ranking.report", "templates"), autoescape=html,
        finalize=None if html else md_escape, undefined=jinja2.StrictUndefined, trim_blocks=True,
        lstrip_blocks=True, keep_trailing_newline=True)


_MD_SPECIAL = str.maketrans({"\\": "\\\\", "|": "\\|", "*": "\\*", "_": "\\_", "~": "\\~", "<": "\\<",
                             "\n": " ", "\r": " "})


def md_escape(text) -> str:
    """Text safe in a Markdown table cell: backslash, pipe, asterisk and ``<`` (raw HTML) escaped, one line."""
    return str(text).translate(_MD_SPECIAL)
