"""How a number and a unit read in every output: terminal tables, reports, chart labels.

One number formatter (:func:`fmt_number`) and one unit pretty-printer (:func:`pretty_unit`) for the whole
program; :func:`to_display` carries an SI value into a display unit and :func:`fmt_quantity` puts the three
together. Pure text; a conversion goes through :mod:`materials.units` (its table of everyday units, pint for
the rest).
"""

from __future__ import annotations

import re
from functools import lru_cache

from materials.units import SI_UNITS, from_si

MISSING = "—"

# Pint's unit names as a reader writes them; products of units ("ohm m", "W/(m K)") get a middle dot.
_UNIT_NAMES = {"um": "µm", "uF": "µF", "uC": "µC", "us": "µs", "uV": "µV", "uA": "µA", "degC": "°C",
               "ohm": "Ω"}
_SUPERSCRIPTS = str.maketrans("0123456789-", "⁰¹²³⁴⁵⁶⁷⁸⁹⁻")
_POWER = re.compile(r"\s*(?:\*\*|\^)\s*(-?\d+)")
_NAME = re.compile(r"[A-Za-z_]+")
_PRODUCT = re.compile(r"\s*\*\s*|(?<=\w)\s+(?=\w)")


DIGITS = 3  # significant figures of every number a person reads


def fmt_number(v, digits: int = DIGITS) -> str:
    """``v`` rounded to ``digits`` significant figures: positional from 1e-6 to below 1e9 (``0.00006``, ``73100``,
    ``725000``), scientific only outside (``1.45e-07``); trailing zeros dropped; ``—`` when missing (None or
    NaN)."""
    if v is None or v != v:
        return MISSING
    if v == 0:
        return "0"
    text = f"{v:.{digits - 1}e}"
    mantissa, _e, exponent = text.partition("e")
    if not exponent:  # infinite
        return text
    exp = int(exponent)  # after rounding: 9.99996 to 4 figures is 1.000e+01
    if -6 <= exp < 9:
        # Rounded at the same decimal place as the scientific form (a carry into the next power of ten gives the
        # same number one place sooner).
        places = digits - 1 - exp
        if places <= 0:
            return f"{round(v, places):.0f}"
        return f"{v:.{places}f}".rstrip("0").rstrip(".")
    if "." in mantissa:
        mantissa = mantissa.rstrip("0").rstrip(".")
    return f"{mantissa}e{exponent}"


@lru_cache(maxsize=256)
def pretty_unit(unit: str | None) -> str:
    """A pint unit string as a reader writes it: ``J/cm**3`` → ``J/cm³``, ``V/um`` → ``V/µm``,
    ``degC`` → ``°C``, ``ohm m`` → ``Ω·m``; empty for a dimensionless unit (``""``, ``"1"`` or None)."""
    if not unit or unit == "1":
        return ""
    text = _POWER.sub(lambda m: m.group(1).translate(_SUPERSCRIPTS), unit)
    text = _NAME.sub(lambda m: _UNIT_NAMES.get(m.group(0), m.group(0)), text)
    return _PRODUCT.sub("·", text)


def to_display(value, unit: str | None, display_unit: str | None) -> float | None:
    """``value`` in SI ``unit`` expressed in ``display_unit`` (``%`` multiplies a fraction by 100); None when the
    value is missing. No display unit, or the SI unit itself, leaves the number as it is."""
    if value is None or value != value:  # missing, or NaN
        return None
    if not display_unit or display_unit == (unit or ""):
        return float(value)
    if display_unit == "%":
        return float(value) * 100.0
    return float(from_si(float(value), display_unit, unit if unit in SI_UNITS else "1"))


def fmt_quantity(value, display_unit: str, si: str, digits: int = DIGITS) -> str:
    """An SI value (unit ``si``) as text in ``display_unit``: ``fmt_quantity(6e8, "V/um", "V/m")`` →
    ``"600 V/µm"``; ``—`` when missing."""
    v = to_display(value, si, display_unit)
    if v is None:
        return MISSING
    u = pretty_unit(display_unit)
    return f"{fmt_number(v, digits)} {u}" if u else fmt_number(v, digits)


def fmt_celsius(t_K: float | None, digits: int = DIGITS) -> str:
    """A temperature in kelvin as ``°C`` text (``378.15`` → ``"105 °C"``); ``—`` when missing."""
    return MISSING if t_K is None else f"{fmt_number(t_K - 273.15, digits)} °C"


_PREFIXES = ((1e12, "T"), (1e9, "G"), (1e6, "M"), (1e3, "k"), (1.0, ""), (1e-3, "m"), (1e-6, "µ"), (1e-9, "n"),
             (1e-12, "p"))
# Units read in their own steps rather than by powers of a thousand: (factor from SI, written unit), largest first.
_STEPS = {
    "m3": ((1.0, "m³"), (1e-3, "L"), (1e-6, "cm³"), (1e-9, "mm³")),
    "kg": ((1e3, "t"), (1.0, "kg"), (1e-3, "g"), (1e-6, "mg")),
    "m2": ((1.0, "m²"), (1e-4, "cm²"), (1e-6, "mm²")),
    "V/m": ((1e9, "kV/µm"), (1e6, "V/µm"), (1e3, "V/mm")),
    "J/m3": ((1e6, "J/cm³"), (1e3, "mJ/cm³"), (1.0, "J/m³")),
}


def fmt_eng(value, unit: str, digits: int = DIGITS) -> str:
    """An SI value with the prefix that puts its number between 1 and 1000: ``fmt_eng(4.7e-6, "F")`` →
    ``"4.7 µF"``, ``fmt_eng(0.005093, "W")`` → ``"5.09 mW"``, ``fmt_eng(1e4, "Hz")`` → ``"10 kHz"``; volumes in
    mm³, cm³, L or m³, masses in mg, g, kg or t, fields in V/µm; ``—`` when missing."""
    if value is None or value != value:
        return MISSING
    v = float(value)
    steps = _STEPS.get(unit) or tuple((f, p + unit) for f, p in _PREFIXES)
    mag = abs(v)
    if mag == 0 or mag == float("inf"):
        return f"{fmt_number(v, digits)} {next((n for f, n in steps if f == 1.0), steps[0][1])}"
    for factor, name in steps:
        # the rounded number decides: 999.96 mF reads 1 F
        if abs(float(fmt_number(mag / factor, digits).replace("—", "0"))) >= 1:
            return f"{fmt_number(v / factor, digits)} {name}"
    factor, name = steps[-1]
    return f"{fmt_number(v / factor, digits)} {name}"
