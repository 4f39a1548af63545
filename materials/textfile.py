"""Reading a user's text file (a target, a saved result, a record): one set of refusals for every way in."""

from __future__ import annotations

from pathlib import Path

from materials.errors import InputError


def check_file(path) -> Path:
    """``path`` as a Path if it names a readable file; else one clear refusal naming it."""
    p = Path(path)
    if not p.is_file():
        raise InputError("no such file" if not p.exists() else "not a file (a folder?)", file=str(p))
    return p


def load_text(path, parse, *, kind: str):
    """``parse`` applied to the UTF-8 text of ``path``; a missing file, a folder, unreadable or undecodable bytes,
    or text ``parse`` rejects (a ValueError, as JSON and TOML decode errors are) give one line naming the file."""
    p = check_file(path)
    try:
        text = p.read_text(encoding="utf-8")
    except PermissionError:
        raise InputError("cannot be read (permission denied)", file=str(p)) from None
    except UnicodeDecodeError as exc:
        raise InputError(f"not a valid {kind} file: {exc}", file=str(p)) from None
    try:
        return parse(text)
    except ValueError as exc:
        raise InputError(f"not a valid {kind} file: {exc}", file=str(p), line=error_line(exc)) from None


def error_line(exc: Exception) -> int | None:
    """The line a parser's error names: its ``lineno`` (JSON; TOML from Python 3.14), else the "(at line N"
    that Python 3.11's TOML reader writes in its message."""
    import re

    line = getattr(exc, "lineno", None)
    if line is None:
        m = re.search(r"\(at line (\d+)", str(exc))
        line = int(m.group(1)) if m else None
    return line


# Longest text accepted in each kind of field (characters).
TEXT_LIMITS = {"key": 120, "name": 200, "label": 400, "form": 400, "citation": 2000, "note": 4000,
               "description": 4000, "text": 400}
#: A key or slug, matched whole (``re.fullmatch``): "polypropylene-bopp\n" is not one.
SLUG_PATTERN = r"[a-z0-9][a-z0-9._-]*"
# Fields that may run over several lines (and hold tabs); every other one is a single line.
_MULTILINE = ("citation", "note", "description")


def text_problem(value, kind: str = "text") -> str | None:
    """Why ``value`` cannot be stored as a text field of ``kind`` (a key of :data:`TEXT_LIMITS`), or None.

    Refused: anything but a string; control characters (tab and newline allowed in citations, notes and
    descriptions); Unicode format characters (bidirectional overrides and isolates, zero-width spaces and joiners,
    the byte-order mark), line and paragraph separators and lone surrogates, all of which make text read other
    than it is stored; and text longer than the kind's limit.
    """
    import unicodedata

    if not isinstance(value, str):
        return f"must be text, not {type(value).__name__} {value!r:.40}"
    limit = TEXT_LIMITS[kind]
    if len(value) > limit:
        return f"is longer than {limit} characters ({len(value)})"
    allowed = "\t\n" if kind in _MULTILINE else ""
    for i, ch in enumerate(value):
        if ch in allowed:
            continue
        if unicodedata.category(ch) in ("Cc", "Cf", "Cs", "Zl", "Zp"):
            name = unicodedata.name(ch, "control character")
            return f"holds the invisible or control character U+{ord(ch):04X} ({name.lower()}) at position {i + 1}"
    return None


def slug_problem(value, what: str = "key") -> str | None:
    """Why ``value`` is not a lower-case slug (the whole of it: letters, digits, '.', '_', '-'), or None."""
    import re

    if not isinstance(value, str):
        return f"{what} must be text, not {type(value).__name__} {value!r:.40}"
    if len(value) > TEXT_LIMITS["key"]:
        return f"{what} is longer than {TEXT_LIMITS['key']} characters"
    if not re.fullmatch(SLUG_PATTERN, value):
        return f"{what} {value!r:.60} must be a lower-case slug (a-z, 0-9, '.', '_', '-')"
    return None
