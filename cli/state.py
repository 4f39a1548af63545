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
    return _store


def reset() -> None:
    global _store
    if _store is not None:
        _store.dispose()
    _store = None
