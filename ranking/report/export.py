"""Writing a report to a file whose extension picks the format."""

from __future__ import annotations

from pathlib import Path

from ranking.outfile import check_output
from ranking.report.model import as_report, from_shortlist

FORMATS = ("csv", "xlsx", "md", "html", "json")
ALIASES = {"htm": "html", "markdown": "md"}


def write(obj, path, *, force: bool = False, charts: bool = True) -> Path:
    """Write a report to ``path``; the extension (.csv, .xlsx, .md, .html, .json) picks the format.

    Refuses (InputError) an unknown extension, a missing folder, and an existing file unless ``force``.
    """
    path, ext = check_output(path, FORMATS, force=force, aliases=ALIASES)
    rep = as_report(obj)
    if ext == "csv":
        from ranking.report.frames import write_csv

        write_csv(rep, path)
    elif ext == "xlsx":
        from ranking.report.xlsx import write_xlsx

        write_xlsx(rep, path)
    elif ext == "md":
        from ranking.report.markdown_out import to_markdown

        path.write_text(to_markdown(rep), encoding="utf-8")
    elif ext == "html":
        from ranking.report.html_out import to_html

        path.write_text(to_html(rep, charts=charts), encoding="utf-8")
    else:
        from ranking.report.json_out import stream_json, to_json

        with open(path, "w", encoding="utf-8") as fh:
            stream_json(to_json(rep), fh)
    return path


def export_result(result: dict, path, *, force: bool = False, materials=None, charts: bool = True) -> Path:
    """Write a shortlist result to ``path`` (format by extension); ``materials`` adds the map and ceiling charts."""
    return write(from_shortlist(result, materials=materials), path, force=force, charts=charts)
