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


# Lists written one element at a time: the rows of a large shortlist or comparison.
STREAMED = ("ranked", "excluded", "rows")


def stream_json(data: dict, fh) -> None:
    """``data`` as JSON into the open file ``fh``, the long lists (:data:`STREAMED`) one element per line, so that a
    result of 100,000 rows is never held as one string; NaN and infinities become null."""
    fh.write("{")
    for i, (k, v) in enumerate(data.items()):
        fh.write(("," if i else "") + "\n  " + json.dumps(str(k)) + ": ")
        if k in STREAMED and isinstance(v, list):
            fh.write("[")
            for j, item in enumerate(v):
                fh.write(("," if j else "") + "\n    " + json.dumps(plain(item), ensure_ascii=False, allow_nan=False))
            fh.write("\n  ]" if v else "]")
        else:
            fh.write(json.dumps(plain(v), ensure_ascii=False, allow_nan=False))
    fh.write("\n}\n")


def to_json(obj) -> dict:
    """The report as a JSON-ready dict (SI units). A shortlist gives back its result, readable by
    :func:`load_json`; a comparison gives ``{kind, title, condition, columns, rows, sources, cautions}``."""
    rep = as_report(obj)
    if rep.kind == "shortlist" and rep.raw is not None:
        from ranking.report.marks import with_marks

        out = with_marks(rep.raw)
        out.setdefault("sources", rep.sources)
        out.setdefault("cautions", rep.cautions)
        return out
    return {
        "kind": rep.kind, "title": rep.title, "condition": rep.condition, "target": rep.target,
        "method": rep.method,
        "columns": [{"name": c.name, "label": c.label, "unit": c.unit, "display_unit": c.display_unit,
                     "formula": c.formula} for c in rep.columns],
        "rows": [{"key": r.key, "name": r.name, "family": r.family, "values": r.values, "low": r.low,
                  "high": r.high, "sources": r.sources, "flags": r.flags, "notes": r.notes,
                  "cell_flags": r.cell_flags, "evidence": {c.name: rep.evidence(r, c.name) for c in rep.columns}}
                 for r in rep.rows],
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

