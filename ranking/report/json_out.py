"""The report as JSON (SI units): a shortlist gives back its result; a comparison its table. Read back by
:func:`load_json`."""

from __future__ import annotations

import json
import math
from pathlib import Path

from materials.errors import InputError
from ranking.report.model import Report, as_report


def plain(obj):
    """JSON-safe copy: NaN/inf become null, numpy scalars plain numbers, tuples lists."""
    if isinstance(obj, float):
        return None if math.isnan(obj) or math.isinf(obj) else obj
    if isinstance(obj, dict):
        return {str(k): plain(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [plain(v) for v in obj]
    if hasattr(obj, "item") and callable(obj.item):
        return plain(obj.item())
    return obj


def to_json(obj) -> dict:
    """The report as a JSON-ready dict (SI units). A shortlist gives back its result, readable by
    :func:`load_json`; a comparison gives ``{kind, title, condition, columns, rows, sources, cautions}``."""
    rep = as_report(obj)
    if rep.kind == "shortlist" and rep.raw is not None:
        out = dict(rep.raw)
        out.setdefault("sources", rep.sources)
        out.setdefault("cautions", rep.cautions)
        return out
    return {
        "kind": rep.kind, "title": rep.title, "condition": rep.condition, "target": rep.target,
        "method": rep.method,
        "columns": [{"name": c.name, "label": c.label, "unit": c.unit, "display_unit": c.display_unit,
                     "formula": c.formula} for c in rep.columns],
        "rows": [{"key": r.key, "name": r.name, "family": r.family, "values": r.values, "low": r.low,
                  "high": r.high, "sources": r.sources, "flags": r.flags, "notes": r.notes} for r in rep.rows],
        "excluded": rep.excluded, "sources": rep.sources, "cautions": rep.cautions,
    }


def load_json(path) -> Report:
    """Read a shortlist result (``holdoff shortlist --json`` or a .json export) or a comparison export."""
    from materials.textfile import load_text

    path = Path(path)
    data = load_text(path, json.loads, kind="JSON")
    if not isinstance(data, dict) or not ("ranked" in data or (data.get("kind") == "comparison" and "rows" in data)):
        raise InputError("not a saved shortlist or comparison (no 'ranked' or 'rows')", file=str(path))
    try:
        return as_report(data)
    except (KeyError, TypeError) as exc:
        raise InputError(f"malformed report: {type(exc).__name__} {exc}", file=str(path)) from None

