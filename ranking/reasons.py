"""Reason codes and their words: every verdict of the evaluation engine, written once.

The engine (:mod:`ranking.engine`) decides with arrays and records, per candidate, a code and the numbers the
code quotes; :func:`words` turns them into the sentence the terminal, JSON and reports show. A message exists only
here: ``git grep`` for any of them finds this file.
"""

from __future__ import annotations

from materials.lookup import fmt_temperature as _c
from materials.numfmt import fmt_number
from materials.priors import assumed_area_note, assumed_life_note, assumed_shape_note, shape_prior

_n = fmt_number  # the one number formatter, short for the sentences below

#: How to let missing breakdown data take the stated priors (assumptions priced by the Monte Carlo).
DEFAULTS_HINT = "without --strict, or strict = true in a target file, the family's stated range is assumed"


#: How to use a value outside its data anyway (held at the end of its data and flagged in its cell).
EXTRAPOLATE_HINT = "--extrapolate, or extrapolate = true in a target file, uses it held at the end of its data, flagged"


def _um(d_m: float) -> str:
    return f"{fmt_number(d_m * 1e6)} µm"


def _vum(e: float) -> str:
    return f"{fmt_number(e / 1e6)} V/µm"


def _h(t_s: float) -> str:
    return f"{t_s / 3600:,.6g} h"


TEXT = {
    # hard constraints
    "family": lambda q: f"family {q['family']} not among the target's ({', '.join(q['families'])})",
    "rated-missing": lambda q: f"{q['prop']} missing: rated temperature range not stated",
    "rated-outside": lambda q: (f"rated to {_c(q['rated_K'])} ({q['prop'].split('_')[0]}); target needs "
                                f"{_c(q['need_K'])}"),
    "property-missing": lambda q: f"{q['prop']} missing",
    "nonlinear-no-data": lambda q: "nonlinear response but no DC-bias curve or loop data: its energy cannot be "
                                   "computed",
    "shape-missing": lambda q: ("weibull_shape missing: breakdown cannot be scaled to the part's area "
                                f"({DEFAULTS_HINT})"),
    "life-exponent-missing": lambda q: ("life_exponent missing: the service life cannot be judged "
                                        f"({DEFAULTS_HINT})"),
    "test-area-missing": lambda q: ("breakdown test electrode area not stated: cannot scale to the part's area "
                                    f"({DEFAULTS_HINT})"),
    "value-invalid": lambda q: (f"stored {q['prop']} {_n(q['value'])} (source {q['source']}) is not a positive "
                                "number: the candidate cannot be evaluated"),
    "shape-too-low": lambda q: (f"Weibull shape {_n(q['shape'])} (source {q['source']}) is 1 or less: a larger part "
                                "is weaker faster than it stores more, so no self-consistent size exists"),
    "no-size": lambda q: (f"no self-consistent size found for {_n(q['energy_J'])} J at {_n(q['voltage_V'])} V "
                          "(the sizing did not converge)"),
    "above-loop": lambda q: (f"runs at {_vum(q['field_V_per_m'])}, above the largest field of its loop data "
                             f"({_vum(q['loop_V_per_m'])}): its energy there is not known"),
    "loop-top": lambda q: (f"loop data stop at {_vum(q['loop_V_per_m'])}: energy taken there, not at "
                           f"{_vum(q['field_V_per_m'])}"),
    "area-impractical": lambda q: (f"needs {_n(q['area_m2'])} m² of active area (more than {_n(q['limit_m2'])} m²): "
                                   f"with Weibull shape {_n(q['shape'])} the weakest-link derating leaves no practical "
                                   "part"),
    "thinner-than-made": lambda q: (f"{_um(q['thickness_m'])} is thinner than the thinnest layer made "
                                    f"({_um(q['min_thickness_m'])})"),
    "over-design-field": lambda q: (f"{_um(q['thickness_m'])} at {_n(q['voltage_V'])} V runs at "
                                    f"{_vum(q['field_V_per_m'])}, above the design field {_vum(q['design_V_per_m'])} "
                                    f"(breakdown at {_c(q['breakdown_K'])}, β {_n(q['shape'])}, "
                                    f"p {_n(q['failure_probability'])})"),
    "energy-short": lambda q: (f"stores {_n(q['energy_J_per_m3'] / 1e6)} J/cm³ at {_n(q['voltage_V'])} V, below the "
                               f"target {_n(q['target_J_per_m3'] / 1e6)} J/cm³"
                               + (f" (needs a layer thinner than the {_um(q['min_thickness_m'])} that can be made)"
                                  if q['at_min'] else
                                  f" (design field {_vum(q['design_V_per_m'])}, breakdown at {_c(q['breakdown_K'])})")),
    "heat-unknown": lambda q: "loss_tangent missing: the heating by the ripple current cannot be computed",
    "thermal-runaway": lambda q: (f"thermal runaway: {_n(q['power_W'])} W of ripple loss at {_c(q['ambient_K'])} "
                                  f"ambient through {_n(q['rth_K_per_W'])} K/W finds no steady hot spot"),
    "hot-spot-over-rating": lambda q: (f"hot spot {_c(q['hot_K'])} ({_n(q['power_W'])} W through "
                                       f"{_n(q['rth_K_per_W'])} K/W) above its rated {_c(q['rated_K'])}"),
    "life-no-size": lambda q: (f"life law (n {_n(q['n'])}) leaves an effective Weibull shape {_n(q['shape'])}: a "
                               "larger part loses life faster than it gains volume, so no size holds the life"),
    "life-short": lambda q: (f"{_um(q['thickness_m'])} at {_n(q['voltage_V'])} V runs at {_vum(q['field_V_per_m'])}, "
                             f"above the field {_vum(q['life_V_per_m'])} that holds {_h(q['life_s'])} at "
                             f"{_n(q['fraction'])} failed (n {_n(q['n'])})"),
    "loss-over": lambda q: f"loss tangent {_n(q['loss'])} above the limit {_n(q['limit'])}",
    "loss-missing": lambda q: "loss_tangent missing (the target limits it)",
    # what binds a ranked candidate
    "binding-fixed": lambda q: f"fixed layer {_um(q['thickness_m'])}: {q['ratio']:.0%} of the design field",
    "binding-min-thickness": lambda q: (f"thinnest layer made ({_um(q['min_thickness_m'])}) at {_n(q['voltage_V'])} V:"
                                        f" field {_vum(q['field_V_per_m'])}, below the design field "
                                        f"{_vum(q['design_V_per_m'])}"),
    "binding-breakdown": lambda q: (f"breakdown at {_c(q['breakdown_K'])} ({_vum(q['breakdown_V_per_m'])} → design "
                                    f"{_vum(q['design_V_per_m'])})"),
    "binding-sections": lambda q: f"as {_n(q['sections'])} series sections of {_um(q['layer_m'])}",
    "binding-life": lambda q: (f"life: {_h(q['life_s'])} with {_n(q['fraction'])} failed needs "
                               f"{_vum(q['life_V_per_m'])} (short-term design {_vum(q['short_V_per_m'])}; "
                               f"n {_n(q['n'])})"),
    "binding-heat": lambda q: (f"heat: breakdown at the hot spot {_c(q['breakdown_K'])} "
                               f"({_vum(q['breakdown_V_per_m'])} → design {_vum(q['design_V_per_m'])})"),
    # layered candidates (ranking.stack_size)
    "stack-layer": lambda q: f"layer {q['key']}: {q['reason']}",
    "stack-no-size": lambda q: (f"no total thickness with these layer ratios holds {_n(q['voltage_V'])} V at every "
                                "layer's design field"),
    "stack-over-design": lambda q: (f"{q['key']} (layer {q['layer']} of {q['layers']}) runs at "
                                    f"{_vum(q['field_V_per_m'])} at {_c(q['temperature_K'])}, above its design field "
                                    f"{_vum(q['design_V_per_m'])}: the stack fails first there, at "
                                    f"{_n(q['fails_at_V'])} V"),
    "stack-energy-short": lambda q: (f"stores {_n(q['energy_J_per_m3'] / 1e6)} J/cm³ of dielectric at "
                                     f"{_n(q['voltage_V'])} V, below the target {_n(q['target_J_per_m3'] / 1e6)} J/cm³ "
                                     f"(set by {q['key']})"),
    "binding-stack": lambda q: (f"breakdown of {q['key']} (layer {q['layer']} of {q['layers']}) at "
                                f"{_c(q['temperature_K'])}: {_vum(q['field_V_per_m'])} = its design field"),
    "binding-stack-made": lambda q: (f"thinnest {q['key']} made ({_um(q['min_thickness_m'])}) sets the stack at "
                                     f"{_um(q['total_m'])}"),
    "binding-stack-fixed": lambda q: (f"fixed layers: {q['key']} (layer {q['layer']} of {q['layers']}) at "
                                      f"{q['ratio']:.0%} of its design field"),
    # notes on assumptions
    "assumed-shape": lambda q: assumed_shape_note(q["shape"], shape_prior(q["family"])),
    "assumed-test-area": lambda q: assumed_area_note(q["area_m2"]),
    "extrapolated": lambda q: (f"{q['prop']} known "
                               + (f"at {_c(q['lo_K'])}" if q['lo_K'] == q['hi_K'] else
                                  f"from {_c(q['lo_K'])} to {_c(q['hi_K'])}")
                               + f" only, held at the end of its data at {_c(q['at_K'])}"),
    "permittivity-band": lambda q: (f"permittivity from {_c(q['lo_K'])} to {_c(q['hi_K'])} taken at the lowest end "
                                    f"of its stated band of capacitance change, {_n(100 * q['worst'])} % against "
                                    f"25 °C ({q['source']})"),
    "held-cold": lambda q: (f"breakdown below {_c(q['coldest_K'])}, the coldest temperature measured, held at its "
                            f"value there: a lower bound, as breakdown strength does not rise on warming "
                            f"({q['source']})"),
    "thickness-outside": lambda q: (f"breakdown measured on {_um(q['test_thickness_m'])} specimens, used for a "
                                    f"{_um(q['thickness_m'])} layer (more than {_n(q['factor'])}× away: beyond what "
                                    "a thickness law may carry)"),
    "thickness-scaled": lambda q: (f"breakdown carried from {_um(q['test_thickness_m'])} specimens to the "
                                   f"{_um(q['thickness_m'])} layer by E ∝ d^-n, n = {_n(q['n'])} ({q['source']})"),
    "assumed-life-exponent": lambda q: assumed_life_note(q["n"], q["source"]),
    "ramp-time": lambda q: (f"life from the short-term breakdown as a ramp test reaching it in {_n(q['t_r'])} s (range "
                            f"{_n(q['low'])}–{_n(q['high'])} s, {q['source']}), cumulative exposure under E^-n"),
    "loss-frequency": lambda q: (f"loss tangent for the {_n(q['frequency_Hz'])} Hz ripple read from data at "
                                 f"{q['stored']} (not within a factor {_n(q['factor'])})"),
    "loss-outside": lambda q: ("loss tangent at the hot spot not measured: held at the end of its data, or stated "
                               "at no temperature"),
    "outside-data": lambda q: (f"{q['notes']}: outside the data, refused ({EXTRAPOLATE_HINT})"),
    "thicker-than-made": lambda q: (
        f"needs {_um(q['thickness_m'])} of dielectric; the thickest single layer made is {_um(q['max_thickness_m'])}"
        f" ({q['source']})" + (f", and {_n(q['sections'])} series sections of it are more than the "
                               f"{_n(q['allowed'])} the target allows" if q['allowed'] > 1 else
                               " (allow series sections with --sections N, or max_sections = N in a target file)")),
    "sections": lambda q: (f"built as {_n(q['sections'])} series sections of {_um(q['layer_m'])} (the thickest "
                           f"single layer made is {_um(q['max_thickness_m'])}, {q['source']}): weakest link over "
                           f"{_n(q['sections'])}× the area, breakdown at the section thickness"),
    "outside-rating": lambda q: f"outside the rated range: {q['prop']} is {_c(q['rated_K'])}",
    "gas-no-area": lambda q: ("a gas gap is not scaled by electrode area: its strength is set by gap and "
                              "pressure (Paschen's law)"),
    "gas-stored-gap": lambda q: (f"gas breakdown as stored for a {_n(q['thickness_m'] * 1e3)} mm gap; give --gap (and "
                                 "--pressure) for another gap" if q["thickness_m"] == q["thickness_m"] else
                                 "gas breakdown as stored, gap not stated; give --gap (and --pressure)"),
    "gas-gap-law": lambda q: (f"gas gap {_um(q['gap_m'])}: "
                              + (f"{_vum(q['field_V_per_m'])} by {q['law']}" if q["law"] != "left-of-Paschen-asymptote"
                                 else "left of the Paschen asymptote, no Townsend breakdown; gaps of a few µm and "
                                      "less break down by field emission, which this law does not bound")
                              + (" (Townsend constants used beyond their fitted E/p range)"
                                 if q["law"] == "Paschen-beyond-fit" else "")),
    "gas-no-law": lambda q: "no Townsend constants or published formula stored for this gas: breakdown as stored",
    "liquid-gap-assumed": lambda q: (f"liquid breakdown figure states no gap: {_n(q['thickness_m'] * 1e3)} mm (the "
                                     "quality-test gap) assumed"),
    "segment-ignored": lambda q: ("segment area ignored: the material is not self-healing, so the whole area "
                                  "counts"),
    "linear-upper-bound": lambda q: ("nonlinear material without a DC-bias curve or loop: ½·ε0·εr·E² with the "
                                     "small-signal εr overstates its energy"),
    "loop-scaled": lambda q: ("nonlinear: the loop's recoverable density integrated along its discharge branch up to "
                              "the field (interpolated between the stored fields)"),
}


def words(code: str, **quoted) -> str:
    """The sentence for reason ``code`` with the numbers it quotes."""
    return TEXT[code](quoted)
