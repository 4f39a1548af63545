"""Energy stored in a dielectric: linear, from a DC-bias curve, and from a measured polarisation loop.

All quantities SI: fields in V/m, polarisation and displacement in C/m², energy densities in J/m³.
The stored energy density is ``∫ E dD`` with ``D = ε0·E + P`` (the ε0·E part counts, which matters for
low-permittivity films).
"""

from __future__ import annotations

from dataclasses import asdict, dataclass

import numpy as np

from materials.errors import DataError, InputError

#: Vacuum permittivity ε0 in F/m (CODATA 2022, the value of scipy.constants.epsilon_0; written out here because
#: importing scipy.constants costs about 0.4 s, and a test checks that the two agree).
EPSILON_0 = 8.8541878188e-12

#: A loop half counts when its peak field is at least this fraction of the larger peak (smaller excursions of
#: the opposite sign are offsets or noise).
HALF_FRACTION = 0.1
#: Samples within this fraction of the half's peak field count as "near zero field".
ZERO_FRACTION = 0.05
#: An excursion counts as a full charge to the peak when it reaches this fraction of the half's peak field.
PEAK_FRACTION = 0.5


def _out(a):
    a = np.asarray(a)
    return float(a) if a.ndim == 0 else a


def linear_energy_density(relative_permittivity, field_V_per_m):
    """Energy density of a linear dielectric, ``½·ε0·εr·E²`` (J/m³). Arrays broadcast."""
    er = np.asarray(relative_permittivity, dtype=float)
    e = np.asarray(field_V_per_m, dtype=float)
    return _out(0.5 * EPSILON_0 * er * e * e)


# --- DC-bias curves ------------------------------------------------------------------------------------------

class CurveSet:
    """Many DC-bias curves at once: differential permittivity εr,diff(|E|) piecewise-linear between knots.

    ``fields``/``eps`` are ``(M, K)``, row ``i`` holding ``n[i]`` knots from zero field up (columns past ``n[i]``
    repeat the last knot). Beyond the last knot the last permittivity is held. Methods take row indices ``i`` and
    fields ``E`` of one shape and are exact for the interpolant: ``D = ε0·∫εr de`` and ``u = ε0·∫e·εr de`` summed
    segment by segment (a cumulative sum of the exact segment integrals).
    """

    def __init__(self, fields, eps, n=None):
        e = np.atleast_2d(np.asarray(fields, dtype=float))
        k = np.atleast_2d(np.asarray(eps, dtype=float))
        self.n = np.full(e.shape[0], e.shape[1]) if n is None else np.asarray(n, dtype=np.int64)
        self.e, self.k = e, k
        de = np.diff(e, axis=1)
        with np.errstate(invalid="ignore", divide="ignore"):
            slope = np.where(de > 0, np.diff(k, axis=1) / np.where(de > 0, de, 1.0), 0.0)
        self.slope = np.concatenate([slope, np.zeros((e.shape[0], 1))], axis=1)
        s = slope
        seg_d = k[:, :-1] * de + s * de**2 / 2
        seg_u = e[:, :-1] * k[:, :-1] * de + (e[:, :-1] * s + k[:, :-1]) * de**2 / 2 + s * de**3 / 3
        zero = np.zeros((e.shape[0], 1))
        self.cum_d = np.concatenate([zero, np.cumsum(seg_d, axis=1)], axis=1)
        self.cum_u = np.concatenate([zero, np.cumsum(seg_u, axis=1)], axis=1)
        self.top = e[np.arange(e.shape[0]), np.maximum(self.n - 1, 0)]

    def _locate(self, i, field_V_per_m):
        i = np.asarray(i, dtype=np.int64)
        mag = np.abs(np.asarray(field_V_per_m, dtype=float))
        i, mag = np.broadcast_arrays(i, mag)
        last = np.maximum(self.n[i] - 1, 0)
        j = np.minimum((self.e[i] <= mag[..., None]).sum(axis=-1) - 1, last)
        j = np.maximum(j, 0)
        s = mag - self.e[i, j]
        q = np.where(mag > self.top[i], 0.0, self.slope[i, j])
        return i, j, s, q

    def permittivity(self, i, field_V_per_m):
        i, j, s, q = self._locate(i, field_V_per_m)
        return self.k[i, j] + q * s

    def charge(self, i, field_V_per_m):
        f = np.asarray(field_V_per_m, dtype=float)
        i, j, s, q = self._locate(i, f)
        return EPSILON_0 * np.sign(f) * (self.cum_d[i, j] + self.k[i, j] * s + q * s**2 / 2)

    def energy(self, i, field_V_per_m):
        i, j, s, q = self._locate(i, field_V_per_m)
        ei, ki = self.e[i, j], self.k[i, j]
        return EPSILON_0 * (self.cum_u[i, j] + ei * ki * s + (ei * q + ki) * s**2 / 2 + q * s**3 / 3)


class BiasCurve:
    """One DC-bias curve: differential permittivity εr,diff(|E|), piecewise-linear between the given fields.

    Methods ``permittivity(E, extrapolate)``, ``charge(E, extrapolate)`` (D, C/m²) and
    ``energy(E, extrapolate)`` (∫E dD, J/m³) are exact for the interpolant and vectorised over E; the arithmetic is
    :class:`CurveSet`'s with one row.
    """

    def __init__(self, bias_field_V_per_m, differential_permittivity):
        e = np.asarray(bias_field_V_per_m, dtype=float).ravel()
        k = np.asarray(differential_permittivity, dtype=float).ravel()
        if e.size == 0 or e.size != k.size:
            raise InputError(f"{e.size} bias fields for {k.size} permittivities", field="differential_permittivity")
        if not (np.all(np.isfinite(e)) and np.all(np.isfinite(k))):
            raise InputError("DC-bias curve values must be finite", field="differential_permittivity")
        if np.any(e < 0):
            raise InputError("bias fields are magnitudes and must not be negative", field="bias_field_V_per_m")
        if np.any(k <= 0):
            raise InputError("differential permittivity must be positive", field="differential_permittivity")
        order = np.argsort(e, kind="stable")
        e, k = e[order], k[order]
        if np.any(np.diff(e) == 0):
            raise InputError("the DC-bias curve repeats a field", field="bias_field_V_per_m")
        if e[0] > 0:
            # εr(E) is even in E, so its slope is zero at E = 0: hold the lowest-field value down to zero.
            e, k = np.concatenate([[0.0], e]), np.concatenate([[k[0]], k])
        self.e, self.k = e, k
        self._set = CurveSet(e[None, :], k[None, :])

    def _check(self, field_V_per_m, extrapolate: bool):
        f = np.asarray(field_V_per_m, dtype=float)
        if not np.all(np.isfinite(f)):
            raise InputError("fields must be finite", field="field_V_per_m")
        top = self.e[-1]
        if not extrapolate and np.any(np.abs(f) > top * (1 + 1e-12)):
            raise DataError(f"field {np.abs(f).max():.4g} V/m is beyond the DC-bias curve, which ends at {top:.4g} "
                            "V/m; pass extrapolate=True to hold the last permittivity constant beyond it")
        return f

    def permittivity(self, field_V_per_m, extrapolate: bool = False):
        f = self._check(field_V_per_m, extrapolate)
        return self._set.permittivity(np.zeros(f.shape, np.int64), f)

    def charge(self, field_V_per_m, extrapolate: bool = False):
        f = self._check(field_V_per_m, extrapolate)
        return self._set.charge(np.zeros(f.shape, np.int64), f)

    def energy(self, field_V_per_m, extrapolate: bool = False):
        f = self._check(field_V_per_m, extrapolate)
        return self._set.energy(np.zeros(f.shape, np.int64), f)


def nonlinear_energy_density(bias_field_V_per_m, differential_permittivity, field_V_per_m, *, extrapolate=False):
    """Energy density ``∫0^E e dD(e) = ε0·∫0^E e·εr,diff(e) de`` (J/m³) of a dielectric with a DC-bias curve.

    εr,diff is interpolated linearly between the given bias fields (V/m, magnitudes) and the integrals are exact
    for that interpolant. Below the lowest bias field the lowest value is held (εr is even in E, so flat at zero);
    beyond the highest it is held constant only with ``extrapolate=True``. Negative fields give the same energy as
    positive ones. Vectorised over ``field_V_per_m``.

    Raises:
        DataError: a field beyond the curve without ``extrapolate=True``.
        InputError: a malformed curve (negative or repeated fields, non-positive permittivity).
    """
    return _out(BiasCurve(bias_field_V_per_m, differential_permittivity).energy(field_V_per_m, extrapolate))


def charge_density(bias_field_V_per_m, differential_permittivity, field_V_per_m, *, extrapolate=False):
    """Electric displacement ``D(E) = ε0·∫0^E εr,diff(e) de`` (C/m²) from a DC-bias curve; odd in E.

    The same interpolation and range rules as :func:`nonlinear_energy_density`; ``D·A/V`` is the effective
    (charge-over-voltage) capacitance of a part of area A.
    """
    return _out(BiasCurve(bias_field_V_per_m, differential_permittivity).charge(field_V_per_m, extrapolate))


def differential_permittivity_at(bias_field_V_per_m, differential_permittivity, field_V_per_m, *,
                                 extrapolate=False):
    """Differential (small-signal) relative permittivity at a bias field, interpolated on the DC-bias curve."""
    return _out(BiasCurve(bias_field_V_per_m, differential_permittivity).permittivity(field_V_per_m, extrapolate))


# --- polarisation loops --------------------------------------------------------------------------------------

@dataclass(frozen=True)
class LoopEnergies:
    """Energies of a polarisation–field loop (per half: the positive or negative field excursion).

    Attributes:
        stored_J_per_m3: ``∫E dD`` on the charging branch, from zero field to the peak.
        recovered_J_per_m3: ``-∫E dD`` on the discharge branch, from the peak back to zero field.
        lost_J_per_m3: stored - recovered (the loop area of a closed unipolar loop; for a bipolar loop the loss
            of one half, so a full cycle loses twice this).
        efficiency: recovered / stored.
        max_field_V_per_m: peak field magnitude.
        max_polarization_C_per_m2: largest polarisation magnitude in the excursion.
        remanent_polarization_C_per_m2: polarisation magnitude where the discharge branch reaches zero field.
        halves: which halves were used, ``("positive",)``, ``("negative",)`` or both; with both, every figure is
            the mean of the two halves (efficiency stays recovered/stored of the means).
    """

    stored_J_per_m3: float
    recovered_J_per_m3: float
    lost_J_per_m3: float
    efficiency: float
    max_field_V_per_m: float
    max_polarization_C_per_m2: float
    remanent_polarization_C_per_m2: float
    halves: tuple[str, ...] = ("positive",)

    def as_dict(self) -> dict:
        """The figures as plain numbers with SI-suffixed keys (the `loop analyze` JSON contract)."""
        d = asdict(self)
        d["halves"] = list(self.halves)
        return d


def _path_integral(x, y, start, stop):
    """Trapezoidal ∫x dy along samples start..stop, where start/stop are (index, fraction) points.

    A point (i, f) lies the fraction f of the way from sample i to sample i + 1.
    """
    (i0, f0), (i1, f1) = start, stop

    def at(i, f, a):
        return a[i] if f == 0 else a[i] + f * (a[i + 1] - a[i])

    xs, ys = at(i0, f0, x), at(i0, f0, y)
    xe, ye = at(i1, f1, x), at(i1, f1, y)
    a, b = i0 + 1, i1  # whole samples strictly after the start, up to and including i1
    if b < a:
        return 0.5 * (xs + xe) * (ye - ys)
    # multiply-and-sum rather than a BLAS dot, whose threads stall badly on a busy machine
    inner = 0.5 * float(((x[a:b] + x[a + 1:b + 1]) * (y[a + 1:b + 1] - y[a:b])).sum())
    head = 0.5 * (xs + x[a]) * (y[a] - ys)
    tail = 0.5 * (x[b] + xe) * (ye - y[b]) if f1 else 0.0
    return head + inner + tail


def _crossing(x, i):
    """The zero crossing between samples i (x <= 0) and i + 1 (x > 0), or vice versa, as (index, fraction)."""
    if x[i] == 0:
        return i, 0.0
    return i, float(x[i] / (x[i] - x[i + 1]))


def _half(x, y, p):
    """Energies of the excursion of x above zero (x = ±E, y = ±D, p = ±P).

    Returns (stored, recovered, peak field, max polarisation, remanent polarisation), or the name of the missing
    branch ("charge" or "discharge") when the record holds no complete one.
    """
    n = x.size
    peak = float(x.max())
    above = x > ZERO_FRACTION * peak
    edges = np.diff(above.view(np.int8), prepend=np.int8(0), append=np.int8(0))
    starts = np.flatnonzero(edges == 1)
    ends = np.flatnonzero(edges == -1) - 1
    # each reduceat span also covers the gap after its run, whose samples are below the threshold anyway
    run_max = np.maximum.reduceat(x, starts)
    real = run_max >= PEAK_FRACTION * peak
    starts, ends = starts[real], ends[real]
    # gaps between full excursions: where a charge can start and a discharge can end
    gap_lo = np.concatenate([[0], ends[:-1] + 1])
    gap_hi = np.concatenate([starts[1:] - 1, [n - 1]])
    charged = np.flatnonzero(starts > 0)
    discharged = np.flatnonzero(ends < n - 1)
    if discharged.size == 0:
        return "discharge"
    if charged.size == 0:
        return "charge"
    both = np.intersect1d(charged, discharged)
    # the last complete excursion; in a periodic record whose ends cut an excursion, the last complete charge
    # and the last complete discharge are taken from different cycles
    ic, idis = (both[-1], both[-1]) if both.size else (charged[-1], discharged[-1])

    s, e = starts[ic], ends[ic]
    pk_c = s + int(np.argmax(x[s:e + 1]))
    g0 = gap_lo[ic]
    nonpos = np.flatnonzero(x[g0:s] <= 0)
    if nonpos.size:
        start = _crossing(x, g0 + int(nonpos[-1]))
    else:
        seg = x[g0:s]
        start = (g0 + int(seg.size - 1 - np.argmin(seg[::-1])), 0.0)
    stored = _path_integral(x, y, start, (pk_c, 0.0))

    s, e = starts[idis], ends[idis]
    pk_d = s + int(np.argmax(x[s:e + 1]))
    g1 = gap_hi[idis]
    nonpos = np.flatnonzero(x[e + 1:g1 + 1] <= 0)
    if nonpos.size:
        k = e + 1 + int(nonpos[0])
        stop = (k, 0.0) if x[k] == 0 else _crossing(x, k - 1)
    else:
        stop = (e + 1 + int(np.argmin(x[e + 1:g1 + 1])), 0.0)
    recovered = -_path_integral(x, y, (pk_d, 0.0), stop)

    i, f = stop
    remanent = p[i] if f == 0 else p[i] + f * (p[i + 1] - p[i])
    p_max = max(float(p[start[0]:pk_c + 1].max()), float(p[pk_d:i + 1].max()))
    return stored, recovered, max(float(x[pk_c]), float(x[pk_d])), p_max, abs(float(remanent)), (pk_d, stop)


def loop_energies(field_V_per_m, polarization_C_per_m2) -> LoopEnergies:
    """Stored, recovered and lost energy densities of a measured polarisation–field loop.

    The usual loop-integration method (e.g. AIP Advances 10, 095132 (2020)): with ``D = ε0·E + P``, the stored
    energy is ``∫E dD`` along the charging branch from zero field to the peak, the recovered energy is the same
    integral back along the discharge branch to zero field, and their difference is the loss; ``η = W_rec/W``.
    The trapezoid rule is used on the samples, with the zero crossings interpolated linearly.

    The samples are taken in measured order and may hold a unipolar loop (0 → Emax → 0), a bipolar one
    (0 → +Emax → 0 → −Emax → 0, in any phase) or several cycles. For each field polarity the last complete
    excursion is used (earlier cycles may hold a first-poling curve); an excursion is a run of samples above 5 %
    of the peak field that reaches half of it, its charge starts at the last zero crossing (or lowest field) before
    it and its discharge ends at the next zero crossing (or lowest field) after it. If the record starts or ends
    inside an excursion, the charge and the discharge may come from neighbouring cycles (steady state assumed).
    When both polarities are present (each peak at least 10 % of the larger) the two halves are averaged.

    Args:
        field_V_per_m: field samples E (V/m), in measured order.
        polarization_C_per_m2: polarisation samples P (C/m²), same length.

    Raises:
        InputError: fewer than 3 points, unequal lengths, non-finite values, a loop that never returns toward
            zero field, one with no charge from near zero field, or a charge that stores no energy.
    """
    e = np.asarray(field_V_per_m, dtype=float).ravel()
    pol = np.asarray(polarization_C_per_m2, dtype=float).ravel()
    if e.size != pol.size:
        raise InputError(f"{e.size} field samples for {pol.size} polarisation samples", field="polarization")
    if e.size < 3:
        raise InputError("a loop needs at least 3 points", field="field")
    # a sum is finite exactly when no sample is NaN or infinite (for values far below the float range)
    if not (np.isfinite(np.add.reduce(e)) and np.isfinite(np.add.reduce(pol))):
        raise InputError("loop samples must be finite numbers", field="field")
    d = EPSILON_0 * e + pol
    top, bottom = float(e.max()), float(-e.min())
    biggest = max(top, bottom)
    if biggest <= 0:
        raise InputError("the loop has no field", field="field")
    results, names, problems = [], [], []
    for sign, name, peak in ((1.0, "positive", top), (-1.0, "negative", bottom)):
        if peak < HALF_FRACTION * biggest:
            continue
        r = _half(e, d, pol) if sign > 0 else _half(-e, -d, -pol)
        if isinstance(r, str):
            problems.append(r)
        else:
            results.append(r)
            names.append(name)
    if not results:
        if "discharge" in problems:
            raise InputError("the loop never returns toward zero field after its peak", field="field")
        raise InputError("the loop has no charging branch rising from near zero field", field="field")
    stored, recovered, e_max, p_max, p_r = (float(np.mean(col)) for col in list(zip(*results, strict=True))[:5])
    if stored <= 0:
        raise InputError("the charging branch stores no energy: check the sign and order of the samples",
                         field="polarization")
    return LoopEnergies(
        stored_J_per_m3=stored,
        recovered_J_per_m3=recovered,
        lost_J_per_m3=stored - recovered,
        efficiency=recovered / stored,
        max_field_V_per_m=e_max,
        max_polarization_C_per_m2=p_max,
        remanent_polarization_C_per_m2=p_r,
        halves=tuple(names),
    )


def _checked_loop(field_V_per_m, polarization_C_per_m2):
    e = np.asarray(field_V_per_m, dtype=float).ravel()
    pol = np.asarray(polarization_C_per_m2, dtype=float).ravel()
    loop_energies(e, pol)  # the same checks and refusals
    return e, pol, EPSILON_0 * e + pol


def discharge_profile(field_V_per_m, polarization_C_per_m2, *, points: int = 11):
    """The recoverable energy density up to each field on a loop's discharge branch: ``u(E) = ∫ e dD`` from zero
    field up to ``E`` along the discharge branch (trapezoid rule, zero crossing interpolated), at ``points``
    fields evenly spaced from 0 to the peak. ``u`` at the peak is the loop's recovered energy
    (:func:`loop_energies`); with both polarities the two halves are averaged, as there.

    Returns ``(fields V/m, energies J/m³)``, both ascending from 0.
    """
    e, pol, d = _checked_loop(field_V_per_m, polarization_C_per_m2)
    top, bottom = float(e.max()), float(-e.min())
    biggest = max(top, bottom)
    profiles, peaks = [], []
    for sign, peak in ((1.0, top), (-1.0, bottom)):
        if peak < HALF_FRACTION * biggest:
            continue
        x, y, p = (e, d, pol) if sign > 0 else (-e, -d, -pol)
        r = _half(x, y, p)
        if isinstance(r, str):
            continue
        pk_d, (i, f) = r[5]
        # the branch from the zero crossing back up to the peak, as samples
        back = np.arange(i if f else i - 1, pk_d - 1, -1)
        xs = np.concatenate([[x[i] + f * (x[i + 1] - x[i]) if f else x[i]], x[back]])
        ys = np.concatenate([[y[i] + f * (y[i + 1] - y[i]) if f else y[i]], y[back]])
        cum = np.concatenate([[0.0], np.cumsum(0.5 * (xs[1:] + xs[:-1]) * (ys[1:] - ys[:-1]))])
        profiles.append((np.maximum.accumulate(np.maximum(xs, 0.0)), cum))
        peaks.append(r[2])
    grid_top = float(np.mean(peaks))
    fields = np.linspace(0.0, grid_top, points)
    u = np.mean([np.interp(fields * (pk / grid_top), xs, cum) for (xs, cum), pk in zip(profiles, peaks,
                                                                                         strict=True)], axis=0)
    return fields, u
