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
    from materials.properties import PROPERTIES, check_plausible, outside_range

    out: list[Finding] = []
    with store.engine.connect() as c:
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
        q = select(PropertyValue.id, PropertyValue.material_id, PropertyValue.property, PropertyValue.value,
                   PropertyValue.low, PropertyValue.high).where(PropertyValue.retired_at.is_(None))
        for vid, mid, prop, value, low, high in s.execute(q):
            if prop not in PROPERTIES:
                out.append(Finding("error", f"value #{vid} of {keys.get(mid)}: unknown property '{prop}'"))
                continue
            for label, v in (("value", value), ("low", low), ("high", high)):
                if v is None:
                    continue
                why = check_plausible(prop, v, mats.get(mid))
                if why:
                    out.append(Finding("error", f"value #{vid} of {keys.get(mid)}: {label}: {why}"))
            if outside_range(value, low, high):
                out.append(Finding("error", f"value #{vid} of {keys.get(mid)}: value outside its low…high range"))
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
