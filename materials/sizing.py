"""Sizing a capacitor's dielectric for an energy at a voltage, limited by Weibull breakdown statistics.

The design field is the Weibull quantile at the target failure probability, scaled by the weakest-link law from
the test electrode area to the part's active area and divided by a margin. A larger part has a lower design
field, so it needs a thicker layer, and so more area for the same energy: the sizing solves this loop
self-consistently and reports the failure probability the design reaches.

All inputs and outputs SI (J, V, V/m, m, m², kg/m³, A, Hz). Results are screening estimates (see CAUTION).
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass

import numpy as np

from materials.energy import EPSILON_0, BiasCurve
from materials.breakdown.scaling import failure_probability  # noqa: F401 - the one formula, used here too
from materials.errors import DataError, InputError
from materials.priors import TEST_AREA as _TEST_AREA, assumed_area_note, assumed_shape_note, shape_prior

_FILM_PRIOR = shape_prior("polymer-film")

CAUTION = ("Caution: the stored energy and the voltage of a capacitor can kill, also after the supply is removed. "
           "These figures are screening estimates, not a rating; follow the applicable standards and local codes, "
           "and confirm any design by qualified testing.")

#: Weibull shape and test electrode area assumed when none is known and defaults are allowed: the typical values of
#: the film priors of :mod:`materials.priors` (assumptions with a stated range, not measurements).
DEFAULT_SHAPE = _FILM_PRIOR.typical
DEFAULT_TEST_AREA_M2 = _TEST_AREA.typical


_SEGMENT_NOTE = ("self-healing segmented electrode: weakest-link scaling over one segment; the failure probability "
                 "is per segment (the expected share of segments that clear or disconnect), not of the whole part")


@dataclass(frozen=True)
class SizingResult:
    """A sized dielectric layer.

    Attributes:
        thickness_m: dielectric thickness d.
        area_m2: active (electrode overlap) area A.
        volume_m3: A·d, dielectric only.
        mass_kg: density·volume, None without a density.
        capacitance_F: C = Q/V (for a linear material ε0·εr·A/d).
        operating_field_V_per_m: V/d.
        design_field_V_per_m: the design field at this area (quantile scaled to A, divided by the margin).
        energy_J: energy stored at the voltage (½CV² for a linear material).
        failure_probability: Weibull failure probability at the operating field over the active area.
        limited_by: "breakdown" or "min_thickness".
        iterations: root-finder iterations (0 for the closed-form linear solution).
        dissipated_power_W: Σ I²·(R_s + tanδ/(ωC)) over the ripple harmonics, None without a ripple current.
        notes: remarks on assumptions and limits.
        small_signal_capacitance_F: ε0·εr,diff(V/d)·A/d (equal to capacitance_F for a linear material).
        energy_density_J_per_m3: energy_J / volume_m3.
    """

    thickness_m: float
    area_m2: float
    volume_m3: float
    mass_kg: float | None
    capacitance_F: float
    operating_field_V_per_m: float
    design_field_V_per_m: float
    energy_J: float
    failure_probability: float
    limited_by: str
    iterations: int
    dissipated_power_W: float | None
    notes: tuple[str, ...]
    small_signal_capacitance_F: float
    energy_density_J_per_m3: float

    def as_dict(self) -> dict:
        """Plain numbers with SI-suffixed keys, plus the caution (the `size` JSON contract without `key`)."""
        d = asdict(self)
        d["notes"] = list(self.notes)
        d["cautions"] = [CAUTION]
        return d


def _positive(name: str, value) -> float:
    if value is None:
        raise DataError(f"{name} is required")
    v = float(value)
    if not (math.isfinite(v) and v > 0):
        raise InputError(f"{name} must be a positive number, got {value!r}", field=name)
    return v


def _probability(value) -> float:
    if value is None:
        raise DataError("failure_probability is required")
    p = float(value)
    if not 0 < p < 1:
        raise InputError(f"failure probability must lie strictly between 0 and 1, got {value!r}",
                         field="failure_probability")
    return p


def design_field(*, scale_V_per_m, shape, test_area_m2, area_m2, failure_probability, margin=1.0):
    """Design field (V/m): the Weibull quantile at the failure probability, scaled to the area, over the margin.

    ``E_d = α·(-ln(1-p))^(1/β)·(A_test/A)^(1/β) / margin`` (IEEE Std 930-2004 / IEC 62539 quantile and
    weakest-link area law). The caller supplies α and β at the worst operating temperature. Arrays broadcast.
    """
    a, b, at, ar, p, m = (np.asarray(v, dtype=float) for v in
                          (scale_V_per_m, shape, test_area_m2, area_m2, failure_probability, margin))
    if np.any(~(a > 0)) or np.any(~(b > 0)) or np.any(~(at > 0)) or np.any(~(ar > 0)) or np.any(~(m > 0)):
        raise InputError("scale, shape, areas and margin must be positive")
    if np.any(~((p > 0) & (p < 1))):
        raise InputError("failure probability must lie strictly between 0 and 1", field="failure_probability")
    out = a * np.power(-np.log1p(-p) * at / ar, 1.0 / b) / m
    return float(out) if out.ndim == 0 else out


def _breakdown_inputs(scale, shape, test_area, assume_defaults):
    notes = []
    missing = [name for name, v in (("shape", shape), ("test_area_m2", test_area)) if v is None]
    if missing and not assume_defaults:
        raise DataError(f"missing breakdown data: {', '.join(missing)} (give them, or allow common-practice "
                        "defaults with assume_defaults=True)")
    if shape is None:
        shape = DEFAULT_SHAPE
        notes.append(assumed_shape_note(DEFAULT_SHAPE, _FILM_PRIOR))
    if test_area is None:
        test_area = DEFAULT_TEST_AREA_M2
        notes.append(assumed_area_note(DEFAULT_TEST_AREA_M2, _TEST_AREA))
    scale = _positive("scale_V_per_m", scale)
    shape = _positive("shape", shape)
    if shape <= 1:
        raise InputError("Weibull shape must exceed 1 for sizing: at or below 1 a larger part is weaker faster "
                         "than it stores more, and no self-consistent size exists", field="shape")
    return scale, shape, _positive("test_area_m2", test_area), notes


def _design_constant(scale, shape, test_area, p, margin):
    """ln K with E_design(A) = K·A^(-1/β)."""
    return math.log(scale) + (math.log(-math.log1p(-p)) + math.log(test_area)) / shape - math.log(margin)


def _ripple_power(capacitance, loss_tangent, ripple_current, frequency, series_resistance=0.0):
    """Power (W) one ripple harmonic dissipates: ``I²·(R_s + tan δ/(ω·C))`` (dielectric and metal)."""
    if ripple_current is None:
        return None
    missing = [n for n, v in (("loss_tangent", loss_tangent), ("frequency_Hz", frequency)) if v is None]
    if missing:
        raise DataError(f"ripple current given but {', '.join(missing)} missing: cannot compute the dissipation")
    i = float(ripple_current)
    if not (math.isfinite(i) and i >= 0):
        raise InputError("ripple current must be a non-negative number", field="ripple_current_A")
    tand = float(loss_tangent)
    if not (math.isfinite(tand) and tand >= 0):
        raise InputError("loss tangent must be a non-negative number", field="loss_tangent")
    esr = series_resistance + tand / (2.0 * math.pi * _positive("frequency_Hz", frequency) * capacitance)
    return i * i * esr


def _finish(*, d, area, voltage, charge_per_m2, energy, small_signal, scale, shape, test_area, log_k,
            limited_by, iterations, density, loss_tangent, ripple, frequency, notes,
            segment_area=None, series_resistance=0.0) -> SizingResult:
    e_op = voltage / d
    volume = area * d
    capacitance = charge_per_m2 * area / voltage
    link = area if segment_area is None else segment_area
    failure = failure_probability(e_op, scale_V_per_m=scale, shape=shape, test_area_m2=test_area, area_m2=link)
    if limited_by == "min_thickness":
        notes.append(f"limited by the minimum thickness {d:.4g} m: the operating field is below the design field")
    mass = None if density is None else _positive("density_kg_per_m3", density) * volume
    return SizingResult(
        thickness_m=d,
        area_m2=area,
        volume_m3=volume,
        mass_kg=mass,
        capacitance_F=capacitance,
        operating_field_V_per_m=e_op,
        design_field_V_per_m=math.exp(log_k - math.log(link) / shape),
        energy_J=energy,
        failure_probability=failure,
        limited_by=limited_by,
        iterations=iterations,
        dissipated_power_W=_ripple_power(small_signal, loss_tangent, ripple, frequency, series_resistance),
        notes=tuple(notes),
        small_signal_capacitance_F=small_signal,
        energy_density_J_per_m3=energy / volume,
    )


def root_in_bracket(func, lo, hi, *, f_lo, f_hi, xtol: float = 1e-13, maxiter: int = 200):
    """Roots of increasing functions with ``f_lo <= 0 <= f_hi``, many at once: regula falsi (Illinois variant)
    kept in its bracket (Dowell & Jarratt, BIT 11, 168 (1971)), with a convergence mask.

    ``func(x, idx)`` evaluates the functions of rows ``idx`` at ``x`` (arrays of one shape). Returns ``(x,
    iterations, converged)`` as arrays (one entry per row). Written here rather than importing scipy.optimize, whose
    import costs most of a second on every command; checked against ``scipy.optimize.brentq`` in the tests.
    """
    lo, hi, f_lo, f_hi = (np.array(v, dtype=float, ndmin=1) for v in np.broadcast_arrays(lo, hi, f_lo, f_hi))
    n = lo.size
    x = np.where(f_lo == 0, lo, hi)
    its = np.zeros(n, dtype=np.int64)
    done = (f_lo == 0) | (f_hi == 0)
    side = np.zeros(n, dtype=np.int64)
    for k in range(1, maxiter + 1):
        a = np.flatnonzero(~done)
        if not a.size:
            break
        lw, h, fl, fh = lo[a], hi[a], f_lo[a], f_hi[a]
        with np.errstate(all="ignore"):
            xa = np.where(fh != fl, h - fh * (h - lw) / (fh - fl), 0.5 * (lw + h))
        xa = np.where((xa > lw) & (xa < h), xa, 0.5 * (lw + h))
        fx = np.asarray(func(xa, a), dtype=float)
        x[a], its[a] = xa, k
        stop = (fx == 0) | (h - lw <= xtol * np.maximum(1.0, np.abs(xa)))
        neg, pos = (fx < 0) & ~stop, (fx > 0) & ~stop
        an, ap = a[neg], a[pos]
        lo[an], f_lo[an] = xa[neg], fx[neg]
        f_hi[an] = np.where(side[an] == -1, 0.5 * f_hi[an], f_hi[an])
        side[an] = -1
        hi[ap], f_hi[ap] = xa[pos], fx[pos]
        f_lo[ap] = np.where(side[ap] == 1, 0.5 * f_lo[ap], f_lo[ap])
        side[ap] = 1
        done[a[stop | ~np.isfinite(fx)]] = True
        if not np.all(np.isfinite(fx)):
            x[a[~np.isfinite(fx)]] = np.nan
    converged = done & np.isfinite(x)
    return x, its, converged


def size_columns(*, energy_J, voltage_V, log_k, shape, relative_permittivity, energy_density=None,
                 nonlinear=None, segment_area_m2=None, min_thickness_m=None) -> dict:
    """Self-consistent sizing of many layers at once (the rule of :func:`size_linear` and :func:`size_nonlinear`).

    Per row: ``log_k`` (ln K of ``E_design(A) = K·A^(-1/β)``), ``shape`` β, ``relative_permittivity`` (the linear
    εr, or the zero-field εr of a nonlinear row, used for the first guess), ``segment_area_m2`` (NaN: the whole
    area is the weakest link), ``min_thickness_m`` (NaN: none). ``nonlinear`` marks rows whose energy density at a
    field is ``energy_density(idx, E)`` (J/m³) instead of ``½·ε0·εr·E²``.

    Linear rows: ``A = (cV/K)^(β/(β-1))`` with ``c = 2W/(ε0·εr·V²)``. Nonlinear rows: ``W(A) =
    (V/K)·A^(1+1/β)·u(K·A^(-1/β))`` solved for ln A by :func:`root_in_bracket` after bracketing from the linear
    estimate. Rows with β ≤ 1 and a whole-area weakest link have no self-consistent size (NaN, not converged).
    Returns arrays ``thickness_m, area_m2, design_field_V_per_m, at_min (bool), iterations, converged (bool)``.
    """
    b = np.asarray(shape, dtype=float)
    m = b.size
    log_k = np.broadcast_to(np.asarray(log_k, dtype=float), (m,))
    er = np.broadcast_to(np.asarray(relative_permittivity, dtype=float), (m,))
    nl = np.zeros(m, bool) if nonlinear is None else np.broadcast_to(np.asarray(nonlinear, bool), (m,))
    seg = np.full(m, np.nan) if segment_area_m2 is None else np.broadcast_to(
        np.asarray(segment_area_m2, dtype=float), (m,))
    d_min = np.full(m, np.nan) if min_thickness_m is None else np.broadcast_to(
        np.asarray(min_thickness_m, dtype=float), (m,))
    energy, v = float(energy_J), float(voltage_V)
    has_seg = np.isfinite(seg)
    with np.errstate(all="ignore"):
        log_c = np.log(2.0 * energy / (EPSILON_0 * er * v**2))
        log_area = np.where(has_seg, np.log(seg), (log_c + math.log(v) - log_k) * b / (b - 1.0))
        log_area = np.where(has_seg | (b > 1), log_area, np.nan)
    its = np.zeros(m, dtype=np.int64)
    ok = np.isfinite(log_area)
    roots = np.flatnonzero(nl & ~has_seg & ok)
    if roots.size:
        lk, bb = log_k[roots], b[roots]
        log_w = math.log(energy)

        def f(x, idx):
            r = roots[idx]
            e = np.exp(lk[idx] - x / bb[idx])
            with np.errstate(all="ignore"):
                return x + math.log(v) - np.log(e) + np.log(energy_density(r, e)) - log_w

        x0 = log_area[roots]
        everyone = np.arange(roots.size)
        lo, hi = x0.copy(), x0.copy()
        f_lo = f_hi = f(x0, everyone)
        f_lo, f_hi = f_lo.copy(), f_hi.copy()
        step = math.log(10.0)
        for _ in range(200):
            need_lo, need_hi = f_lo > 0, f_hi < 0
            if not (need_lo.any() or need_hi.any()):
                break
            i = np.flatnonzero(need_lo)
            lo[i] -= step
            f_lo[i] = f(lo[i], i)
            i = np.flatnonzero(need_hi)
            hi[i] += step
            f_hi[i] = f(hi[i], i)
        bracketed = (f_lo <= 0) & (f_hi >= 0)
        x, n_it, conv = root_in_bracket(f, np.where(bracketed, lo, 0.0),
                                        np.where(bracketed, hi, 1.0), f_lo=np.where(bracketed, f_lo, -1.0),
                                        f_hi=np.where(bracketed, f_hi, 1.0))
        good = bracketed & conv
        log_area[roots] = np.where(good, x, np.nan)
        its[roots] = n_it
        ok[roots] = good
    with np.errstate(all="ignore"):
        d = np.exp(math.log(v) + log_area / b - log_k)
        at_min = np.isfinite(d_min) & (d < d_min)
        d = np.where(at_min, d_min, d)
        lin_area = np.exp(log_c) * d
        area = np.where(nl, np.exp(log_area), lin_area)
        redo = np.flatnonzero(nl & (at_min | has_seg) & ok)
        if redo.size:
            area[redo] = energy / (d[redo] * energy_density(redo, v / d[redo]))
        link = np.where(has_seg, seg, area)
        e_design = np.exp(log_k - np.log(link) / b)
    return {"thickness_m": d, "area_m2": area, "design_field_V_per_m": e_design, "at_min": at_min,
            "iterations": its, "converged": ok}


def size_linear(*, energy_J, voltage_V, relative_permittivity, scale_V_per_m, shape=None, test_area_m2=None,
                failure_probability, margin=1.0, density_kg_per_m3=None, min_thickness_m=None,
                loss_tangent=None, ripple_current_A=None, frequency_Hz=None,
                assume_defaults=False, segment_area_m2=None) -> SizingResult:
    """Size a linear dielectric layer to store ``energy_J`` at ``voltage_V`` at the design field.

    Derivation: ``W = ½CV²`` with ``C = ε0·εr·A/d`` fixes the area per thickness, ``A = c·d`` with
    ``c = 2W/(ε0·εr·V²)``. Breakdown fixes ``d = V/E_d(A)`` with ``E_d(A) = K·A^(-1/β)`` (see
    :func:`design_field`). Together ``A = (cV/K)·A^(1/β)``, whose solution is
    ``A = (cV/K)^(β/(β-1))``: the limit of the fixed-point iteration ``A ← (cV/K)·A^(1/β)``, a contraction in
    ln A with factor 1/β < 1, so it exists and is unique for β > 1. If ``d`` is below ``min_thickness_m`` the
    layer is made that thick and ``A = c·d``; the operating field V/d then stays below E_d(A) (thicker than the
    breakdown-limited solution is always safe), and the failure probability reached is lower than the target.

    Args:
        energy_J: energy to store (J); voltage_V: working voltage (V).
        relative_permittivity: εr of the dielectric.
        scale_V_per_m, shape, test_area_m2: Weibull breakdown data at the worst temperature and its test area.
        failure_probability: target probability of breakdown of the part at the working voltage.
        margin: divisor (>= 1 usually) applied to the area-scaled quantile.
        density_kg_per_m3, min_thickness_m: optional material data.
        loss_tangent, ripple_current_A (RMS), frequency_Hz: optional, for the dissipated power I²·ESR.
        assume_defaults: use DEFAULT_SHAPE and DEFAULT_TEST_AREA_M2 where missing (with a note).

    Raises:
        DataError: missing breakdown data (named) without ``assume_defaults``; ripple without tanδ or frequency.
        InputError: non-positive inputs, a probability outside (0, 1), a shape of 1 or less.
    """
    energy, voltage = _positive("energy_J", energy_J), _positive("voltage_V", voltage_V)
    er = _positive("relative_permittivity", relative_permittivity)
    scale, shape, test_area, notes = _breakdown_inputs(scale_V_per_m, shape, test_area_m2, assume_defaults)
    p, margin = _probability(failure_probability), _positive("margin", margin)
    log_k = _design_constant(scale, shape, test_area, p, margin)
    if segment_area_m2 is not None:
        _positive("segment_area_m2", segment_area_m2)
        notes = notes + [_SEGMENT_NOTE]
    if min_thickness_m is not None:
        _positive("min_thickness_m", min_thickness_m)
    sol = size_columns(energy_J=energy, voltage_V=voltage, log_k=log_k, shape=np.array([shape]),
                       relative_permittivity=er, segment_area_m2=segment_area_m2 or np.nan,
                       min_thickness_m=min_thickness_m or np.nan)
    d, area = float(sol["thickness_m"][0]), float(sol["area_m2"][0])
    capacitance = EPSILON_0 * er * area / d
    return _finish(d=d, area=area, voltage=voltage, charge_per_m2=EPSILON_0 * er * voltage / d,
                   energy=0.5 * capacitance * voltage**2, small_signal=capacitance, scale=scale, shape=shape,
                   test_area=test_area, log_k=log_k, limited_by="min_thickness" if sol["at_min"][0] else "breakdown",
                   iterations=0, density=density_kg_per_m3, loss_tangent=loss_tangent, ripple=ripple_current_A,
                   frequency=frequency_Hz, notes=notes, segment_area=segment_area_m2)


def size_nonlinear(*, energy_J, voltage_V, bias_field_V_per_m, differential_permittivity, scale_V_per_m,
                   shape=None, test_area_m2=None, failure_probability, margin=1.0, density_kg_per_m3=None,
                   min_thickness_m=None, loss_tangent=None, ripple_current_A=None, frequency_Hz=None,
                   extrapolate=False, assume_defaults=False, segment_area_m2=None) -> SizingResult:
    """Size a nonlinear dielectric (given by a DC-bias curve) to store ``energy_J`` at ``voltage_V``.

    The stored energy is ``W = A·d·u(V/d)`` with ``u(E) = ∫0^E e dD`` from
    :func:`materials.energy.nonlinear_energy_density`, and breakdown fixes ``d = V·A^(1/β)/K`` as in
    :func:`size_linear`. Then ``W(A) = (V/K)·A^(1+1/β)·u(K·A^(-1/β))`` is solved for A by a bracketed root on ln A
    (:func:`root_in_bracket`, checked against scipy.optimize.brentq in the tests) after bracketing from the
    small-signal linear estimate. W(A) increases, so the root is
    unique, whenever u grows more slowly than E^(β+1) (always for a saturating or linear material).
    The capacitance reported is the effective Q/V, ``D(V/d)·A/V``; the small-signal capacitance uses
    εr,diff at the operating field and is the one used for the ripple dissipation.

    Args:
        bias_field_V_per_m, differential_permittivity: the DC-bias curve (see :mod:`materials.energy`).
        extrapolate: allow an operating field beyond the curve (the last permittivity held constant).
        Others as in :func:`size_linear`.

    Raises:
        DataError: an operating field beyond the curve without ``extrapolate``; missing data as in size_linear.
    """
    energy, voltage = _positive("energy_J", energy_J), _positive("voltage_V", voltage_V)
    curve = BiasCurve(bias_field_V_per_m, differential_permittivity)
    scale, shape, test_area, notes = _breakdown_inputs(scale_V_per_m, shape, test_area_m2, assume_defaults)
    p, margin = _probability(failure_probability), _positive("margin", margin)
    log_k = _design_constant(scale, shape, test_area, p, margin)
    if segment_area_m2 is not None:
        _positive("segment_area_m2", segment_area_m2)
        notes = notes + [_SEGMENT_NOTE]
    if min_thickness_m is not None:
        _positive("min_thickness_m", min_thickness_m)
    sol = size_columns(energy_J=energy, voltage_V=voltage, log_k=log_k, shape=np.array([shape]),
                       relative_permittivity=float(curve.k[0]), nonlinear=True,
                       energy_density=lambda idx, e: curve.energy(e, True),
                       segment_area_m2=segment_area_m2 or np.nan, min_thickness_m=min_thickness_m or np.nan)
    if not sol["converged"][0]:  # pragma: no cover - W(A) spans many decades for any physical curve
        raise InputError("no area stores the energy at this voltage: check the DC-bias curve")
    d, area = float(sol["thickness_m"][0]), float(sol["area_m2"][0])
    e_op = voltage / d
    u = float(curve.energy(e_op, extrapolate))  # raises DataError beyond the curve unless extrapolate
    if e_op > curve.e[-1]:
        notes.append(f"operating field {e_op:.4g} V/m beyond the DC-bias curve (ends at {curve.e[-1]:.4g} V/m): "
                     "last permittivity held constant")
    small_signal = EPSILON_0 * float(curve.permittivity(e_op, True)) * area / d
    return _finish(d=d, area=area, voltage=voltage, charge_per_m2=float(curve.charge(e_op, True)),
                   energy=area * d * u, small_signal=small_signal, scale=scale, shape=shape,
                   test_area=test_area, log_k=log_k,
                   limited_by="min_thickness" if sol["at_min"][0] else "breakdown",
                   iterations=int(sol["iterations"][0]), density=density_kg_per_m3, loss_tangent=loss_tangent,
                   ripple=ripple_current_A, frequency=frequency_Hz, notes=notes, segment_area=segment_area_m2)
