"""Lab data into the store: material records, breakdown sets, polarisation loops, and what is derived from them.

Everything here works inside the caller's session (one transaction per command: a failure rolls it all back).

- :func:`add_materials` writes material records (from ``holdoff add``) with update-with-history: a changed value
  retires the old row (kept, with when and why) and adds the new one.
- :func:`import_breakdown` stores a breakdown set and its raw points, then :func:`refit_set` stores the Weibull fit
  (scale as ``breakdown_field``, shape as ``weibull_shape``) as property values that reference the set, at the
  set's temperature, thickness and electrode area; sets at several temperatures so form the material's
  breakdown-versus-temperature curve.
- :func:`import_loop` stores a loop and its samples, and its recovered energy density and efficiency as property
  values that reference the loop, at its peak field, temperature and frequency.
- Every import gets its own source (kind ``lab``, or ``invented`` for demo data) naming who, where and when, the
  file name and its SHA-256; a file already imported is refused unless ``force``.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass, field
from itertools import repeat
from pathlib import Path

from materials.errors import DataError, InputError
from materials.properties import FAMILIES, PROPERTIES, check_plausible
from materials.records import CONDITIONS, MaterialRec, SourceRec, ValueRec

DEFAULT_CONFIDENCE = 0.9
_REL_TOL = 1e-12


@dataclass
class ImportResult:
    """What one import stored (SI)."""

    what: str                 # "breakdown set" or "loop"
    material: str
    label: str
    id: int
    n: int
    source: str
    kind: str
    sha256: str
    file: str
    censored: int = 0
    new_material: bool = False
    replaced: str | None = None   # the new label of a set or loop this import replaced
    figures: dict = field(default_factory=dict)
    warnings: list[str] = field(default_factory=list)

    def as_dict(self) -> dict:
        d = {"what": self.what, "material": self.material, "label": self.label, "id": self.id, "n": self.n,
             "source": {"key": self.source, "kind": self.kind}, "file": self.file, "sha256": self.sha256,
             "new_material": self.new_material, "replaced": self.replaced, "warnings": list(self.warnings)}
        if self.what == "breakdown set":
            d["censored"] = self.censored
            d["fit"] = self.figures
        else:
            d["energies"] = self.figures
        return d


def slugify(text: str) -> str:
    """A lower-case key made from a name: letters, digits and single hyphens."""
    s = re.sub(r"[^a-z0-9]+", "-", text.lower()).strip("-")
    return s[:120].rstrip("-")


def _now():
    from db.models import utcnow

    return utcnow()


def _close(a: float | None, b: float | None) -> bool:
    if a is None or b is None:
        return a is b
    return a == b or abs(a - b) <= _REL_TOL * max(abs(a), abs(b))


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


# --- materials ------------------------------------------------------------------------------------------------

def _material(session, key: str):
    from sqlalchemy import select

    from db.models import Material

    return session.execute(select(Material).where(Material.key == key)).scalar_one_or_none()


def resolve_material(session, *, material_key: str | None = None, new_material: str | None = None,
                     family: str | None = None, response: str = "linear") -> tuple[object, bool]:
    """The material an import goes to: an existing key, or a new lab material made from a name and family.

    ``new_material`` makes the key from the name; an existing lab/user material with that key, name and family is
    reused (so a series of sets can name the new material each time); any other clash is refused.

    Returns:
        (the Material row, whether it was created).
    """
    from db.models import Material

    if bool(material_key) == bool(new_material):
        raise InputError("give either --material KEY or --new-material NAME --family F")
    if material_key:
        mat = _material(session, material_key)
        if mat is None:
            raise InputError(f"no material '{material_key}' in the store (see 'holdoff catalog', or use "
                             "--new-material NAME --family F)", field="--material")
        return mat, False
    name = " ".join(new_material.split())
    key = slugify(name)
    if not key:
        raise InputError(f"cannot make a key from the name '{new_material}'", field="--new-material")
    if family not in FAMILIES:
        raise InputError(f"--family '{family}' is not one of {', '.join(FAMILIES)}" if family else
                         "--new-material needs --family (" + ", ".join(FAMILIES) + ")", field="--family")
    mat = _material(session, key)
    if mat is not None:
        if mat.origin != "catalog" and mat.name == name and mat.family == family:
            return mat, False
        raise InputError(f"a material with key '{key}' already exists ({mat.name}, {mat.family}, origin "
                         f"{mat.origin}); use --material {key}", field="--new-material")
    mat = Material(key=key, name=name, family=family, form="", description="", origin="lab", response=response)
    session.add(mat)
    session.flush()
    return mat, True


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
                session.add(_value_row(mat.id, v, rows[v.source].id))
            continue
        n_before = len(changes)
        for f in ("name", "family", "form", "description", "response"):
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
                session.add(_value_row(mat.id, v, rows[v.source].id))
        if len(changes) == n_before:
            changes.append(f"{rec.key}: unchanged ({unchanged} value(s))")
    if not dry_run:
        session.flush()
    return changes


def _same_value(pv, v: ValueRec) -> bool:
    return (_close(pv.value, v.value) and _close(pv.low, v.low) and _close(pv.high, v.high)
            and (pv.note or "") == (v.note or ""))


def _value_row(material_id: int, v: ValueRec, source_id: int):
    from db.models import PropertyValue

    return PropertyValue(material_id=material_id, property=v.property, value=v.value, low=v.low, high=v.high,
                         temperature_K=v.temperature_K, frequency_Hz=v.frequency_Hz, field_V_per_m=v.field_V_per_m,
                         thickness_m=v.thickness_m, area_m2=v.area_m2, source_id=source_id, note=v.note)


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
    known = {**store_sources(session), **new_sources}
    records: list[MaterialRec] = []
    where: dict[str, Path] = {}
    for p in paths:
        if p.name == "sources.toml":
            continue
        if not p.is_file():
            raise InputError("no such file", file=str(p))
        suffix = p.suffix.lower()
        if suffix == ".toml":
            found = [load_material(p, known, origin="user")]
        elif suffix == ".csv":
            found = read_value_table(p, known)
        else:
            raise InputError("'holdoff add' reads material .toml files and value tables in .csv", file=str(p))
        for r in found:
            if r.key in where:
                raise InputError(f"material '{r.key}' is also in {where[r.key]}", file=str(p), entry=r.key)
            where[r.key] = p
        records.extend(found)
    used = {v.source for r in records for v in r.values}
    # a sibling bibliography may hold more than these files cite; only the cited sources are added
    return records, {k: v for k, v in new_sources.items() if k in used}


def _bulk_insert(session, table, columns: tuple[str, ...], rows) -> None:
    """Insert many rows (tuples in ``columns`` order) with one executemany in the session's transaction.

    On SQLite the statement goes straight to the driver, which is as fast as bare ``sqlite3`` (the ORM and Core
    bulk paths spend 1.5–3.5× as long converting 10⁵ rows); other backends take :func:`db.store.bulk_insert`
    (COPY on PostgreSQL).
    """
    conn = session.connection()
    if conn.dialect.name == "sqlite":
        sql = f"INSERT INTO {table.name} ({', '.join(columns)}) VALUES ({', '.join('?' * len(columns))})"
        conn.exec_driver_sql(sql, list(rows))
    else:
        from db.store import bulk_insert

        bulk_insert(conn, table, [dict(zip(columns, r)) for r in rows])


# --- provenance -------------------------------------------------------------------------------------------------

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
                         f"{old.created_at:%Y-%m-%d %H:%M}); use --force to replace it (its derived values are retired, "
                         "its points kept), or give another --label", file=data.path, field="label")
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


# --- breakdown sets ---------------------------------------------------------------------------------------------

def import_breakdown(session, data, *, material_key: str | None = None, new_material: str | None = None,
                     family: str | None = None, force: bool = False,
                     confidence: float = DEFAULT_CONFIDENCE) -> ImportResult:
    """Store a parsed breakdown series (:class:`materials.labfiles.BreakdownFile`) and its Weibull fit.

    The points go in with one bulk insert. The fit (:func:`refit_set`) becomes a ``breakdown_field`` row (Weibull
    scale, with its bounds as low/high) and a ``weibull_shape`` row at the set's temperature, thickness and area.

    Raises:
        InputError: the file was imported before or the label is taken (unless ``force``), the material is
            unknown, or the fit is implausible.
    """
    from db.models import BreakdownPoint, BreakdownSet, PropertyValue

    mat, created, replaced, src, file_name = _prepare(
        session, data, BreakdownSet, PropertyValue.breakdown_set_id, "breakdown set", "breakdown series",
        material_key=material_key, new_material=new_material, family=family, force=force, response="linear")
    c = data.conditions
    bset = BreakdownSet(material_id=mat.id, label=c.label, thickness_m=c.thickness_m, area_m2=c.area_m2,
                        temperature_K=c.temperature_K, waveform=c.waveform, ramp_V_per_s=c.ramp_V_per_s,
                        source_id=src.id, file_name=file_name, sha256=data.sha256)
    session.add(bset)
    session.flush()
    n = data.n
    thick = data.thickness_m.tolist() if data.thickness_m is not None else repeat(None, n)
    _bulk_insert(session, BreakdownPoint.__table__, ("set_id", "seq", "field_V_per_m", "censored", "thickness_m"),
                 zip(repeat(bset.id, n), range(n), data.fields_V_per_m.tolist(), data.censored.tolist(), thick))
    fit, warnings = _fit_and_store(session, bset, mat, src, data.fields_V_per_m, data.censored,
                                   confidence=confidence, file=data.path)
    return ImportResult(what="breakdown set", material=mat.key, label=bset.label, id=bset.id, n=data.n,
                        censored=data.n_censored, source=src.key, kind=src.kind, sha256=data.sha256,
                        file=file_name, new_material=created, replaced=replaced, figures=fit.as_dict(),
                        warnings=warnings)


def _fit_and_store(session, bset, mat, src, fields, censored, *, confidence: float, file: str | None):
    """Fit, check plausibility, and add the derived rows of one set. Returns (fit, warnings)."""
    from db.models import PropertyValue
    from materials.breakdown import fit_weibull

    try:
        fit = fit_weibull(fields, censored, confidence=confidence)
    except InputError as exc:
        from materials.labfiles import in_file

        raise in_file(exc, file, prefix="the Weibull fit failed: ", keep_field=False) from None
    shape = fit.shape_unbiased if math.isfinite(fit.shape_unbiased) else fit.shape
    for prop, v in (("breakdown_field", fit.scale), ("weibull_shape", shape)):
        why = check_plausible(prop, v, mat.family)
        if why:
            raise InputError(f"the fitted {prop} is implausible: {why}", file=file)
    desc = (f"set '{bset.label}' (n={fit.n}, {fit.n_censored} censored; {confidence:.0%} Fisher bounds; "
            "ML fit per IEEE Std 930)")
    common = dict(material_id=mat.id, temperature_K=bset.temperature_K, thickness_m=bset.thickness_m,
                  area_m2=bset.area_m2, source_id=src.id, breakdown_set_id=bset.id)
    shape_note = ("Ross-unbiased ML shape" if shape == fit.shape_unbiased else "ML shape (too few failures to "
                  "unbias)") + f" (ML β = {fit.shape:.4g}) of {desc}"
    session.add_all([
        PropertyValue(property="breakdown_field", value=fit.scale, low=fit.scale_bounds[0],
                      high=fit.scale_bounds[1], note=f"Weibull scale (63.2 %) of {desc}", **common),
        # the bounds are about the ML shape; the unbiased value lies below it, so the range is widened to hold it
        PropertyValue(property="weibull_shape", value=shape, low=min(fit.shape_bounds[0], shape),
                      high=fit.shape_bounds[1], note=shape_note, **common),
    ])
    session.flush()
    warnings = [w for w in (fit.mixture_warning,) if w]
    return fit, warnings


def refit_set(session, set_id: int, *, confidence: float = DEFAULT_CONFIDENCE,
              reason: str = "refitted from the stored points") -> bool:
    """Fit a stored set again from its points; if the figures changed, retire the old derived rows, add new ones.

    Returns:
        True if the derived values changed.
    """
    import numpy as np
    from sqlalchemy import select

    from db.models import BreakdownPoint, BreakdownSet, Material, PropertyValue, Source
    from materials.breakdown import fit_weibull

    bset = session.get(BreakdownSet, set_id)
    if bset is None:
        raise DataError(f"no breakdown set #{set_id}")
    pts = session.execute(select(BreakdownPoint.field_V_per_m, BreakdownPoint.censored)
                          .where(BreakdownPoint.set_id == set_id).order_by(BreakdownPoint.seq)).all()
    fields = np.array([p[0] for p in pts], dtype=float)
    cens = np.array([bool(p[1]) for p in pts], dtype=bool)
    active = session.execute(select(PropertyValue).where(PropertyValue.breakdown_set_id == set_id,
                                                         PropertyValue.retired_at.is_(None))).scalars().all()
    fit = fit_weibull(fields, cens, confidence=confidence)
    shape = fit.shape_unbiased if math.isfinite(fit.shape_unbiased) else fit.shape
    want = {"breakdown_field": (fit.scale, fit.scale_bounds[0], fit.scale_bounds[1]),
            "weibull_shape": (shape, min(fit.shape_bounds[0], shape), fit.shape_bounds[1])}
    have = {pv.property: (pv.value, pv.low, pv.high) for pv in active}
    same_conditions = all(pv.temperature_K == bset.temperature_K and pv.thickness_m == bset.thickness_m
                          and pv.area_m2 == bset.area_m2 for pv in active)
    if (same_conditions and set(have) == set(want)
            and all(all(_close(a, b) for a, b in zip(have[p], want[p])) for p in want)):
        return False
    now = _now()
    for pv in active:
        pv.retired_at, pv.retired_reason = now, reason
    mat = session.get(Material, bset.material_id)
    src = session.get(Source, bset.source_id)
    _fit_and_store(session, bset, mat, src, fields, cens, confidence=confidence, file=None)
    return True


def read_points(session, material_key: str, label: str):
    """The raw points of a set: (fields V/m, censored flags, per-specimen thickness m or None), in stored order."""
    import numpy as np
    from sqlalchemy import select

    from db.models import BreakdownPoint, BreakdownSet, Material

    bset = session.execute(select(BreakdownSet).join(Material).where(Material.key == material_key,
                                                                       BreakdownSet.label == label)).scalar_one_or_none()
    if bset is None:
        raise DataError(f"'{material_key}' has no breakdown set labelled '{label}'")
    rows = session.execute(select(BreakdownPoint.field_V_per_m, BreakdownPoint.censored, BreakdownPoint.thickness_m)
                           .where(BreakdownPoint.set_id == bset.id).order_by(BreakdownPoint.seq)).all()
    fields = np.array([r[0] for r in rows], dtype=float)
    cens = np.array([bool(r[1]) for r in rows], dtype=bool)
    thick = None if all(r[2] is None for r in rows) else np.array([r[2] for r in rows], dtype=float)
    return fields, cens, thick


# --- loops ------------------------------------------------------------------------------------------------------

def import_loop(session, data, *, material_key: str | None = None, new_material: str | None = None,
                family: str | None = None, force: bool = False) -> ImportResult:
    """Store a parsed loop (:class:`materials.labfiles.LoopFile`), its samples and its energies.

    Recovered energy density and efficiency (:func:`materials.energy.loop_energies`) become
    ``recoverable_energy_density`` and ``efficiency`` rows that reference the loop, at its peak field,
    temperature, frequency and thickness. A new material made here has a nonlinear response.
    """
    from db.models import Loop, LoopPoint, PropertyValue
    from materials.energy import loop_energies

    try:
        en = loop_energies(data.fields_V_per_m, data.polarization_C_per_m2)
    except InputError as exc:
        from materials.labfiles import in_file

        raise in_file(exc, data.path) from None
    for prop, v in (("recoverable_energy_density", en.recovered_J_per_m3), ("efficiency", en.efficiency)):
        why = check_plausible(prop, v)
        if why:
            raise InputError(f"the loop's {prop} is implausible: {why}; is the loop in measured order?",
                             file=data.path)
    mat, created, replaced, src, file_name = _prepare(
        session, data, Loop, PropertyValue.loop_id, "loop", "polarisation loop", material_key=material_key,
        new_material=new_material, family=family, force=force, response="nonlinear")
    c = data.conditions
    loop = Loop(material_id=mat.id, label=c.label, temperature_K=c.temperature_K, frequency_Hz=c.frequency_Hz,
                thickness_m=c.thickness_m, source_id=src.id, file_name=file_name, sha256=data.sha256)
    session.add(loop)
    session.flush()
    _bulk_insert(session, LoopPoint.__table__, ("loop_id", "seq", "field_V_per_m", "polarization_C_per_m2"),
                 zip(repeat(loop.id, data.n), range(data.n), data.fields_V_per_m.tolist(),
                     data.polarization_C_per_m2.tolist()))
    desc = (f"loop '{loop.label}' (stored {en.stored_J_per_m3:.4g} J/m³, lost {en.lost_J_per_m3:.4g} J/m³, "
            f"halves: {', '.join(en.halves)}; loop integration of E dD)")
    common = dict(material_id=mat.id, temperature_K=c.temperature_K, frequency_Hz=c.frequency_Hz,
                  field_V_per_m=en.max_field_V_per_m, thickness_m=c.thickness_m, source_id=src.id, loop_id=loop.id)
    session.add_all([
        PropertyValue(property="recoverable_energy_density", value=en.recovered_J_per_m3,
                      note=f"recovered energy density of {desc}", **common),
        PropertyValue(property="efficiency", value=en.efficiency, note=f"efficiency of {desc}", **common),
    ])
    session.flush()
    return ImportResult(what="loop", material=mat.key, label=loop.label, id=loop.id, n=data.n, source=src.key,
                        kind=src.kind, sha256=data.sha256, file=file_name, new_material=created, replaced=replaced,
                        figures=en.as_dict())


def read_loop_points(session, material_key: str, label: str):
    """The samples of a stored loop: (fields V/m, polarisations C/m²), in measured order."""
    import numpy as np
    from sqlalchemy import select

    from db.models import Loop, LoopPoint, Material

    loop = session.execute(select(Loop).join(Material).where(Material.key == material_key, Loop.label == label)
                           ).scalar_one_or_none()
    if loop is None:
        raise DataError(f"'{material_key}' has no loop labelled '{label}'")
    rows = session.execute(select(LoopPoint.field_V_per_m, LoopPoint.polarization_C_per_m2)
                           .where(LoopPoint.loop_id == loop.id).order_by(LoopPoint.seq)).all()
    return np.array([r[0] for r in rows], dtype=float), np.array([r[1] for r in rows], dtype=float)


# --- description for `show` -------------------------------------------------------------------------------------

def describe_sets(session, material_key: str, *, include_replaced: bool = False) -> dict:
    """The breakdown sets and loops of a material with their stored fits and energies (SI), for ``show``.

    A set or loop replaced by a later import (its derived values retired) is left out unless
    ``include_replaced``.

    Returns:
        ``{"breakdown_sets": [{label, n, censored, temperature_K, thickness_m, area_m2, waveform, ramp_V_per_s,
        shape, shape_low, shape_high, scale_V_per_m, scale_low_V_per_m, scale_high_V_per_m, source, kind, file,
        sha256, imported_at}], "loops": [{label, n, temperature_K, frequency_Hz, thickness_m, max_field_V_per_m,
        recovered_J_per_m3, efficiency, source, kind, file, sha256, imported_at}]}``
    """
    from sqlalchemy import func, select

    from db.models import BreakdownPoint, BreakdownSet, Loop, LoopPoint, Material, PropertyValue, Source

    mat = _material(session, material_key)
    if mat is None:
        raise DataError(f"no material '{material_key}' in the store")
    counts = dict(session.execute(
        select(BreakdownPoint.set_id, func.count()).join(BreakdownSet, BreakdownPoint.set_id == BreakdownSet.id)
        .where(BreakdownSet.material_id == mat.id).group_by(BreakdownPoint.set_id)).all())
    n_cens = dict(session.execute(
        select(BreakdownPoint.set_id, func.count()).join(BreakdownSet, BreakdownPoint.set_id == BreakdownSet.id)
        .where(BreakdownSet.material_id == mat.id, BreakdownPoint.censored.is_(True))
        .group_by(BreakdownPoint.set_id)).all())
    derived: dict[tuple[str, int], dict[str, object]] = {}
    for pv in session.execute(select(PropertyValue).where(
            PropertyValue.material_id == mat.id, PropertyValue.retired_at.is_(None),
            (PropertyValue.breakdown_set_id.is_not(None)) | (PropertyValue.loop_id.is_not(None)))).scalars():
        owner = ("set", pv.breakdown_set_id) if pv.breakdown_set_id is not None else ("loop", pv.loop_id)
        derived.setdefault(owner, {})[pv.property] = pv
    sets = []
    for bset, src in session.execute(select(BreakdownSet, Source).join(Source, BreakdownSet.source_id == Source.id)
                                     .where(BreakdownSet.material_id == mat.id)
                                     .order_by(BreakdownSet.temperature_K, BreakdownSet.label)):
        d = derived.get(("set", bset.id), {})
        if not d and not include_replaced:
            continue
        scale, shape = d.get("breakdown_field"), d.get("weibull_shape")
        sets.append({"label": bset.label, "n": counts.get(bset.id, 0), "censored": n_cens.get(bset.id, 0),
                     "temperature_K": bset.temperature_K, "thickness_m": bset.thickness_m, "area_m2": bset.area_m2,
                     "waveform": bset.waveform, "ramp_V_per_s": bset.ramp_V_per_s,
                     "shape": shape.value if shape else None, "shape_low": shape.low if shape else None,
                     "shape_high": shape.high if shape else None,
                     "scale_V_per_m": scale.value if scale else None,
                     "scale_low_V_per_m": scale.low if scale else None,
                     "scale_high_V_per_m": scale.high if scale else None,
                     "source": src.key, "kind": src.kind, "file": bset.file_name, "sha256": bset.sha256,
                     "imported_at": bset.created_at.isoformat(sep=" ", timespec="seconds")})
    loop_counts = dict(session.execute(
        select(LoopPoint.loop_id, func.count()).join(Loop, LoopPoint.loop_id == Loop.id)
        .where(Loop.material_id == mat.id).group_by(LoopPoint.loop_id)).all())
    loops = []
    for loop, src in session.execute(select(Loop, Source).join(Source, Loop.source_id == Source.id)
                                     .where(Loop.material_id == mat.id).order_by(Loop.temperature_K, Loop.label)):
        d = derived.get(("loop", loop.id), {})
        if not d and not include_replaced:
            continue
        rec, eff = d.get("recoverable_energy_density"), d.get("efficiency")
        loops.append({"label": loop.label, "n": loop_counts.get(loop.id, 0), "temperature_K": loop.temperature_K,
                      "frequency_Hz": loop.frequency_Hz, "thickness_m": loop.thickness_m,
                      "max_field_V_per_m": rec.field_V_per_m if rec else None,
                      "recovered_J_per_m3": rec.value if rec else None, "efficiency": eff.value if eff else None,
                      "source": src.key, "kind": src.kind, "file": loop.file_name, "sha256": loop.sha256,
                      "imported_at": loop.created_at.isoformat(sep=" ", timespec="seconds")})
    return {"breakdown_sets": sets, "loops": loops}
