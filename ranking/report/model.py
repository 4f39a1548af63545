"""The report model: one table of materials (rows) against criteria or properties (columns), with sources.

A :class:`Report` is built either from a shortlist result (:func:`from_shortlist`, the dict of
:func:`ranking.shortlist.shortlist`) or from a list of materials compared at one condition
(:func:`from_materials`). Every number in it keeps the source keys it rests on and carries one evidence mark
(:mod:`ranking.report.marks`: published, lab, assumed, extrapolated, imputed, recollection, invented) that every
format explains in a legend under its table.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from materials.errors import InputError
from materials.numfmt import fmt_celsius, pretty_unit

from ranking.report.marks import LEGEND, MARKS, ORDER, evidence  # noqa: F401 - LEGEND: part of the model's words

FLAG_KINDS = ("recollection", "invented")
# Shortlist row flags that put an assumption under other criteria than the one they name.
ASSUMPTION_COLUMNS = {"density": ("mass",), "assumed-shape": ("energy", "volume", "mass"),
                      "assumed-test-area": ("energy", "volume", "mass")}
CAUTION = ("These figures compare dielectric materials from cited property values; they do not rate a part. "
           "Confirm any design against the applicable standards, local codes and qualified testing of real parts.")


@dataclass(frozen=True)
class Column:
    """One value column: a criterion or a property. ``unit`` is SI, ``display_unit`` what tables show."""

    name: str
    label: str
    unit: str = "1"
    display_unit: str = ""
    benefit: bool | None = None
    weight: float | None = None
    formula: str = ""

    @property
    def header(self) -> str:
        u = pretty_unit(self.display_unit)
        return f"{self.label} [{u}]" if u else self.label

    @property
    def sources_header(self) -> str:
        return f"{self.label}: sources"


@dataclass
class Row:
    """One material (or material at a layer thickness) with its values in SI and their sources."""

    key: str
    name: str
    family: str
    label: str = ""
    rank: int | None = None
    thickness_m: float | None = None
    score: float | None = None
    p_top: float | None = None
    p_top_k: float | None = None
    values: dict = field(default_factory=dict)
    low: dict = field(default_factory=dict)
    high: dict = field(default_factory=dict)
    sources: dict = field(default_factory=dict)
    flags: list = field(default_factory=list)
    binding: str = ""
    versus_winner: str = ""
    dominated_by: str | None = None
    notes: dict = field(default_factory=dict)
    kinds: dict = field(default_factory=dict)        # column -> source kinds (a shortlist row's source_kinds)
    cell_flags: dict = field(default_factory=dict)   # column -> evidence classes of that cell alone


@dataclass
class Report:
    """What every writer renders: a title, the target or condition, the columns, rows, exclusions, sources."""

    kind: str                      # "shortlist" or "comparison"
    title: str
    columns: list[Column]
    rows: list[Row]
    excluded: list[dict] = field(default_factory=list)
    sources: dict = field(default_factory=dict)     # key -> {"kind", "citation"}
    cautions: list[str] = field(default_factory=list)
    target: dict | None = None
    method: str | None = None
    condition: dict = field(default_factory=dict)   # comparison: temperature_K, frequency_Hz, extrapolate
    top_k: int | None = None
    raw: dict | None = None                         # the shortlist result, kept for the JSON export
    materials: list | None = None                   # MaterialData behind the rows, for charts (optional)

    # --- traceability ---------------------------------------------------------------------------------------
    def source_numbers(self) -> dict[str, int]:
        """Source key → footnote number, in order of first use in the table (then any others)."""
        order: list[str] = []
        for r in self.rows:
            for c in self.columns:
                for k in r.sources.get(c.name, []):
                    if k not in order:
                        order.append(k)
        for k in self.sources:
            if k not in order:
                order.append(k)
        return {k: i for i, k in enumerate(order, 1)}

    def kind_of(self, key: str) -> str:
        return (self.sources.get(key) or {}).get("kind", "unknown")

    def flags_of(self, row: Row, column: str) -> list[str]:
        """The flagged source kinds (recollection, invented) a value rests on."""
        kinds = {self.kind_of(k) for k in row.sources.get(column, [])}
        return [k for k in FLAG_KINDS if k in kinds]

    def assumed(self, row: Row, column: str) -> list[str]:
        """The row's flags that say the value of ``column`` rests on an assumption (missing data, a default)."""
        out = []
        for f in row.flags:
            head = f.split(":", 1)[0].strip()
            name = head[:-len(" missing")] if head.endswith(" missing") else head
            if name == column or column in ASSUMPTION_COLUMNS.get(name, ()):
                out.append(f)
        return out

    def evidence(self, row: Row, column: str) -> str | None:
        """The one evidence class of a value (:func:`ranking.report.marks.evidence`); None for an empty cell."""
        if row.values.get(column) is None:
            return None
        kinds = row.kinds.get(column)
        if kinds is None:
            kinds = [self.kind_of(k) for k in row.sources.get(column, [])]
        # a comparison's flags belong to single cells (cell_flags); a shortlist row's reach several criteria
        flags = row.flags if self.kind == "shortlist" else ()
        return evidence(kinds, flags, column, extra=row.cell_flags.get(column, ()))

    def mark(self, row: Row, column: str) -> str:
        """The evidence mark of one value ('' for an empty cell)."""
        c = self.evidence(row, column)
        return MARKS[c] if c else ""

    def marks_used(self) -> list[str]:
        """The evidence classes the table uses, strongest first (the order of the legend)."""
        used = {self.evidence(r, c.name) for r in self.rows for c in self.columns}
        return [k for k in reversed(ORDER) if k in used]

    def any_flagged(self) -> bool:
        return bool(self.marks_used())

    def source_text(self, row: Row, column: str) -> str:
        """``"key1; key2 (recollection)"``: the keys behind one value, flagged kinds named."""
        out = []
        for k in row.sources.get(column, []):
            kind = self.kind_of(k)
            out.append(f"{k} ({kind})" if kind in FLAG_KINDS else k)
        return "; ".join(out)

    @property
    def has_thickness(self) -> bool:
        return any(r.thickness_m is not None for r in self.rows)


# --- building reports --------------------------------------------------------------------------------------

def from_shortlist(result: dict, *, materials=None) -> Report:
    """A report of a shortlist result (see :func:`ranking.shortlist.shortlist`); ``materials`` (their records, or
    the :class:`materials.table.ValueTable` the shortlist read) adds charts."""
    if not isinstance(result, dict) or "ranked" not in result:
        raise InputError("not a shortlist result: no 'ranked' list")
    crit = result.get("criteria")
    if not crit:
        names = list((result["ranked"][0].get("criteria") or {}) if result["ranked"] else [])
        crit = [{"name": n, "label": n, "unit": "1", "display_unit": ""} for n in names]
    columns = [Column(name=c["name"], label=c.get("label") or c["name"], unit=c.get("unit") or "1",
                      display_unit=c.get("display_unit") or "", benefit=c.get("benefit"), weight=c.get("weight"),
                      formula=c.get("formula") or "") for c in crit]
    rows = []
    for i, r in enumerate(result["ranked"], 1):
        rows.append(Row(
            key=r["key"], name=r.get("name") or r["key"], family=r.get("family") or "",
            label=r.get("label") or r["key"], rank=r.get("rank", i), thickness_m=r.get("thickness_m"),
            score=r.get("score"), p_top=r.get("p_top"), p_top_k=r.get("p_top_k"),
            values=dict(r.get("criteria") or {}), low=dict(r.get("criteria_low") or {}),
            high=dict(r.get("criteria_high") or {}),
            sources={k: list(v) for k, v in (r.get("sources") or {}).items()}, flags=list(r.get("flags") or []),
            binding=r.get("binding") or "", versus_winner=r.get("versus_winner") or "",
            dominated_by=r.get("dominated_by"),
            kinds={k: list(v) for k, v in (r.get("source_kinds") or {}).items()}))
    excluded = [{"key": e["key"], "label": e.get("label") or e["key"], "name": e.get("name") or e["key"],
                 "thickness_m": e.get("thickness_m"),
                 "family": e.get("family") or "", "reasons": list(e.get("reasons") or [])}
                for e in result.get("excluded") or []]
    target = result.get("target") or {}
    title = "Dielectric shortlist" + (f": {target['name']}" if target.get("name") else "")
    cautions = [_strip_caution(c) for c in result.get("cautions") or []] or [CAUTION]
    rob = result.get("robustness") or {}
    return Report(kind="shortlist", title=title, columns=columns, rows=rows, excluded=excluded,
                  sources=dict(result.get("sources") or {}), cautions=cautions, target=target,
                  method=result.get("method"), top_k=rob.get("top_k"), raw=result, materials=materials)


# Properties compared at one condition: (property key, label, display unit).
COMPARED = (
    ("relative_permittivity", "relative permittivity εr", ""),
    ("loss_tangent", "loss tangent tan δ", ""),
    ("breakdown_field", "breakdown field", "V/um"),
    ("weibull_shape", "Weibull shape β", ""),
    ("min_temperature", "rated minimum temperature", "degC"),
    ("max_temperature", "rated maximum temperature", "degC"),
    ("density", "density", "g/cm**3"),
    ("min_thickness", "thinnest layer made", "um"),
    ("self_healing", "self-healing", ""),
)
CEILING = Column("ceiling", "energy-density ceiling ½·ε0·εr·E_bd²", "J/m3", "J/cm**3", True,
                 formula="½·ε0·εr·E_bd² at the condition (∫E dD on a DC-bias curve is not used for the ceiling)")


def from_materials(materials, *, temperature_K: float | None = None, frequency_Hz: float | None = None,
                   extrapolate: bool = False) -> Report:
    """A side-by-side report of ``materials`` at one condition (default: the reference, ~25 °C and ~1 kHz).

    Values come from :func:`materials.lookup.value_at`; a condition outside a material's data leaves the cell
    empty with the reason in the row's notes, unless ``extrapolate`` holds the end value (then flagged). The
    ceiling column is ``½·ε0·εr·E_bd²`` from :func:`ranking.ceiling.ceiling_at` (short-term, small-area).
    """
    from materials.errors import DataError
    from materials.lookup import value_at
    from materials.properties import PROPERTIES

    materials = list(materials)
    if not materials:
        raise InputError("no materials to compare")
    present = [p for p, _l, _u in COMPARED if any(m.has(p) for m in materials)]
    columns = [Column(p, label, PROPERTIES[p].si, unit) for p, label, unit in COMPARED if p in present]
    columns.append(CEILING)
    rows, sources = [], {}
    for m in materials:
        for v in m.values:
            sources.setdefault(v.source.key, {"kind": v.source.kind, "citation": v.source.citation})
        row = Row(key=m.key, name=m.name, family=m.family, label=m.key)
        for c in columns[:-1]:
            if not m.has(c.name):
                continue
            try:
                va = value_at(m, c.name, temperature_K=temperature_K, frequency_Hz=frequency_Hz,
                              extrapolate=extrapolate)
            except DataError as exc:
                row.notes[c.name] = str(exc)
                continue
            row.values[c.name], row.low[c.name], row.high[c.name] = va.value, va.low, va.high
            row.sources[c.name] = va.sources
            if va.extrapolated:
                row.cell_flags[c.name] = ["extrapolated"]
                if "extrapolated" not in row.flags:
                    row.flags.append("extrapolated")
        _add_ceiling(row, m, temperature_K, extrapolate)
        rows.append(row)
    used = {k for r in rows for lst in r.sources.values() for k in lst}
    where = "about 25 °C" if temperature_K is None else fmt_celsius(temperature_K, 6)
    return Report(kind="comparison", title=f"Dielectric comparison at {where}", columns=columns, rows=rows,
                  sources={k: sources[k] for k in sorted(used)}, cautions=[CAUTION],
                  condition={"temperature_K": temperature_K, "frequency_Hz": frequency_Hz,
                             "extrapolate": extrapolate}, materials=materials)


def _add_ceiling(row: Row, m, temperature_K, extrapolate) -> None:
    from materials.errors import DataError
    from materials.lookup import REFERENCE_TEMPERATURE_K
    from ranking.ceiling import ceiling_at

    try:
        c = ceiling_at(m, temperature_K=temperature_K if temperature_K is not None else REFERENCE_TEMPERATURE_K,
                       extrapolate=extrapolate or temperature_K is None)
    except DataError as exc:
        row.notes["ceiling"] = str(exc)
        return
    row.values["ceiling"] = c.ceiling_J_per_m3
    row.sources["ceiling"] = list(c.sources)
    if c.extrapolated and temperature_K is not None:
        row.cell_flags["ceiling"] = ["extrapolated"]
    if c.method != "linear":
        row.notes["ceiling"] = f"{m.response} response: the linear ceiling overstates its energy"
    if c.extrapolated and temperature_K is not None and "extrapolated" not in row.flags:
        row.flags.append("extrapolated")


def _strip_caution(text: str) -> str:
    """Writers print their own 'Caution' heading; drop one the text already carries."""
    t = str(text).strip()
    if t.lower().startswith("caution:"):
        t = t.split(":", 1)[1].strip()
        t = t[:1].upper() + t[1:]
    return t


def as_report(obj, **kw) -> Report:
    """A Report from a Report, a shortlist result dict, a saved report JSON dict, or a list of materials."""
    if isinstance(obj, Report):
        return obj
    if isinstance(obj, dict):
        if obj.get("kind") == "comparison" and "rows" in obj:
            return _comparison_from_json(obj)
        return from_shortlist(obj, **kw)
    return from_materials(obj, **kw)


def _comparison_from_json(d: dict) -> Report:
    columns = [Column(c["name"], c.get("label") or c["name"], c.get("unit") or "1", c.get("display_unit") or "",
                      formula=c.get("formula") or "") for c in d.get("columns") or []]
    rows = [Row(key=r["key"], name=r.get("name") or r["key"], family=r.get("family") or "", label=r["key"],
                values=dict(r.get("values") or {}), low=dict(r.get("low") or {}), high=dict(r.get("high") or {}),
                sources={k: list(v) for k, v in (r.get("sources") or {}).items()},
                flags=list(r.get("flags") or []), notes=dict(r.get("notes") or {}),
                cell_flags={k: list(v) for k, v in (r.get("cell_flags") or {}).items()}) for r in d["rows"]]
    return Report(kind="comparison", title=d.get("title") or "Dielectric comparison", columns=columns, rows=rows,
                  excluded=list(d.get("excluded") or []), sources=dict(d.get("sources") or {}),
                  cautions=list(d.get("cautions") or [CAUTION]), condition=dict(d.get("condition") or {}))
