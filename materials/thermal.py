"""Heating of a capacitor by ripple current: losses over a spectrum, the self-consistent hot spot, thermal runaway
and the DC-link capacitance of a single-phase converter.

- Losses over a ripple spectrum: ``P = Σ_k I_k²·(R_s + tan δ(f_k, T)/(ω_k·C))``, each harmonic k with its rms
  current I_k at f_k; ``tan δ/(ω·C)`` is the dielectric's equivalent series resistance (tan δ = ω·C·ESR of the
  series model, IEC 60384-1) and R_s the metal (electrode, contact) resistance.
- Hot spot: ``θ = θ_amb + P(θ)·R_th``, solved for the lowest steady state when tan δ rises with temperature. A
  steady state exists only while the heat removal line ``(θ - θ_amb)/R_th`` still meets the loss curve; past that,
  thermal runaway. For losses ``P0·e^(a(θ - θ_amb))`` (N.N. Semenov, Z. Phys. 48, 571-582 (1928); D.A.
  Frank-Kamenetskii, *Diffusion and Heat Exchange in Chemical Kinetics*, Princeton 1955, ch. 6) the condition is
  ``a·R_th·P0 <= 1/e``, with the rise ``Δθ = -W0(-a·R_th·P0)/a`` (W0: principal branch of Lambert's W).
- DC link of a single-phase converter: the power pulsates at twice the line frequency with amplitude P, the
  capacitor stores and returns ``P/ω`` per half-cycle of that pulsation, and ``C·V·ΔV = P/ω`` gives
  ``C = P/(2π·f·V·ΔV)`` with V the mean voltage and ΔV the peak-to-peak ripple (H. Hu et al., IEEE Trans.
  Power Electron. 28(6), 2711-2726 (2013), power decoupling, with their ripple amplitude = ΔV/2).

SI in and out: A rms, Hz, F, Ω, K, W, K/W. The spectrum runs along the last axis of the currents and
frequencies; the other inputs broadcast over any leading axes.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from materials.energy import _out
from materials.errors import InputError

#: Points of the scan for the first crossing of the heat balance between ambient and the search limit.
SCAN_POINTS = 2049

#: Default width (K) of the hot-spot search above ambient when tan δ is a function without a stated range.
DEFAULT_SEARCH_K = 1000.0


@dataclass(frozen=True)
class LossTable:
    """Loss tangent against temperature, piecewise linear between points; refuses temperatures outside them.

    Called as ``table(frequency_Hz, temperature_K)`` like any tan δ function (frequency is not used).
    """

    temperatures_K: tuple
    tan_delta: tuple

    def __post_init__(self):
        t, v = np.asarray(self.temperatures_K, float), np.asarray(self.tan_delta, float)
        if t.ndim != 1 or t.size < 2 or t.shape != v.shape or np.any(np.diff(t) <= 0):
            raise InputError("a loss table needs 2 or more increasing temperatures, one tan δ each",
                             field="temperatures_K")
        if np.any(v < 0):
            raise InputError("loss tangents must not be negative", field="tan_delta")
        object.__setattr__(self, "temperatures_K", tuple(t.tolist()))
        object.__setattr__(self, "tan_delta", tuple(v.tolist()))

    @property
    def max_temperature_K(self) -> float:
        return float(self.temperatures_K[-1])

    def __call__(self, frequency_Hz, temperature_K):
        t = np.asarray(temperature_K, dtype=float)
        lo, hi = self.temperatures_K[0], self.temperatures_K[-1]
        if np.any(t < lo - 1e-9) or np.any(t > hi + 1e-9):
            raise InputError(f"temperature outside the loss table ({lo:g}-{hi:g} K)", field="temperature_K")
        return np.interp(t, self.temperatures_K, self.tan_delta) + 0.0 * np.asarray(frequency_Hz, dtype=float)


def dielectric_esr(*, tan_delta, frequency_Hz, capacitance_F):
    """Equivalent series resistance (Ω) of the dielectric loss: ``tan δ/(2π·f·C)``."""
    f, c = np.asarray(frequency_Hz, dtype=float), np.asarray(capacitance_F, dtype=float)
    if not (np.all(f > 0) and np.all(c > 0)):
        raise InputError("frequency and capacitance must be positive", field="frequency_Hz")
    return _out(np.asarray(tan_delta, dtype=float) / (2.0 * math.pi * f * c))


def _tan_delta(tan_delta, f, temperature_K):
    if callable(tan_delta):
        if temperature_K is None:
            raise InputError("tan δ depends on temperature: give temperature_K", field="temperature_K")
        return np.asarray(tan_delta(f, temperature_K), dtype=float)
    return np.asarray(tan_delta, dtype=float)


def ripple_losses(*, currents_A_rms, frequencies_Hz, capacitance_F, esr_ohm=0.0, tan_delta=0.0,
                  temperature_K=None):
    """Power (W) dissipated by a ripple spectrum: ``Σ_k I_k²·(R_s + tan δ(f_k, T)/(ω_k·C))``.

    Args:
        currents_A_rms, frequencies_Hz: the harmonics (last axis): rms current and frequency of each.
        capacitance_F, esr_ohm, temperature_K: broadcast over leading axes.
        tan_delta: a number or an array over the harmonics, or a function ``tan_delta(frequency_Hz, temperature_K)``
            taking arrays (a :class:`LossTable`, for instance).
    """
    i = np.asarray(currents_A_rms, dtype=float)
    f = np.asarray(frequencies_Hz, dtype=float)
    t = None if temperature_K is None else np.asarray(temperature_K, dtype=float)[..., None]
    c = np.asarray(capacitance_F, dtype=float)[..., None]
    r = np.asarray(esr_ohm, dtype=float)[..., None]
    if np.any(r < 0):
        raise InputError("series resistance must not be negative", field="esr_ohm")
    tand = _tan_delta(tan_delta, f, t)
    if np.any(tand < 0):
        raise InputError("loss tangent must not be negative", field="tan_delta")
    esr = r + dielectric_esr(tan_delta=tand, frequency_Hz=f, capacitance_F=c)
    return _out(np.sum(i * i * esr, axis=-1))


@dataclass(frozen=True)
class HotSpot:
    """Steady hot-spot temperature and its losses.

    Attributes:
        temperature_K: the lowest steady state θ = θ_amb + P(θ)·R_th (NaN where there is none).
        power_W: the losses at that temperature (NaN where there is none).
        steady: False where the losses outrun the heat removal (thermal runaway) before the search limit.
        limit_K: the highest temperature searched (the loss table's end, or the given or default limit).
    """

    temperature_K: np.ndarray | float
    power_W: np.ndarray | float
    steady: np.ndarray | bool
    limit_K: np.ndarray | float


def hot_spot(*, ambient_K, rth_K_per_W, currents_A_rms, frequencies_Hz, capacitance_F, esr_ohm=0.0,
             tan_delta=0.0, max_temperature_K=None) -> HotSpot:
    """Self-consistent hot-spot temperature under a ripple spectrum.

    Solves ``g(θ) = θ_amb + R_th·P(θ) - θ = 0`` for its first root above ambient: the balance is scanned on
    SCAN_POINTS temperatures up to the limit, and the first bracket where g turns from positive to non-positive is
    closed by vectorised regula falsi (Illinois). No sign change up to the limit means no steady state there
    (``steady=False``). A pair of roots closer together than one scan step can be missed, which puts such a case,
    a hair from runaway, on the runaway side.

    Args:
        ambient_K, rth_K_per_W: ambient temperature and thermal resistance hot spot to ambient (broadcast).
        currents_A_rms, frequencies_Hz, capacitance_F, esr_ohm, tan_delta: as in :func:`ripple_losses`.
        max_temperature_K: search limit; default the end of a :class:`LossTable`, else ambient + 1000 K.
    """
    amb = np.asarray(ambient_K, dtype=float)
    rth = np.asarray(rth_K_per_W, dtype=float)
    if not (np.all(amb > 0) and np.all(rth >= 0)):
        raise InputError("ambient must be positive and thermal resistance not negative", field="rth_K_per_W")
    if max_temperature_K is None:
        limit = getattr(tan_delta, "max_temperature_K", None)
        max_temperature_K = amb + DEFAULT_SEARCH_K if limit is None else limit
    top = np.asarray(max_temperature_K, dtype=float)
    if np.any(top <= amb):
        raise InputError("the search limit must lie above ambient", field="max_temperature_K")
    cur = np.asarray(currents_A_rms, dtype=float)
    freq = np.asarray(frequencies_Hz, dtype=float)
    lead = np.broadcast_shapes(amb.shape, rth.shape, top.shape, np.shape(capacitance_F), np.shape(esr_ohm),
                               cur.shape[:-1], freq.shape[:-1])
    amb, rth, top = (np.broadcast_to(x, lead) for x in (amb, rth, top))
    kw = dict(currents_A_rms=cur[..., None, :], frequencies_Hz=freq[..., None, :],
              capacitance_F=np.asarray(capacitance_F, dtype=float)[..., None],
              esr_ohm=np.asarray(esr_ohm, dtype=float)[..., None], tan_delta=tan_delta)

    def balance(theta):  # theta: lead + (m,)
        p = np.broadcast_to(ripple_losses(temperature_K=theta, **kw), theta.shape)
        return amb[..., None] + rth[..., None] * p - theta, p

    grid = amb[..., None] + (top - amb)[..., None] * np.linspace(0.0, 1.0, SCAN_POINTS)
    g, _ = balance(grid)
    hit = g <= 0
    steady = hit.any(axis=-1)
    k = np.argmax(hit, axis=-1)[..., None]
    hi, g_hi = np.take_along_axis(grid, k, -1)[..., 0], np.take_along_axis(g, k, -1)[..., 0]
    km = np.maximum(k - 1, 0)
    lo, g_lo = np.take_along_axis(grid, km, -1)[..., 0], np.take_along_axis(g, km, -1)[..., 0]
    theta = _illinois(lambda x: balance(x[..., None])[0][..., 0], lo, hi, g_lo, g_hi, done=~steady | (k[..., 0] == 0))
    theta = np.where(steady, np.where(k[..., 0] == 0, amb, theta), np.nan)
    power = np.where(steady, balance(np.where(steady, theta, amb)[..., None])[1][..., 0], np.nan)
    return HotSpot(temperature_K=_out(theta), power_W=_out(power), steady=steady if steady.ndim else bool(steady),
                   limit_K=_out(top))


def _illinois(func, lo, hi, f_lo, f_hi, *, done, rtol=1e-13, maxiter=200):
    """Roots of a decreasing function in brackets (f_lo > 0 >= f_hi), all at once: regula falsi, Illinois variant
    (Dowell & Jarratt, BIT 11, 168-174 (1971)); ``done`` marks elements to leave alone."""
    lo, hi, f_lo, f_hi = (np.array(x, dtype=float) for x in (lo, hi, f_lo, f_hi))
    x = hi.copy()
    side = np.zeros(lo.shape, int)
    active = ~np.asarray(done, bool) & (f_hi != 0)
    for _ in range(maxiter):
        if not active.any():
            break
        with np.errstate(invalid="ignore", divide="ignore"):
            x_new = hi - f_hi * (hi - lo) / (f_hi - f_lo)
        x_new = np.where((x_new > lo) & (x_new < hi), x_new, 0.5 * (lo + hi))
        x = np.where(active, x_new, x)
        fx = np.where(active, func(np.where(active, x, lo)), 0.0)
        right = active & (fx <= 0)   # root at or left of x: x becomes hi
        left = active & (fx > 0)
        f_lo = np.where(right & (side == 1), 0.5 * f_lo, f_lo)
        f_hi = np.where(left & (side == -1), 0.5 * f_hi, f_hi)
        hi, f_hi = np.where(right, x, hi), np.where(right, fx, f_hi)
        lo, f_lo = np.where(left, x, lo), np.where(left, fx, f_lo)
        side = np.where(right, 1, np.where(left, -1, side))
        active &= (fx != 0) & (hi - lo > rtol * np.abs(hi))
    return x


def runaway_power(*, a_per_K, rth_K_per_W):
    """Largest loss at ambient, P0 (W), with a steady state when losses grow as ``P0·e^(a(θ - θ_amb))``:
    ``1/(e·a·R_th)`` (Semenov 1928)."""
    a, r = np.asarray(a_per_K, dtype=float), np.asarray(rth_K_per_W, dtype=float)
    if not (np.all(a > 0) and np.all(r > 0)):
        raise InputError("loss growth rate and thermal resistance must be positive", field="a_per_K")
    return _out(1.0 / (math.e * a * r))


def semenov_temperature_rise(*, p0_W, a_per_K, rth_K_per_W):
    """Steady rise (K) above ambient for losses ``P0·e^(a·Δθ)``: ``-W0(-a·R_th·P0)/a``; NaN past runaway."""
    from scipy.special import lambertw

    p0, a, r = (np.asarray(v, dtype=float) for v in (p0_W, a_per_K, rth_K_per_W))
    if np.any(p0 < 0):
        raise InputError("loss must not be negative", field="p0_W")
    runaway_power(a_per_K=a, rth_K_per_W=r)  # validates a and R_th
    x = a * r * p0
    rise = np.where(x <= 1.0 / math.e, -lambertw(-np.minimum(x, 1.0 / math.e)).real / a, np.nan)
    return _out(rise)


def dc_link_capacitance(*, power_W, line_frequency_Hz, voltage_V, ripple_V):
    """DC-link capacitance (F) of a single-phase converter: ``C = P/(2π·f·V·ΔV)``.

    P: power through the link; f: line frequency (the ripple is at 2f); V: mean link voltage; ΔV: peak-to-peak
    ripple voltage allowed.
    """
    p, f, v, dv = (np.asarray(x, dtype=float) for x in (power_W, line_frequency_Hz, voltage_V, ripple_V))
    if not (np.all(p >= 0) and np.all(f > 0) and np.all(v > 0) and np.all(dv > 0)):
        raise InputError("power must not be negative; frequency, voltage and ripple must be positive",
                         field="ripple_V")
    return _out(p / (2.0 * math.pi * f * v * dv))
