"""Where an imported file came from: its source row (who, where, when, file name, SHA-256), the refusal of a file
or label already imported, and the replacement of an older set or loop."""

from __future__ import annotations

from pathlib import Path

from db.labdata.common import _now, resolve_material, slugify
from materials.errors import InputError

def _source_for(session, what: str, data, *, file_name: str):
    """A source row for one imported file: kind lab (or invented), citing who, where, when, file and SHA-256."""
    from sqlalchemy import select

    from db.models import Source

    c = data.conditions
    who = c.operator or "operator not stated"
    where = c.lab or "lab not stated"
    when = c.date or "date not stated"
    body = f"{where}; {who}; {when}: {what} '{c.label}', file {file_name}, SHA-256 {data.sha256}"
    citation = (c.citation.rstrip(".") + ". " if c.citation else "") + body
    if c.kind == "invented" and "invented" not in c.citation.lower():
        citation = "INVENTED DEMO DATA, not a measurement of any real material. " + citation
    base = slugify(f"{c.kind}-{c.label}")[:60].rstrip("-") + f"-{data.sha256[:10]}"
    key, n = base, 1
    while True:
        row = session.execute(select(Source).where(Source.key == key)).scalar_one_or_none()
        if row is None:
            row = Source(key=key, kind=c.kind, citation=citation, note=c.note)
            session.add(row)
            session.flush()
            return row
        if row.kind == c.kind and row.citation == citation and (row.note or "") == c.note:
            return row
        n += 1
        key = f"{base}-{n}"


def _refuse_duplicate(session, model, data, mat, *, force: bool, what: str) -> object | None:
    """Refuse a file already imported, or a label already used, unless ``force``; return the row to replace."""
    from sqlalchemy import select

    from db.models import Material

    if not force:
        dup = session.execute(select(model, Material.key).join(Material, model.material_id == Material.id)
                              .where(model.sha256 == data.sha256)).first()
        if dup is not None:
            row, key = dup
            raise InputError(f"this file was already imported as {what} '{row.label}' of '{key}' on "
                             f"{row.created_at:%Y-%m-%d %H:%M} (same SHA-256 {data.sha256[:12]}…); use --force to "
                             "import it again", file=data.path)
    old = session.execute(select(model).where(model.material_id == mat.id, model.label == data.conditions.label)
                          ).scalar_one_or_none()
    if old is not None and not force:
        raise InputError(f"'{mat.key}' already has a {what} labelled '{old.label}' (from {old.file_name or 'a file'}, "
                         f"{old.created_at:%Y-%m-%d %H:%M}); use --force to replace it (its derived values are "
                         "retired, its points kept), or give another --label", file=data.path, field="label")
    return old


def _retire_replaced(session, old, *, fk, reason: str) -> str:
    """Keep a replaced set or loop (and its points) under a new label; retire the values derived from it."""
    from sqlalchemy import select

    from db.models import PropertyValue

    now = _now()
    for pv in session.execute(select(PropertyValue).where(fk == old.id, PropertyValue.retired_at.is_(None))
                              ).scalars():
        pv.retired_at, pv.retired_reason = now, reason
    old.label = f"{old.label} (replaced {now:%Y-%m-%d %H:%M:%S} #{old.id})"[:400]
    session.flush()
    return old.label


def _prepare(session, data, model, fk, what: str, series: str, *, material_key, new_material, family, force,
             response):
    """The common first steps of an import: material, duplicate checks, replacement, source.

    Returns (material, created, new label of a replaced row or None, source, file name).
    """
    mat, created = resolve_material(session, material_key=material_key, new_material=new_material, family=family,
                                    response=response)
    old = _refuse_duplicate(session, model, data, mat, force=force, what=what)
    file_name = Path(data.path).name
    replaced = None
    if old is not None:
        replaced = _retire_replaced(session, old, fk=fk,
                                    reason=f"{what} replaced by {file_name} (SHA-256 {data.sha256[:12]}…)")
    return mat, created, replaced, _source_for(session, series, data, file_name=file_name), file_name
