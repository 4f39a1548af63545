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
from materials.units import parse_quantity

CATALOG_DIR = Path(__file__).with_name("catalog")
CATALOG_ENV = "HOLDOFF_CATALOG"


def catalog_dir() -> Path:
    """The catalog folder: ``$HOLDOFF_CATALOG`` if set (curators testing a change), else the shipped one."""
    import os

    return Path(os.environ.get(CATALOG_ENV) or CATALOG_DIR)
SLUG = re.compile(r"^[a-z0-9][a-z0-9._-]*$")

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


def _load_toml(path: Path) -> tuple[dict, list[str]]:
    try:
        text = path.read_bytes().decode("utf-8")
    except UnicodeDecodeError as exc:
        raise InputError(f"not UTF-8 text (byte {exc.start})", file=str(path)) from None
    except OSError as exc:  # a missing sources.toml or a wrong HOLDOFF_CATALOG is the user's input, not a bug
        raise InputError(f"cannot read: {exc.strerror or exc}", file=str(path)) from None
    try:
        return tomllib.loads(text), text.splitlines()
    except tomllib.TOMLDecodeError as exc:
        line = getattr(exc, "lineno", None)
        raise InputError(f"not valid TOML: {exc}", file=str(path), line=line) from None


def _nth_table_line(lines: list[str], header: str, n: int) -> int | None:
    """1-based line of the n-th (0-based) ``[[header]]`` in the file, for error messages."""
    count = -1
    for i, line in enumerate(lines, 1):
        if line.strip().startswith(f"[[{header}]]"):
            count += 1
            if count == n:
                return i
    return None


def load_sources(path: Path) -> dict[str, SourceRec]:
    """Read ``sources.toml``: one table per source key with ``kind``, ``citation`` and optional ``note``."""
    data, lines = _load_toml(path)
    out: dict[str, SourceRec] = {}
    for key, body in data.items():
        line = next((i for i, text in enumerate(lines, 1) if text.strip() == f"[{key}]"), None)
        err = dict(file=str(path), line=line, entry=key)
        if not isinstance(body, dict):
            raise InputError("each source must be a table", **err)
        if not SLUG.match(key):
            raise InputError("source key must be a lower-case slug", field="key", **err)
        unknown = set(body) - {"kind", "citation", "note"}
        if unknown:
            raise InputError(f"unknown field(s) {sorted(unknown)}", field=sorted(unknown)[0], **err)
        kind = body.get("kind")
        if kind not in SOURCE_KINDS:
            raise InputError(f"kind '{kind}' is not one of {', '.join(SOURCE_KINDS)}", field="kind", **err)
        citation = str(body.get("citation", "")).strip()
        if not citation:
            raise InputError("a source needs a full citation", field="citation", **err)
        out[key] = SourceRec(key=key, kind=kind, citation=citation, note=str(body.get("note", "")).strip())
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


def _conditions(body: dict) -> dict:
    out = {}
    for tkey, (field, si) in _CONDITION_UNITS.items():
        if tkey in body:
            default = "degC" if tkey == "temperature" else None
            v = body[tkey]
            if isinstance(v, (int, float)) and not isinstance(v, bool) and default:
                v = f"{v} {default}"
            try:
                out[field] = _number(v, si=si, unit=None, name=tkey)
            except UnitError as exc:
                raise _FieldError(tkey, str(exc)) from None
            if tkey in ("frequency", "thickness", "area") and out[field] <= 0:
                raise _FieldError(tkey, f"{tkey} must be positive")
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
    if "value" not in nums:
        raise _FieldError("value", "missing value")
    for f, v in nums.items():
        why = check_plausible(prop, v, family)
        if why:
            raise _FieldError(f, why)
    lo, hi = nums.get("low"), nums.get("high")
    if lo is not None and hi is not None and lo > hi:
        raise _FieldError("low", "low is above high")
    if outside_range(nums["value"], lo, hi):
        raise _FieldError("value", "value lies outside its own low…high range")
    return ValueRec(property=prop, value=nums["value"], low=lo, high=hi, source=src,
                    note=str(body.get("note", "")).strip(), **_conditions(body))


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
    if not isinstance(key, str) or not SLUG.match(key):
        raise InputError("material key must be a lower-case slug", field="key", **err)
    for f in ("name", "family"):
        if not str(data.get(f, "")).strip():
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
    rec = MaterialRec(key=key, name=str(data["name"]).strip(), family=family, form=str(data.get("form", "")),
                      description=str(data.get("description", "")).strip(), origin=origin, response=response)
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
