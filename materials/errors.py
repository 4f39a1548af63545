"""One exception family for holdoff, and the exit codes a script can rely on.

A :class:`HoldoffError` is a domain error: the CLI prints its one-line message and exits with code 2, or 3 when the
store cannot be opened or reached (decided in one place, cli/app.py). Anything else is a bug and keeps its traceback.
"""

from __future__ import annotations

NOTHING_MATCHED = 1  # a shortlist that ranks nothing, a filtered listing that lists nothing
BAD_INPUT = 2  # bad input or usage: a HoldoffError
STORE_UNREACHABLE = 3  # the store cannot be opened or reached


class HoldoffError(Exception):
    """A domain error with a one-line message for the user."""

    exit_code = BAD_INPUT


class InputError(HoldoffError):
    """Bad input in a file or option; names the file, line and field where known."""

    def __init__(self, message: str, *, file: str | None = None, line: int | None = None,
                 field: str | None = None, entry: str | None = None):
        self.file, self.line, self.field, self.entry = file, line, field, entry
        where = []
        if file:
            where.append(str(file) + (f":{line}" if line is not None else ""))
        elif line is not None:
            where.append(f"line {line}")
        if entry:
            where.append(f"entry {entry}")
        if field:
            where.append(f"field '{field}'")
        prefix = ", ".join(where)
        super().__init__(f"{prefix}: {message}" if prefix else message)


class UnitError(InputError):
    """A quantity with a missing, ambiguous or wrong-dimension unit."""


class DataError(HoldoffError):
    """The store lacks data needed for an answer (a property missing, a condition outside the data range)."""


class StoreError(HoldoffError):
    """The database cannot be opened, is of the wrong version, or failed a check."""
