"""Read and validate catalog records from TOML (the text source of truth).

One TOML file per material plus ``sources.toml``. Validation is complete before anything is written anywhere:
the caller gets records or a single :class:`~materials.errors.InputError` naming file, entry and field.

Material file form::

    key = "polypropylene-film"
    name = "Biaxially oriented polypropylene film"
    family = "polymer-film"
    form = "biaxially oriented film, metallised"
    response = "linear"              # or "nonlinear"
    description = "…"

    [[value]]                        # one property value
    property = "breakdown_field"
    value = "640 V/um"               # number with unit, or a number plus `unit = "…"`
    low = "550 V/um"                 # optional range, same dimension
    high = "720 V/um"
    temperature = "25 degC"          # optional conditions: temperature, frequency, field, thickness, area
    thickness = "3 um"
    source = "callister-8e-t18-5"    # a key of sources.toml (required)
    note = "…"

    [[curve]]                        # several values of one property over temperature or field
    property = "relative_permittivity"
    over = "temperature"             # or "field"
    at_unit = "degC"                 # unit of the first column
    unit = ""                        # unit of the second column ("" = dimensionless)
    points = [[-40, 2.25], [25, 2.20], [105, 2.13]]
    frequency = "1 kHz"              # conditions shared by every point
    source = "…"
"""

from __future__ import annotations

import math
import re
import tomllib
from pathlib import Path

from materials.errors import InputError, UnitError
from materials.properties import (FAMILIES, ORIGINS, PROPERTIES, RESPONSES, SOURCE_KINDS, check_plausible,
                                  outside_range)
from materials.records import MaterialRec, SourceRec, ValueRec
from materials.textfile import SLUG_PATTERN, error_line, slug_problem, text_problem
from materials.units import check_range, parse_quantity

CATALOG_DIR = Path(__file__).with_name("catalog")
CATALOG_ENV = "HOLDOFF_CATALOG"


def catalog_dir() -> Path:
    """The catalog folder: ``$HOLDOFF_CATALOG`` if set (curators testing a change), else the shipped one."""
    import os

    return Path(os.environ.get(CATALOG_ENV) or CATALOG_DIR)


#: A key: ``SLUG.match`` matches the whole text or nothing (no trailing newline slips through ``$``).
SLUG = re.compile(SLUG_PATTERN + r"\Z")

_CONDITION_UNITS = {  # TOML condition key -> (record field, SI key)
    "temperature": ("temperature_K", "K"),
    "frequency": ("frequency_Hz", "Hz"),
    "field": ("field_V_per_m", "V/m"),
    "thickness": ("thickness_m", "m"),
    "area": ("area_m2", "m2"),
}
_MATERIAL_KEYS = {"key", "name", "family", "form", "description", "origin", "response", "value", "curve"}
_VALUE_KEYS = {"property", "value", "low", "high", "unit", "source", "note", *_CONDITION_UNITS}
_CURVE_KEYS = {"property", "over", "at_unit", "unit", "points", "source", "note", *_CONDITION_UNITS}


def _load_toml(path: Path) -> tuple[dict, dict]:
    """The TOML document of ``path`` and where its tables start (see :func:`_table_lines`); a UTF-8 byte-order mark
    is accepted."""
    try:
        text = path.read_bytes().decode("utf-8")
        text = text.removeprefix("\ufeff")
    except UnicodeDecodeError as exc:
        raise InputError(f"not UTF-8 text (byte {exc.start})", file=str(path)) from None
    except OSError as exc:  # a missing sources.toml or a wrong HOLDOFF_CATALOG is the user's input, not a bug
        raise InputError(f"cannot read: {exc.strerror or exc}", file=str(path)) from None
    try:
        return tomllib.loads(text), _table_lines(text)
    except tomllib.TOMLDecodeError as exc:
        raise InputError(f"not valid TOML: {exc}", file=str(path), line=error_line(exc)) from None


_TABLE_HEADER = re.compile(r"\s*(\[\[?)\s*([^\]]*?)\s*\]")


def _table_lines(text: str) -> dict:
    """Where tables start, in one pass over the text (for error messages): ``{("[[", name): [line, …],
    ("[", name): [line, …]}``, lines 1-based, in file order."""
    out: dict[tuple[str, str], list[int]] = {}
    for i, line in enumerate(text.splitlines(), 1):
        if line.lstrip().startswith("["):
            m = _TABLE_HEADER.match(line)
            if m:
                out.setdefault((m.group(1), m.group(2).strip('"')), []).append(i)
    return out


def _nth_table_line(lines: dict, header: str, n: int) -> int | None:
    """1-based line of the n-th (0-based) ``[[header]]`` in the file, for error messages."""
    found = lines.get(("[[", header), ())
    return found[n] if n < len(found) else None


def load_sources(path: Path) -> dict[str, SourceRec]:
    """Read ``sources.toml``: one table per source key with ``kind``, ``citation`` and optional ``note``."""
    data, lines = _load_toml(path)
    out: dict[str, SourceRec] = {}
    for key, body in data.items():
        line = (lines.get(("[", key)) or [None])[0]
        err = dict(file=str(path), line=line, entry=key)
        if not isinstance(body, dict):
            raise InputError("each source must be a table", **err)
        why = slug_problem(key, "source key")
        if why:
            raise InputError(why, field="key", **err)
        unknown = set(body) - {"kind", "citation", "note"}
        if unknown:
            raise InputError(f"unknown field(s) {sorted(unknown)}", field=sorted(unknown)[0], **err)
        kind = body.get("kind")
        if not isinstance(kind, str) or kind not in SOURCE_KINDS:
            raise InputError(f"kind '{kind}' is not one of {', '.join(SOURCE_KINDS)}", field="kind", **err)
        for f in ("citation", "note"):
            why = text_problem(body.get(f, ""), f)
            if why:
                raise InputError(f"{f} {why}", field=f, **err)
        citation = body.get("citation", "").strip()
        if not citation:
            raise InputError("a source needs a full citation", field="citation", **err)
        out[key] = SourceRec(key=key, kind=kind, citation=citation, note=body.get("note", "").strip())
    return out


def _number(v, *, si: str, unit: str | None, name: str) -> float:
    """A TOML value (number or 'number unit' string) in SI."""
    if isinstance(v, bool):
        raise UnitError(f"'{v}' is not a number")
    if isinstance(v, (int, float)):
        if math.isnan(v) or math.isinf(v):
            raise UnitError("not a finite number (NaN or infinity)")
        if si != "1" and not unit:
            raise UnitError(f"{v} has no unit (expected a {si} quantity)")
        return parse_quantity(f"{v!r} {unit or ''}".strip(), si=si, name=name)
    if isinstance(v, str):
        if unit and re.fullmatch(r"\s*[-+0-9.eE]+\s*", v):
            v = f"{v} {unit}"
        return parse_quantity(v, si=si, name=name)
    raise UnitError(f"'{v}' is not a number")


# The option kind whose plausible range (materials.units.OPTION_RANGES) bounds each condition; a field of 0 (the
# start of a DC-bias curve) is allowed, its upper bound is the field option's.
_CONDITION_KIND = {"temperature": "temperature", "frequency": "frequency", "thickness": "thickness",
                   "area": "capacitor_area", "field": "field"}
#: Significant digits a converted condition keeps: 77 °F is 298.15 K, not 298.1499999999988 K, so that the same
#: condition typed in two units is one condition.
CONDITION_DIGITS = 12


def round_condition(value: float) -> float:
    """A condition converted to SI, rounded to :data:`CONDITION_DIGITS` significant digits."""
    return float(f"{value:.{CONDITION_DIGITS}g}")


def condition_problem(tkey: str, x) -> str | None:
    """Why ``x`` (SI) cannot be the condition ``tkey`` (temperature, frequency, field, thickness, area) of a value,
    or None: a finite number, positive and plausible (materials.units.OPTION_RANGES); a field may be 0."""
    if isinstance(x, bool) or not isinstance(x, (int, float)):
        return f"{tkey} must be a number, not {x!r:.40}"
    if not math.isfinite(x):
        return f"{tkey} is not a finite number ({x!r})"
    if tkey == "field" and x == 0:
        return None
    if tkey == "field" and x < 0:
        return f"{tkey} {x!r} must not be negative (the field's magnitude)"
    try:
        check_range(x, _CONDITION_KIND[tkey], name=tkey, shown=x)
    except UnitError as exc:
        return str(exc)
    return None


_SI_CONDITION = {field: tkey for tkey, (field, _) in _CONDITION_UNITS.items()}


def value_problem(prop, family: str | None, *, value, low=None, high=None, **conditions) -> tuple[str, str] | None:
    """(field, why) for a value that ``holdoff add`` would refuse, or None: the property is in the vocabulary; value,
    low and high are finite numbers of plausible size for the material's family, the value inside low…high; every
    condition (keyword: ``temperature_K``, ``frequency_Hz``, ``field_V_per_m``, ``thickness_m``, ``area_m2``; SI)
    passes :func:`condition_problem`. The one check behind catalog files, value tables, bundles and ``db check``."""
    if not isinstance(prop, str) or prop not in PROPERTIES:
        return "property", f"unknown property '{prop}' (see the vocabulary in DESIGN notes)"
    for f, v in (("value", value), ("low", low), ("high", high)):
        if v is None:
            if f == "value":
                return f, "missing value"
            continue
        if isinstance(v, bool) or not isinstance(v, (int, float)):
            return f, f"'{v!r:.40}' is not a number"
        if not math.isfinite(v):
            return f, "not a finite number (NaN or infinity)"
        why = check_plausible(prop, v, family)
        if why:
            return f, why
    if low is not None and high is not None and low > high:
        return "low", "low is above high"
    if outside_range(value, low, high):
        return "value", "value lies outside its own low…high range"
    for name, x in conditions.items():
        if x is not None:
            why = condition_problem(_SI_CONDITION[name], x)
            if why:
                return name, why
    return None


def _conditions(body: dict) -> dict:
    out = {}
    for tkey, (field, si) in _CONDITION_UNITS.items():
        if tkey in body:
            default = "degC" if tkey == "temperature" else None
            v = body[tkey]
            if isinstance(v, (int, float)) and not isinstance(v, bool) and default:
                v = f"{v} {default}"
            try:
                x = round_condition(_number(v, si=si, unit=None, name=tkey))
            except UnitError as exc:
                raise _FieldError(tkey, str(exc)) from None
            why = condition_problem(tkey, x)
            if why:
                raise _FieldError(tkey, why)
            out[field] = x
    return out


class _FieldError(Exception):
    def __init__(self, field, message):
        self.field, self.message = field, message


def _value_rec(body: dict, *, family: str, sources: dict[str, SourceRec], allowed: set) -> ValueRec:
    unknown = set(body) - allowed
    if unknown:
        raise _FieldError(sorted(unknown)[0], f"unknown field '{sorted(unknown)[0]}'")
    prop = body.get("property")
    if not isinstance(prop, str) or prop not in PROPERTIES:
        raise _FieldError("property", f"unknown property '{prop}' (see the vocabulary in DESIGN notes)")
    src = body.get("source")
    if not src:
        raise _FieldError("source", "every value needs a source")
    for f in ("note", "unit"):
        why = text_problem(body[f], "note" if f == "note" else "text") if f in body else None
        if why:
            raise _FieldError(f, f"{f} {why}")
    if not isinstance(src, str) or src not in sources:
        raise _FieldError("source", f"source '{src}' is not in sources.toml")
    si = PROPERTIES[prop].si
    unit = body.get("unit")
    nums = {}
    for f in ("value", "low", "high"):
        if f in body:
            try:
                nums[f] = _number(body[f], si=si, unit=unit, name=f)
            except UnitError as exc:
                raise _FieldError(f, str(exc)) from None
    lo, hi = nums.get("low"), nums.get("high")
    problem = value_problem(prop, family, value=nums.get("value"), low=lo, high=hi)
    if problem:
        raise _FieldError(*problem)
    return ValueRec(property=prop, value=nums["value"], low=lo, high=hi, source=src,
                    note=body.get("note", "").strip(), **_conditions(body))


def _curve_recs(body: dict, *, family: str, sources: dict[str, SourceRec]) -> list[ValueRec]:
    unknown = set(body) - _CURVE_KEYS
    if unknown:
        raise _FieldError(sorted(unknown)[0], f"unknown field '{sorted(unknown)[0]}'")
    over = body.get("over")
    if over not in ("temperature", "field"):
        raise _FieldError("over", "a curve runs over 'temperature' or 'field'")
    points = body.get("points")
    if not isinstance(points, list) or len(points) < 2:
        raise _FieldError("points", "a curve needs at least two [at, value] points")
    at_unit = body.get("at_unit", "degC" if over == "temperature" else None)
    if not at_unit:
        raise _FieldError("at_unit", "a field curve needs at_unit (e.g. 'V/um')")
    recs, seen = [], set()
    base = {k: v for k, v in body.items() if k not in ("over", "at_unit", "points")}
    for i, pt in enumerate(points):
        if not (isinstance(pt, list) and len(pt) == 2):
            raise _FieldError("points", f"point {i + 1} is not an [at, value] pair")
        row = dict(base, value=pt[1])
        row[over] = f"{pt[0]!r} {at_unit}"
        try:
            rec = _value_rec(row, family=family, sources=sources, allowed=_VALUE_KEYS)
        except _FieldError as exc:
            raise _FieldError(f"points[{i + 1}]", f"{exc.field}: {exc.message}") from None
        at = rec.temperature_K if over == "temperature" else rec.field_V_per_m
        if at in seen:
            raise _FieldError(f"points[{i + 1}]", "repeated abscissa")
        seen.add(at)
        recs.append(rec)
    return recs


def load_material(path: Path, sources: dict[str, SourceRec], *, origin: str = "catalog") -> MaterialRec:
    """Validate one material file against ``sources``; raise InputError naming file, entry and field."""
    data, lines = _load_toml(path)
    key = data.get("key")
    err = dict(file=str(path))
    unknown = set(data) - _MATERIAL_KEYS
    if unknown:
        raise InputError(f"unknown field '{sorted(unknown)[0]}'", field=sorted(unknown)[0], **err)
    why = slug_problem(key, "material key")
    if why:
        raise InputError(why, field="key", **err)
    for f in ("name", "family", "form", "description", "response", "origin"):
        problem = text_problem(data[f], "text" if f in ("family", "response", "origin") else f) \
            if f in data else None
        if problem:
            raise InputError(f"{f} {problem}", entry=key, field=f, **err)
    for f in ("name", "family"):
        if not data.get(f, "").strip():
            raise InputError(f"missing {f}", entry=key, field=f, **err)
    family = data["family"]
    if family not in FAMILIES:
        raise InputError(f"family '{family}' is not one of {', '.join(FAMILIES)}", entry=key, field="family", **err)
    response = data.get("response", "linear")
    if response not in RESPONSES:
        raise InputError(f"response '{response}' is not linear or nonlinear", entry=key, field="response", **err)
    origin = data.get("origin", origin)
    if origin not in ORIGINS:
        raise InputError(f"origin '{origin}' is not one of {', '.join(ORIGINS)}", entry=key, field="origin", **err)
    rec = MaterialRec(key=key, name=data["name"].strip(), family=family, form=data.get("form", ""),
                      description=data.get("description", "").strip(), origin=origin, response=response,
                      given=frozenset(f for f in ("name", "family", "form", "description", "response") if f in data))
    seen = {}
    for table, items in (("value", data.get("value", [])), ("curve", data.get("curve", []))):
        if not isinstance(items, list):
            raise InputError(f"'{table}' must be an array of tables ([[{table}]])", entry=key, field=table, **err)
        for i, body in enumerate(items):
            line = _nth_table_line(lines, table, i)
            label = f"{key} {table} #{i + 1}"
            if not isinstance(body, dict):
                raise InputError(f"'{table}' must be an array of tables ([[{table}]])", file=str(path), line=line,
                                 entry=label, field=table)
            if isinstance(body.get("property"), str) and body["property"]:
                label += f" ({body['property']})"
            try:
                new = (_value_rec(body, family=family, sources=sources, allowed=_VALUE_KEYS) if table == "value"
                       else _curve_recs(body, family=family, sources=sources))
            except _FieldError as exc:
                raise InputError(exc.message, file=str(path), line=line, entry=label, field=exc.field) from None
            for v in ([new] if isinstance(new, ValueRec) else new):
                ident = v.identity() + (v.source,)
                if ident in seen:
                    raise InputError(f"duplicates {seen[ident]} (same property, conditions and source)",
                                     file=str(path), line=line, entry=label, field="property")
                seen[ident] = label
                rec.values.append(v)
    return rec


def load_catalog(directory: Path | None = None) -> tuple[dict[str, SourceRec], list[MaterialRec]]:
    """Read and validate the whole catalog; every material key unique."""
    directory = Path(directory) if directory else catalog_dir()
    sources = load_sources(directory / "sources.toml")
    materials: list[MaterialRec] = []
    where: dict[str, Path] = {}
    for path in sorted(directory.glob("*.toml")):
        if path.name == "sources.toml":
            continue
        m = load_material(path, sources)
        if m.key in where:
            raise InputError(f"duplicate material key '{m.key}' (also in {where[m.key].name})",
                             file=str(path), entry=m.key, field="key")
        where[m.key] = path
        materials.append(m)
    return sources, materials


def catalog_fingerprint(directory: Path | None = None) -> str:
    """SHA-256 over the catalog's files (names and bytes), to tell whether a store is current."""
    import hashlib

    directory = directory or catalog_dir()
    h = hashlib.sha256()
    for path in sorted(Path(directory).glob("*.toml")):
        h.update(path.name.encode())
        h.update(path.read_bytes())
    return h.hexdigest()
