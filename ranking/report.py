"""Comparison reports: one table model, written as CSV, XLSX, Markdown, HTML or JSON.

A :class:`Report` is built either from a shortlist result (:func:`from_shortlist`, the dict of
:func:`ranking.shortlist.shortlist`) or from a list of materials compared at one condition
(:func:`from_materials`). Every number in it keeps the source keys it rests on; a value resting on a
``recollection`` or ``invented`` source is flagged with a mark (``†`` recollection, ``‡`` invented) that every
format explains. :func:`write` picks the format from the file's extension and refuses to overwrite.
"""

from __future__ import annotations

import html
import json
import math
from dataclasses import dataclass, field
from pathlib import Path

from materials.errors import InputError
from materials.numfmt import fmt_number, pretty_unit
from materials.numfmt import to_display as convert

FORMATS = ("csv", "xlsx", "md", "html", "json")
FLAG_KINDS = ("recollection", "invented")
MARKS = {"recollection": "†", "invented": "‡", "assumed": "*"}
LEGEND = {"recollection": "rests on a value remembered but not checked against its source (recollection)",
          "invented": "rests on invented demo data, not a measurement or a publication",
          "assumed": "not in the data: an assumed value (the worst among the candidates, or a common-practice "
                     "default), see the notes"}
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

    def mark(self, row: Row, column: str) -> str:
        """``†`` recollection, ``‡`` invented, ``*`` assumed: what a reader must know about one value."""
        marks = "".join(MARKS[k] for k in self.flags_of(row, column))
        return marks + (MARKS["assumed"] if self.assumed(row, column) else "")

    def marks_used(self) -> list[str]:
        used = {ch for r in self.rows for c in self.columns for ch in self.mark(r, c.name)}
        return [k for k, m in MARKS.items() if m in used]

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
    """A report of a shortlist result (see :func:`ranking.shortlist.shortlist`); ``materials`` adds charts."""
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
            dominated_by=r.get("dominated_by")))
    excluded = [{"key": e["key"], "label": e.get("label") or e["key"], "name": e.get("name") or e["key"],
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
            if va.extrapolated and "extrapolated" not in row.flags:
                row.flags.append("extrapolated")
        _add_ceiling(row, m, temperature_K, extrapolate)
        rows.append(row)
    used = {k for r in rows for lst in r.sources.values() for k in lst}
    where = "about 25 °C" if temperature_K is None else f"{temperature_K - 273.15:g} °C"
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


# --- tables ------------------------------------------------------------------------------------------------

def comparison_frame(obj):
    """The comparison table as a pandas DataFrame: display units in the headers, a sources column per value.

    ``obj`` is a :class:`Report`, a shortlist result dict or a list of materials. Numbers are in the display
    unit named in each header; the ``…: sources`` column beside each value lists the source keys it rests on,
    with a flagged kind (recollection, invented) named in brackets.
    """
    import pandas as pd

    rep = as_report(obj)
    records = []
    layers = rep.has_thickness  # (once: each is a pass over every row)
    any_top_k = any(x.p_top_k is not None for x in rep.rows)
    for r in rep.rows:
        d = {}
        if rep.kind == "shortlist":
            d["rank"] = r.rank
        d["key"], d["name"], d["family"] = r.key, r.name, r.family
        if layers:
            d["layer thickness [µm]"] = None if r.thickness_m is None else r.thickness_m * 1e6
        if rep.kind == "shortlist":
            d["score"] = r.score
            d["P(first)"] = r.p_top
            if any_top_k:
                d[f"P(top {rep.top_k})" if rep.top_k else "P(top k)"] = r.p_top_k
        for c in rep.columns:
            d[c.header] = convert(r.values.get(c.name), c.unit, c.display_unit)
            d[c.sources_header] = rep.source_text(r, c.name) or None
        if rep.kind == "shortlist":
            d["binding"] = r.binding or None
            d["versus winner"] = r.versus_winner or None
            d["dominated by"] = r.dominated_by
        d["flags"] = _row_flags(rep, r) or None
        if rep.kind == "comparison":
            d["notes"] = "; ".join(f"{k}: {v}" for k, v in r.notes.items()) or None
        records.append(d)
    df = pd.DataFrame.from_records(records)
    if df.empty:
        df = pd.DataFrame(columns=["key", "name", "family"])
    for c in rep.columns:
        if c.header in df:
            df[c.header] = pd.to_numeric(df[c.header], errors="coerce").astype(float)
    return df


def _row_flags(rep: Report, r: Row) -> str:
    kinds = sorted({k for c in rep.columns for k in rep.flags_of(r, c.name)}, key=FLAG_KINDS.index)
    flags = [f for f in r.flags if f not in kinds]
    return "; ".join(kinds + flags)


def excluded_frame(obj):
    """Excluded materials with their reasons (one row each, reasons joined by '; ')."""
    import pandas as pd

    rep = as_report(obj)
    return pd.DataFrame([{"key": e["label"], "name": e["name"], "family": e["family"],
                          "reasons": "; ".join(e["reasons"])} for e in rep.excluded],
                        columns=["key", "name", "family", "reasons"])


def sources_frame(obj):
    """The sources behind the table: footnote number, key, kind, full citation, and a flag mark."""
    import pandas as pd

    rep = as_report(obj)
    nums = rep.source_numbers()
    rows = []
    for k, n in sorted(nums.items(), key=lambda kv: kv[1]):
        s = rep.sources.get(k) or {}
        kind = s.get("kind", "unknown")
        rows.append({"no.": n, "key": k, "kind": kind, "citation": s.get("citation", ""),
                     "flag": MARKS.get(kind, "")})
    return pd.DataFrame(rows, columns=["no.", "key", "kind", "citation", "flag"])


def target_rows(rep: Report) -> list[tuple[str, str]]:
    """(parameter, value with unit) pairs describing the target or the comparison condition."""
    out = []
    if rep.kind == "comparison":
        t = rep.condition.get("temperature_K")
        f = rep.condition.get("frequency_Hz")
        out.append(("temperature", "reference, about 25 °C" if t is None else f"{t - 273.15:g} °C"))
        out.append(("frequency", "nearest to 1 kHz" if f is None else f"{f:g} Hz"))
        out.append(("outside the data", "end value held, flagged" if rep.condition.get("extrapolate")
                    else "left empty"))
        return out
    t = rep.target or {}

    def add(label, key, fmt):
        if t.get(key) not in (None, "", [], {}):
            out.append((label, fmt(t[key])))

    add("name", "name", str)
    add("voltage", "voltage_V", lambda v: f"{v:g} V")
    if t.get("tmin_K") is not None and t.get("tmax_K") is not None:
        out.append(("temperature range", f"{t['tmin_K'] - 273.15:g} … {t['tmax_K'] - 273.15:g} °C"))
    add("energy", "energy_J", lambda v: f"{v:g} J")
    add("design energy density", "energy_density_J_per_m3", lambda v: f"≥ {v / 1e6:g} J/cm³")
    add("accepted failure probability", "failure_probability", lambda v: f"{v:g}")
    add("margin on the design field", "margin", lambda v: f"{v:g}")
    add("active area", "area_m2", lambda v: f"{v:g} m²")
    add("maximum loss tangent", "max_loss_tangent", lambda v: f"{v:g}")
    add("frequency", "frequency_Hz", lambda v: f"{v:g} Hz")
    add("families", "families", lambda v: ", ".join(v))
    add("layer thicknesses", "thicknesses_m", lambda v: ", ".join(f"{x * 1e6:g}" for x in v) + " µm")
    if t.get("assume_defaults"):
        out.append(("common-practice defaults", "allowed (β = 10, 1 cm² test area where missing; flagged)"))
    if rep.method:
        out.append(("ranking method", rep.method))
    w = t.get("weights") or {c.name: c.weight for c in rep.columns if c.weight is not None}
    if w:
        out.append(("weights", ", ".join(f"{k} {v:g}" for k, v in w.items())))
    return out


# --- writers -----------------------------------------------------------------------------------------------

def write(obj, path, *, force: bool = False, charts: bool = True) -> Path:
    """Write a report to ``path``; the extension (.csv, .xlsx, .md, .html, .json) picks the format.

    Refuses (InputError) to overwrite an existing file unless ``force``.
    """
    path = Path(path)
    ext = path.suffix.lower().lstrip(".")
    if ext == "htm":
        ext = "html"
    if ext == "markdown":
        ext = "md"
    if ext not in FORMATS:
        raise InputError(f"cannot tell the format from '{path.suffix or path.name}': use one of "
                         + ", ".join("." + f for f in FORMATS), file=str(path))
    if path.exists() and not force:
        raise InputError("file exists (use --force to overwrite)", file=str(path))
    if not path.parent.exists():
        raise InputError(f"folder {path.parent} does not exist", file=str(path))
    rep = as_report(obj)
    if ext == "csv":
        comparison_frame(rep).to_csv(path, index=False, encoding="utf-8")
    elif ext == "xlsx":
        write_xlsx(rep, path)
    elif ext == "md":
        path.write_text(to_markdown(rep), encoding="utf-8")
    elif ext == "html":
        path.write_text(to_html(rep, charts=charts), encoding="utf-8")
    else:
        path.write_text(json.dumps(_plain(to_json(rep)), indent=2, ensure_ascii=False, allow_nan=False) + "\n",
                        encoding="utf-8")
    return path


def export_result(result: dict, path, *, force: bool = False, materials=None, charts: bool = True) -> Path:
    """Write a shortlist result to ``path`` (format by extension); ``materials`` adds the map and ceiling charts."""
    return write(from_shortlist(result, materials=materials), path, force=force, charts=charts)


def _plain(obj):
    """JSON-safe copy: NaN/inf become null, numpy scalars plain numbers, tuples lists."""
    if isinstance(obj, float):
        return None if math.isnan(obj) or math.isinf(obj) else obj
    if isinstance(obj, dict):
        return {str(k): _plain(v) for k, v in obj.items()}
    if isinstance(obj, (list, tuple)):
        return [_plain(v) for v in obj]
    if hasattr(obj, "item") and callable(obj.item):
        return _plain(obj.item())
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


def _comparison_from_json(d: dict) -> Report:
    columns = [Column(c["name"], c.get("label") or c["name"], c.get("unit") or "1", c.get("display_unit") or "",
                      formula=c.get("formula") or "") for c in d.get("columns") or []]
    rows = [Row(key=r["key"], name=r.get("name") or r["key"], family=r.get("family") or "", label=r["key"],
                values=dict(r.get("values") or {}), low=dict(r.get("low") or {}), high=dict(r.get("high") or {}),
                sources={k: list(v) for k, v in (r.get("sources") or {}).items()},
                flags=list(r.get("flags") or []), notes=dict(r.get("notes") or {})) for r in d["rows"]]
    return Report(kind="comparison", title=d.get("title") or "Dielectric comparison", columns=columns, rows=rows,
                  excluded=list(d.get("excluded") or []), sources=dict(d.get("sources") or {}),
                  cautions=list(d.get("cautions") or [CAUTION]), condition=dict(d.get("condition") or {}))


def load_json(path) -> Report:
    """Read a shortlist result (``holdoff shortlist --json`` or a .json export) or a comparison export."""
    path = Path(path)
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError("no such file", file=str(path)) from None
    except (json.JSONDecodeError, UnicodeDecodeError) as exc:
        raise InputError(f"not a JSON file: {exc}", file=str(path)) from None
    if not isinstance(data, dict) or not ("ranked" in data or (data.get("kind") == "comparison" and "rows" in data)):
        raise InputError("not a saved shortlist or comparison (no 'ranked' or 'rows')", file=str(path))
    try:
        return as_report(data)
    except (KeyError, TypeError) as exc:
        raise InputError(f"malformed report: {type(exc).__name__} {exc}", file=str(path)) from None


# --- XLSX --------------------------------------------------------------------------------------------------

def _number_format(values) -> str:
    vals = [abs(v) for v in values if v is not None and not (isinstance(v, float) and math.isnan(v))]
    if not vals:
        return "General"
    big, small = max(vals), min((v for v in vals if v > 0), default=0.0)
    if big >= 1e5 or (0 < small < 1e-3):
        return "0.00E+00"
    if big >= 100:
        return "0.0"
    if big >= 1 or small >= 0.1:
        return "0.000"
    return "0.0000"


def write_xlsx(obj, path) -> None:
    """XLSX with sheets comparison (units in headers, frozen header row, number formats, flagged cells shaded
    with a comment), excluded, sources, target (or condition) and notes."""
    import pandas as pd
    from openpyxl.comments import Comment
    from openpyxl.styles import Alignment, Font, PatternFill
    from openpyxl.utils import get_column_letter

    rep = as_report(obj)
    df = comparison_frame(rep)
    flagged_fill = PatternFill("solid", fgColor="E6E6E6")
    with pd.ExcelWriter(path, engine="openpyxl") as xw:
        df.to_excel(xw, sheet_name="comparison", index=False)
        excluded_frame(rep).to_excel(xw, sheet_name="excluded", index=False)
        sources_frame(rep).to_excel(xw, sheet_name="sources", index=False)
        tsheet = "target" if rep.kind == "shortlist" else "condition"
        pd.DataFrame(target_rows(rep), columns=["parameter", "value"]).to_excel(xw, sheet_name=tsheet, index=False)
        pd.DataFrame({"note": _notes(rep)}).to_excel(xw, sheet_name="notes", index=False)
        ws = xw.sheets["comparison"]
        headers = list(df.columns)
        key_col = headers.index("key") + 1
        ws.freeze_panes = ws.cell(row=2, column=key_col + 1).coordinate
        for j, h in enumerate(headers, 1):
            cell = ws.cell(row=1, column=j)
            cell.font = Font(bold=True)
            cell.alignment = Alignment(wrap_text=True, vertical="top")
            letter = get_column_letter(j)
            numeric = pd.api.types.is_numeric_dtype(df[h]) and h not in ("rank",)
            width = max(10, min(40, len(str(h)) // 2 + 4)) if numeric else 24 if "sources" in h else 16
            ws.column_dimensions[letter].width = width
            if h == "rank":
                fmt = "0"
            elif h.startswith("P("):
                fmt = "0%"
            elif h == "score":
                fmt = "0.000"
            elif numeric:
                fmt = _number_format(df[h].tolist())
            else:
                continue
            for i in range(2, len(df) + 2):
                ws.cell(row=i, column=j).number_format = fmt
        ws.row_dimensions[1].height = 45
        col_of = {c.name: headers.index(c.header) + 1 for c in rep.columns if c.header in headers}
        for i, r in enumerate(rep.rows, 2):
            for c in rep.columns:
                kinds = rep.flags_of(r, c.name)
                assumed = rep.assumed(r, c.name)
                if (kinds or assumed) and c.name in col_of:
                    cell = ws.cell(row=i, column=col_of[c.name])
                    text = []
                    if kinds:
                        cell.fill = flagged_fill
                        keys = [k for k in r.sources.get(c.name, []) if rep.kind_of(k) in FLAG_KINDS]
                        text.append(f"rests on {', '.join(kinds)} source(s): {', '.join(keys)}")
                    text += assumed
                    cell.comment = Comment(f"{rep.mark(r, c.name)} " + "; ".join(text), "holdoff")
        for name, widths in (("excluded", (24, 30, 18, 90)), ("sources", (6, 28, 16, 100, 6)),
                             (tsheet, (30, 60)), ("notes", (140,))):
            sh = xw.sheets[name]
            sh.freeze_panes = "A2"
            for j, w in enumerate(widths, 1):
                sh.column_dimensions[get_column_letter(j)].width = w
                sh.cell(row=1, column=j).font = Font(bold=True)


def _notes(rep: Report) -> list[str]:
    out = [f"CAUTION: {c}" for c in rep.cautions]
    out += [f"{MARKS[k]} {LEGEND[k]}" + ("; shaded cells in the comparison sheet" if k in FLAG_KINDS else "")
            for k in MARKS]
    out.append("Each value's sources column lists the source keys it rests on; the sources sheet gives the "
               "full citation and the evidence kind of each key.")
    for c in rep.columns:
        if c.formula:
            out.append(f"{c.header}: {c.formula}")
    return out


# --- shared text helpers -----------------------------------------------------------------------------------

def _cell_value(rep: Report, r: Row, c: Column) -> str:
    v = convert(r.values.get(c.name), c.unit, c.display_unit)
    if c.name == "self_healing" and v is not None:
        return "yes" if v >= 0.5 else "no"
    return fmt_number(v)


def _generated() -> str:
    import datetime

    try:
        from importlib.metadata import version

        ver = version("holdoff")
    except Exception:  # an uninstalled checkout has no metadata
        ver = "dev"
    return f"{datetime.date.today().isoformat()}, holdoff {ver}"


# --- Markdown ----------------------------------------------------------------------------------------------

def _md(text) -> str:
    """Text safe inside a Markdown table cell: pipes and asterisks escaped, one line."""
    return str(text).replace("|", "\\|").replace("*", "\\*").replace("\n", " ")


def to_markdown(obj) -> str:
    """The report as GitHub-flavoured Markdown: tables with footnote references to a numbered source list."""
    rep = as_report(obj)
    nums = rep.source_numbers()
    out = [f"# {_md(rep.title)}", "", f"Generated {_generated()}. SI inside; units as in the headers.", ""]
    out += [f"> **Caution:** {_md(c)}" for c in rep.cautions] + [""]
    out += ["## " + ("Target" if rep.kind == "shortlist" else "Condition"), "", "| parameter | value |",
            "|---|---|"]
    out += [f"| {_md(a)} | {_md(b)} |" for a, b in target_rows(rep)] + [""]
    out += ["## " + ("Ranking" if rep.kind == "shortlist" else "Comparison"), ""]
    head = (["#"] if rep.kind == "shortlist" else []) + ["material", "family"]
    if rep.has_thickness:
        head.append("layer [µm]")
    if rep.kind == "shortlist":
        head += ["score", "P(first)"]
    head += [c.header for c in rep.columns]
    out += ["| " + " | ".join(_md(h) for h in head) + " |",
            "|" + "|".join("---:" if i >= 2 else "---" for i in range(len(head))) + "|"]
    layers = rep.has_thickness
    for r in rep.rows:
        cells = ([str(r.rank)] if rep.kind == "shortlist" else []) + [f"{_md(r.name)} (`{r.key}`)", _md(r.family)]
        if layers:
            cells.append(fmt_number(None if r.thickness_m is None else r.thickness_m * 1e6))
        if rep.kind == "shortlist":
            cells += [fmt_number(r.score, 3), "—" if r.p_top is None else f"{r.p_top:.0%}"]
        for c in rep.columns:
            refs = "".join(f"[^{nums[k]}]" for k in r.sources.get(c.name, []) if k in nums)
            cells.append(_cell_value(rep, r, c) + _md(rep.mark(r, c.name)) + (" " + refs if refs else ""))
        out.append("| " + " | ".join(cells) + " |")
    out.append("")
    if rep.any_flagged():
        out += [f"{_md(MARKS[k])} {LEGEND[k]}.  " for k in rep.marks_used()] + [""]
    notes = []
    for r in rep.rows:
        bits = []
        if r.binding:
            bits.append(f"binds: {r.binding}")
        if r.versus_winner:
            bits.append(r.versus_winner)
        if r.dominated_by:
            bits.append(f"dominated by {r.dominated_by}")
        fl = _row_flags(rep, r)
        if fl:
            bits.append(f"flags: {fl}")
        bits += [f"{k}: {v}" for k, v in r.notes.items()]
        if bits:
            notes.append(f"- **{_md(r.label or r.key)}**: " + "; ".join(_md(b) for b in bits))
    if notes:
        out += ["### Notes per material", ""] + notes + [""]
    if rep.kind == "shortlist":
        out += ["## Excluded", ""]
        if rep.excluded:
            out += ["| material | reasons |", "|---|---|"]
            out += [f"| {_md(e['name'])} (`{e['label']}`) | {_md('; '.join(e['reasons']))} |" for e in rep.excluded]
        else:
            out.append("None.")
        out.append("")
    formulas = [f"- **{_md(c.header)}**: {_md(c.formula)}" for c in rep.columns if c.formula]
    if formulas:
        out += ["## How the columns are computed", ""] + formulas + [""]
    out += ["## Sources", ""]
    for k, n in sorted(nums.items(), key=lambda kv: kv[1]):
        s = rep.sources.get(k) or {}
        kind = s.get("kind", "unknown")
        out.append(f"[^{n}]: `{k}` ({kind}{', ' + MARKS[kind] if kind in MARKS else ''}): "
                   f"{_md(s.get('citation', ''))}")
    out.append("")
    return "\n".join(out)


# --- charts for a report -----------------------------------------------------------------------------------

def report_charts(obj, *, top: int = 6) -> list[tuple[str, str, object]]:
    """(title, caption, figure) of the charts a report can show: the ranking's scores (shortlist), and with
    materials attached the property map and design energy against temperature."""
    import numpy as np

    from ranking import charts

    rep = as_report(obj)
    out = []
    if rep.kind == "shortlist" and rep.rows and rep.raw is not None:
        out.append(("Scores", f"Score of each ranked candidate ({rep.method}); P(first) is the share of Monte "
                    "Carlo draws, with weights and values varied within their ranges, in which it ranks first.",
                    charts.score_chart(rep.raw)))
    mats = rep.materials or []
    if not mats:
        return out
    shown = {r.key for r in rep.rows[:top]} if rep.kind == "shortlist" else set()
    fig = charts.map_chart(mats, highlight=shown, highlight_label=f"top {len(shown)} of the shortlist")
    out.append(("Permittivity and breakdown field",
                "Small-signal εr against breakdown field at about 25 °C, bars spanning each value's range; grey "
                "lines hold ½·ε0·εr·E² constant (J/cm³)." + (" Filled markers: the top of the shortlist." if shown
                                                              else ""), fig))
    by_key = {m.key: m for m in mats}
    area = None
    if rep.kind == "shortlist" and rep.target and rep.target.get("tmin_K") is not None:
        t0, t1 = rep.target["tmin_K"], rep.target["tmax_K"]
        keys: dict[str, None] = {}
        for r in rep.rows:
            if r.key in by_key:
                keys.setdefault(r.key)
                if len(keys) == top:
                    break
        chosen = [by_key[k] for k in keys]
        pad = max(10.0, 0.1 * (t1 - t0))
        temps = np.linspace(t0 - pad, t1 + pad, 15)
        cap = ("Design energy density (breakdown field scaled to the part's area and failure probability, divided "
               "by the margin) of the top candidates; the band is the operating range, the dashed line the target.")
        target = rep.target
        if target.get("area_m2") is None:
            area = {r.key: (rep.raw or {}).get("ranked", [{}])[i].get("design", {}).get("area_m2")
                    for i, r in enumerate(rep.rows) if rep.raw}
            area = {k: v for k, v in area.items() if v}
    else:
        chosen = list(mats)
        ranges = [charts.rated_range(m) for m in mats]
        lo = [r[0] for r in ranges if r[0] is not None]
        hi = [r[1] for r in ranges if r[1] is not None]
        t0 = max(min(lo), 213.15) if lo else 233.15
        t1 = min(max(hi), 473.15) if hi else 398.15
        temps = np.linspace(t0, t1, 15)
        cap = "Ceiling ½·ε0·εr·E_bd² against temperature over the materials' rated range (no area scaling)."
        target = None
    if chosen:
        fig = charts.ceiling_chart(chosen, temps, target=target, area_m2=area)
        if fig.curves:
            out.append(("Design energy density against temperature", cap, fig))
    return out


# --- HTML --------------------------------------------------------------------------------------------------

CSS = """
@page { size: A4; margin: 14mm 12mm 16mm 12mm; }
:root { color-scheme: light; }
body { font-family: "DejaVu Sans", "Liberation Sans", Arial, Helvetica, sans-serif; font-size: 10pt; color: #111;
       background: #fff; max-width: 1100px; margin: 1.5em auto; padding: 0 1em; line-height: 1.35; }
h1 { font-size: 17pt; margin: 0 0 0.2em 0; }
h2 { font-size: 12.5pt; margin: 1.4em 0 0.4em 0; border-bottom: 1px solid #999; padding-bottom: 2px; }
h3 { font-size: 10.5pt; margin: 1em 0 0.3em 0; }
p.meta { color: #555; margin: 0 0 1em 0; font-size: 9pt; }
.caution { border: 1.5px solid #222; padding: 0.5em 0.8em; margin: 0.8em 0; background: #f4f4f4; }
.caution strong { letter-spacing: 0.04em; }
table { border-collapse: collapse; margin: 0.4em 0 0.8em 0; font-size: 9pt; }
th, td { border: 1px solid #bbb; padding: 3px 6px; vertical-align: top; text-align: left; }
th { background: #e8e8e8; font-weight: bold; }
td.num { text-align: right; white-space: nowrap; font-variant-numeric: tabular-nums; }
td.flagged { background: #ececec; font-style: italic; }
table.ranking th .unit { display: block; font-weight: normal; color: #444; }
table.kv th { width: 14em; }
sup.ref { font-size: 7pt; }
sup.ref a { color: #333; text-decoration: none; }
.mark { font-weight: bold; }
.rng { color: #555; font-size: 7.5pt; display: block; }
figure { margin: 1em 0; page-break-inside: avoid; break-inside: avoid; }
figure svg { max-width: 100%; height: auto; display: block; }
figcaption { font-size: 8.5pt; color: #333; margin-top: 0.2em; }
ol.sources li { margin-bottom: 0.25em; }
ol.sources .kind { font-variant: small-caps; color: #333; }
li.flagged { background: #ececec; }
code { font-family: "DejaVu Sans Mono", monospace; font-size: 8.5pt; }
.legend { font-size: 8.5pt; }
@media print {
  body { max-width: none; margin: 0; padding: 0; font-size: 8.5pt; }
  table { font-size: 7.5pt; }
  th, td { padding: 2px 3px; }
  h2 { break-after: avoid; page-break-after: avoid; }
  tr, figure, .caution { break-inside: avoid; page-break-inside: avoid; }
  thead { display: table-header-group; }
  a { color: inherit; text-decoration: none; }
  section.charts { break-before: page; page-break-before: always; }
  figure svg { max-height: 120mm; width: auto; }
}
"""


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _svg_inline(fig, prefix: str) -> str:
    """The figure's SVG with its element ids prefixed, so that several charts can share one page."""
    import re

    from ranking.charts import svg_text

    svg = svg_text(fig)
    svg = re.sub(r'\bid="([^"]+)"', lambda m: f'id="{prefix}{m.group(1)}"', svg)
    svg = re.sub(r'(xlink:href|href)="#([^"]+)"', lambda m: f'{m.group(1)}="#{prefix}{m.group(2)}"', svg)
    svg = re.sub(r"url\(#([^)]+)\)", lambda m: f"url(#{prefix}{m.group(1)})", svg)
    return svg


def _refs(rep: Report, nums: dict, keys) -> str:
    links = [f'<a href="#src-{nums[k]}" title="{_e(k)} ({_e(rep.kind_of(k))})">{nums[k]}</a>'
             for k in keys if k in nums]
    return f'<sup class="ref">{",".join(links)}</sup>' if links else ""


def to_html(obj, *, charts: bool = True) -> str:
    """The report as one self-contained HTML page (inline CSS and SVG, no scripts, no external requests) that
    prints on A4: target, ranking with footnoted sources, excluded list, charts, cautions, sources."""
    rep = as_report(obj)
    nums = rep.source_numbers()
    shortlist = rep.kind == "shortlist"
    h = ["<!DOCTYPE html>", '<html lang="en">', "<head>", '<meta charset="utf-8">',
         '<meta name="viewport" content="width=device-width, initial-scale=1">',
         f"<title>{_e(rep.title)}</title>", f"<style>{CSS}</style>", "</head>", "<body>",
         f"<h1>{_e(rep.title)}</h1>", f'<p class="meta">Generated {_e(_generated())}. Each number links to the '
         "sources it rests on (superscript numbers).</p>"]
    for c in rep.cautions:
        h.append(f'<div class="caution"><strong>CAUTION</strong> {_e(c)}</div>')
    h.append(f"<h2>{'Target' if shortlist else 'Condition'}</h2>")
    h.append('<table class="kv"><tbody>')
    h += [f"<tr><th>{_e(a)}</th><td>{_e(b)}</td></tr>" for a, b in target_rows(rep)]
    h.append("</tbody></table>")

    h.append(f"<h2>{'Ranking' if shortlist else 'Comparison'}</h2>")
    h.append('<table class="ranking"><thead><tr>')
    heads = (["#"] if shortlist else []) + ["material", "family"]
    heads += ["layer"] if rep.has_thickness else []
    heads += ["score", "P(first)"] if shortlist else []
    h += [f"<th>{_e(x)}{'<span class=unit>µm</span>' if x == 'layer' else ''}</th>" for x in heads]
    for c in rep.columns:
        u = pretty_unit(c.display_unit)
        h.append(f'<th title="{_e(c.formula)}">{_e(c.label)}' + (f'<span class="unit">{_e(u)}</span>' if u else "")
                 + "</th>")
    h.append("</tr></thead><tbody>")
    layers = rep.has_thickness
    for r in rep.rows:
        h.append(f'<tr id="row-{_e(r.label or r.key)}">')
        if shortlist:
            h.append(f'<td class="num">{r.rank}</td>')
        h.append(f"<td>{_e(r.name)}<br><code>{_e(r.key)}</code></td><td>{_e(r.family)}</td>")
        if layers:
            h.append(f'<td class="num">{fmt_number(None if r.thickness_m is None else r.thickness_m * 1e6)}</td>')
        if shortlist:
            h.append(f'<td class="num">{fmt_number(r.score, 3)}</td>')
            h.append(f'<td class="num">{"—" if r.p_top is None else f"{r.p_top:.0%}"}</td>')
        for c in rep.columns:
            mark = rep.mark(r, c.name)
            cls = "num flagged" if rep.flags_of(r, c.name) else "num"
            why = [LEGEND[k] for k in rep.flags_of(r, c.name)] + rep.assumed(r, c.name)
            title = f' title="{_e("; ".join(why))}"' if why else ""
            rng = ""
            if not shortlist and c.name in r.low and r.low.get(c.name) != r.high.get(c.name):
                lo = convert(r.low[c.name], c.unit, c.display_unit)
                hi = convert(r.high[c.name], c.unit, c.display_unit)
                rng = f'<span class="rng">{fmt_number(lo, 3)}…{fmt_number(hi, 3)}</span>'
            note = r.notes.get(c.name)
            if note and c.name not in r.values:
                title = f' title="{_e(note)}"'
            h.append(f'<td class="{cls}"{title}>{_e(_cell_value(rep, r, c))}'
                     + (f'<span class="mark">{mark}</span>' if mark else "")
                     + _refs(rep, nums, r.sources.get(c.name, [])) + rng + "</td>")
        h.append("</tr>")
    h.append("</tbody></table>")
    if rep.any_flagged():
        h.append('<p class="legend">' + "<br>".join(
            f'<span class="mark">{MARKS[k]}</span> {_e(LEGEND[k])}' + ("; shaded." if k in FLAG_KINDS else ".")
            for k in rep.marks_used()) + "</p>")
    notes = []
    for r in rep.rows:
        bits = []
        if r.binding:
            bits.append(f"<em>binds:</em> {_e(r.binding)}")
        if r.versus_winner:
            bits.append(_e(r.versus_winner))
        if r.dominated_by:
            bits.append(f"dominated by <code>{_e(r.dominated_by)}</code>")
        fl = _row_flags(rep, r)
        if fl:
            bits.append(f"<em>flags:</em> {_e(fl)}")
        bits += [f"<em>{_e(k)}:</em> {_e(v)}" for k, v in r.notes.items()]
        if bits:
            notes.append(f"<li><code>{_e(r.label or r.key)}</code>: " + "; ".join(bits) + "</li>")
    if notes:
        h += ["<h3>Why each one stands where it does</h3>" if shortlist else "<h3>Notes</h3>", "<ul>", *notes,
              "</ul>"]
    formulas = [f"<li><strong>{_e(c.header)}</strong>: {_e(c.formula)}</li>" for c in rep.columns if c.formula]
    if formulas:
        h += ["<h3>How the columns are computed</h3>", "<ul>", *formulas, "</ul>"]
    if shortlist:
        h.append("<h2>Excluded</h2>")
        if rep.excluded:
            h.append("<table><thead><tr><th>material</th><th>family</th><th>reasons</th></tr></thead><tbody>")
            for e in rep.excluded:
                h.append(f"<tr><td>{_e(e['name'])}<br><code>{_e(e['label'])}</code></td><td>{_e(e['family'])}</td>"
                         f"<td>{'<br>'.join(_e(x) for x in e['reasons'])}</td></tr>")
            h.append("</tbody></table>")
        else:
            h.append("<p>None: every candidate met the hard constraints.</p>")
    if charts:
        figs = report_charts(rep)
        if figs:
            h.append('<section class="charts"><h2>Charts</h2>')
            for i, (title, cap, fig) in enumerate(figs, 1):
                h.append(f'<figure id="chart-{i}">{_svg_inline(fig, f"c{i}-")}'
                         f"<figcaption><strong>Figure {i}. {_e(title)}.</strong> {_e(cap)}</figcaption></figure>")
            h.append("</section>")
    h.append("<h2>Cautions</h2><ul>")
    h += [f"<li>{_e(c)}</li>" for c in rep.cautions]
    h.append("</ul>")
    h.append("<h2>Sources</h2>")
    h.append('<ol class="sources">')
    for k, n in sorted(nums.items(), key=lambda kv: kv[1]):
        s = rep.sources.get(k) or {}
        kind = s.get("kind", "unknown")
        cls = ' class="flagged"' if kind in FLAG_KINDS else ""
        mark = f' <span class="mark">{MARKS[kind]}</span>' if kind in MARKS else ""
        h.append(f'<li id="src-{n}" value="{n}"{cls}><code>{_e(k)}</code> <span class="kind">[{_e(kind)}]</span>'
                 f"{mark} {_e(s.get('citation', ''))}</li>")
    h.append("</ol>")
    h.append('<p class="legend">Kinds: handbook, standard, paper, web = published and cited; common-practice = a '
             "fact of the trade with no single source; recollection = remembered, not checked; lab = your own "
             "measurements; invented = demo data only.</p>")
    h += ["</body>", "</html>", ""]
    return "\n".join(h)
