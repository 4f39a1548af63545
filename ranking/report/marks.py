"""The evidence mark of a value: one mark per cell, the same rule in every output.

A value rests on sources of some kinds and may carry flags from the engine (held outside its data, an assumed
Weibull shape or test area, a criterion taken as the worst of the field). :func:`evidence` reduces both to one
evidence class, the weakest that applies; :data:`MARKS` gives its mark and :data:`LEGEND` its words. The terminal,
the JSON ``marks``, CSV, XLSX, Markdown, HTML and the charts all call these.
"""

from __future__ import annotations

from typing import Iterable

#: Evidence classes, weakest first: a value takes the first one that applies to it.
ORDER = ("invented", "recollection", "imputed", "extrapolated", "assumed", "lab", "published")

#: One plain character per class (none is a digit, a sign, a unit letter or an exponent).
MARKS = {"published": "=", "lab": "#", "assumed": "~", "extrapolated": ">", "imputed": "_",
         "recollection": "?", "invented": "!"}

LEGEND = {
    "published": "published: a handbook, standard, paper or cited web table",
    "lab": "lab: your own measurements",
    "assumed": "assumed: a stated range or common practice stands in for missing data",
    "extrapolated": "extrapolated: held or carried beyond the temperatures or thickness of its data",
    "imputed": "imputed: missing, so the worst value among the candidates was taken",
    "recollection": "recollection: remembered, not checked against its source",
    "invented": "invented: demo data, neither measured nor published",
}

#: Source kind → evidence class.
KIND_CLASS = {"handbook": "published", "standard": "published", "paper": "published", "web": "published",
              "lab": "lab", "common-practice": "assumed", "assumed": "assumed", "recollection": "recollection",
              "invented": "invented"}

# Engine flags that reach the values of other criteria than the one they name.
_FLAG_COLUMNS = {"extrapolated": ("extrapolated", ("energy", "volume", "mass", "ceiling", "size")),
                 "thickness-extrapolated": ("extrapolated", ("energy", "volume", "mass", "size")),
                 "assumed-shape": ("assumed", ("energy", "volume", "mass", "size")),
                 "assumed-test-area": ("assumed", ("energy", "volume", "mass", "size")),
                 "self-healing not stated": ("assumed", ("healing",))}


def flag_classes(flags: Iterable[str], column: str) -> set[str]:
    """The evidence classes the row ``flags`` put on the value of ``column``."""
    out = set()
    for f in flags:
        head = f.split(":", 1)[0].strip()
        if head.endswith(" missing"):
            name = head[:-len(" missing")]
            if name == column or (name == "density" and column == "mass"):
                out.add("imputed")
            continue
        cls, cols = _FLAG_COLUMNS.get(f, (None, ()))
        if cls and column in cols:
            out.add(cls)
    return out


def evidence(kinds: Iterable[str] = (), flags: Iterable[str] = (), column: str | None = None,
             extra: Iterable[str] = ()) -> str | None:
    """The one evidence class of a value resting on sources of ``kinds`` and carrying the row's ``flags`` (for
    ``column``) and the classes ``extra`` of the cell itself; None when nothing is known of it."""
    found = {KIND_CLASS.get(k, "assumed") for k in kinds} | set(extra)
    if column is not None:
        found |= flag_classes(flags, column)
    else:
        found |= {c for c in flags if c in MARKS}
    for c in ORDER:
        if c in found:
            return c
    return None


def mark(kinds: Iterable[str] = (), flags: Iterable[str] = (), column: str | None = None) -> str:
    """The mark of :func:`evidence` ('' when nothing is known)."""
    c = evidence(kinds, flags, column)
    return MARKS[c] if c else ""


def row_evidence(row: dict, names: Iterable[str]) -> dict[str, str | None]:
    """Per criterion of a shortlist row (its ``source_kinds`` and ``flags``), the evidence class."""
    kinds, flags = row.get("source_kinds") or {}, row.get("flags") or []
    return {n: evidence(kinds.get(n, ()), flags, n) for n in names}


def legend_lines(used: Iterable[str]) -> list[str]:
    """``"= published: …"`` lines for the classes ``used``, weakest last (in :data:`ORDER` reversed)."""
    used = set(used)
    return [f"{MARKS[c]} {LEGEND[c]}" for c in reversed(ORDER) if c in used]


def with_marks(result: dict) -> dict:
    """A shortlist result whose ranked rows also carry ``evidence`` (criterion → class) and ``marks`` (criterion →
    mark), and the legend of the marks under ``marks_legend``: the JSON face of the same rule."""
    names = [c["name"] for c in result.get("criteria") or []]
    ranked, used = [], set()
    for r in result.get("ranked") or []:
        ev = row_evidence(r, names)
        used |= {c for c in ev.values() if c}
        ranked.append({**r, "evidence": ev, "marks": {n: (MARKS[c] if c else "") for n, c in ev.items()}})
    return {**result, "ranked": ranked, "marks_legend": {MARKS[c]: LEGEND[c] for c in reversed(ORDER) if c in used}}
