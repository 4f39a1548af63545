"""Shared output: rich tables on a terminal, plain aligned text when piped, JSON for scripts."""

from __future__ import annotations

import json
import math
import os
import sys
from typing import Annotated, Optional

import typer

JsonOpt = Annotated[bool, typer.Option("--json", help="Print machine-readable JSON (SI units, see README).")]
StrictOpt = Annotated[bool, typer.Option("--strict", help="Refuse assumptions: where the data lack a Weibull shape "
                                         "or a test area, exclude instead of taking the family's stated range.")]
ExtrapolateOpt = Annotated[bool, typer.Option("--extrapolate", help="Use a value outside its data's temperatures "
                                              "or beyond the thickness a law may carry it: held at the end of its "
                                              "data and flagged, instead of refused.")]
SectionsOpt = Annotated[Optional[int], typer.Option("--sections", metavar="N", help="Allow a layer thicker than "
                                                    "can be made in one piece to be built as up to N equal series "
                                                    "sections (default 1: refused).")]
# Kept so that older scripts run: assuming the stated ranges is now the default (see --strict).
DefaultsOpt = Annotated[bool, typer.Option("--assume-defaults", hidden=True, help="No effect: assuming the "
                                           "stated ranges is the default (see --strict).")]


def console(stderr: bool = False):
    from rich.console import Console

    width = int(os.environ["COLUMNS"]) if os.environ.get("COLUMNS", "").isdigit() else None
    return Console(stderr=stderr, width=width, highlight=False, soft_wrap=False)


def _clean(obj):
    if isinstance(obj, float):
        return None if math.isnan(obj) or math.isinf(obj) else obj
    if isinstance(obj, dict):
        return {k: _clean(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_clean(v) for v in obj]
    if hasattr(obj, "item") and callable(obj.item):  # numpy scalars
        return _clean(obj.item())
    return obj


# Above this size JSON is printed compact: indenting runs in pure Python (json's C encoder does no indents), which
# costs seconds on a shortlist of 10,000 materials.
INDENT_LIMIT = 2_000_000


def _numpy(obj):
    """json ``default``: numpy scalars and arrays as plain numbers and lists (NaN then refused, see print_json)."""
    if hasattr(obj, "tolist") and callable(obj.tolist):
        return obj.tolist()
    raise TypeError(f"{type(obj).__name__} is not JSON serialisable")


def print_json(data) -> None:
    """``data`` as JSON; NaN and infinities become null (walking the whole result only when there are any)."""
    try:
        text = json.dumps(data, ensure_ascii=False, allow_nan=False, default=_numpy)
    except ValueError:
        data = _clean(data)
        text = json.dumps(data, ensure_ascii=False, allow_nan=False)
    if len(text) <= INDENT_LIMIT:
        text = json.dumps(data, indent=2, ensure_ascii=False, allow_nan=False, default=_numpy)
    sys.stdout.write(text + "\n")


def is_terminal() -> bool:
    return sys.stdout.isatty()


def table(columns: list[str], rows: list[list], *, title: str | None = None, caption: str | None = None,
          right: set[int] | None = None) -> None:
    """Print a table: rich on a terminal, plain aligned text (two spaces between columns) when piped."""
    right = right or set()
    if is_terminal():
        from rich.table import Table

        t = Table(title=title, caption=caption, title_justify="left", caption_justify="left")
        for i, c in enumerate(columns):
            t.add_column(c, justify="right" if i in right else "left", overflow="fold")
        from rich.text import Text

        for r in rows:
            t.add_row(*[Text("" if v is None else str(v)) for v in r])
        console().print(t)
        return
    cells = [[str(c) for c in columns]] + [["" if v is None else str(v) for v in r] for r in rows]
    widths = [max(len(row[i]) for row in cells) for i in range(len(columns))]
    out = []
    if title:
        out.append(title)
    for j, row in enumerate(cells):
        parts = [(row[i].rjust(widths[i]) if i in right else row[i].ljust(widths[i])) for i in range(len(row))]
        out.append("  ".join(parts).rstrip())
        if j == 0:
            out.append("  ".join("-" * w for w in widths))
    if caption:
        out.append(caption)
    sys.stdout.write("\n".join(out) + "\n")


def esc(text) -> str:
    """Data text made safe inside rich markup (a '[kind]' must not vanish as a tag)."""
    from rich.markup import escape

    return escape(str(text))


def say(text: str = "", *, style: str | None = None) -> None:
    """A line of prose with rich markup (escape data with :func:`esc`); styled on a terminal, plain when piped."""
    if is_terminal():
        console().print(text, style=style)
    else:
        sys.stdout.write(_strip_markup(text) + "\n")


def _strip_markup(text: str) -> str:
    from rich.text import Text

    return Text.from_markup(text).plain


def caution(lines: list[str]) -> None:
    """The safety caution, set apart on a terminal."""
    for line in lines:
        head, sep, rest = line.partition(":")
        if sep and head.strip().lower() == "caution":
            line = rest.strip()
        say(f"[bold yellow]CAUTION[/]: {esc(line)}")
