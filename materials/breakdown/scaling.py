"""Scaling a breakdown field to another electrode area (weakest link) or thickness (empirical law)."""

from __future__ import annotations

import numpy as np

from materials.errors import InputError


def scale_to_area(field_V_per_m, *, area_from_m2, area_to_m2, shape):
    """Weakest-link scaling of a breakdown field (same failure probability) to another electrode area.

    ``E2 = E1·(A1/A2)^(1/β)`` for Weibull-distributed breakdown (IEC 62539 §12; the area law of thin-film
    capacitors, ElectroComponent Science and Technology 9(2), 111–114 (1981)). Arrays broadcast.
    """
    a1, a2, b = (np.asarray(v, dtype=float) for v in (area_from_m2, area_to_m2, shape))
    if np.any(~(a1 > 0)) or np.any(~(a2 > 0)):
        raise InputError("areas must be positive", field="area_m2")
    if np.any(~(b > 0)):
        raise InputError("Weibull shape must be positive", field="shape")
    out = np.asarray(field_V_per_m, dtype=float) * np.power(a1 / a2, 1.0 / b)
    return float(out) if out.ndim == 0 else out


def scale_to_thickness(field_V_per_m, *, thickness_from_m, thickness_to_m, exponent):
    """Empirical thickness law of breakdown strength: ``E2 = E1·(d1/d2)^a``.

    From ``E_BD ∝ d^(-a)`` (L. Zhao & C.L. Liu, Nanomaterials 10, 2473 (2020)); the exponent a is a property
    of the material and test. Arrays broadcast.
    """
    d1, d2, a = (np.asarray(v, dtype=float) for v in (thickness_from_m, thickness_to_m, exponent))
    if np.any(~(d1 > 0)) or np.any(~(d2 > 0)):
        raise InputError("thicknesses must be positive", field="thickness_m")
    if not np.all(np.isfinite(a)):
        raise InputError("thickness exponent must be finite", field="exponent")
    out = np.asarray(field_V_per_m, dtype=float) * np.power(d1 / d2, a)
    return float(out) if out.ndim == 0 else out


def failure_probability(field_V_per_m, *, scale_V_per_m, shape, test_area_m2, area_m2):
    """Short-term failure probability of an area at a field: the two-parameter Weibull with weakest-link area
    scaling, ``P = 1 − exp(−(A/A_test)·(E/α)^β)`` (IEEE Std 930-2004 / IEC 62539), computed as ``−expm1`` so that
    small probabilities keep their digits. Arrays broadcast."""
    e, a, b, at, ar = (np.asarray(v, dtype=float) for v in (field_V_per_m, scale_V_per_m, shape, test_area_m2,
                                                             area_m2))
    with np.errstate(all="ignore"):
        out = -np.expm1(-(ar / at) * np.power(e / a, b))
    return float(out) if out.ndim == 0 else out
