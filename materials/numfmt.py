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


def fmt_number(v, digits: int = 4) -> str:
    """``v`` rounded to ``digits`` significant figures: positional from 1e-4 to below 1e7 (``0.0002``, ``73060``,
    ``725000``), scientific outside (``1.447e-05``, ``1.35e+07``); trailing zeros dropped; ``—`` when missing
    (None or NaN)."""
    if v is None or v != v:
        return MISSING
    if v == 0:
        return "0"
    text = f"{v:.{digits - 1}e}"
    mantissa, _e, exponent = text.partition("e")
    if not exponent:  # infinite
        return text
    exp = int(exponent)  # after rounding: 9.99996 to 4 figures is 1.000e+01
    if -4 <= exp < 7:
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


def fmt_quantity(value, display_unit: str, si: str, digits: int = 4) -> str:
    """An SI value (unit ``si``) as text in ``display_unit``: ``fmt_quantity(6e8, "V/um", "V/m")`` →
    ``"600 V/µm"``; ``—`` when missing."""
    v = to_display(value, si, display_unit)
    if v is None:
        return MISSING
    u = pretty_unit(display_unit)
    return f"{fmt_number(v, digits)} {u}" if u else fmt_number(v, digits)


def fmt_celsius(t_K: float | None, digits: int = 4) -> str:
    """A temperature in kelvin as ``°C`` text (``378.15`` → ``"105 °C"``); ``—`` when missing."""
    return MISSING if t_K is None else f"{fmt_number(t_K - 273.15, digits)} °C"
