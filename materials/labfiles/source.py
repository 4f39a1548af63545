"""Reading a lab file: its lines decoded as UTF-8 in blocks, counted, hashed (SHA-256) and reported as read."""

from __future__ import annotations

import hashlib
from typing import Callable, Iterator

from materials.errors import InputError

#: Files are read (hashed, decoded, and reported to the progress callback) in blocks of this many bytes.
BLOCK_BYTES = 1 << 20


class _Lines:
    """The lines of a file decoded as UTF-8 one at a time, with the line number and a running SHA-256."""

    def __init__(self, path, on_progress: Callable[[int], None] | None = None):
        self.path = str(path)
        self.line = 0
        self.bytes = 0
        self._sha = hashlib.sha256()
        self._on_progress = on_progress

    def __iter__(self) -> Iterator[str]:
        # Blocks of 1 MiB are hashed and decoded whole (much faster than line by line); only complete lines are
        # decoded, so a multi-byte character split across blocks is never cut.
        try:
            f = open(self.path, "rb")
        except OSError as exc:
            raise InputError(f"cannot read the file: {exc.strerror or exc}", file=self.path) from None
        carry = b""
        with f:
            while True:
                block = f.read(BLOCK_BYTES)
                if block:
                    self._sha.update(block)
                    self.bytes += len(block)
                    data = carry + block
                    cut = data.rfind(b"\n") + 1
                    chunk, carry = data[:cut], data[cut:]
                else:
                    chunk, carry = carry, b""
                if chunk:
                    yield from self._decoded(chunk)
                if self._on_progress is not None:
                    self._on_progress(self.bytes)
                if not block:
                    return

    def _decoded(self, chunk: bytes) -> Iterator[str]:
        try:
            text = chunk.decode("utf-8")
        except UnicodeDecodeError as exc:
            start = chunk.rfind(b"\n", 0, exc.start) + 1
            col = len(chunk[start:exc.start].decode("utf-8", "replace")) + 1
            raise InputError(f"not UTF-8 text: byte 0x{chunk[exc.start]:02x} at column {col} (save the file as "
                             "UTF-8)", file=self.path, line=self.line + chunk.count(b"\n", 0, exc.start) + 1
                             ) from None
        parts = text.split("\n")
        last = parts.pop()  # "" when the chunk ends with a newline
        if self.line == 0 and parts and parts[0].startswith("\ufeff"):
            parts[0] = parts[0][1:]
        for part in parts:
            self.line += 1
            yield part + "\n"
        if last:
            self.line += 1
            yield last[1:] if self.line == 1 and last.startswith("\ufeff") else last

    @property
    def sha256(self) -> str:
        return self._sha.hexdigest()

    def error(self, message: str, *, line: int | None = None, field: str | None = None) -> InputError:
        return InputError(message, file=self.path, line=self.line if line is None else line, field=field)


def in_file(exc: InputError, path, *, prefix: str = "", keep_field: bool = True) -> InputError:
    """The error ``exc`` of a pure computation, located in the file ``path`` (message not repeated)."""
    msg = str(exc)
    if exc.field and msg.startswith(f"field '{exc.field}': "):
        msg = msg[len(f"field '{exc.field}': "):]
    return InputError(prefix + msg, file=str(path), line=exc.line, field=exc.field if keep_field else None)

