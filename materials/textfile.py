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
        raise InputError(f"not a valid {kind} file: {exc}", file=str(p)) from None
