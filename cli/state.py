"""Process-wide CLI state: the store URL chosen by ``--db`` / ``HOLDOFF_DB``, opened on first use."""

from __future__ import annotations

_url: str | None = None
_store = None


def set_url(url: str | None) -> None:
    global _url, _store
    _url, _store = url, None


def url() -> str:
    from db.engine import resolve_url

    return resolve_url(_url)


def store(create: bool = True):
    """The open store (built from the catalog on first use)."""
    global _store
    if _store is None:
        from db.store import open_store

        _store = open_store(_url, create=create)
        if _store.changes:
            say_changes("the catalog changed since this store was built; merged it under your data:",
                        _store.changes)
    return _store


#: How many change lines are printed before the rest is counted.
SHOWN_CHANGES = 20


def say_changes(title: str, changes: list[str]) -> None:
    """``title`` and the changes, one a line, on stderr (stdout stays the command's output)."""
    import typer

    typer.echo(f"holdoff: {title}", err=True)
    for line in changes[:SHOWN_CHANGES]:
        typer.echo(f"  {line}", err=True)
    if len(changes) > SHOWN_CHANGES:
        typer.echo(f"  … and {len(changes) - SHOWN_CHANGES} more", err=True)


def reset() -> None:
    global _store
    if _store is not None:
        _store.dispose()
    _store = None
