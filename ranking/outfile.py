"""The one check made before the program writes a file (report exports, charts): its format, an existing file,
its folder."""

from __future__ import annotations

from pathlib import Path

from materials.errors import InputError


def _one_of(formats) -> str:
    names = ["." + f for f in formats]
    return names[0] if len(names) == 1 else ", ".join(names[:-1]) + " or " + names[-1]


def check_output(path, formats, *, force: bool = False, aliases: dict | None = None) -> tuple[Path, str]:
    """``(path, format)`` of a file about to be written, or InputError naming the file.

    The format is the extension, lower case, read through ``aliases`` (``{"htm": "html"}``), and must be one of
    ``formats``; an existing file is refused unless ``force``; the folder must exist.
    """
    path = Path(path)
    ext = path.suffix.lower().lstrip(".")
    ext = (aliases or {}).get(ext, ext)
    if ext not in formats:
        raise InputError(f"cannot tell the format from '{path.suffix or path.name}': use {_one_of(formats)}",
                         file=str(path))
    if path.exists() and not force:
        raise InputError("file exists (use --force to overwrite)", file=str(path))
    if not path.parent.exists():
        raise InputError(f"folder {path.parent} does not exist", file=str(path))
    return path, ext
