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


def sources() -> dict[str, dict]:
    """The priors' sources, as the shortlist's ``sources`` map shows them."""
    out = {}
    for p in (*SHAPE.values(), TEST_AREA):
        out[p.source] = {"kind": "common-practice", "citation": p.citation}
    return out


def assumed_shape_note(value: float, prior: Prior) -> str:
    """The words for an assumed Weibull shape (every output that assumes one says it this way)."""
    return (f"weibull_shape not in the data: β = {value:g} assumed (range {prior.low:g}–{prior.high:g}, "
            f"{prior.source})")


def assumed_area_note(value_m2: float, prior: Prior = TEST_AREA) -> str:
    """The words for an assumed breakdown test electrode area."""
    return (f"breakdown test electrode area not stated: {value_m2 * 1e4:g} cm² assumed (range "
            f"{prior.low * 1e4:g}–{prior.high * 1e4:g} cm², {prior.source})")
