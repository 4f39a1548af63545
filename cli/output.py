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

    return Console(stderr=stderr, width=width(), highlight=False, soft_wrap=False)


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


# Columns whose text is read as prose: when the grid does not fit the width they move under it as numbered lines.
LONG_HEADINGS = frozenset({"name", "sources", "source [kind]", "source", "note", "notes", "citation", "binding",
                           "reasons"})
MIN_KEY = 10       # a shortened key keeps at least this many characters
UNKNOWN_WIDTH = 100
_wide = False


def set_wide(on: bool) -> None:
    """``--wide``: every row of every table on one line, whatever the width."""
    global _wide
    _wide = bool(on)


def width() -> int:
    """Columns available: the terminal's, else $COLUMNS when piped, else 100."""
    env = os.environ.get("COLUMNS", "")
    if is_terminal():
        import shutil

        return shutil.get_terminal_size((UNKNOWN_WIDTH, 24)).columns
    return int(env) if env.isdigit() and int(env) > 0 else UNKNOWN_WIDTH


def _shorten(text: str, room: int, legend: dict) -> str:
    """``text`` cut to ``room`` characters as ``prefix…N``, N its line in ``legend`` (full text → N)."""
    if len(text) <= room:
        return text
    n = legend.setdefault(text, len(legend) + 1)
    tag = f"…{n}"
    return text[:max(1, room - len(tag))] + tag


def grid_lines(columns: list[str], rows: list[list], *, right: set[int] | None = None, long: set[int] | None = None,
               keys: set[int] | None = None, total: int | None = None, wide: bool | None = None) -> list[str]:
    """A table as lines of plain text no wider than ``total`` (default :func:`width`).

    Numbers (``right``) and keys (``keys``, default the first column) never wrap; when the grid does not fit,
    the ``long`` columns (default: the headings in LONG_HEADINGS) leave it for numbered lines under it, then
    headings and keys are shortened to ``prefix…N`` with a numbered legend. ``wide`` keeps every column in the
    grid, one line per row.
    """
    right = right or set()
    keys = {0} if keys is None else keys
    long = {i for i, c in enumerate(columns) if c in LONG_HEADINGS and i not in keys} if long is None else long
    total = width() if total is None else total
    wide = _wide if wide is None else wide
    cells = [["" if v is None else str(v) for v in r] for r in rows]
    heads = [str(c) for c in columns]
    n = len(heads)

    def widths(idx):
        return {i: max([len(heads[i])] + [len(r[i]) for r in cells]) for i in idx}

    shown = list(range(n))
    w = widths(shown)
    moved: list[int] = []
    if not wide and sum(w.values()) + 2 * (n - 1) > total and long:
        moved = [i for i in shown if i in long]
        shown = [i for i in shown if i not in long]
        w = {i: w[i] for i in shown}
    # still too wide: the other text columns follow, the widest first (numbers and keys stay)
    while not wide and sum(w.values()) + 2 * (len(shown) - 1) > total:
        text = [i for i in shown if i not in keys and i not in right]
        if not text:
            break
        i = max(text, key=lambda j: w[j])
        moved.append(i)
        shown.remove(i)
        del w[i]
    moved.sort()
    legend: dict[str, int] = {}
    if not wide and sum(w.values()) + 2 * (len(shown) - 1) > total:
        # headings no wider than their cells, then the keys cut down to what is left
        for i in shown:
            body = max([len(r[i]) for r in cells], default=0)
            if len(heads[i]) > max(body, 4):
                heads[i] = _shorten(heads[i], max(body, 4), legend)
        w = widths(shown)
        excess = sum(w.values()) + 2 * (len(shown) - 1) - total
        for i in [i for i in shown if i in keys]:
            if excess <= 0:
                break
            room = max(MIN_KEY, len(heads[i]), w[i] - excess)
            if room < w[i]:
                for r in cells:
                    r[i] = _shorten(r[i], room, legend)
                excess -= w[i] - room
                w[i] = max([len(heads[i])] + [len(r[i]) for r in cells])
    # the last resort before running over: one space between columns
    gap = "  " if wide or sum(w.values()) + 2 * (len(shown) - 1) <= total else " "
    out = []
    if moved and all(i in keys for i in shown) and len(shown) == 1:
        # the grid would be one column of keys: write "key: text" lines instead
        import textwrap

        i = shown[0]
        wrap = textwrap.TextWrapper(width=max(total, 40), subsequent_indent="    ", break_on_hyphens=False)
        out.append(f"{columns[i]}: " + ", ".join(columns[j] for j in moved))
        for orig, row in zip(rows, cells, strict=True):
            text = f"  {orig[i]}: " + "; ".join(row[j] for j in moved if row[j])
            out.extend(wrap.wrap(text) if len(text) > total else [text])
        return out
    for j, row in enumerate([heads] + cells):
        parts = [(row[i].rjust(w[i]) if i in right else row[i].ljust(w[i])) for i in shown]
        out.append(gap.join(parts).rstrip())
        if j == 0:
            out.append(gap.join("-" * w[i] for i in shown))
    if moved:
        import textwrap

        key = next((i for i in range(n) if i in keys), None)
        pad = len(str(len(cells))) + 2
        wrap = textwrap.TextWrapper(width=max(total, 40), subsequent_indent=" " * pad, break_on_hyphens=False)
        for k, (orig, row) in enumerate(zip(rows, cells, strict=True), 1):
            bits = [f"{columns[i]}: {row[i]}" for i in moved if row[i]]
            if not bits:
                continue
            who = f"{orig[key]}: " if key is not None else ""
            text = f"{k}.".ljust(pad) + who + "; ".join(bits)
            out.extend(wrap.wrap(text) if len(text) > total else [text])
    for full, k in legend.items():
        out.append(f"…{k} = {full}")
    return out


def table(columns: list[str], rows: list[list], *, title: str | None = None, caption: str | None = None,
          right: set[int] | None = None, long: set[int] | None = None, keys: set[int] | None = None,
          legend: list[str] | None = None) -> None:
    """Print a table that fits the width (see :func:`grid_lines`); the title above, ``legend`` lines and the
    caption below. On a terminal the heading line is bold."""
    lines = grid_lines(columns, rows, right=right, long=long, keys=keys)
    total = width()
    out = [title] if title else []
    out += lines
    for text in (legend or []) + ([caption] if caption else []):
        out.extend(wrap_text(text, total))
    if is_terminal() and lines:
        head = 1 if title else 0
        c = console()
        from rich.text import Text

        for i, line in enumerate(out):
            c.print(Text(line, style="bold" if i == head else ""), overflow="ignore", crop=False)
        return
    sys.stdout.write("\n".join(out) + "\n")


def wrap_text(text: str, total: int | None = None, indent: str = "") -> list[str]:
    """Prose wrapped to the width (continuation lines indented by ``indent``)."""
    import textwrap

    total = width() if total is None else total
    if len(text) <= total:
        return [text]
    return textwrap.wrap(text, width=max(total, 40), subsequent_indent=indent, break_on_hyphens=False,
                         break_long_words=False) or [text]


def esc(text) -> str:
    """Data text made safe inside rich markup (a '[kind]' must not vanish as a tag)."""
    from rich.markup import escape

    return escape(str(text))


def say(text: str = "", *, style: str | None = None, wrap: bool = False) -> None:
    """A line of prose with rich markup (escape data with :func:`esc`); styled on a terminal, plain when piped."""
    if is_terminal():
        console().print(text, style=style)
    else:
        plain = _strip_markup(text)
        indent = " " * (len(plain) - len(plain.lstrip()) + 2)
        sys.stdout.write(("\n".join(wrap_text(plain, indent=indent)) if wrap else plain) + "\n")


def _strip_markup(text: str) -> str:
    from rich.text import Text

    return Text.from_markup(text).plain


QuietOpt = Annotated[bool, typer.Option("--quiet", "-q", help="Leave out the safety caution where no part is "
                                        "sized (it is always printed with a sized part).")]
_quiet = False
_cautioned: set[str] = set()


def set_quiet(on: bool) -> None:
    global _quiet
    _quiet = bool(on)


def reset() -> None:
    """Forget what this command printed once (called when a command ends)."""
    global _quiet, _wide
    _quiet = _wide = False
    _cautioned.clear()


def caution(lines: list[str], *, sized: bool = False) -> None:
    """The safety caution, once per command, set apart on a terminal; ``--quiet`` leaves it out unless a part was
    sized."""
    if _quiet and not sized:
        return
    for line in lines:
        head, sep, rest = line.partition(":")
        if sep and head.strip().lower() == "caution":
            line = rest.strip()
        if line in _cautioned:
            continue
        _cautioned.add(line)
        say(f"[bold yellow]CAUTION[/]: {esc(line)}", wrap=True)
