"""Breakdown of gases between plane electrodes: Paschen's law, the engineering formula for air, the SF6 limit.

- Paschen's law from Townsend's criterion ``γ·(e^(α·d) - 1) = 1`` with ``α/p = A·exp(-B·p/E)``:
  ``V = B·pd / (ln(A·pd) - ln(ln(1 + 1/γ)))`` (Yu.P. Raizer, *Gas Discharge Physics*, Springer 1991, §4.2; A, B
  for common gases in its Table 4.1). Its minimum, where dV/d(pd) = 0, is at
  ``(pd)_min = e·ln(1 + 1/γ)/A`` with ``V_min = e·B·ln(1 + 1/γ)/A``, and no breakdown is possible left of the
  asymptote ``A·pd = ln(1 + 1/γ)``.
- Above the Townsend range, uniform-field air at 20 °C: ``V = 6.72·sqrt(p·d) + 24.36·(p·d)`` kV with p in bar and
  d in cm (E. Kuffel, W.S. Zaengl & J. Kuffel, *High Voltage Engineering: Fundamentals*, 2nd ed., Newnes 2000,
  ch. 5, uniform-field breakdown of air), with the gas density entering through the relative air density
  ``δ = (p/p0)·(T0/T)``, p0 = 101.3 kPa, T0 = 293 K (IEC 60060-1:2010, standard reference atmosphere).
- SF6: streamer breakdown in a uniform field at the density-reduced limiting field
  ``(E/N)_lim = 361 Td`` (1 Td = 1e-21 V·m²; L.G. Christophorou & R.J. Van Brunt, IEEE Trans. Dielectr. Electr.
  Insul. 2(5), 952-1003 (1995)), i.e. ``(E/p)_crit ≈ 89 kV/(cm·bar)`` at 20 °C as engineering texts give it
  (Kuffel, Zaengl & Kuffel 2000, ch. 5).

SI in and out: pascal, metre, kelvin, volt, V/m. Arrays broadcast.
"""

from __future__ import annotations

import math

import numpy as np

from materials.energy import _out
from materials.errors import InputError

#: Boltzmann constant, J/K (SI-exact).
BOLTZMANN_J_PER_K = 1.380649e-23

#: Pascal per torr (760 torr = 101 325 Pa).
PA_PER_TORR = 101325.0 / 760.0

#: Standard reference atmosphere of high-voltage testing (IEC 60060-1): 101.3 kPa and 20 °C.
REFERENCE_PRESSURE_PA = 101.3e3
REFERENCE_TEMPERATURE_K = 293.15

#: Air's Townsend constants from Raizer (1991) Table 4.1: A = 15 /(cm·Torr), B = 365 V/(cm·Torr), fitted over
#: E/p = 100-800 V/(cm·Torr); converted to SI (1 cm·Torr = 1.333 Pa·m).
AIR_A_PER_PA_M = 15.0 / (0.01 * PA_PER_TORR)
AIR_B_V_PER_PA_M = 365.0 / (0.01 * PA_PER_TORR)

#: Limiting density-reduced field of SF6, V·m² (361 Td; Christophorou & Van Brunt 1995).
SF6_LIMITING_E_OVER_N_V_M2 = 361e-21


def _townsend(a_per_Pa_m, b_V_per_Pa_m, gamma):
    a, b, g = (np.asarray(v, dtype=float) for v in (a_per_Pa_m, b_V_per_Pa_m, gamma))
    if not (np.all(a > 0) and np.all(b > 0)):
        raise InputError("Townsend constants A and B must be positive", field="a_per_Pa_m")
    if not np.all(g > 0):
        raise InputError("the secondary emission coefficient γ must be positive", field="gamma")
    return a, b, np.log(np.log1p(1.0 / g))


def paschen_voltage(pd_Pa_m, *, a_per_Pa_m, b_V_per_Pa_m, gamma):
    """Breakdown voltage (V) of a uniform-field gas gap by Paschen's law.

    ``V = B·pd / (ln(A·pd) - ln(ln(1 + 1/γ)))``. Left of the asymptote, where ``A·pd <= ln(1 + 1/γ)``,
    Townsend's criterion cannot be met and the result is NaN.

    Args:
        pd_Pa_m: pressure times gap, Pa·m.
        a_per_Pa_m: Townsend's A, 1/(Pa·m); b_V_per_Pa_m: Townsend's B, V/(Pa·m).
        gamma: secondary electron emission coefficient of the cathode.
    """
    pd = np.asarray(pd_Pa_m, dtype=float)
    if np.any(pd < 0):
        raise InputError("pressure times gap must not be negative", field="pd_Pa_m")
    a, b, shift = _townsend(a_per_Pa_m, b_V_per_Pa_m, gamma)
    with np.errstate(divide="ignore", invalid="ignore"):
        den = np.log(a * pd) - shift
        v = np.where(den > 0, b * pd / np.where(den > 0, den, 1.0), np.nan)
    return _out(v)


def paschen_minimum(*, a_per_Pa_m, b_V_per_Pa_m, gamma):
    """The minimum of the Paschen curve: ``((pd)_min in Pa·m, V_min in V)``.

    ``(pd)_min = e·ln(1 + 1/γ)/A`` and ``V_min = e·B·ln(1 + 1/γ)/A`` (set dV/d(pd) = 0 in Paschen's law).
    """
    a, b, shift = _townsend(a_per_Pa_m, b_V_per_Pa_m, gamma)
    pd_min = math.e * np.exp(shift) / a
    return _out(pd_min), _out(b * pd_min)


def relative_air_density(*, pressure_Pa, temperature_K):
    """Relative air density ``δ = (p/101.3 kPa)·(293.15 K/T)`` (IEC 60060-1 standard reference atmosphere)."""
    p, t = np.asarray(pressure_Pa, dtype=float), np.asarray(temperature_K, dtype=float)
    if not (np.all(p > 0) and np.all(t > 0)):
        raise InputError("pressure and temperature must be positive", field="pressure_Pa")
    return _out(p / REFERENCE_PRESSURE_PA * REFERENCE_TEMPERATURE_K / t)


def air_breakdown_voltage(gap_m, *, pressure_Pa=REFERENCE_PRESSURE_PA, temperature_K=REFERENCE_TEMPERATURE_K):
    """Uniform-field breakdown voltage (V) of air above the Townsend range (streamer breakdown).

    ``V = 6.72·sqrt(pd) + 24.36·pd`` kV with pd in bar·cm of air at 20 °C (Kuffel, Zaengl & Kuffel 2000, ch. 5);
    another temperature enters as the equivalent pressure at 20 °C, ``p·293.15 K/T`` (the gas density, as in
    the relative air density of IEC 60060-1). For gaps of millimetres and more at about atmospheric density;
    near and left of the Paschen minimum use :func:`paschen_voltage`.
    """
    d = np.asarray(gap_m, dtype=float)
    if not np.all(d > 0):
        raise InputError("gap must be positive", field="gap_m")
    delta = np.asarray(relative_air_density(pressure_Pa=pressure_Pa, temperature_K=temperature_K))
    pd_bar_cm = delta * (REFERENCE_PRESSURE_PA / 1e5) * d * 100.0
    return _out(1e3 * (6.72 * np.sqrt(pd_bar_cm) + 24.36 * pd_bar_cm))


def sf6_breakdown_field(*, pressure_Pa, temperature_K=REFERENCE_TEMPERATURE_K):
    """Uniform-field streamer breakdown field (V/m) of SF6: ``E = (E/N)_lim·N`` with ``N = p/(k·T)``.

    ``(E/N)_lim = 361 Td`` (Christophorou & Van Brunt 1995); at 20 °C this is about 89 kV/(cm·bar). A floor for
    real gaps, whose surface roughness and particles lower it further at high pressure.
    """
    p, t = np.asarray(pressure_Pa, dtype=float), np.asarray(temperature_K, dtype=float)
    if not (np.all(p > 0) and np.all(t > 0)):
        raise InputError("pressure and temperature must be positive", field="pressure_Pa")
    return _out(SF6_LIMITING_E_OVER_N_V_M2 * p / (BOLTZMANN_J_PER_K * t))


# --- choosing the law for a gap -------------------------------------------------------------------------------

#: Laws a gas gap's breakdown may come from (codes in the arrays :func:`gap_breakdown_voltage` returns).
PASCHEN, PASCHEN_BEYOND, AIR_FORMULA, SF6_STREAMER, NO_LAW, LEFT_OF_ASYMPTOTE = 0, 1, 2, 3, 4, 5
LAW_NAMES = {PASCHEN: "Paschen", PASCHEN_BEYOND: "Paschen-beyond-fit", AIR_FORMULA: "air-formula",
             SF6_STREAMER: "SF6-streamer", NO_LAW: "none", LEFT_OF_ASYMPTOTE: "left-of-Paschen-asymptote"}
#: Laws whose answer is used outside what they were fitted or derived for (flagged wherever they are shown).
BEYOND_LAWS = (PASCHEN_BEYOND, LEFT_OF_ASYMPTOTE)
#: Above-Townsend formulas per gas: none, the air engineering formula, the SF6 limiting field.
NO_FORMULA, AIR, SF6 = 0, 1, 2

#: Lowest E/p of the fits behind the stored Townsend constants: 100 V/(cm·Torr) (Raizer 1991 Table 4.1 gives
#: 100-800 for air and 100-600 for N2). At larger pd the breakdown E/p falls below it: the streamer range, where
#: the air formula or the SF6 limit takes over.
TOWNSEND_MIN_E_OVER_P_V_PER_PA_M = 100.0 / (0.01 * PA_PER_TORR)


def gap_breakdown_voltage(gap_m, *, pressure_Pa, temperature_K, a_per_Pa_m, b_V_per_Pa_m, gamma, formula):
    """Breakdown voltage (V) of a uniform-field gas gap and the law it came from (arrays, codes as above).

    The density enters as the equivalent pressure at 20 °C, ``p·293.15 K/T`` (Paschen's similarity in ``N·d``).
    Inside the Townsend range of the stored constants (breakdown ``E/p`` at or above
    :data:`TOWNSEND_MIN_E_OVER_P_V_PER_PA_M`) Paschen's law; above it the air engineering formula
    (:func:`air_breakdown_voltage`) for air, the limiting field (:func:`sf6_breakdown_field`) for SF6, and
    otherwise Paschen's law carried beyond its fit (``PASCHEN_BEYOND``, to be flagged). Left of the Paschen
    asymptote Townsend's criterion cannot be met: the voltage is infinite and the law ``LEFT_OF_ASYMPTOTE`` (to be
    flagged: gaps of a few µm and less break down by field emission, which Paschen's law does not describe). A gas
    without Townsend constants takes its formula everywhere; one with neither gets NaN and ``NO_LAW``.

    Args:
        gap_m: gap (m); pressure_Pa, temperature_K: the gas's state.
        a_per_Pa_m, b_V_per_Pa_m, gamma: stored Townsend constants (NaN where not stored).
        formula: per gas, :data:`NO_FORMULA`, :data:`AIR` or :data:`SF6`.
    """
    d, p, t = (np.asarray(x, dtype=float) for x in (gap_m, pressure_Pa, temperature_K))
    a, b, g = (np.asarray(x, dtype=float) for x in (a_per_Pa_m, b_V_per_Pa_m, gamma))
    f = np.asarray(formula, dtype=np.int64)
    d, p, t, a, b, g, f = np.broadcast_arrays(d, p, t, a, b, g, f)
    if not (np.all(d > 0) and np.all(p > 0) and np.all(t > 0)):
        raise InputError("gap, pressure and temperature must be positive", field="gap_m")
    p20 = p * REFERENCE_TEMPERATURE_K / t
    has = np.isfinite(a) & np.isfinite(b) & np.isfinite(g) & (a > 0) & (b > 0) & (g > 0)
    ones = np.ones_like(d)
    v_p = np.where(has, paschen_voltage(p20 * d, a_per_Pa_m=np.where(has, a, 1.0), b_V_per_Pa_m=np.where(has, b, 1.0),
                                        gamma=np.where(has, g, 0.01) * ones), np.nan)
    with np.errstate(invalid="ignore"):
        inside = has & (v_p / (p20 * d) >= TOWNSEND_MIN_E_OVER_P_V_PER_PA_M * (1 - 1e-12))
    # left of the Paschen asymptote there is no breakdown at all: infinite withstand, but still Paschen's range
    inside |= has & np.isnan(v_p)
    v_air = air_breakdown_voltage(d, pressure_Pa=p, temperature_K=t)
    v_sf6 = sf6_breakdown_field(pressure_Pa=p, temperature_K=t) * d
    v = np.where(inside, np.where(np.isnan(v_p), np.inf, v_p),
                 np.where(f == AIR, v_air, np.where(f == SF6, v_sf6, v_p)))
    above = np.where(f == AIR, AIR_FORMULA, np.where(f == SF6, SF6_STREAMER, np.where(has, PASCHEN_BEYOND, NO_LAW)))
    law = np.where(inside, np.where(np.isnan(v_p), LEFT_OF_ASYMPTOTE, PASCHEN), above)
    return _out(v), _out(law)
