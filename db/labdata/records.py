"""Material records into the store (``holdoff add``): update with history, and the files they come from."""

from __future__ import annotations

from pathlib import Path

from db.labdata.common import _close, _material, _now
from materials.errors import InputError
from materials.properties import PROPERTIES
from materials.records import CONDITIONS, MaterialRec, SourceRec, ValueRec
from materials.textfile import check_file

_CONDITION_WORDS = {"frequency_Hz": ("frequency", "Hz"), "field_V_per_m": ("field", "V/m"),
                    "thickness_m": ("thickness", "m"), "area_m2": ("area", "m²")}


def _fmt_conditions(obj) -> str:
    parts = []
    for c in CONDITIONS:
        v = getattr(obj, c)
        if v is None:
            continue
        if c == "temperature_K":
            parts.append(f"{v - 273.15:g} °C")
        else:
            word, unit = _CONDITION_WORDS[c]
            parts.append(f"{word} {v:g} {unit}")
    return f" at {', '.join(parts)}" if parts else ""


def _fmt_value(prop: str, value: float) -> str:
    unit = PROPERTIES[prop].si
    return f"{value:g}" + ("" if unit == "1" else f" {unit}")

def add_materials(session, records: list[MaterialRec], sources: dict[str, SourceRec], *, dry_run: bool = False,
                  reason: str | None = None) -> list[str]:
    """Write material records with update-with-history; return one description per change.

    Sources in ``sources`` are added when new; one that exists with another kind, citation or note is refused
    (sources are not edited in place). A material that exists has its descriptive fields updated; each value is
    matched with the active row of the same property, conditions and source: equal → unchanged, different → the
    old row is retired (kept, with when and ``reason``) and the new one added, absent → added. Values already in
    the store but not in a record are left alone (``add`` only adds and corrects); values derived from breakdown
    sets and loops are never touched. With ``dry_run`` nothing is written.

    Args:
        session: an open session (the caller's transaction).
        records: validated material records (``materials.catalog_io.load_material``,
            ``materials.labfiles.read_value_table``).
        sources: source records the values may cite besides those already in the store.
        dry_run: describe the changes without writing them.
        reason: why old rows are retired (default: "superseded by holdoff add").

    Returns:
        Change descriptions, in order (unchanged materials are reported as such).
    """
    from sqlalchemy import select

    from db.models import Material, PropertyValue, Source

    reason = reason or "superseded by holdoff add"
    changes: list[str] = []
    cited = {v.source for r in records for v in r.values} | set(sources)
    rows = {s.key: s for s in session.execute(select(Source).where(Source.key.in_(sorted(cited)))).scalars()}
    for key, rec in sources.items():
        row = rows.get(key)
        if row is None:
            changes.append(f"new source '{key}' ({rec.kind})")
            if not dry_run:
                row = Source(key=key, kind=rec.kind, citation=rec.citation, note=rec.note)
                session.add(row)
                rows[key] = row
        elif (row.kind, row.citation, row.note or "") != (rec.kind, rec.citation, rec.note or ""):
            raise InputError(f"source '{key}' is already in the store with another kind, citation or note; sources "
                             "are not edited in place: give the new one another key", entry=key, field="citation")
    missing = sorted({v.source for r in records for v in r.values} - set(rows) - set(sources))
    if missing:
        raise InputError(f"source '{missing[0]}' is neither in the store nor in the sources given", field="source")
    if not dry_run:
        session.flush()
    now = _now()
    new_rows: list[tuple] = []  # inserted at the end in one executemany (20,000 ORM objects take seconds)
    for rec in records:
        mat = _material(session, rec.key)
        if mat is None:
            changes.append(f"new material '{rec.key}' ({rec.name}, {rec.family}) with {len(rec.values)} value(s)")
            if dry_run:
                continue
            mat = Material(key=rec.key, name=rec.name, family=rec.family, form=rec.form,
                           description=rec.description, origin=rec.origin, response=rec.response)
            session.add(mat)
            session.flush()
            for v in rec.values:
                new_rows.append(_value_row(mat.id, v, rows[v.source].id, now))
            continue
        n_before = len(changes)
        for f in ("name", "family", "form", "description", "response"):
            if rec.given is not None and f not in rec.given:
                continue
            old, new = getattr(mat, f) or "", getattr(rec, f) or ""
            if old != new:
                changes.append(f"{rec.key}: {f} '{old}' → '{new}'")
                if not dry_run:
                    setattr(mat, f, new)
        active = session.execute(
            select(PropertyValue, Source.key).join(Source, PropertyValue.source_id == Source.id)
            .where(PropertyValue.material_id == mat.id, PropertyValue.retired_at.is_(None),
                   PropertyValue.breakdown_set_id.is_(None), PropertyValue.loop_id.is_(None))).all()
        index: dict[tuple, list] = {}
        for pv, skey in active:
            index.setdefault((pv.property,) + tuple(getattr(pv, c) for c in CONDITIONS) + (skey,), []).append(pv)
        unchanged = 0
        for v in rec.values:
            olds = index.get(v.identity() + (v.source,), [])
            label = f"{rec.key}: {v.property}{_fmt_conditions(v)}"
            if not olds:
                changes.append(f"{label}: new value {_fmt_value(v.property, v.value)} ({v.source})")
            elif len(olds) == 1 and _same_value(olds[0], v):
                unchanged += 1
                continue
            else:
                old = olds[0]
                changes.append(f"{label}: {_fmt_value(v.property, old.value)} → {_fmt_value(v.property, v.value)}"
                               f" ({v.source}; the old value is kept as history)")
                if not dry_run:
                    for o in olds:
                        o.retired_at, o.retired_reason = now, reason
            if not dry_run:
                new_rows.append(_value_row(mat.id, v, rows[v.source].id, now))
        if len(changes) == n_before:
            changes.append(f"{rec.key}: unchanged ({unchanged} value(s))")
    if not dry_run:
        from db.bulk import insert_rows
        from db.models import PropertyValue

        session.flush()
        if new_rows:
            insert_rows(session, PropertyValue.__table__, _VALUE_COLUMNS, new_rows)
    return changes


def _same_value(pv, v: ValueRec) -> bool:
    return (_close(pv.value, v.value) and _close(pv.low, v.low) and _close(pv.high, v.high)
            and (pv.note or "") == (v.note or ""))


_VALUE_COLUMNS = ("material_id", "property", "value", "low", "high", *CONDITIONS, "source_id", "note", "created_at")


def _value_row(material_id: int, v: ValueRec, source_id: int, now) -> tuple:
    """A new value row in :data:`_VALUE_COLUMNS` order."""
    return (material_id, v.property, v.value, v.low, v.high, *(getattr(v, c) for c in CONDITIONS), source_id,
            v.note, now)


def _check_text(rec: MaterialRec, path: Path) -> None:
    """Refuse control, bidirectional-override and zero-width characters, and overlong text, in a record's names
    (the TOML reader checks its own fields; this covers every reader)."""
    from materials.textfile import slug_problem, text_problem

    why = slug_problem(rec.key, "material key")
    if why:
        raise InputError(why, file=str(path), entry=rec.key, field="key")
    for f in ("name", "form", "description"):
        why = text_problem(getattr(rec, f), f)
        if why:
            raise InputError(f"{f} {why}", file=str(path), entry=rec.key, field=f)


def store_sources(session) -> dict[str, SourceRec]:
    """Every source in the store as a record (what ``holdoff add`` files may cite)."""
    from sqlalchemy import select

    from db.models import Source

    return {s.key: SourceRec(key=s.key, kind=s.kind, citation=s.citation, note=s.note or "")
            for s in session.execute(select(Source)).scalars()}


def read_add_files(session, paths) -> tuple[list[MaterialRec], dict[str, SourceRec]]:
    """Read and validate the files of ``holdoff add``: material TOML (the catalog's form) and flat value CSV.

    Sources: a file named ``sources.toml`` among ``paths``, or beside a material file, is read as a bibliography
    (the catalog's ``sources.toml`` form); values may cite those and any source already in the store.
    ``session`` is an open session, or the store's sources as :func:`store_sources` returns them (so that the
    files are read before any write transaction begins).

    Returns:
        (records in file order, the new sources read).
    """
    from materials.catalog_io import load_material, load_sources
    from materials.labfiles import read_value_table

    paths = [Path(p) for p in paths]
    if not paths:
        raise InputError("no files given")
    new_sources: dict[str, SourceRec] = {}
    bib = [p for p in paths if p.name == "sources.toml"]
    for p in paths:
        if p.name != "sources.toml" and (p.parent / "sources.toml").is_file() and p.parent / "sources.toml" not in bib:
            bib.append(p.parent / "sources.toml")
    for p in bib:
        for k, rec in load_sources(p).items():
            if k in new_sources and new_sources[k] != rec:
                raise InputError(f"source '{k}' is defined twice, differently", file=str(p), entry=k)
            new_sources[k] = rec
    known = {**(session if isinstance(session, dict) else store_sources(session)), **new_sources}
    records: list[MaterialRec] = []
    where: dict[str, Path] = {}
    for p in paths:
        if p.name == "sources.toml":
            continue
        check_file(p)
        suffix = p.suffix.lower()
        if suffix == ".toml":
            found = [load_material(p, known, origin="user")]
        elif suffix == ".csv":
            found = read_value_table(p, known)
        else:
            raise InputError("'holdoff add' reads material .toml files and value tables in .csv", file=str(p))
        for r in found:
            _check_text(r, p)
            if r.key in where:
                raise InputError(f"material '{r.key}' is also in {where[r.key]}", file=str(p), entry=r.key)
            where[r.key] = p
        records.extend(found)
    used = {v.source for r in records for v in r.values}
    # a sibling bibliography may hold more than these files cite; only the cited sources are added
    return records, {k: v for k, v in new_sources.items() if k in used}
