"""The property vocabulary: key, SI unit, meaning, and the plausible range used by validation.

Ranges are deliberately wide (they catch unit slips and typos, not unusual materials); the relative permittivity
range also depends on the material family, so that εr = 2200 for a polymer film is refused.
"""

from __future__ import annotations

from dataclasses import dataclass

from materials.numfmt import fmt_number

FAMILIES = (
    "polymer-film", "ceramic-class-1", "ceramic-class-2", "ceramic-bulk", "glass", "mica", "oxide-film",
    "liquid", "gas", "composite",
)
SOURCE_KINDS = ("handbook", "standard", "paper", "web", "common-practice", "recollection", "lab", "invented")
PUBLISHED_KINDS = ("handbook", "standard", "paper", "web")
ORIGINS = ("catalog", "lab", "user")
RESPONSES = ("linear", "nonlinear")


@dataclass(frozen=True)
class Property:
    key: str
    si: str            # key of materials.units.SI_UNITS
    display_unit: str  # how the terminal shows it
    meaning: str
    low: float         # plausible range, SI
    high: float


PROPERTIES: dict[str, Property] = {p.key: p for p in (
    Property("relative_permittivity", "1", "", "real part εr′ (small-signal; differential when a field is given)",
             1.0, 1e5),
    Property("loss_tangent", "1", "", "dissipation factor tan δ", 0.0, 1.0),
    Property("breakdown_field", "V/m", "V/um", "short-term breakdown strength (Weibull scale where known)",
             1e5, 5e9),
    Property("weibull_shape", "1", "", "Weibull shape β of the breakdown distribution", 0.3, 200.0),
    Property("max_temperature", "K", "degC", "rated maximum operating temperature", 150.0, 2300.0),
    Property("min_temperature", "K", "degC", "rated minimum operating temperature", 1.0, 400.0),
    Property("density", "kg/m3", "g/cm**3", "mass density", 0.05, 2.5e4),
    Property("thermal_conductivity", "W/(m K)", "W/(m K)", "thermal conductivity", 1e-3, 500.0),
    Property("volume_resistivity", "ohm m", "ohm m", "volume resistivity", 1e2, 1e22),
    Property("specific_heat", "J/(kg K)", "J/(kg K)", "specific heat capacity", 50.0, 1e4),
    Property("capacitance_change", "1", "%", "ΔC/C against 25 °C at the stated temperature or field", -1.0, 1.0),
    Property("min_thickness", "m", "um", "thinnest layer made in practice", 1e-9, 1e-2),
    Property("self_healing", "1", "", "1 if the dielectric clears faults (metallised film), else 0", 0.0, 1.0),
    Property("recoverable_energy_density", "J/m3", "J/cm**3", "recovered energy density from a loop",
             0.0, 5e8),
    Property("efficiency", "1", "%", "recovered / stored energy of a loop", 0.0, 1.0),
    Property("max_thickness", "m", "um",
             "thickest single layer made in practice (forming-voltage limit, green-tape or film gauge)", 1e-9, 1.0),
    Property("thickness_exponent", "1", "", "exponent n of the thickness law E_bd ∝ d^−n", 0.0, 1.5),
    Property("temperature_index", "K", "degC", "resin or film temperature index (not a capacitor rating)",
             150.0, 2300.0),
    Property("life_exponent", "1", "", "exponent n of the inverse-power life law t ∝ E^−n (or V^−n)", 0.5, 60.0),
    Property("activation_energy", "J", "eV", "activation energy of the Arrhenius life law", 1.6e-21, 8e-19),
    Property("townsend_a", "1/(Pa m)", "1/(Pa m)", "Townsend ionisation constant A of Paschen's law", 0.1, 100.0),
    Property("townsend_b", "V/(Pa m)", "V/(Pa m)", "Townsend constant B of Paschen's law", 1.0, 2000.0),
    Property("secondary_emission", "1", "", "secondary-electron emission coefficient γ of the cathode", 1e-6, 1.0),
)}

# εr plausibility by family (SI, dimensionless); other families use the property's own range.
PERMITTIVITY_BY_FAMILY = {
    "polymer-film": (1.5, 100.0),
    "gas": (1.0, 1.1),
    "liquid": (1.5, 100.0),
    "glass": (3.0, 20.0),
    "mica": (4.0, 12.0),
    "oxide-film": (3.0, 200.0),
    "ceramic-class-1": (5.0, 1000.0),
    "ceramic-class-2": (100.0, 50000.0),
    "ceramic-bulk": (3.0, 50000.0),
    "composite": (1.5, 50000.0),
}


def plausible_range(prop: str, family: str | None = None) -> tuple[float, float]:
    """The (low, high) plausible SI range of ``prop`` for a material of ``family``."""
    if prop == "relative_permittivity" and family in PERMITTIVITY_BY_FAMILY:
        return PERMITTIVITY_BY_FAMILY[family]
    p = PROPERTIES[prop]
    return p.low, p.high


def check_plausible(prop: str, value: float, family: str | None = None) -> str | None:
    """None if ``value`` (SI) is plausible, else a sentence saying why not."""
    lo, hi = plausible_range(prop, family)
    if lo <= value <= hi:
        return None
    p = PROPERTIES[prop]
    unit = p.si if p.si != "1" else "(dimensionless)"
    fam = f" for a {family} material" if prop == "relative_permittivity" and family else ""
    return (f"{prop} = {fmt_number(value, 6)} {unit} is outside the plausible range {fmt_number(lo, 6)}…"
            f"{fmt_number(hi, 6)} {unit}{fam}"
            " (a unit slip?)")


def outside_range(value: float, low: float | None, high: float | None) -> bool:
    """True if ``value`` lies outside [low, high] by more than rounding (either bound may be None)."""
    # The tolerance is on magnitudes: ``low * (1 - eps)`` moves a negative bound the wrong way.
    return ((low is not None and value < low - 1e-12 * abs(low))
            or (high is not None and value > high + 1e-12 * abs(high)))
