"""The report's tables as pandas frames (comparison, excluded, sources) and the target or condition as rows.

Numbers stay numbers here, in the display unit named in each header; the CSV and XLSX writers and the
document templates read these.
"""

from __future__ import annotations

from materials.numfmt import fmt_celsius, fmt_eng, fmt_number, to_display
from ranking.report.marks import KIND_CLASS, MARKS
from ranking.report.model import FLAG_KINDS, Report, Row, as_report


# Columns whose numbers are yes/no (0/1 stored).
BOOLEAN = ("self_healing", "healing")


def evidence_header(c) -> str:
    return f"{c.label}: evidence"


def comparison_records(obj):
    """The comparison table one row at a time (dicts in column order): numbers in the display unit named in each
    header, yes/no for a yes/no property, a ``…: sources`` column (the source keys behind the value, a flagged
    kind named in brackets) and a ``…: evidence`` column (the value's evidence class,
    :mod:`ranking.report.marks`) beside each value.

    ``obj`` is a :class:`Report`, a shortlist result dict or a list of materials.
    """
    rep = as_report(obj)
    layers = rep.has_thickness  # (once: each is a pass over every row)
    any_top_k = any(x.p_top_k is not None for x in rep.rows)
    top_k = f"P(top {rep.top_k})" if rep.top_k else "P(top k)"
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
                d[top_k] = r.p_top_k
        for c in rep.columns:
            v = to_display(r.values.get(c.name), c.unit, c.display_unit)
            if c.name in BOOLEAN and v is not None:
                v = "yes" if v >= 0.5 else "no"
            d[c.header] = v
            d[c.sources_header] = rep.source_text(r, c.name) or None
            d[evidence_header(c)] = rep.evidence(r, c.name)
        if rep.kind == "shortlist":
            d["binding"] = r.binding or None
            d["versus winner"] = r.versus_winner or None
            d["dominated by"] = r.dominated_by
        d["flags"] = row_flags(rep, r) or None
        if rep.kind == "comparison":
            d["notes"] = "; ".join(f"{k}: {v}" for k, v in r.notes.items()) or None
        yield d


def comparison_frame(obj):
    """The comparison table (:func:`comparison_records`) as a pandas DataFrame, numeric columns as floats."""
    import pandas as pd

    rep = as_report(obj)
    df = pd.DataFrame.from_records(list(comparison_records(rep)))
    if df.empty:
        df = pd.DataFrame(columns=["key", "name", "family"])
    for c in rep.columns:
        if c.header in df and c.name not in BOOLEAN:
            df[c.header] = pd.to_numeric(df[c.header], errors="coerce").astype(float)
    return df


def round_sig(v, digits: int = 6):
    """A float rounded to ``digits`` significant figures (no binary noise such as 0.8000000000000007); anything
    else as it is."""
    import math

    if not isinstance(v, float) or v == 0 or not math.isfinite(v):
        return v
    return float(f"{v:.{digits}g}")


def write_csv(obj, path) -> None:
    """The comparison table as CSV, written row by row; floats to 6 significant figures, none lost that the data
    hold."""
    import csv

    rows = comparison_records(obj)
    first = next(rows, None)
    with open(path, "w", newline="", encoding="utf-8") as fh:
        if first is None:
            csv.writer(fh).writerow(["key", "name", "family"])
            return
        w = csv.DictWriter(fh, fieldnames=list(first))
        w.writeheader()
        w.writerow({k: round_sig(v) for k, v in first.items()})
        for d in rows:
            w.writerow({k: round_sig(v) for k, v in d.items()})


def row_flags(rep: Report, r: Row) -> str:
    kinds = sorted({k for c in rep.columns for k in rep.flags_of(r, c.name)}, key=FLAG_KINDS.index)
    flags = [f for f in r.flags if f not in kinds]
    return "; ".join(kinds + flags)


def excluded_frame(obj):
    """Exclusions grouped by reason (:func:`ranking.report.exclusions.group_exclusions`): one row per reason with
    the materials it excludes and how many candidates that is."""
    import pandas as pd

    from ranking.report.exclusions import group_exclusions

    rep = as_report(obj)
    return pd.DataFrame([{"reason": g["reason"], "candidates": g["count"], "materials": ", ".join(g["members"])}
                         for g in group_exclusions(rep.excluded)], columns=["reason", "candidates", "materials"])


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
                     "mark": MARKS.get(KIND_CLASS.get(kind, ""), "")})
    return pd.DataFrame(rows, columns=["no.", "key", "kind", "citation", "mark"])


def target_rows(rep: Report) -> list[tuple[str, str]]:
    """(parameter, value with unit) pairs describing the target or the comparison condition; the numbers a user
    gave are echoed to 6 significant figures."""
    def g(v):
        return fmt_number(v, 6)

    out = []
    if rep.kind == "comparison":
        t = rep.condition.get("temperature_K")
        f = rep.condition.get("frequency_Hz")
        out.append(("temperature", "reference, about 25 °C" if t is None else fmt_celsius(t, 6)))
        out.append(("frequency", "nearest to 1 kHz" if f is None else fmt_eng(f, "Hz", 6)))
        out.append(("outside the data", "end value held, flagged" if rep.condition.get("extrapolate")
                    else "left empty"))
        return out
    t = rep.target or {}

    def add(label, key, fmt):
        if t.get(key) not in (None, "", [], {}):
            out.append((label, fmt(t[key])))

    add("name", "name", str)
    add("voltage", "voltage_V", lambda v: f"{g(v)} V")
    if t.get("tmin_K") is not None and t.get("tmax_K") is not None:
        out.append(("temperature range", f"{g(t['tmin_K'] - 273.15)} … {fmt_celsius(t['tmax_K'], 6)}"))
    add("energy", "energy_J", lambda v: f"{g(v)} J")
    add("design energy density", "energy_density_J_per_m3", lambda v: f"≥ {g(v / 1e6)} J/cm³")
    add("accepted failure probability", "failure_probability", g)
    add("margin on the design field", "margin", g)
    add("active area", "area_m2", lambda v: f"{g(v)} m²")
    add("maximum loss tangent", "max_loss_tangent", g)
    add("frequency", "frequency_Hz", lambda v: fmt_eng(v, "Hz", 6))
    add("families", "families", lambda v: ", ".join(v))
    add("layer thicknesses", "thicknesses_m", lambda v: ", ".join(g(x * 1e6) for x in v) + " µm")
    if t.get("assume_defaults"):
        out.append(("common-practice defaults", "allowed (β = 10, 1 cm² test area where missing; flagged)"))
    if rep.method:
        out.append(("ranking method", rep.method))
    w = t.get("weights") or {c.name: c.weight for c in rep.columns if c.weight is not None}
    if w:
        out.append(("weights", ", ".join(f"{k} {g(v)}" for k, v in w.items())))
    return out
