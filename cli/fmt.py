"""Display of SI values in the units an engineer reads (V/µm, °C, g/cm³, J/cm³).

Numbers and units are written by :mod:`materials.numfmt` (the program's one formatter); this module adds what
the terminal shows of a property value: its display unit and its conditions.
"""

from __future__ import annotations

from materials.numfmt import fmt_celsius, fmt_quantity


def display(prop: str, value: float | None, *, with_unit: bool = True, digits: int = 3) -> str:
    """``value`` (SI) of ``prop`` in its display unit."""
    from materials.numfmt import fmt_number, to_display
    from materials.properties import PROPERTIES

    p = PROPERTIES[prop]
    if value is not None and prop == "relative_permittivity" and 1.0 <= value < 1.1:
        digits = max(digits, 6)  # a gas: 1.0006 must not print as 1.001
    if with_unit:
        return fmt_quantity(value, p.display_unit, p.si, digits)
    return fmt_number(to_display(value, p.si, p.display_unit), digits)


def conditions(v) -> str:
    """The stated conditions of a value row, compactly."""
    parts = []
    if v.temperature_K is not None:
        parts.append(fmt_celsius(v.temperature_K))
    if v.frequency_Hz is not None:
        parts.append(fmt_quantity(v.frequency_Hz, "Hz", "Hz") if v.frequency_Hz < 1e3 else
                     fmt_quantity(v.frequency_Hz, "kHz", "Hz") if v.frequency_Hz < 1e6 else
                     fmt_quantity(v.frequency_Hz, "MHz", "Hz"))
    if v.field_V_per_m is not None:
        parts.append("bias " + fmt_quantity(v.field_V_per_m, "V/um", "V/m"))
    if v.thickness_m is not None:
        parts.append("d " + (fmt_quantity(v.thickness_m, "um", "m") if v.thickness_m < 1e-3 else
                             fmt_quantity(v.thickness_m, "mm", "m")))
    if v.area_m2 is not None:
        parts.append("A " + fmt_quantity(v.area_m2, "cm**2", "m2"))
    return ", ".join(parts) or "not stated"
