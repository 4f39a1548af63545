"""Fields in a stack of dielectric layers in series (plane electrodes), under AC, DC and voltage changes.

Each layer i has thickness d_i, relative permittivity ε_i and conductivity σ_i. In the plane geometry the
normal displacement is continuous wherever no free charge sits (Gauss's law), and the layer voltages add up to
the applied one:

- AC (and the instant after any voltage step): ``ε_i·E_i`` is the same in every layer, so
  ``E_i = V/(ε_i·Σ d_j/ε_j)``.
- DC steady state: the conduction current ``σ_i·E_i`` is the same in every layer, so ``E_i = V/(σ_i·Σ d_j/σ_j)``,
  and charge ``ρ_k = ε0(ε_{k+1}E_{k+1} - ε_k·E_k)`` collects on interface k (Maxwell-Wagner interfacial
  polarisation: J.C. Maxwell, *A Treatise on Electricity and Magnetism*, 1873, vol. 1 §§328-330; K.W. Wagner,
  Arch. Elektrotech. 2, 371-387 (1914); A.R. von Hippel, *Dielectrics and Waves*, Wiley 1954, §II.9).
- Between the two, the interface charges obey ``dρ_k/dt = σ_k·E_k - σ_{k+1}·E_{k+1}`` (charge continuity) with
  the fields affine in the charges; the n - 1 eigenvalues of that linear system are -1/τ_k. For two layers
  ``τ = ε0·(ε1/d1 + ε2/d2)/(σ1/d1 + σ2/d2)`` (the same as ``(C1 + C2)/(G1 + G2)`` of two leaky capacitors per
  unit area in series).
- A polarity reversal from steady state at +V to -V leaves the interface charges in place for an instant, so the
  field is the DC steady-state field plus the capacitive (AC) field of the -2V swing (superposition in this
  linear model, as in the polarity-reversal tests of HVDC cable insulation).
- A thin flat gas void in layer i, normal to the field, carries the full displacement: ``E_void = ε_i·E_i``
  (field enhancement factor of a flat cavity, L. Niemeyer, IEEE Trans. Dielectr. Electr. Insul. 2(5), 510-528
  (1995)). Partial discharges start when the void's voltage reaches the gas breakdown voltage of its gap.

SI in and out (m, V, V/m, S/m, s, F/m², J/m², C/m²). Layer quantities run along the last axis and broadcast
over any leading axes; the transient functions take one stack.
"""

from __future__ import annotations

import numpy as np

from materials.energy import EPSILON_0, _out
from materials.errors import InputError


def _layers(thicknesses_m, permittivities, conductivities=None):
    d = np.asarray(thicknesses_m, dtype=float)
    eps = np.asarray(permittivities, dtype=float)
    if d.ndim == 0 or d.shape[-1] == 0:
        raise InputError("a stack needs at least one layer", field="thicknesses_m")
    if not (np.all(d > 0) and np.all(np.isfinite(d))):
        raise InputError("layer thicknesses must be positive", field="thicknesses_m")
    if not (np.all(eps >= 1) and np.all(np.isfinite(eps))):
        raise InputError("relative permittivities must be at least 1", field="permittivities")
    arrays = [d, eps]
    if conductivities is not None:
        sigma = np.asarray(conductivities, dtype=float)
        if not (np.all(sigma > 0) and np.all(np.isfinite(sigma))):
            raise InputError("conductivities must be positive", field="conductivities")
        arrays.append(sigma)
    try:
        return np.broadcast_arrays(*arrays)
    except ValueError:
        raise InputError("thicknesses, permittivities and conductivities differ in layer count",
                         field="permittivities") from None


def _weights(thicknesses_m, permittivities, conductivities, mode):
    if mode == "ac":
        d, eps = _layers(thicknesses_m, permittivities)[:2]
        return d, eps
    if mode == "dc":
        if conductivities is None:
            raise InputError("the DC steady state needs the layer conductivities", field="conductivities")
        d, _, sigma = _layers(thicknesses_m, permittivities, conductivities)
        return d, sigma
    raise InputError(f"unknown mode {mode!r}: use 'ac' or 'dc'", field="mode")


def layer_fields(thicknesses_m, permittivities, voltage_V, *, conductivities=None, mode="ac"):
    """Field (V/m) in each layer of a series stack.

    ``mode="ac"``: capacitive division, ``E_i = V/(ε_i·Σ d_j/ε_j)`` (also the field just after a step).
    ``mode="dc"``: resistive division at steady state, ``E_i = V/(σ_i·Σ d_j/σ_j)``.
    """
    d, w = _weights(thicknesses_m, permittivities, conductivities, mode)
    v = np.asarray(voltage_V, dtype=float)[..., None]
    return v / (w * np.sum(d / w, axis=-1, keepdims=True))


def stack_capacitance_per_area(thicknesses_m, permittivities):
    """Capacitance per electrode area (F/m²) of the layers in series: ``ε0/Σ(d_j/ε_j)``."""
    d, eps = _layers(thicknesses_m, permittivities)
    return _out(EPSILON_0 / np.sum(d / eps, axis=-1))


def stack_energy_per_area(thicknesses_m, permittivities, voltage_V, *, conductivities=None, mode="ac"):
    """Electrostatic energy per electrode area (J/m²), ``Σ ½·ε0·ε_i·E_i²·d_i`` (½·C·V² per area under AC)."""
    d, eps = _layers(thicknesses_m, permittivities)
    e = layer_fields(thicknesses_m, permittivities, voltage_V, conductivities=conductivities, mode=mode)
    return _out(np.sum(0.5 * EPSILON_0 * eps * e * e * d, axis=-1))


def interface_charges(thicknesses_m, permittivities, voltage_V, *, conductivities, mode="dc"):
    """Free charge per area (C/m²) on the n - 1 interfaces, ``ε0(ε_{k+1}E_{k+1} - ε_k·E_k)`` (zero under AC)."""
    eps = _layers(thicknesses_m, permittivities)[1]
    e = layer_fields(thicknesses_m, permittivities, voltage_V, conductivities=conductivities, mode=mode)
    return np.diff(EPSILON_0 * eps * e, axis=-1)


def polarity_reversal_fields(thicknesses_m, permittivities, voltage_V, *, conductivities):
    """Fields (V/m) just after the voltage reverses from a DC steady state at V to -V.

    The interface charges cannot move in an instant, so ``E = E_dc(V) + E_ac(-2V)`` (superposition).
    """
    kw = dict(conductivities=conductivities)
    return (layer_fields(thicknesses_m, permittivities, voltage_V, mode="dc", **kw)
            + layer_fields(thicknesses_m, permittivities, -2.0 * np.asarray(voltage_V, dtype=float), **kw))


# --- transients -------------------------------------------------------------------------------------------------

def _charge_system(thicknesses_m, permittivities, conductivities):
    """Fields ``E = a·V + B·q`` and charge rates ``dq/dt = L·E`` of one stack (q: interface charges)."""
    d, eps, sigma = _layers(thicknesses_m, permittivities, conductivities)
    if d.ndim != 1:
        raise InputError("transients are computed for one stack at a time", field="thicknesses_m")
    n = d.size
    r = d / (EPSILON_0 * eps)                      # voltage per unit displacement, per layer
    s = r.sum()
    # D_i = D_1 + Σ_{k<i} q_k and Σ r_i·D_i = V  ->  D_1 = (V - Σ_k q_k·Σ_{i>k} r_i)/S
    below = np.tril(np.ones((n, n - 1)), -1)       # below[i, k] = 1 when interface k lies before layer i
    tail = r @ below                               # Σ_{i>k} r_i for each interface k
    a = 1.0 / (EPSILON_0 * eps * s)
    b = (below - tail[None, :] / s) / (EPSILON_0 * eps)[:, None]
    ell = np.zeros((n - 1, n))
    ell[np.arange(n - 1), np.arange(n - 1)] = sigma[:-1]
    ell[np.arange(n - 1), np.arange(1, n)] = -sigma[1:]
    return a, b, ell


def maxwell_wagner_time_constants(thicknesses_m, permittivities, conductivities):
    """Interfacial (Maxwell-Wagner) time constants (s) of one stack, n - 1 of them, largest first.

    The eigenvalues of ``dq/dt = L·B·q`` are -1/τ_k; for two layers
    ``τ = ε0·(ε1/d1 + ε2/d2)/(σ1/d1 + σ2/d2)``.
    """
    a, b, ell = _charge_system(thicknesses_m, permittivities, conductivities)
    if b.shape[1] == 0:
        return np.empty(0)
    rates = -np.linalg.eigvals(ell @ b).real
    return np.sort(1.0 / rates)[::-1]


def layer_fields_transient(thicknesses_m, permittivities, voltage_V, time_s, *, conductivities,
                           initial_voltage_V=0.0):
    """Fields (V/m) at times t >= 0 after the voltage steps from a DC steady state at ``initial_voltage_V`` to V.

    Interface charges start at the steady state of the initial voltage (none from 0 V) and relax to that of V
    with the Maxwell-Wagner time constants: ``q(t) = q_∞ + P·exp(Λt)·P⁻¹·(q_0 - q_∞)``. Returns an array of
    shape ``time.shape + (layers,)``.
    """
    a, b, ell = _charge_system(thicknesses_m, permittivities, conductivities)
    t = np.asarray(time_s, dtype=float)
    if np.any(t < 0):
        raise InputError("times must not be negative", field="time_s")
    v1, v0 = float(voltage_V), float(initial_voltage_V)
    if b.shape[1] == 0:
        return np.broadcast_to(a * v1, t.shape + a.shape).copy()
    m = ell @ b

    def q_steady(v):
        return -np.linalg.solve(m, ell @ a) * v

    lam, p = np.linalg.eig(m)
    lam, p = lam.real, p.real
    c = np.linalg.solve(p, q_steady(v0) - q_steady(v1))
    q = q_steady(v1) + (np.exp(np.multiply.outer(t, lam)) * c) @ p.T
    return a * v1 + q @ b.T


# --- voids ---------------------------------------------------------------------------------------------------

def void_field(*, field_V_per_m, permittivity):
    """Field (V/m) in a thin flat gas void normal to the field: ``ε_solid·E_solid`` (Niemeyer 1995)."""
    eps = np.asarray(permittivity, dtype=float)
    if not np.all(eps >= 1):
        raise InputError("relative permittivity must be at least 1", field="permittivity")
    return _out(eps * np.asarray(field_V_per_m, dtype=float))


def pd_inception_voltage(thicknesses_m, permittivities, *, void_layer, void_thickness_m, gas_breakdown_V):
    """Stack voltage (V, peak for AC) at which a flat gas void starts partial discharges.

    The void (relative permittivity 1, thickness t) takes the place of solid in layer ``void_layer``, in series
    with the rest: ``E_void = V/(Σ d_j/ε_j - t/ε_i + t)``. Discharge starts when ``E_void·t`` reaches the gas
    breakdown voltage of the gap t, so ``V_inc = V_b(t)·(Σ d_j/ε_j - t/ε_i + t)/t`` (for t ≪ d this is the
    ``E_void = ε_i·E_i`` of a thin flat cavity).

    Args:
        thicknesses_m, permittivities: the layers (last axis).
        void_layer: index of the layer holding the void.
        void_thickness_m: void thickness along the field (m), less than that layer's thickness.
        gas_breakdown_V: breakdown voltage (V) of the void's gap, or a function of the gap (m) returning it, for
            example ``lambda t: paschen_voltage(p * t, ...)`` from :mod:`materials.gas`.
    """
    d, eps = _layers(thicknesses_m, permittivities)
    t = np.asarray(void_thickness_m, dtype=float)
    d_i, eps_i = d[..., void_layer], eps[..., void_layer]
    if not (np.all(t > 0) and np.all(t < d_i)):
        raise InputError("the void must be thinner than its layer and of positive thickness",
                         field="void_thickness_m")
    vb = np.asarray(gas_breakdown_V(t) if callable(gas_breakdown_V) else gas_breakdown_V, dtype=float)
    series = np.sum(d / eps, axis=-1) - t / eps_i + t
    return _out(vb * series / t)
