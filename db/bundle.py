"""Dump the whole store to a text bundle and load it back, losslessly, on any backend.

Format ``holdoff-bundle`` version 1: UTF-8 JSON Lines, one object per line. Numbers are written with Python's
``repr`` (the shortest text that reads back as the same double, so every value survives exactly), times as ISO 8601
with microseconds (naive UTC, as stored), absent values as ``null``; a zero is written without sign (SQLite
does not keep the sign of −0.0). Database ids are not written: rows refer to
each other by key, and ids are handed out afresh, in file order, on load. The order is fixed, so dumping, loading
into an empty store and dumping again gives the same bytes, on SQLite and PostgreSQL alike.

Lines, in this order::

    {"format": "holdoff-bundle", "version": 1, "schema_revision": "0004"}
    {"type": "meta", "key": …, "value": …}                                  by key
    {"type": "source", "key": …, "kind": …, "citation": …, "note": …}       by key
    {"type": "material", "key": …, "name": …, "family": …, "form": …, "description": …, "origin": …,
     "response": …}                                                         by key
    {"type": "breakdown_set", "material": KEY, "source": KEY, "label": …, "thickness_m": …, "area_m2": …,
     "temperature_K": …, "waveform": …, "ramp_V_per_s": …, "file_name": …, "sha256": …, "created_at": …,
     "point_columns": ["seq", "field_V_per_m", "censored", "thickness_m"], "points": [[…], …]}
                                                                            by material, label; points by seq
    {"type": "loop", "material": KEY, "source": KEY, "label": …, "temperature_K": …, "frequency_Hz": …,
     "thickness_m": …, "file_name": …, "sha256": …, "created_at": …,
     "point_columns": ["seq", "field_V_per_m", "polarization_C_per_m2"], "points": [[…], …]}
    {"type": "endurance_set", "material": KEY, "source": KEY, "label": …, "stress_kind": …, "thickness_m": …,
     "area_m2": …, "temperature_K": …, "file_name": …, "sha256": …, "created_at": …,
     "point_columns": ["seq", "time_s", "stress", "temperature_K", "censored"], "points": [[…], …]}
    {"type": "value", "material": KEY, "source": KEY, "breakdown_set": LABEL or null, "loop": LABEL or null,
     "endurance_set": LABEL or null,
     "property": …, "value": …, "low": …, "high": …, "temperature_K": …, "frequency_Hz": …, "field_V_per_m": …,
     "thickness_m": …, "area_m2": …, "note": …, "created_at": …, "retired_at": …, "retired_reason": …}
                                                  by material, then in the order stored (retired rows included)
    {"type": "end", "records": N}                 N = number of lines between the first and this one

A value's ``breakdown_set``, ``loop`` and ``endurance_set`` name a set or loop of the same material by its label.
A bundle without its end line, or with a different count, is refused as truncated. ``meta`` carries the catalog
fingerprint and any other facts about the store except its schema revision, which is the header's and, on load,
always that of the program loading the bundle.
"""

from __future__ import annotations

import contextlib
import datetime as dt
import json
import os
import tempfile
from pathlib import Path

from materials.errors import InputError, StoreError

FORMAT = "holdoff-bundle"
VERSION = 1

# Columns written for each record type, in the order written; ids and foreign keys are replaced by keys.
FIELDS = {
    "meta": ("key", "value"),
    "source": ("key", "kind", "citation", "note"),
    "material": ("key", "name", "family", "form", "description", "origin", "response"),
    "breakdown_set": ("label", "thickness_m", "area_m2", "temperature_K", "waveform", "ramp_V_per_s", "file_name",
                      "sha256", "created_at"),
    "loop": ("label", "temperature_K", "frequency_Hz", "thickness_m", "file_name", "sha256", "created_at"),
    "endurance_set": ("label", "stress_kind", "thickness_m", "area_m2", "temperature_K", "file_name", "sha256",
                      "created_at"),
    "value": ("property", "value", "low", "high", "temperature_K", "frequency_Hz", "field_V_per_m", "thickness_m",
              "area_m2", "note", "created_at", "retired_at", "retired_reason"),
}
POINT_COLUMNS = {
    "breakdown_set": ("seq", "field_V_per_m", "censored", "thickness_m"),
    "loop": ("seq", "field_V_per_m", "polarization_C_per_m2"),
    "endurance_set": ("seq", "time_s", "stress", "temperature_K", "censored"),
}
TABLES = {"meta": "meta", "source": "source", "material": "material", "breakdown_set": "breakdown_set",
          "loop": "loop", "endurance_set": "endurance_set", "value": "property_value"}
POINT_TABLES = {"breakdown_set": ("breakdown_point", "set_id"), "loop": ("loop_point", "loop_id"),
                "endurance_set": ("endurance_point", "set_id")}
#: Sets and loops: records with points, named by material and label.
_OWNERS = ("breakdown_set", "loop", "endurance_set")
# Foreign-key columns and how a record names what they point to.
REFERENCES = {"material_id": "material", "source_id": "source", "breakdown_set_id": "breakdown_set",
              "loop_id": "loop", "endurance_set_id": "endurance_set"}
_ORDER = ("meta", "source", "material", *_OWNERS, "value")
_BATCH = 5000


def _out(v):
    """A column value as written: times as ISO text; −0.0 as 0.0, since SQLite keeps no sign on a zero."""
    if isinstance(v, float):
        return v + 0.0
    return v.isoformat(timespec="microseconds") if isinstance(v, dt.datetime) else v


def _line(obj: dict) -> str:
    return json.dumps(obj, ensure_ascii=False) + "\n"


def _revision_of(conn) -> str | None:
    from sqlalchemy import inspect, text

    from db.migrate import current_revision

    rev = current_revision(conn)
    if rev is None and inspect(conn).has_table("meta"):
        rev = conn.execute(text("SELECT value FROM meta WHERE key = 'schema_revision'")).scalar()
    return rev


def _require_head(conn, url: str) -> None:
    from db.engine import mask_url
    from db.migrate import head_revision

    rev, head = _revision_of(conn), head_revision()
    if rev is not None and rev != head:
        raise StoreError(f"the store at {mask_url(url)} is at schema revision {rev}, this holdoff writes {head}: "
                         "run 'holdoff db upgrade' first")


def _snapshot(engine):
    """A connection that sees one consistent state of the store for the whole dump."""
    conn = engine.connect()
    if engine.dialect.name == "postgresql":
        conn = conn.execution_options(isolation_level="REPEATABLE READ")
    return conn


def _records(conn):
    """Every record of the store as dicts, in bundle order (see the module docstring)."""
    from sqlalchemy import select

    from db.models import Base

    # Sorted here, not in SQL: collations differ between backends and servers, code points do not.
    t = Base.metadata.tables
    meta = t["meta"]
    for m in sorted(conn.execute(select(meta).where(meta.c.key != "schema_revision")).mappings(),
                    key=lambda m: m["key"]):
        yield {"type": "meta", **{f: m[f] for f in FIELDS["meta"]}}
    keys = {}
    for kind in ("source", "material"):
        rows = sorted(conn.execute(select(t[TABLES[kind]])).mappings().all(), key=lambda r: r["key"])
        keys[kind] = {r["id"]: r["key"] for r in rows}
        for r in rows:
            yield {"type": kind, **{f: _out(r[f]) for f in FIELDS[kind]}}
    mat, src = keys["material"], keys["source"]
    labels = {}
    for kind in _OWNERS:
        tab = t[TABLES[kind]]
        ptab, fk = POINT_TABLES[kind]
        ptab = t[ptab]
        cols = POINT_COLUMNS[kind]
        points: dict[int, list] = {}
        for p in conn.execute(select(ptab).order_by(ptab.c[fk], ptab.c.seq)).mappings():
            points.setdefault(p[fk], []).append([_out(p[c]) for c in cols])
        rows = conn.execute(select(tab)).mappings().all()
        labels[kind] = {r["id"]: r["label"] for r in rows}
        for r in sorted(rows, key=lambda r: (mat[r["material_id"]], r["label"])):
            yield {"type": kind, "material": mat[r["material_id"]], "source": src[r["source_id"]],
                   **{f: _out(r[f]) for f in FIELDS[kind]}, "point_columns": list(cols),
                   "points": points.get(r["id"], [])}
    tab = t["property_value"]
    rows = conn.execute(select(tab).order_by(tab.c.id)).mappings().all()
    for r in sorted(rows, key=lambda r: mat[r["material_id"]]):  # stable: keeps the stored order within a material
        yield {"type": "value", "material": mat[r["material_id"]], "source": src[r["source_id"]],
               **{k: labels[k].get(r[f"{k}_id"]) for k in _OWNERS}, **{f: _out(r[f]) for f in FIELDS["value"]}}


def dump_store(store, path, *, force: bool = False) -> int:
    """Write everything in ``store`` to the bundle file ``path``; the number of records written.

    Refuses to overwrite an existing file unless ``force``. The file is written beside its final place and moved
    there when complete, so a crash never leaves half a bundle under the name asked for.
    """
    from db.engine import connect_errors
    from db.migrate import head_revision

    path = Path(path)
    if path.exists() and not force:
        raise InputError("the file exists (use --force to overwrite it)", file=str(path))
    if path.is_dir():
        raise InputError("is a folder, not a file", file=str(path))
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    n = 0
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as out, connect_errors(store.url), \
                _snapshot(store.engine) as conn, conn.begin():
            _require_head(conn, store.url)
            out.write(_line({"format": FORMAT, "version": VERSION, "schema_revision": head_revision()}))
            for rec in _records(conn):
                out.write(_line(rec))
                n += 1
            out.write(_line({"type": "end", "records": n}))
        os.replace(tmp, path)
    except BaseException:
        with contextlib.suppress(FileNotFoundError):
            os.unlink(tmp)
        raise
    return n


class _Loader:
    """Checks bundle records one by one and inserts them in batches, in dependency order, on one connection."""

    def __init__(self, conn, file: str):
        from db.models import Base

        self.conn, self.file = conn, file
        self.tables = Base.metadata.tables
        self.ids = {k: {} for k in ("source", "material", *_OWNERS)}
        self.next_id = {k: 1 for k in ("source", "material", *_OWNERS, "value")}
        self.pending = {name: [] for name in ("meta", "source", "material", "breakdown_set", "breakdown_point",
                                              "loop", "loop_point", "endurance_set", "endurance_point",
                                              "property_value")}
        self.size = 0
        self.last = -1
        self.line = 0

    def error(self, message: str, field: str | None = None) -> InputError:
        return InputError(message, file=self.file, line=self.line, field=field)

    def _columns(self, table: str, rec: dict, fields) -> dict:
        from sqlalchemy import DateTime

        cols = self.tables[table].c
        row = {}
        for f in fields:
            if f not in rec:
                raise self.error(f"missing field '{f}'", f)
            v = rec[f]
            if v is not None and isinstance(cols[f].type, DateTime):
                try:
                    v = dt.datetime.fromisoformat(v)
                except (TypeError, ValueError):
                    raise self.error(f"'{v}' is not an ISO 8601 time", f) from None
            row[f] = v
        return row

    def _ref(self, kind: str, key, field: str):
        try:
            return self.ids[kind][key]
        except (KeyError, TypeError):
            raise self.error(f"{kind.replace('_', ' ')} '{key}' is not defined earlier in the bundle", field) \
                from None

    def add(self, rec: dict) -> None:
        kind = rec.get("type")
        if kind not in _ORDER:
            raise self.error(f"unknown record type '{kind}'", "type")
        order = _ORDER.index(kind)
        if order < self.last:
            raise self.error(f"a '{kind}' record after a '{_ORDER[self.last]}' one (records go in the order "
                             + ", ".join(_ORDER) + ")", "type")
        self.last = order
        table = TABLES[kind]
        row = self._columns(table, rec, FIELDS[kind])
        if kind == "meta":
            if row["key"] == "schema_revision":
                return
        elif kind in ("source", "material"):
            if row["key"] in self.ids[kind]:
                raise self.error(f"{kind} '{row['key']}' appears twice", "key")
            row["id"] = self.ids[kind][row["key"]] = self._new_id(kind)
        else:
            material = self._ref("material", rec.get("material"), "material")
            row.update(id=self._new_id(kind), material_id=material,
                       source_id=self._ref("source", rec.get("source"), "source"))
            if kind == "value":
                for ref in _OWNERS:
                    label = rec.get(ref)
                    row[f"{ref}_id"] = None if label is None else self._ref(ref, (material, label), ref)
            else:
                if (material, row["label"]) in self.ids[kind]:
                    raise self.error(f"{kind.replace('_', ' ')} '{row['label']}' appears twice", "label")
                self.ids[kind][(material, row["label"])] = row["id"]
                self._queue(table, row)  # before its points: a flush may come in the middle of them
                self._points(kind, rec, row["id"])
                return
        self._queue(table, row)

    def _new_id(self, kind: str) -> int:
        self.next_id[kind] += 1
        return self.next_id[kind] - 1

    def _points(self, kind: str, rec: dict, owner: int) -> None:
        ptable, fk = POINT_TABLES[kind]
        cols = rec.get("point_columns")
        if not isinstance(cols, list) or set(cols) != set(POINT_COLUMNS[kind]) or len(cols) != len(set(cols)):
            raise self.error(f"point_columns must name {', '.join(POINT_COLUMNS[kind])}", "point_columns")
        points = rec.get("points")
        if not isinstance(points, list):
            raise self.error("points must be a list", "points")
        for i, p in enumerate(points):
            if not isinstance(p, list) or len(p) != len(cols):
                raise self.error(f"point {i + 1} does not have {len(cols)} entries", "points")
            self._queue(ptable, {fk: owner, **dict(zip(cols, p, strict=True))})

    def _queue(self, table: str, row: dict) -> None:
        self.pending[table].append(row)
        self.size += 1
        if self.size >= _BATCH:
            self.flush()

    def flush(self) -> None:
        from db.store import bulk_insert

        for table, rows in self.pending.items():  # dependency order: referenced rows are always sent first
            bulk_insert(self.conn, self.tables[table], rows)
            rows.clear()
        self.size = 0


def _counts(conn) -> tuple[int, int]:
    from sqlalchemy import func, select

    from db.models import Material, Source

    return (conn.execute(select(func.count()).select_from(Material)).scalar(),
            conn.execute(select(func.count()).select_from(Source)).scalar())


def _reset_sequences(conn) -> None:
    """PostgreSQL hands out ids from sequences; move them past the ids the bundle set explicitly."""
    from sqlalchemy import text

    for table in ("source", "material", *_OWNERS, "property_value"):
        conn.execute(text(f"SELECT setval(pg_get_serial_sequence('{table}', 'id'), "
                          f"COALESCE((SELECT max(id) FROM {table}), 0) + 1, false)"))


def load_bundle(url: str, path) -> int:
    """Load the bundle file ``path`` into the empty store at ``url`` in one transaction; the number of records.

    A missing SQLite file or an empty database gets the current schema first. A store that already holds sources
    or materials is refused (load into a new store; nothing is merged). Any error leaves the store as it was.
    """
    from sqlalchemy import inspect
    from sqlalchemy.exc import IntegrityError

    from db.engine import connect_errors, make_engine, mask_url, sqlite_file
    from db.migrate import stamp_head
    from db.models import Base, Meta
    from db.store import SCHEMA_REVISION

    path = Path(path)
    if not path.is_file():
        raise InputError("no such bundle file", file=str(path))
    db_file = sqlite_file(url)
    created = db_file is not None and not db_file.exists()
    engine = make_engine(url)
    n = 0
    try:
        with connect_errors(url), engine.begin() as conn, path.open(encoding="utf-8", newline="\n") as f:
            if not inspect(conn).has_table("material"):
                Base.metadata.create_all(conn)
                stamp_head(conn)
            else:
                _require_head(conn, url)
                n_mat, n_src = _counts(conn)
                if n_mat or n_src:
                    raise StoreError(f"the store at {mask_url(url)} is not empty ({n_mat} materials, {n_src} "
                                     "sources): load a bundle only into a new, empty store")
                conn.execute(Meta.__table__.delete())  # facts about a store that holds nothing
            loader = _Loader(conn, str(path))
            loader.line = 1
            header = _parse(f.readline(), loader)
            if header.get("format") != FORMAT:
                raise loader.error(f"not a {FORMAT} file", "format")
            if header.get("version") != VERSION:
                raise loader.error(f"bundle version {header.get('version')} (this holdoff reads {VERSION})",
                                   "version")
            end = None
            for loader.line, text in enumerate(f, 2):
                if end is not None:
                    raise loader.error("text after the end line")
                rec = _parse(text, loader)
                if rec.get("type") == "end":
                    end = rec
                    continue
                loader.add(rec)
                n += 1
            if end is None:
                raise loader.error("truncated bundle: no end line")
            if end.get("records") != n:
                raise loader.error(f"truncated or edited bundle: the end line counts {end.get('records')} "
                                   f"records, the file holds {n}", "records")
            loader.flush()
            conn.execute(Meta.__table__.insert().values(key="schema_revision", value=SCHEMA_REVISION))
            if engine.dialect.name == "postgresql":
                _reset_sequences(conn)
    except IntegrityError as exc:
        _discard(engine, db_file if created else None)
        raise InputError(f"the bundle breaks a rule of the schema: {str(exc.orig).splitlines()[0]}",
                         file=str(path)) from None
    except BaseException:
        _discard(engine, db_file if created else None)
        raise
    engine.dispose()
    return n


def _parse(text: str, loader: _Loader) -> dict:
    try:
        rec = json.loads(text)
    except json.JSONDecodeError as exc:
        raise loader.error(f"not JSON: {exc.msg} (column {exc.colno})") from None
    if not isinstance(rec, dict):
        raise loader.error("a line must hold one JSON object")
    return rec


def _discard(engine, created_file: Path | None) -> None:
    """After a failed load: drop the connection pool and a SQLite file the load itself created."""
    engine.dispose()
    if created_file is not None:
        for suffix in ("", "-wal", "-shm", "-journal"):
            with contextlib.suppress(FileNotFoundError):
                os.unlink(str(created_file) + suffix)
