"""Flat value tables for ``holdoff add``: material records from a CSV, one row per value."""

from __future__ import annotations

from materials.errors import InputError
from materials.labfiles.columns import _Column, _columns, _header_row_cells, _no_rows, _number, _rows
from materials.labfiles.header import _split
from materials.labfiles.source import _Lines

_VALUE_TABLE_TEXT = ("material", "name", "family", "form", "description", "response", "property", "unit",
                     "source", "note")
_VALUE_TABLE_NUMBERS = ("value", "low", "high")
_VALUE_TABLE_CONDITIONS = ("temperature", "frequency", "field", "thickness", "area")
_CONDITION_EXAMPLE_UNIT = {"temperature": "degC", "frequency": "Hz", "field": "V/um", "thickness": "um",
                           "area": "cm^2"}


def read_value_table(path, sources: dict) -> list:
    """Material records from a flat CSV, one row per value, validated like the catalog's TOML.

    Columns: ``material`` (key), ``name`` and ``family`` (on the material's first row at least; repeated values
    must agree), optional ``form``, ``description``, ``response``; ``property``, ``value``, optional ``low``,
    ``high``; the value's unit either in the heading (``value [V/um]``, for a file of one dimension) or in a
    ``unit`` column per row (not both); conditions with their unit in the heading (``temperature [degC]``,
    ``frequency [kHz]``, ``field [V/um]``, ``thickness [um]``, ``area [cm^2]``); ``source`` (a key of
    ``sources``); ``note``. Empty cells mean "not stated".

    Returns:
        A list of :class:`materials.records.MaterialRec` (origin ``user``), in file order.
    """
    from materials.catalog_io import SLUG, _FieldError, _value_rec, _VALUE_KEYS
    from materials.properties import FAMILIES, RESPONSES
    from materials.records import MaterialRec

    path = str(path)
    lines = _Lines(path)
    header, header_row, hline, rest = _split(lines, ("note",))
    cols = _columns(_header_row_cells(header_row), lines, hline)
    by_name: dict[str, tuple[str | None, str, int]] = {}
    known = set(_VALUE_TABLE_TEXT) | set(_VALUE_TABLE_NUMBERS) | set(_VALUE_TABLE_CONDITIONS)
    for name, unit, heading, idx in cols:
        if name not in known:
            raise lines.error(f"unknown column '{heading}' (known: {', '.join(sorted(known))})", line=hline,
                              field=heading)
        if name in _VALUE_TABLE_TEXT and unit is not None:
            raise lines.error(f"column '{name}' takes no unit", line=hline, field=heading)
        if name in _VALUE_TABLE_CONDITIONS and unit is None:
            raise lines.error(f"condition column '{name}' needs its unit in brackets, e.g. '{name} "
                              f"[{_CONDITION_EXAMPLE_UNIT[name]}]'", line=hline, field=heading)
        by_name[name] = (unit, heading, idx)
    for need in ("material", "property", "value", "source"):
        if need not in by_name:
            raise lines.error(f"no '{need}' column", line=hline, field=need)
    value_unit = by_name["value"][0]
    if "unit" in by_name and value_unit is not None:
        raise lines.error("ambiguous units: the value's unit is in its heading and in a 'unit' column; keep one",
                          line=hline, field=by_name["value"][1])
    for f in ("low", "high"):
        if f in by_name and by_name[f][0] != value_unit and by_name[f][0] is not None:
            raise lines.error(f"mixed units: '{by_name[f][1]}' and '{by_name['value'][1]}' differ; low and high "
                              "take the value's unit", line=hline, field=by_name[f][1])

    records: dict[str, MaterialRec] = {}
    seen_lines: dict[tuple, int] = {}
    for cells in _rows(rest, header_row, lines, len(cols)):
        row = {name: cells[idx].strip() for name, (_, _, idx) in by_name.items()}
        line = lines.line
        key = row["material"]
        if not SLUG.match(key):
            raise lines.error(f"material key '{key}' is not a lower-case slug", field="material")
        rec = records.get(key)
        if rec is None:
            for f in ("name", "family"):
                if not row.get(f):
                    raise lines.error(f"the first row of material '{key}' needs its {f}", field=f)
            if row["family"] not in FAMILIES:
                raise lines.error(f"family '{row['family']}' is not one of {', '.join(FAMILIES)}", field="family")
            response = row.get("response") or "linear"
            if response not in RESPONSES:
                raise lines.error(f"response '{response}' is not linear or nonlinear", field="response")
            rec = MaterialRec(key=key, name=row["name"], family=row["family"], form=row.get("form", ""),
                              description=row.get("description", ""), origin="user", response=response)
            records[key] = rec
        else:
            for f in ("name", "family", "form", "description", "response"):
                if row.get(f) and row[f] != getattr(rec, f):
                    raise lines.error(f"{f} '{row[f]}' disagrees with '{getattr(rec, f)}' given earlier for "
                                      f"material '{key}'", field=f)
        body = {"property": row["property"], "source": row["source"]}
        unit = value_unit if value_unit is not None else row.get("unit", "")
        if unit:
            body["unit"] = unit
        for f in _VALUE_TABLE_NUMBERS:
            if row.get(f):
                col = _Column(f, by_name[f][1], unit or None, by_name[f][2])
                body[f] = _number(row[f], col, lines)
        if row.get("note"):
            body["note"] = row["note"]
        for f in _VALUE_TABLE_CONDITIONS:
            if row.get(f):
                cunit, heading, idx = by_name[f]
                _number(row[f], _Column(f, heading, cunit, idx), lines)
                body[f] = f"{row[f]} {cunit}"
        try:
            v = _value_rec(body, family=rec.family, sources=sources, allowed=_VALUE_KEYS)
        except _FieldError as exc:
            heading = by_name.get(exc.field, (None, exc.field))[1]
            raise InputError(exc.message.replace("sources.toml", "the store or a sources.toml given"),
                             file=path, line=line, field=heading) from None
        ident = (key,) + v.identity() + (v.source,)
        if ident in seen_lines:
            raise InputError(f"duplicates the value on line {seen_lines[ident]} (same material, property, "
                             "conditions and source)", file=path, line=line, field="property")
        seen_lines[ident] = line
        rec.values.append(v)
    if not records:
        raise _no_rows(path, hline)
    return list(records.values())
