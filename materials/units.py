"""Units at the edges: one pint registry for the whole program, SI inside.

The registry is created on first use (with pint's on-disk cache, so start-up stays fast), never at import.
Units are read as engineers type them (1cm2, 85C for a temperature, 500Vdc, 10 kV/mm, 500 µF): the rewrites are
:data:`_ALIASES` and :data:`_TEMPERATURE_LETTERS`, and the frequent results are looked up in :data:`_COMMON`.
"""

from __future__ import annotations

import functools
import math
import re

from materials.errors import UnitError

# Canonical SI unit of each dimension used in holdoff, as pint spells it.
SI_UNITS = {
    "1": "dimensionless",
    "V/m": "volt / meter",
    "K": "kelvin",
    "m": "meter",
    "m2": "meter ** 2",
    "m3": "meter ** 3",
    "Hz": "hertz",
    "kg/m3": "kilogram / meter ** 3",
    "W/(m K)": "watt / meter / kelvin",
    "ohm m": "ohm * meter",
    "J/(kg K)": "joule / kilogram / kelvin",
    "J/m3": "joule / meter ** 3",
    "J": "joule",
    "V": "volt",
    "F": "farad",
    "W": "watt",
    "A": "ampere",
    "kg": "kilogram",
    "C/m2": "coulomb / meter ** 2",
    "V/s": "volt / second",
    "1/(Pa m)": "1 / pascal / meter",
    "V/(Pa m)": "volt / pascal / meter",
    "Pa": "pascal",
    "s": "second",
    "ohm": "ohm",
    "K/W": "kelvin / watt",
}

# Typed spellings rewritten to pint's before any lookup, in this order. tests/test_units.py converts every form
# each one accepts with pint and compares.
_ALIASES = [
    (re.compile(r"µ|μ"), "u"),                                     # micro sign U+00B5, Greek mu U+03BC
    (re.compile(r"°\s*C\b|\bdeg\s*C\b|\bcelsius\b|℃"), "degC"),  # 125°C, 85 degC, 85 deg C
    (re.compile(r"°\s*F\b|\bdeg\s*F\b"), "degF"),
    (re.compile(r"\bohm\s*[·*]?\s*cm\b", re.I), "ohm*cm"),
    # Volts and amps typed with their waveform (500Vdc, 500 VDC, 230Vac, 230 Vrms, 1.2kVpk, 50Arms): the suffix is
    # dropped and the number taken as given, with no RMS/peak conversion.
    (re.compile(r"(?<![A-Za-z])([kmMu]?[VA])[ _]?(?i:dc|ac|rms|pk)\b"), r"\1"),
    (re.compile(r"·"), "*"),
    (re.compile(r"\^"), "**"),
    (re.compile(r"³"), "**3"),
    (re.compile(r"²"), "**2"),
    # A 2 or 3 straight after a length unit is its power: 1cm2, 25mm2, m2, kg/m3, J/cm3, in2.
    (re.compile(r"(?<![A-Za-z_])([kdcmun]?m|mil|in|ft)([23])(?![\d.])"), r"\1**\2"),
    # Dielectric strength in V/mil, as US tables print it: pint's "mil" is an angle, its thousandth inch is "thou".
    (re.compile(r"\bmil\b"), "thou"),
]

# Where a temperature is expected (si "K") a bare C or F is a temperature scale: 85C, -40 C, 185F. Everywhere else
# they stay coulomb and farad, so "85C" for a voltage is refused as a charge rather than guessed.
_TEMPERATURE_LETTERS = {"C": "degC", "F": "degF"}

#: Longest unit text read; a longer one is refused before any pattern or pint sees it.
MAX_UNIT_CHARS = 100

# ASCII digits only: Python's \\d and float() also read full-width and other scripts' digits ("１２"), which a
# user never means as a number in a data file.
_NUMBER = re.compile(r"\s*([-+]?(?:[0-9]+\.?[0-9]*|\.[0-9]+)(?:[eE][-+]?[0-9]+)?)")


@functools.lru_cache(maxsize=1)
def registry():
    """The program's single pint registry (created on first call, cached on disk by pint)."""
    import pint

    try:
        ureg = pint.UnitRegistry(cache_folder=":auto:", autoconvert_offset_to_baseunit=True)
    except Exception:  # noqa: BLE001  # pragma: no cover
        # Broad on purpose: a read-only folder (OSError) or a damaged cache, whose unpickling can fail with almost
        # any error, must not stop the program; the registry is then built without a cache.
        ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    return ureg


def _normalise_unit_text(text: str, si_key: str) -> str:
    """``text`` as pint spells it, read in the dimension ``si_key`` (see :data:`_ALIASES`)."""
    for pattern, repl in _ALIASES:
        text = pattern.sub(repl, text)
    text = text.strip()
    return _TEMPERATURE_LETTERS.get(text, text) if si_key == "K" else text


def _shown(text: str) -> str:
    """``text`` quoted for a message, cut short when it is long."""
    return f"'{text}'" if len(text) <= 40 else f"'{text[:40]}…' ({len(text)} characters)"


# The units every command line and target file uses, as (si_key, normalised unit text) -> (scale, offset). Looking
# these up here spares most commands the import of pint (a quarter of a second); tests/test_units.py checks every
# entry against pint itself. Anything else goes to pint.
_COMMON = {
    ("V", "V"): (1.0, 0.0), ("V", "kV"): (1e3, 0.0), ("V", "mV"): (1e-3, 0.0), ("V", "MV"): (1e6, 0.0),
    ("K", "K"): (1.0, 0.0), ("K", "degC"): (1.0, 273.15), ("K", "degF"): (5 / 9, 459.67 * 5 / 9),
    ("J", "J"): (1.0, 0.0), ("J", "kJ"): (1e3, 0.0), ("J", "mJ"): (1e-3, 0.0),
    ("J/m3", "J/m**3"): (1.0, 0.0), ("J/m3", "J/cm**3"): (1e6, 0.0),
    ("m", "m"): (1.0, 0.0), ("m", "mm"): (1e-3, 0.0), ("m", "um"): (1e-6, 0.0), ("m", "nm"): (1e-9, 0.0),
    ("m", "cm"): (1e-2, 0.0), ("m", "thou"): (2.54e-5, 0.0),
    ("m2", "m**2"): (1.0, 0.0), ("m2", "cm**2"): (1e-4, 0.0), ("m2", "mm**2"): (1e-6, 0.0),
    ("V/m", "V/m"): (1.0, 0.0), ("V/m", "V/um"): (1e6, 0.0), ("V/m", "kV/mm"): (1e6, 0.0),
    ("V/m", "MV/m"): (1e6, 0.0), ("V/m", "kV/cm"): (1e5, 0.0), ("V/m", "MV/cm"): (1e8, 0.0),
    ("V/m", "V/thou"): (1 / 2.54e-5, 0.0),
    ("Hz", "Hz"): (1.0, 0.0), ("Hz", "kHz"): (1e3, 0.0), ("Hz", "MHz"): (1e6, 0.0),
    ("A", "A"): (1.0, 0.0), ("A", "mA"): (1e-3, 0.0), ("A", "kA"): (1e3, 0.0),
    ("V/s", "V/s"): (1.0, 0.0), ("V/s", "kV/s"): (1e3, 0.0),
    ("kg/m3", "g/cm**3"): (1e3, 0.0), ("kg/m3", "kg/m**3"): (1.0, 0.0),
    ("m3", "m**3"): (1.0, 0.0), ("m3", "cm**3"): (1e-6, 0.0),
    ("kg", "kg"): (1.0, 0.0), ("kg", "g"): (1e-3, 0.0),
    ("F", "F"): (1.0, 0.0), ("F", "uF"): (1e-6, 0.0), ("F", "nF"): (1e-9, 0.0), ("F", "pF"): (1e-12, 0.0),
    ("W", "W"): (1.0, 0.0),
    ("1", "%"): (1e-2, 0.0),
}


@functools.lru_cache(maxsize=1024)
def _unit_factor(unit_text: str, si_key: str) -> tuple[float, float]:
    """(scale, offset) so that SI = value*scale + offset for ``unit_text`` in the dimension of ``si_key``
    (remembered: a report converts the same few units hundreds of thousands of times)."""
    if len(unit_text) > MAX_UNIT_CHARS:
        raise UnitError(f"unit {_shown(unit_text)} is longer than {MAX_UNIT_CHARS} characters")
    text = _normalise_unit_text(unit_text, si_key)
    if not text and si_key == "1":
        return 1.0, 0.0
    common = _COMMON.get((si_key, text))
    return common if common is not None else _pint_factor(text, si_key, shown=unit_text.strip())


@functools.lru_cache(maxsize=512)
def _pint_factor(unit_text: str, si_key: str, *, shown: str | None = None) -> tuple[float, float]:
    """:func:`_unit_factor` through pint (every unit pint knows, dimension checked); errors quote ``shown``."""
    shown = unit_text if shown is None else shown
    ureg = registry()
    target = SI_UNITS[si_key]
    try:
        unit = ureg.Unit(unit_text) if unit_text else ureg.dimensionless
    except Exception as exc:
        raise UnitError(f"unknown unit '{shown}'") from exc
    if unit.dimensionality != ureg.Unit(target).dimensionality:
        raise UnitError(f"unit '{shown}' is not a {si_key} quantity (it is {unit})")
    q0 = ureg.Quantity(0.0, unit).to(target).magnitude
    q1 = ureg.Quantity(1.0, unit).to(target).magnitude
    # pint composes factors in floating point (1 µm → 9.999999999999999e-07 m); 15 digits recover the exact one.
    return float(f"{q1 - q0:.15g}"), float(f"{q0:.15g}")


def to_si(value: float, unit_text: str, si_key: str) -> float:
    """Convert ``value`` in ``unit_text`` to the SI unit ``si_key`` (a key of :data:`SI_UNITS`).

    ``unit_text`` may be typed as engineers do (:data:`_ALIASES`, and C or F for a temperature); it is refused
    with a :class:`UnitError` when longer than :data:`MAX_UNIT_CHARS`, unknown, or of another dimension.
    """
    scale, offset = _unit_factor(unit_text, si_key)
    if 0 < scale < 1:
        inv = float(f"{1 / scale:.15g}")
        if inv == round(inv):
            # Dividing by an exact power (1e6) rounds correctly where multiplying by 1e-6 does not.
            return value / inv + offset
    return value * scale + offset


def from_si(value: float, unit_text: str, si_key: str) -> float:
    """Inverse of :func:`to_si`: an SI value expressed in ``unit_text``."""
    scale, offset = _unit_factor(unit_text, si_key)
    return (value - offset) / scale


def parse_quantity(text, *, si: str, default_unit: str | None = None, name: str = "value") -> float:
    """Parse ``"800"``, ``"800V"``, ``"0.8 kV"``, ``"500Vdc"`` or ``"1cm2"`` into an SI float of dimension ``si``.

    A bare number takes ``default_unit``; with no default (and a dimensioned ``si``) a bare number is an error,
    so that a breakdown field of 700 with no unit can never be read as 700 V/m. The unit is read by :func:`to_si`:
    a dc/ac/rms/pk suffix on volts or amps is dropped and the value taken as given (no waveform conversion), and
    a bare C or F means a temperature scale only when ``si`` is ``"K"``.
    """
    shown = _shown(str(text))
    if isinstance(text, (int, float)) and not isinstance(text, bool):
        number, unit = float(text), ""
    else:
        text = str(text)
        m = _NUMBER.match(text)
        if not m:
            raise UnitError(f"{name}: cannot read {shown} as a number with an optional unit")
        number, unit = float(m.group(1)), text[m.end():].strip()
    if math.isnan(number) or math.isinf(number):
        raise UnitError(f"{name}: {shown} is not a finite number")
    if not unit:
        if si == "1":
            return number
        if default_unit is None:
            raise UnitError(f"{name}: {shown} has no unit (expected a {si} quantity)")
        unit = default_unit
    try:
        value = to_si(number, unit, si)
    except UnitError as exc:
        raise UnitError(f"{name}: {exc}") from None
    if math.isinf(value):  # '1e308 kV' overflows on conversion
        raise UnitError(f"{name}: {shown} is too large to be a {si} quantity")
    if si == "K" and value < 0:
        raise UnitError(f"{name}: {shown} is below absolute zero")
    return value


# Default units of CLI options (DESIGN.md): a bare number takes these.
CLI_DEFAULTS = {
    "voltage": ("V", "V"),
    "temperature": ("degC", "K"),
    "energy": ("J", "J"),
    "energy_density": ("J/cm**3", "J/m3"),
    "thickness": ("um", "m"),
    "electrode_area": ("cm**2", "m2"),
    "capacitor_area": ("m**2", "m2"),
    "field": ("V/um", "V/m"),
    "frequency": ("Hz", "Hz"),
    "current": ("A", "A"),
    "ramp": ("V/s", "V/s"),
    "pressure": ("kPa", "Pa"),
    "capacitance": ("uF", "F"),
    "time": ("h", "s"),
    "resistance": ("ohm", "ohm"),
    "thermal_resistance": ("K/W", "K/W"),
}


# Plausible SI range of each option kind: (lowest, highest), the lowest excluded (every one of these quantities is
# positive, a temperature above 0 K). Wide on purpose: they catch sign and unit slips (--area "1e6 m^2" for an
# electrode, --temp 5000), not unusual designs.
OPTION_RANGES = {
    "voltage": (0.0, 1e8),
    "temperature": (0.0, 2300.0),
    "energy": (0.0, 1e12),
    "energy_density": (0.0, 1e10),
    "thickness": (0.0, 1.0),  # gas and liquid gaps too
    "electrode_area": (0.0, 10.0),
    "capacitor_area": (0.0, 1e5),
    "field": (0.0, 1e10),
    "frequency": (0.0, 1e12),
    "current": (0.0, 1e6),
    "ramp": (0.0, 1e13),
    "pressure": (0.0, 1e9),
    "capacitance": (0.0, 1e4),
    "time": (0.0, 1e13),             # about 300,000 years
    "resistance": (0.0, 1e6),        # a series resistance may be zero
    "thermal_resistance": (0.0, 1e5),
}
#: Option kinds whose lower bound is allowed itself.
_ZERO_ALLOWED = {"resistance"}


def check_range(value: float, kind: str, *, name: str, shown) -> float:
    """``value`` (SI, of CLI option ``kind``) if it lies in :data:`OPTION_RANGES`; else one refusal saying why."""
    from materials.numfmt import fmt_number

    lo, hi = OPTION_RANGES[kind]
    si = CLI_DEFAULTS[kind][1]
    if not (value > lo or (kind in _ZERO_ALLOWED and value == lo)):
        what = ("above absolute zero" if kind == "temperature" else
                "zero or more" if kind in _ZERO_ALLOWED else "positive")
        raise UnitError(f"{name}: {_shown(str(shown))} must be {what}")
    if value > hi:
        raise UnitError(f"{name}: {_shown(str(shown))} = {fmt_number(value, 6)} {si} is above the plausible "
                        f"{fmt_number(hi, 6)} {si} (a unit slip?)")
    return value


def parse_option(text, kind: str, *, name: str | None = None) -> float:
    """Parse a CLI option of ``kind`` (a key of :data:`CLI_DEFAULTS`) into SI, range-checked
    (:data:`OPTION_RANGES`)."""
    default, si = CLI_DEFAULTS[kind]
    name = name or kind
    return check_range(parse_quantity(text, si=si, default_unit=default, name=name), kind, name=name, shown=text)


def kelvin_to_celsius(t_K: float) -> float:
    return t_K - 273.15


def celsius_to_kelvin(t_C: float) -> float:
    return t_C + 273.15
