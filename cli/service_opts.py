"""The options of a part's service conditions, shared by ``size`` and ``shortlist``: capacitance, ripple current,
series and thermal resistance, ambient, service life and its failure fraction."""

from typing import Annotated, Optional

import typer

CapacitanceOpt = Annotated[Optional[str], typer.Option("--capacitance", help="Capacitance of the part instead of an "
                                                       "energy (µF unless a unit); sized as ½·C·V².")]
RippleOpt = Annotated[Optional[str], typer.Option("--ripple", metavar="I@F,…", help="Ripple current spectrum: rms "
                                                  "current @ frequency per harmonic, e.g. 30A@100Hz,20A@10kHz.")]
SeriesResistanceOpt = Annotated[Optional[str], typer.Option("--series-resistance", help="Electrode and contact "
                                                            "resistance of the part (Ω unless a unit).")]
ThermalResistanceOpt = Annotated[Optional[str], typer.Option("--thermal-resistance", help="Hot spot to ambient "
                                                             "(K/W unless a unit); with a ripple the part is "
                                                             "designed at its hot spot.")]
AmbientOpt = Annotated[Optional[str], typer.Option("--ambient", help="Ambient of the thermal path (°C unless a "
                                                   "unit; default the top of the range).")]
LifeOpt = Annotated[Optional[str], typer.Option("--life", help="Service life (h unless a unit); the design field "
                                                "holds it at the failure fraction.")]
LifeFractionOpt = Annotated[Optional[float], typer.Option("--life-fraction", help="Fraction of parts allowed to "
                                                          "fail within the life (default 0.01).")]

PackingOpt = Annotated[Optional[float], typer.Option("--packing-factor", help="Dielectric volume over the part's "
                                                     "volume, for the device-level energy density (e.g. 0.5).")]


def parse_service(*, capacitance=None, ripple=None, series_resistance=None, thermal_resistance=None, ambient=None,
                  life=None) -> dict:
    """The service options as SI keyword arguments of :func:`ranking.part.size_material` (None where not given)."""
    from materials.units import parse_option
    from ranking.target import parse_ripple

    def q(text, kind, option):
        return None if text is None else parse_option(text, kind, name=option)

    return {"capacitance_F": q(capacitance, "capacitance", "--capacitance"),
            "ripple": parse_ripple(ripple) if ripple else (),
            "series_resistance_ohm": q(series_resistance, "resistance", "--series-resistance") or 0.0,
            "thermal_resistance_K_per_W": q(thermal_resistance, "thermal_resistance", "--thermal-resistance"),
            "ambient_K": q(ambient, "temperature", "--ambient"), "life_s": q(life, "time", "--life")}
