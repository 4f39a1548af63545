"""What the program assumes, per family, where a breakdown record lacks its Weibull shape or its test electrode area.

A missing number is an assumption with a stated range, never a silent default: the evaluation uses the typical
value, marks the cell as assumed, and the Monte Carlo of a shortlist draws over the whole range so that the
probabilities of ranking first show what the assumption costs. ``--strict`` refuses assumptions instead.

The ranges are deliberately wide priors of kind ``common-practice`` (facts of the trade with no single source), not
measurements; where a record states its own shape or area, that value is used and these are not.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np


@dataclass(frozen=True)
class Prior:
    typical: float
    low: float
    high: float
    source: str          # key, kind common-practice
    citation: str


_FILM_SHAPE = Prior(10.0, 5.0, 20.0, "common-practice-weibull-shape-films",
                    "Trade knowledge: short-time ramp breakdown of capacitor films on small electrodes gives Weibull "
                    "shapes of about 5 to 20 (wide prior, not a measurement; weakest-link scaling per IEEE Std 930 / "
                    "IEC 62539 clause 12)")
_CERAMIC_SHAPE = Prior(8.0, 4.0, 15.0, "common-practice-weibull-shape-ceramics",
                       "Trade knowledge: breakdown of ceramic, glass, mica and oxide dielectric layers gives Weibull "
                       "shapes of about 4 to 15 on small electrodes (wide prior, not a measurement)")
_FLUID_SHAPE = Prior(10.0, 5.0, 30.0, "common-practice-weibull-shape-fluids",
                     "Trade knowledge: gas and liquid gaps break down with little scatter at a given gap (Weibull "
                     "shapes of about 5 to 30; wide prior, not a measurement; their strength is set by gap, pressure "
                     "and stressed volume)")
TEST_AREA = Prior(1e-4, 1e-5, 1e-3, "common-practice-breakdown-test-area",
                  "Trade knowledge: laboratory breakdown tests use small electrodes of about 0.1 to 10 cm² (e.g. the "
                  "6.35 mm electrodes of ASTM D149 film tests, about 0.3 cm², up to a few cm²); 1 cm² is the usual "
                  "coupon (wide prior, not a measurement)")

SHAPE = {"polymer-film": _FILM_SHAPE, "composite": _CERAMIC_SHAPE, "ceramic-class-1": _CERAMIC_SHAPE,
         "ceramic-class-2": _CERAMIC_SHAPE, "ceramic-bulk": _CERAMIC_SHAPE, "glass": _CERAMIC_SHAPE,
         "mica": _CERAMIC_SHAPE, "oxide-film": _CERAMIC_SHAPE, "liquid": _FLUID_SHAPE, "gas": _FLUID_SHAPE}


def shape_prior(family: str) -> Prior:
    return SHAPE.get(family, _FILM_SHAPE)


def shape_priors(families) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Typical, low and high assumed Weibull shape of each family in ``families``."""
    ps = [shape_prior(f) for f in families]
    return (np.array([p.typical for p in ps], dtype=float), np.array([p.low for p in ps], dtype=float),
            np.array([p.high for p in ps], dtype=float))


# --- breakdown below the coldest temperature measured ------------------------------------------------------------

#: The electric strength of solid dielectrics is nearly independent of temperature below a critical temperature and
#: falls above it (electronic breakdown at low temperature, thermal and electromechanical above): a breakdown value
#: held at the coldest temperature measured is a lower bound colder still. Used for solids only; a gas's strength
#: follows its density and a liquid's its state, neither covered by this.
COLD_HOLD = ("paper-breakdown-critical-temperature",
             "M. Ieda, 'Dielectric Breakdown Process of Polymers', IEEE Transactions on Electrical Insulation EI-15(3) "
             "(1980), review of breakdown against temperature (abstract at "
             "https://scilit.net/publications/bcc9eaed5c5c2ba3f3906a57cc2484b3); the 'characteristic sharp reduction "
             "in electric strength exhibited by most polymeric materials at a critical temperature Tc', electronic "
             "breakdown below it, as stated at https://scilit.com/publications/ea41f30dd1f4a3c31f6b812f1fdcdb74 "
             "(volume and pages from memory, not checked)")
COLD_HOLD_EXCLUDED = ("gas", "liquid")


def sources() -> dict[str, dict]:
    """The priors' and laws' sources, as the shortlist's ``sources`` map shows them."""
    out = {}
    for p in (*SHAPE.values(), TEST_AREA):
        out[p.source] = {"kind": "common-practice", "citation": p.citation}
    out[MLCC_THICKNESS_EXPONENT.source] = {"kind": "paper", "citation": MLCC_THICKNESS_EXPONENT.citation}
    out[ZHAO_LIU[0]] = {"kind": "paper", "citation": ZHAO_LIU[1]}
    out[STRESSED_VOLUME[0]] = {"kind": "common-practice", "citation": STRESSED_VOLUME[1]}
    out[LIQUID_TEST_GAP.source] = {"kind": "common-practice", "citation": LIQUID_TEST_GAP.citation}
    out[COLD_HOLD[0]] = {"kind": "paper", "citation": COLD_HOLD[1]}
    for p in (*LIFE_EXPONENT.values(), RAMP_TIME):
        out[p.source] = {"kind": _LIFE_KINDS[p.source], "citation": p.citation}
    return out


# --- life ------------------------------------------------------------------------------------------------------

#: Exponent n of the inverse power law of life (L ∝ E^−n) where a material has no stored ``life_exponent``.
_CERAMIC_LIFE = Prior(3.0, 2.0, 5.0, "common-practice-life-exponent-ceramics",
                      "Trade knowledge: voltage-acceleration exponents of ceramic capacitor life tests of about 2 to "
                      "5; n = 3 is the 8:1 acceleration at 200 % of rated voltage of MIL-PRF-123 §1.1 (wide prior, not "
                      "a measurement)")
_FILM_LIFE = Prior(8.0, 5.0, 12.0, "recollection-life-exponent-films",
                   "Remembered, unchecked: voltage exponents of polymer film capacitor life models of about 5 to 12 "
                   "(wide prior, not a measurement)")
_SOLID_LIFE = Prior(6.0, 3.0, 12.0, "recollection-life-exponent-solids",
                    "Remembered, unchecked: inverse-power-law exponents of voltage endurance of glass, mica, oxide "
                    "and composite insulation of about 3 to 12 (wide prior, not a measurement)")
LIFE_EXPONENT = {"polymer-film": _FILM_LIFE, "ceramic-class-1": _CERAMIC_LIFE, "ceramic-class-2": _CERAMIC_LIFE,
                 "ceramic-bulk": _CERAMIC_LIFE, "glass": _SOLID_LIFE, "mica": _SOLID_LIFE, "oxide-film": _SOLID_LIFE,
                 "composite": _SOLID_LIFE}
#: Families without a solid's life law (a gas or liquid gap does not age as a solid does): life is not judged.
NO_LIFE_LAW = ("gas", "liquid")
#: Time a short-time (ramp) breakdown test takes to reach breakdown, s: the rate of rise is chosen so that
#: breakdown falls between 10 s and 20 s. Converts a stored short-term breakdown value into a constant-stress life.
RAMP_TIME = Prior(15.0, 10.0, 20.0, "standard-iec-60243-1-short-time-test",
                  "IEC 60243-1, Electric strength of insulating materials - Test methods - Part 1: Tests at power "
                  "frequencies, short-time (rapid-rise) test: voltage raised from zero at a uniform rate such that "
                  "breakdown occurs between 10 s and 20 s after the start")
_LIFE_KINDS = {_CERAMIC_LIFE.source: "common-practice", _FILM_LIFE.source: "recollection",
               _SOLID_LIFE.source: "recollection", RAMP_TIME.source: "standard"}


def life_priors(families) -> tuple[np.ndarray, np.ndarray, np.ndarray, list[str]]:
    """Typical, low and high assumed life exponent of each family (NaN: no life law), and the source key."""
    ps = [None if f in NO_LIFE_LAW else LIFE_EXPONENT.get(f, _SOLID_LIFE) for f in families]
    nan = float("nan")
    return (np.array([p.typical if p else nan for p in ps], dtype=float),
            np.array([p.low if p else nan for p in ps], dtype=float),
            np.array([p.high if p else nan for p in ps], dtype=float), [p.source if p else "" for p in ps])


def assumed_life_note(value: float, source: str) -> str:
    """The words for an assumed life exponent."""
    p = next(p for p in LIFE_EXPONENT.values() if p.source == source)
    return f"life_exponent not in the data: n = {value:g} assumed (range {p.low:g}–{p.high:g}, {p.source})"


def assumed_shape_note(value: float, prior: Prior) -> str:
    """The words for an assumed Weibull shape (every output that assumes one says it this way)."""
    return (f"weibull_shape not in the data: β = {value:g} assumed (range {prior.low:g}–{prior.high:g}, "
            f"{prior.source})")


def assumed_area_note(value_m2: float, prior: Prior = TEST_AREA) -> str:
    """The words for an assumed breakdown test electrode area."""
    return (f"breakdown test electrode area not stated: {value_m2 * 1e4:g} cm² assumed (range "
            f"{prior.low * 1e4:g}–{prior.high * 1e4:g} cm², {prior.source})")


# --- thickness law ---------------------------------------------------------------------------------------------

#: Breakdown falls with thickness as ``E = E0·(d/d0)^−n``. For BaTiO3 multilayer capacitors the exponent is
#: measured; elsewhere the published relation of Zhao & Liu gives it from the breakdown scatter (below).
MLCC_THICKNESS_EXPONENT = Prior(
    0.50, 0.44, 0.56, "paper-mlcc-thickness-exponent",
    "'Dependence of breakdown field on dielectric (interelectrode) thickness in base-metal electroded multilayer "
    "capacitors': BaTiO3 MLCCs with Ni electrodes (about 4100 parts), E_B = const·d^-n with n = 0.50 +/- 0.06 for "
    "6 < d < 22 um (abstract read; authors and journal not confirmed)")
ZHAO_LIU = ("paper-zhao-liu-2020-thickness",
            "L. Zhao, C.L. Liu, 'Review and Mechanism of the Thickness Effect of Solid Dielectrics', Nanomaterials "
            "10(12), 2473 (2020), doi:10.3390/nano10122473: E_BD = E1·d^-a with the exponent a approximately the "
            "relative standard error of the breakdown (Weibull) distribution")
#: A thickness law carries a breakdown value at most this factor away from the thickness it was measured on.
LAW_FACTOR = 10.0
#: Families whose strength is not a solid's: gases and liquids follow gap, pressure and volume laws instead.
NO_THICKNESS_LAW = ("gas", "liquid")
#: Families never scaled by electrode area with a Weibull shape: a gas gap's strength is set by gap and pressure
#: (Paschen's law, :mod:`materials.gas`); its scatter does not grow into a weakest-link area effect.
NO_AREA_LAW = ("gas",)


def weibull_relative_spread(shape):
    """Coefficient of variation of a Weibull distribution of shape β: √(Γ(1+2/β) − Γ(1+1/β)²)/Γ(1+1/β)."""
    from math import lgamma

    b = np.asarray(shape, dtype=float)
    with np.errstate(all="ignore"):
        g1 = np.exp(np.vectorize(lgamma)(1.0 + 1.0 / b))
        g2 = np.exp(np.vectorize(lgamma)(1.0 + 2.0 / b))
        return np.sqrt(np.maximum(g2 - g1 * g1, 0.0)) / g1


#: Liquids: breakdown is a weakest-link event in the stressed volume, so at a fixed electrode area it falls with the
#: gap as ``E ∝ (A·d)^(-1/β)``, i.e. the thickness law with ``n = 1/β``.
STRESSED_VOLUME = ("common-practice-stressed-liquid-volume",
                   "Trade knowledge: the breakdown strength of an insulating liquid falls as the stressed liquid "
                   "volume grows (the 'stressed oil volume' of transformer design); a weakest link in volume gives "
                   "E2 = E1·(V1/V2)^(1/β), the volume form of the weakest-link scaling of IEEE Std 930 / IEC 62539 "
                   "(no single published exponent is claimed; β is the liquid's stated Weibull shape or the stated "
                   "fluid range)")
#: The gap of a liquid's breakdown figure that states none: the quality test of IEC 60156 (2.5 mm between
#: spherical-cap electrodes); ASTM D1816 uses 1 or 2 mm.
LIQUID_TEST_GAP = Prior(2.5e-3, 1e-3, 2.5e-3, "common-practice-liquid-test-gap",
                        "Trade knowledge: insulating-liquid breakdown figures come from the quality tests of IEC 60156 "
                        "(2.5 mm gap) or ASTM D1816 (1 or 2 mm gap); a figure that states no gap is taken at 2.5 mm "
                        "(assumed, not a measurement)")


def thickness_exponents(families, shapes) -> tuple[np.ndarray, list[str]]:
    """Per material, the exponent n of the thickness law (NaN: no law) and the source key it rests on."""
    n = np.asarray(weibull_relative_spread(shapes), dtype=float).copy()
    src = [ZHAO_LIU[0]] * n.size
    b = np.broadcast_to(np.asarray(shapes, dtype=float), n.shape)
    for i, f in enumerate(families):
        if f == "ceramic-class-2":
            n[i], src[i] = MLCC_THICKNESS_EXPONENT.typical, MLCC_THICKNESS_EXPONENT.source
        elif f == "liquid":
            n[i], src[i] = 1.0 / b[i], STRESSED_VOLUME[0]
        elif f in NO_THICKNESS_LAW:
            n[i], src[i] = np.nan, ""
    return n, src
