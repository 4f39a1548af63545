"""A snapshot of the table :func:`db.query.load_table` reads, kept in the user's cache folder and used again
while the store has not changed.

Reading every value of a large store costs seconds (the driver builds a Python row per value); loading the same
table, its columns already sorted, from a ``.npz`` file costs a small fraction of that. A snapshot is keyed on a
signature the store answers in one cheap query inside the reading transaction: for each table the reader uses,
the number of rows and the largest id, the number of retired values, and the meta rows (catalog fingerprint),
with this program's schema revision and property vocabulary. Every write the program makes adds rows (a
correction adds a row and retires the old one, which also changes the retired count), deletes rows or rewrites
the meta rows, so any write changes the signature; a snapshot is used only when the signature is the same, in the
same transaction as the read it replaces. A value edited in place by another program, keeping every count, would
not be seen: the program never does that. SQLite's ``PRAGMA data_version`` cannot serve: it only tells one
connection about the others' commits.

``HOLDOFF_SNAPSHOTS`` names the folder (default: the user's cache folder), or ``off`` to read the store every
time. Stores of fewer than :data:`MIN_VALUES` values are always read (the read is cheap), and so are in-memory
stores. A snapshot that cannot be read or written is ignored: the store is read as if there were none.
"""

from __future__ import annotations

import hashlib
import json
import os
from pathlib import Path

FORMAT = 1
MIN_VALUES = 50_000
_TABLES = ("material", "source", "property_value", "breakdown_set", "loop")


def _off() -> bool:
    return os.environ.get("HOLDOFF_SNAPSHOTS", "").lower() == "off"


def folder() -> Path | None:
    """Where snapshots live, None when they are turned off."""
    if _off():
        return None
    env = os.environ.get("HOLDOFF_SNAPSHOTS", "")
    if env:
        return Path(env)
    import platformdirs

    return Path(platformdirs.user_cache_dir("holdoff", appauthor=False)) / "snapshots"


def signature(conn, fetch, vocabulary) -> tuple[str, int]:
    """The store's change signature (a hex digest) and its number of values, read through ``conn``."""
    parts = [f"(SELECT count(*) FROM {t})" for t in _TABLES]
    parts += [f"(SELECT max(id) FROM {t})" for t in _TABLES]
    parts.append("(SELECT count(retired_at) FROM property_value)")
    from sqlalchemy import text

    row = fetch(conn, text("SELECT " + ", ".join(parts)))[0]
    meta = sorted(fetch(conn, text("SELECT key, value FROM meta")))
    url = conn.engine.url.render_as_string(hide_password=True)
    from db.store import SCHEMA_REVISION

    # The program's schema revision: a store upgraded in place (values rewritten, counts kept) is read anew.
    blob = json.dumps([FORMAT, SCHEMA_REVISION, url, [str(x) for x in row], [list(map(str, r)) for r in meta],
                       list(vocabulary)])
    return hashlib.sha256(blob.encode()).hexdigest(), int(row[2])


def usable(conn) -> bool:
    """Whether the store can have a snapshot: snapshots are on and the store outlives the process."""
    url = conn.engine.url
    return not _off() and not (url.get_backend_name() == "sqlite" and url.database in (None, "", ":memory:"))


def _path(conn) -> Path:
    name = hashlib.sha256(conn.engine.url.render_as_string(hide_password=True).encode()).hexdigest()[:24]
    return folder() / f"{name}.npz"


_LISTS = ("keys", "names", "families", "forms", "descriptions", "origins", "responses", "prop_names", "source_keys",
          "source_kinds", "source_citations")


def load(conn, sig: str):
    """The :class:`materials.table.ValueTable` saved under ``sig``, or None."""
    import dataclasses

    import numpy as np

    from materials.table import ValueTable

    arrays = [f.name for f in dataclasses.fields(ValueTable) if f.name not in (*_LISTS, "words", "_py")]
    try:
        with np.load(_path(conn), allow_pickle=False) as z:
            head = json.loads(bytes(z["head"]).decode())
            if head.get("signature") != sig:
                return None
            cols = {k: z[k] for k in arrays}
    except (OSError, ValueError, KeyError):
        return None
    return ValueTable(**cols, **{k: head[k] for k in _LISTS},
                      words={int(r): tuple(w) for r, w in head["words"]})


def save(conn, sig: str, table) -> None:
    """Keep ``table`` (a :class:`materials.table.ValueTable`) under ``sig`` (written to a temporary file, then
    renamed into place)."""
    import dataclasses

    import numpy as np

    path = _path(conn)
    head = {"signature": sig, **{k: list(getattr(table, k)) for k in _LISTS},
            "words": [[r, list(w)] for r, w in table.words.items()]}
    arrays = {f.name: getattr(table, f.name) for f in dataclasses.fields(table)
              if f.name not in (*_LISTS, "words", "_py")}
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        tmp = path.with_name(f"{path.stem}.{os.getpid()}.tmp.npz")
        np.savez(tmp, head=np.frombuffer(json.dumps(head).encode(), dtype=np.uint8), **arrays)
        os.replace(tmp, path)
    except OSError:
        return
