"""Display of SI values in the units an engineer reads (V/µm, °C, g/cm³, J/cm³)."""

from __future__ import annotations

from cli.output import fmt

PRETTY = {"um": "µm", "degC": "°C", "g/cm**3": "g/cm³", "J/cm**3": "J/cm³", "V/um": "V/µm", "%": "%",
          "ohm m": "Ω·m", "W/(m K)": "W/(m·K)", "J/(kg K)": "J/(kg·K)", "cm**2": "cm²", "m**2": "m²", "cm**3": "cm³", "uF": "µF",
          "": ""}


def pretty_unit(unit: str) -> str:
    return PRETTY.get(unit, unit)


def display(prop: str, value: float | None, *, with_unit: bool = True, digits: int = 4) -> str:
    """``value`` (SI) of ``prop`` in its display unit."""
    if value is None:
        return "—"
    from materials.properties import PROPERTIES

    p = PROPERTIES[prop]
    u = p.display_unit
    if prop == "relative_permittivity" and 1.0 <= value < 1.1:
        digits = max(digits, 6)  # a gas: 1.0006 must not print as 1.001
    if u == "%":
        v = value * 100
    elif u and u != p.si:
        from materials.units import from_si

        v = from_si(value, u, p.si)
    else:
        v = value
    s = fmt(v, digits)
    return f"{s} {pretty_unit(u)}".rstrip() if with_unit else s


def celsius(t_K: float | None) -> str:
    return "—" if t_K is None else f"{t_K - 273.15:.4g} °C"


def quantity(value: float | None, unit: str, si: str, digits: int = 4) -> str:
    """An SI value shown in ``unit`` (a pint unit string)."""
    if value is None:
        return "—"
    from materials.units import from_si

    return f"{fmt(from_si(value, unit, si), digits)} {pretty_unit(unit)}"


def conditions(v) -> str:
    """The stated conditions of a value row, compactly."""
    parts = []
    if v.temperature_K is not None:
        parts.append(celsius(v.temperature_K))
    if v.frequency_Hz is not None:
        parts.append(quantity(v.frequency_Hz, "Hz", "Hz") if v.frequency_Hz < 1e3 else
                     quantity(v.frequency_Hz, "kHz", "Hz") if v.frequency_Hz < 1e6 else
                     quantity(v.frequency_Hz, "MHz", "Hz"))
    if v.field_V_per_m is not None:
        parts.append("bias " + quantity(v.field_V_per_m, "V/um", "V/m"))
    if v.thickness_m is not None:
        parts.append("d " + (quantity(v.thickness_m, "um", "m") if v.thickness_m < 1e-3 else
                             quantity(v.thickness_m, "mm", "m")))
    if v.area_m2 is not None:
        parts.append("A " + quantity(v.area_m2, "cm**2", "m2"))
    return ", ".join(parts) or "not stated"
