"""The ``# key: value`` comment block at the top of a lab file, and the test conditions it and the options give."""

from __future__ import annotations

import datetime as dt
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Iterator

from materials.errors import InputError, UnitError
from materials.labfiles.source import _Lines
from materials.units import parse_option

_HEADER_LINE = re.compile(r"^#\s*([A-Za-z_][A-Za-z0-9_-]*)\s*:\s*(.*?)\s*$")

# header key -> (CLI option kind for quantities, or None for text)
_QUANTITY_KEYS = {"thickness": "thickness", "area": "electrode_area", "temperature": "temperature",
                  "ramp": "ramp", "frequency": "frequency"}
_TEXT_KEYS = ("label", "waveform", "operator", "lab", "date", "kind", "citation", "note")
BREAKDOWN_KEYS = ("label", "thickness", "area", "temperature", "ramp", "waveform", "operator", "lab", "date",
                  "kind", "citation", "note")
LOOP_KEYS = ("label", "thickness", "temperature", "frequency", "operator", "lab", "date", "kind", "citation",
             "note")
ENDURANCE_KEYS = ("label", "thickness", "area", "temperature", "operator", "lab", "date", "kind", "citation",
                  "note")
IMPORT_KINDS = ("lab", "invented")
WAVEFORMS = ("dc", "ac")

# condition -> SI field name in Conditions
_SI_NAME = {"thickness": "thickness_m", "area": "area_m2", "temperature": "temperature_K",
            "ramp": "ramp_V_per_s", "frequency": "frequency_Hz"}
# plausible ranges of set conditions, SI (wide: they catch unit slips)
_CONDITION_RANGE = {"thickness": (1e-9, 1e-2, "m"), "area": (1e-12, 10.0, "m²"),
                    "temperature": (1.0, 2300.0, "K"), "ramp": (1e-6, 1e13, "V/s"),
                    "frequency": (1e-6, 1e10, "Hz")}


@dataclass
class Conditions:
    """Test conditions and provenance of one file (SI), from options and the header block."""

    label: str = ""
    thickness_m: float | None = None
    area_m2: float | None = None
    temperature_K: float | None = None
    ramp_V_per_s: float | None = None
    frequency_Hz: float | None = None
    waveform: str = "dc"
    operator: str = ""
    lab: str = ""
    date: str = ""
    kind: str = "lab"
    citation: str = ""
    note: str = ""
    #: where each condition came from: "option" or "header line N"
    origin: dict[str, str] = field(default_factory=dict)



def _split(lines: _Lines, allowed_keys) -> tuple[dict[str, tuple[str, int]], str, int, Iterator[str]]:
    """Read the ``# key: value`` block and the column-header row; return (header, header row, its line, rest)."""
    it = iter(lines)
    header: dict[str, tuple[str, int]] = {}
    for text in it:
        stripped = text.strip()
        if not stripped:
            continue
        if stripped.startswith("#"):
            m = _HEADER_LINE.match(stripped)
            if not m:
                continue  # a free comment
            key, value = m.group(1).lower(), m.group(2)
            if key not in allowed_keys:
                raise lines.error(f"unknown header key '{key}' (known: {', '.join(allowed_keys)})", field=key)
            if key in header:
                raise lines.error(f"header key '{key}' given twice (lines {header[key][1]} and {lines.line})",
                                  field=key)
            header[key] = (value, lines.line)
            continue
        return header, text, lines.line, it
    if lines.line == 0:
        raise InputError("the file is empty", file=lines.path)
    raise InputError("no column-header row (the file holds only comments or blank lines)", file=lines.path,
                     line=lines.line)



def _strip_prefix(message: str, name: str) -> str:
    prefix = f"{name}: "
    return message[len(prefix):] if message.startswith(prefix) else message


def parse_condition(key: str, text) -> float:
    """A set condition (thickness, area, temperature, ramp, frequency) in SI, range-checked.

    A bare number takes the CLI option's default unit (µm, cm², °C, V/s, Hz). Raises UnitError/InputError with a
    message that does not name the file (the caller adds where it came from).
    """
    kind = _QUANTITY_KEYS[key]
    try:
        value = parse_option(text, kind, name=key)
    except UnitError as exc:
        raise UnitError(_strip_prefix(str(exc), key)) from None
    lo, hi, unit = _CONDITION_RANGE[key]
    if key != "temperature" and value <= 0:
        raise InputError(f"{key} must be positive, got '{text}'")
    if not lo <= value <= hi:
        raise InputError(f"{key} '{text}' = {value:g} {unit} is outside the plausible range {lo:g}…{hi:g} {unit}"
                         " (a unit slip?)")
    return value


def _text_condition(key: str, value: str) -> str:
    value = str(value).strip()
    if key == "kind":
        if value not in IMPORT_KINDS:
            raise InputError(f"kind '{value}' is not one of {', '.join(IMPORT_KINDS)} (invented = demo data only)")
    elif key == "waveform":
        value = value.lower()
        if value not in WAVEFORMS:
            raise InputError(f"waveform '{value}' is not dc or ac")
    elif key == "date":
        try:
            (dt.datetime.fromisoformat(value) if "T" in value or " " in value else dt.date.fromisoformat(value))
        except ValueError:
            raise InputError(f"date '{value}' is not an ISO 8601 date (YYYY-MM-DD)") from None
    elif key == "label":
        if not value:
            raise InputError("label is empty")
        if len(value) > 400:
            raise InputError("label is longer than 400 characters")
    return value


def _conditions(path: str, header: dict[str, tuple[str, int]], overrides: dict | None) -> Conditions:
    """Merge options (already SI, or text) over the header block."""
    cond = Conditions(label=Path(path).stem)
    overrides = {k: v for k, v in (overrides or {}).items() if v is not None and v != ""}
    for key in set(header) | set(overrides):
        if key in overrides:
            value, where, line = overrides[key], "option", None
        else:
            value, line = header[key]
            where = f"header line {line}"
        try:
            if key in _QUANTITY_KEYS:
                if key in overrides and isinstance(value, (int, float)):
                    parsed = float(value)  # options arrive parsed by the CLI
                else:
                    parsed = parse_condition(key, value)
                setattr(cond, _SI_NAME[key], parsed)
            elif key in _TEXT_KEYS:
                setattr(cond, key, _text_condition(key, value))
            else:
                raise InputError(f"unknown condition '{key}'")
        except InputError as exc:
            if line is None:
                raise InputError(str(exc), field=f"--{key}") from None
            raise InputError(str(exc), file=path, line=line, field=key) from None
        cond.origin[key] = where
    return cond
