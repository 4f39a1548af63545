"""Integrity and referential checks of a store (``holdoff db check``)."""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class Finding:
    level: str  # "error" or "warning"
    message: str


def check_store(store) -> list[Finding]:
    """Every problem found, errors first. An empty list means the store is sound."""
    from sqlalchemy import func, select, text

    from db.models import (BreakdownPoint, BreakdownSet, EndurancePoint, EnduranceSet, Loop, LoopPoint, Material,
                           PropertyValue, Source)
    from materials.catalog_io import value_problem

    from db.store import reader

    out: list[Finding] = []
    with reader(store.engine).connect() as c:
        if store.engine.dialect.name == "sqlite":
            res = [r[0] for r in c.exec_driver_sql("PRAGMA integrity_check").fetchall()]
            if res != ["ok"]:
                out += [Finding("error", f"SQLite integrity: {r}") for r in res[:10]]
            fk = c.exec_driver_sql("PRAGMA foreign_key_check").fetchall()
            out += [Finding("error", f"foreign key broken in table {r[0]} row {r[1]} → {r[2]}") for r in fk[:10]]
        else:
            c.execute(text("SELECT 1"))
    with store.session(read_only=True) as s:
        orphans = s.execute(select(func.count()).select_from(PropertyValue)
                            .outerjoin(Source, PropertyValue.source_id == Source.id)
                            .where(Source.id.is_(None))).scalar()
        if orphans:
            out.append(Finding("error", f"{orphans} value(s) cite a source that does not exist"))
        mats = dict(s.execute(select(Material.id, Material.family)).all())
        keys = dict(s.execute(select(Material.id, Material.key)).all())
        out += _text_findings(s)
        conds = ("temperature_K", "frequency_Hz", "field_V_per_m", "thickness_m", "area_m2")
        q = select(PropertyValue.id, PropertyValue.material_id, PropertyValue.property, PropertyValue.value,
                   PropertyValue.low, PropertyValue.high, *(getattr(PropertyValue, c) for c in conds)
                   ).where(PropertyValue.retired_at.is_(None))
        for vid, mid, prop, value, low, high, *at in s.execute(q):
            # the same check as 'holdoff add' and 'db load' (materials.catalog_io.value_problem)
            problem = value_problem(prop, mats.get(mid), value=value, low=low, high=high,
                                    **dict(zip(conds, at, strict=True)))
            if problem:
                out.append(Finding("error", f"value #{vid} of {keys.get(mid)}: {problem[0]}: {problem[1]}"))
        for label, model, pmodel, fk in (("breakdown set", BreakdownSet, BreakdownPoint, BreakdownPoint.set_id),
                                         ("loop", Loop, LoopPoint, LoopPoint.loop_id),
                                         ("endurance set", EnduranceSet, EndurancePoint, EndurancePoint.set_id)):
            empty = s.execute(select(model.label).outerjoin(pmodel, fk == model.id).group_by(model.id, model.label)
                              .having(func.count(fk) == 0)).scalars().all()
            out += [Finding("error", f"{label} '{lab}' has no points") for lab in empty]
        unused = s.execute(select(Source.key).outerjoin(PropertyValue, PropertyValue.source_id == Source.id)
                           .outerjoin(BreakdownSet, BreakdownSet.source_id == Source.id)
                           .outerjoin(Loop, Loop.source_id == Source.id)
                           .outerjoin(EnduranceSet, EnduranceSet.source_id == Source.id)
                           .group_by(Source.id, Source.key)
                           .having((func.count(PropertyValue.id) + func.count(BreakdownSet.id)
                                    + func.count(Loop.id) + func.count(EnduranceSet.id)) == 0)).scalars().all()
        out += [Finding("warning", f"source '{k}' is cited by no value") for k in unused]
    from db.store import catalog_is_current

    if catalog_is_current(store) is False:
        out.append(Finding("warning", "the store was built from an older catalog (rebuild: holdoff db init)"))
    return sorted(out, key=lambda f: f.level != "error")


def _text_findings(session) -> list[Finding]:
    """Keys that are not whole slugs, and names, citations and notes holding control, bidi-override or zero-width
    characters or longer than 'add' takes (materials.textfile)."""
    from sqlalchemy import select

    from db.models import BreakdownSet, Loop, Material, PropertyValue, Source
    from materials.textfile import slug_problem, text_problem

    out = []
    for what, model, fields in (("material", Material, ("name", "form", "description")),
                                ("source", Source, ("citation", "note"))):
        for row in session.execute(select(model.key, *(getattr(model, f) for f in fields))):
            key = row[0]
            why = slug_problem(key, f"{what} key")
            if why:
                out.append(Finding("error", f"{what} {key!r:.60}: {why}"))
            for f, v in zip(fields, row[1:], strict=True):
                why = text_problem(v or "", f)
                if why:
                    out.append(Finding("error", f"{what} {key!r:.60}: {f} {why}"))
    from materials.catalog_io import condition_problem

    for what, model, conds in (("breakdown set", BreakdownSet, ("temperature_K", "thickness_m", "area_m2")),
                               ("loop", Loop, ("temperature_K", "thickness_m", "frequency_Hz"))):
        for label, *at in session.execute(select(model.label, *(getattr(model, c) for c in conds))):
            why = text_problem(label, "label")
            if why:
                out.append(Finding("error", f"{what} {label!r:.60}: label {why}"))
            for c, x in zip(conds, at, strict=True):
                why = condition_problem(c.split("_")[0], x) if x is not None else None
                if why:
                    out.append(Finding("error", f"{what} {label!r:.60}: {why}"))
    for vid, note in session.execute(select(PropertyValue.id, PropertyValue.note)
                                     .where(PropertyValue.retired_at.is_(None))):
        why = text_problem(note or "", "note")
        if why:
            out.append(Finding("error", f"value #{vid}: note {why}"))
    return out
