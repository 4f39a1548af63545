"""Breakdown sets into the store: the raw points, and the Weibull fit as derived property values."""

from __future__ import annotations

import math
from itertools import repeat

from db.bulk import insert_rows
from db.labdata.common import DEFAULT_CONFIDENCE, ImportResult, _close, _now
from db.labdata.provenance import _prepare
from materials.errors import DataError, InputError
from materials.properties import check_plausible

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
    insert_rows(session, BreakdownPoint.__table__, ("set_id", "seq", "field_V_per_m", "censored", "thickness_m"),
                 zip(repeat(bset.id, n), range(n), data.fields_V_per_m.tolist(), data.censored.tolist(), thick,
                     strict=True))
    fit, warnings = _fit_and_store(session, bset, mat, src, data.fields_V_per_m, data.censored,
                                   confidence=confidence, file=data.path)
    return ImportResult(what="breakdown set", material=mat.key, label=bset.label, id=bset.id, n=data.n,
                        censored=data.n_censored, source=src.key, kind=src.kind, sha256=data.sha256,
                        file=file_name, new_material=created, replaced=replaced, figures=fit.as_dict(),
                        warnings=warnings)


def _derived(fit) -> dict[str, tuple[float, float, float]]:
    """(value, low, high) of the rows derived from a fit: the Weibull scale as ``breakdown_field`` with its bounds,
    and the shape as ``weibull_shape``, Ross-unbiased where there are enough failures."""
    shape = fit.shape_unbiased if math.isfinite(fit.shape_unbiased) else fit.shape
    # the bounds are about the ML shape; the unbiased value lies below it, so the range is widened to hold it
    return {"breakdown_field": (fit.scale, fit.scale_bounds[0], fit.scale_bounds[1]),
            "weibull_shape": (shape, min(fit.shape_bounds[0], shape), fit.shape_bounds[1])}


def _fit_and_store(session, bset, mat, src, fields, censored, *, confidence: float, file: str | None):
    """Fit, check plausibility, and add the derived rows of one set. Returns (fit, warnings)."""
    from db.models import PropertyValue
    from materials.breakdown import fit_weibull

    try:
        fit = fit_weibull(fields, censored, confidence=confidence)
    except InputError as exc:
        from materials.labfiles import in_file

        raise in_file(exc, file, prefix="the Weibull fit failed: ", keep_field=False) from None
    figures = _derived(fit)
    shape = figures["weibull_shape"][0]
    for prop, (v, _, _) in figures.items():
        why = check_plausible(prop, v, mat.family)
        if why:
            raise InputError(f"the fitted {prop} is implausible: {why}", file=file)
    desc = (f"set '{bset.label}' (n={fit.n}, {fit.n_censored} censored; {confidence:.0%} Fisher bounds; "
            "ML fit per IEEE Std 930)")
    common = dict(material_id=mat.id, temperature_K=bset.temperature_K, thickness_m=bset.thickness_m,
                  area_m2=bset.area_m2, source_id=src.id, breakdown_set_id=bset.id)
    shape_note = ("Ross-unbiased ML shape" if shape == fit.shape_unbiased else "ML shape (too few failures to "
                  "unbias)") + f" (ML β = {fit.shape:.4g}) of {desc}"
    notes = {"breakdown_field": f"Weibull scale (63.2 %) of {desc}", "weibull_shape": shape_note}
    session.add_all([PropertyValue(property=prop, value=v, low=lo, high=hi, note=notes[prop], **common)
                     for prop, (v, lo, hi) in figures.items()])
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
    want = _derived(fit)
    have = {pv.property: (pv.value, pv.low, pv.high) for pv in active}
    same_conditions = all(pv.temperature_K == bset.temperature_K and pv.thickness_m == bset.thickness_m
                          and pv.area_m2 == bset.area_m2 for pv in active)
    if (same_conditions and set(have) == set(want)
            and all(all(_close(a, b) for a, b in zip(have[p], want[p], strict=True)) for p in want)):
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

    bset = session.execute(select(BreakdownSet).join(Material).where(
        Material.key == material_key, BreakdownSet.label == label)).scalar_one_or_none()
    if bset is None:
        raise DataError(f"'{material_key}' has no breakdown set labelled '{label}'")
    rows = session.execute(select(BreakdownPoint.field_V_per_m, BreakdownPoint.censored, BreakdownPoint.thickness_m)
                           .where(BreakdownPoint.set_id == bset.id).order_by(BreakdownPoint.seq)).all()
    fields = np.array([r[0] for r in rows], dtype=float)
    cens = np.array([bool(r[1]) for r in rows], dtype=bool)
    thick = None if all(r[2] is None for r in rows) else np.array([r[2] for r in rows], dtype=float)
    return fields, cens, thick
