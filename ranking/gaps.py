"""Gas and liquid gaps for the evaluation engine: the breakdown of a gap of given width, on the engine's inputs.

* A gas's breakdown at a gap and pressure comes from its stored Townsend constants (Paschen's law) inside their
  fitted range and from the published formula above it (air: the engineering formula; SF6: the limiting field),
  :func:`materials.gas.gap_breakdown_voltage`. It replaces the stored gas row (whose gap may be another one) and
  is never area-scaled (the engine's ``no_area_law``).
* A liquid's breakdown is carried to the gap by the engine's thickness law, which for liquids is the stressed-
  volume law ``n = 1/β`` (:data:`materials.priors.STRESSED_VOLUME`); the engine takes a liquid figure that states
  no gap at the quality-test gap of :data:`materials.priors.LIQUID_TEST_GAP` (``gap_assumed``).

Arrays in and out; :func:`apply_gaps` edits the columns of an :class:`ranking.engine.Inputs` in place.
"""

from __future__ import annotations

import numpy as np

from materials import gas
from materials.gas import REFERENCE_PRESSURE_PA

#: Which published formula holds above the Townsend range, by material key.
FORMULAS = {"air": gas.AIR, "sf6": gas.SF6}
#: Sources of the formulas (key, kind, citation), named beside every value they give.
FORMULA_SOURCES = {
    gas.AIR_FORMULA: ("kuffel-zaengl-2000-air-formula", "handbook",
                      "E. Kuffel, W.S. Zaengl, J. Kuffel, High Voltage Engineering: Fundamentals, 2nd ed., Newnes "
                      "(2000), ch. 5: uniform-field breakdown of air V = 6.72·sqrt(pd) + 24.36·pd kV (p in bar, d in "
                      "cm, 20 °C)"),
    gas.SF6_STREAMER: ("christophorou-van-brunt-1995-sf6", "paper",
                       "L.G. Christophorou, R.J. Van Brunt, 'SF6/N2 mixtures: basic and HV insulation properties', "
                       "IEEE Trans. Dielectr. Electr. Insul. 2(5), 952-1003 (1995): limiting field (E/N)lim = 361 Td"),
}


def apply_gaps(inp, gap_m, *, pressure_Pa: float | None = None, temperature_K=None) -> dict:
    """Set the breakdown of every gas and liquid of ``inp`` to that of its gap (one gap, or one per material).

    Returns per material: ``law`` (a :data:`materials.gas.LAW_NAMES` code, -1 where no gas law was used),
    ``gas`` and ``liquid`` masks, ``gap_assumed`` (a liquid figure with no stated gap) and ``rows`` (the stored
    rows behind a gas law, per material).
    """
    r = inp.reader
    t, m = r.t, r.m
    gap = np.broadcast_to(np.asarray(gap_m, dtype=float), (m,)).copy()
    p = REFERENCE_PRESSURE_PA if pressure_Pa is None else float(pressure_Pa)
    temp = np.broadcast_to(np.asarray(inp.t_ebd if temperature_K is None else temperature_K, dtype=float), (m,))
    is_gas = np.array([f == "gas" for f in t.families], dtype=bool)
    is_liquid = np.array([f == "liquid" for f in t.families], dtype=bool)
    law = np.full(m, -1, dtype=np.int64)
    rows: list[list[int]] = [[] for _ in range(m)]
    if is_gas.any():
        consts = [r.at(k) for k in ("townsend_a", "townsend_b", "secondary_emission")]
        a, b, g = (np.where(c.present, c.value, np.nan) for c in consts)
        formula = np.array([FORMULAS.get(k, gas.NO_FORMULA) for k in t.keys], dtype=np.int64)
        ok = is_gas & np.isfinite(gap) & (gap > 0)
        t_gas = np.where(np.isfinite(temp), temp, gas.REFERENCE_TEMPERATURE_K)
        v, code = gas.gap_breakdown_voltage(np.where(ok, gap, 1.0), pressure_Pa=p, temperature_K=t_gas,
                                            a_per_Pa_m=a, b_V_per_Pa_m=b, gamma=g, formula=formula)
        v, code = np.atleast_1d(v), np.atleast_1d(code).astype(np.int64)
        use = ok & (code != gas.NO_LAW)
        e = np.where(use, v / np.where(ok, gap, 1.0), np.nan)
        for k in ("ebd_v", "ebd_lo", "ebd_hi"):
            inp.parts[k] = np.where(use, e, inp.parts[k])
        # the law gives the breakdown at the gap itself: nothing is carried from the stored row's gap
        inp.parts["test_thickness"] = np.where(use, gap, inp.test_thickness)
        law = np.where(use, code, -1)
        for i in np.flatnonzero(use & np.isin(code, (gas.PASCHEN, gas.PASCHEN_BEYOND, gas.LEFT_OF_ASYMPTOTE))):
            rows[i] = [int(c.used0[i]) for c in consts if c.used0[i] >= 0]
    return {"law": law, "gas": is_gas, "liquid": is_liquid, "gap_assumed": inp.gap_assumed, "rows": rows}


def law_name(code: int) -> str:
    """The name of a gas-gap law code (empty where none was used)."""
    return gas.LAW_NAMES.get(int(code), "") if code >= 0 else ""
