"""Sizing a dielectric layer: self-consistency, published area scaling, limits and missing data."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from materials.energy import EPSILON_0, charge_density, differential_permittivity_at, nonlinear_energy_density
from materials.errors import DataError, InputError
from materials.sizing import (
    CAUTION,
    DEFAULT_SHAPE,
    DEFAULT_TEST_AREA_M2,
    SizingResult,
    design_field,
    size_linear,
    size_nonlinear,
)

V_PER_UM = 1e6
SCALE_PROBABILITY = -math.expm1(-1.0)  # the Weibull scale is the 63.2 % quantile

# Illustrative film-like inputs for the checks below (invented for the tests, not catalogue data).
FILM = dict(relative_permittivity=2.2, scale_V_per_m=650e6, shape=12.0, test_area_m2=1e-4)


def test_design_field_reproduces_the_area_law_example():
    # 600 V/µm on 1 cm² with β = 10 → 239 V/µm on 1 m² (weakest-link law, reference notes §4)
    got = design_field(scale_V_per_m=600e6, shape=10, test_area_m2=1e-4, area_m2=1.0,
                       failure_probability=SCALE_PROBABILITY)
    assert got / V_PER_UM == pytest.approx(239, abs=0.5)


def test_design_field_is_the_scaled_quantile_over_the_margin():
    one = design_field(scale_V_per_m=600e6, shape=10, test_area_m2=1e-4, area_m2=1e-4, failure_probability=0.01)
    assert one == pytest.approx(600e6 * (-math.log(0.99)) ** 0.1)
    assert design_field(scale_V_per_m=600e6, shape=10, test_area_m2=1e-4, area_m2=1e-4, failure_probability=0.01,
                        margin=1.5) == pytest.approx(one / 1.5)
    many = design_field(scale_V_per_m=600e6, shape=10, test_area_m2=1e-4, area_m2=np.array([1e-4, 1e-2]),
                        failure_probability=0.01)
    assert many.shape == (2,) and many[1] == pytest.approx(one * 0.01**0.1)


def check_linear(res: SizingResult, *, energy, voltage, er):
    assert res.capacitance_F == pytest.approx(EPSILON_0 * er * res.area_m2 / res.thickness_m, rel=1e-12)
    assert res.energy_J == pytest.approx(0.5 * res.capacitance_F * voltage**2, rel=1e-12)
    assert res.energy_J == pytest.approx(energy, rel=1e-10)
    assert res.operating_field_V_per_m == pytest.approx(voltage / res.thickness_m, rel=1e-12)
    assert res.volume_m3 == pytest.approx(res.area_m2 * res.thickness_m, rel=1e-12)


@settings(max_examples=40, deadline=None)
@given(energy=st.floats(1e-3, 1e5), voltage=st.floats(10, 1e5), er=st.floats(1.0, 3000.0),
       shape=st.floats(1.5, 40.0), p=st.floats(1e-6, 0.5), margin=st.floats(1.0, 3.0))
def test_linear_sizing_is_self_consistent(energy, voltage, er, shape, p, margin):
    res = size_linear(energy_J=energy, voltage_V=voltage, relative_permittivity=er, scale_V_per_m=500e6,
                      shape=shape, test_area_m2=1e-4, failure_probability=p, margin=margin)
    check_linear(res, energy=energy, voltage=voltage, er=er)
    assert res.limited_by == "breakdown"
    expected = design_field(scale_V_per_m=500e6, shape=shape, test_area_m2=1e-4, area_m2=res.area_m2,
                            failure_probability=p, margin=margin)
    assert res.operating_field_V_per_m == pytest.approx(expected, rel=1e-10)
    assert res.design_field_V_per_m == pytest.approx(expected, rel=1e-10)
    assert res.failure_probability <= p * (1 + 1e-9)


def test_linear_sizing_matches_a_scipy_brentq_solution():
    # independent solve of A = 2W·d(A)/(ε0εrV²), d(A) = V/E_d(A), with scipy.optimize.brentq
    from scipy.optimize import brentq

    energy, voltage, p = 50.0, 800.0, 1e-3

    def residual(log_a):
        a = math.exp(log_a)
        e_d = design_field(scale_V_per_m=650e6, shape=12.0, test_area_m2=1e-4, area_m2=a, failure_probability=p)
        return log_a - math.log(2 * energy * (voltage / e_d) / (EPSILON_0 * 2.2 * voltage**2))

    ref_area = math.exp(brentq(residual, math.log(1e-6), math.log(1e6), xtol=1e-14))
    res = size_linear(energy_J=energy, voltage_V=voltage, failure_probability=p, **FILM)
    assert res.area_m2 == pytest.approx(ref_area, rel=1e-10)
    assert res.iterations == 0


def test_breakdown_limited_design_reaches_the_target_probability():
    res = size_linear(energy_J=20.0, voltage_V=800.0, failure_probability=1e-3, **FILM)
    assert res.failure_probability == pytest.approx(1e-3, rel=1e-9)
    with_margin = size_linear(energy_J=20.0, voltage_V=800.0, failure_probability=1e-3, margin=1.3, **FILM)
    assert with_margin.failure_probability < 1e-3
    assert with_margin.thickness_m > res.thickness_m and with_margin.area_m2 > res.area_m2


def test_min_thickness_limits_and_lowers_the_failure_probability():
    free = size_linear(energy_J=0.5, voltage_V=400.0, failure_probability=1e-3, **FILM)
    res = size_linear(energy_J=0.5, voltage_V=400.0, failure_probability=1e-3, min_thickness_m=3e-6, **FILM)
    assert free.thickness_m < 3e-6
    assert res.limited_by == "min_thickness" and res.thickness_m == 3e-6
    check_linear(res, energy=0.5, voltage=400.0, er=2.2)
    assert res.operating_field_V_per_m < res.design_field_V_per_m
    assert res.failure_probability < 1e-3
    assert any("minimum thickness" in n for n in res.notes)


def test_mass_and_ripple_dissipation():
    res = size_linear(energy_J=10.0, voltage_V=600.0, failure_probability=1e-3, density_kg_per_m3=905.0,
                      loss_tangent=2e-4, ripple_current_A=30.0, frequency_Hz=10e3, **FILM)
    assert res.mass_kg == pytest.approx(905.0 * res.volume_m3)
    esr = 2e-4 / (2 * math.pi * 10e3 * res.capacitance_F)
    assert res.dissipated_power_W == pytest.approx(30.0**2 * esr, rel=1e-12)
    assert size_linear(energy_J=10.0, voltage_V=600.0, failure_probability=1e-3, **FILM).dissipated_power_W is None
    with pytest.raises(DataError, match="frequency_Hz"):
        size_linear(energy_J=10.0, voltage_V=600.0, failure_probability=1e-3, loss_tangent=2e-4,
                    ripple_current_A=30.0, **FILM)


def test_missing_breakdown_data_is_named():
    base = dict(energy_J=1.0, voltage_V=500.0, relative_permittivity=2.2, scale_V_per_m=600e6,
                failure_probability=0.01)
    with pytest.raises(DataError, match="shape, test_area_m2"):
        size_linear(**base)
    with pytest.raises(DataError, match="test_area_m2"):
        size_linear(shape=10.0, **base)
    with pytest.raises(DataError, match="scale_V_per_m"):
        size_linear(**{**base, "scale_V_per_m": None}, shape=10, test_area_m2=1e-4)
    res = size_linear(assume_defaults=True, **base)
    same = size_linear(shape=DEFAULT_SHAPE, test_area_m2=DEFAULT_TEST_AREA_M2, **base)
    assert res.area_m2 == pytest.approx(same.area_m2, rel=1e-14)
    assert any("β = 10 assumed (range 5–20" in n for n in res.notes) and any("1 cm² assumed" in n for n in res.notes)


@pytest.mark.parametrize("change", [{"shape": 1.0}, {"failure_probability": 1.0}, {"voltage_V": -5.0},
                                    {"margin": 0.0}, {"relative_permittivity": float("nan")}])
def test_bad_sizing_inputs_are_refused(change):
    args = dict(energy_J=1.0, voltage_V=500.0, failure_probability=0.01, **FILM)
    with pytest.raises(InputError):
        size_linear(**{**args, **change})


def test_caution_defers_to_standards_and_testing():
    text = CAUTION.lower()
    assert "kill" in text and "standards" in text and "codes" in text and "testing" in text
    assert size_linear(energy_J=1.0, voltage_V=500.0, failure_probability=0.01, **FILM).as_dict()["cautions"] == [
        CAUTION]


# --- nonlinear -----------------------------------------------------------------------------------------------

CURVE = dict(bias_field_V_per_m=[0.0, 5e6, 10e6, 20e6, 40e6], differential_permittivity=[2500.0, 2000.0, 1200.0,
                                                                                           600.0, 400.0])
CERAMIC = dict(scale_V_per_m=40e6, shape=9.0, test_area_m2=3e-5)


def test_nonlinear_with_a_flat_curve_equals_linear():
    lin = size_linear(energy_J=5.0, voltage_V=800.0, failure_probability=1e-3, **FILM)
    flat = size_nonlinear(energy_J=5.0, voltage_V=800.0, failure_probability=1e-3, bias_field_V_per_m=[0.0, 1e9],
                          differential_permittivity=[2.2, 2.2],
                          **{k: v for k, v in FILM.items() if k != "relative_permittivity"})
    for name in ("thickness_m", "area_m2", "capacitance_F", "energy_J", "failure_probability"):
        assert getattr(flat, name) == pytest.approx(getattr(lin, name), rel=1e-9), name
    assert flat.iterations >= 0


def test_nonlinear_sizing_is_self_consistent():
    res = size_nonlinear(energy_J=2.0, voltage_V=300.0, failure_probability=1e-3, **CURVE, **CERAMIC)
    e = res.operating_field_V_per_m
    assert e == pytest.approx(300.0 / res.thickness_m)
    u = nonlinear_energy_density(CURVE["bias_field_V_per_m"], CURVE["differential_permittivity"], e)
    assert res.energy_J == pytest.approx(res.area_m2 * res.thickness_m * u, rel=1e-12)
    assert res.energy_J == pytest.approx(2.0, rel=1e-9)
    d = charge_density(CURVE["bias_field_V_per_m"], CURVE["differential_permittivity"], e)
    assert res.capacitance_F == pytest.approx(d * res.area_m2 / 300.0, rel=1e-12)
    er = differential_permittivity_at(CURVE["bias_field_V_per_m"], CURVE["differential_permittivity"], e)
    assert res.small_signal_capacitance_F == pytest.approx(EPSILON_0 * er * res.area_m2 / res.thickness_m)
    assert res.small_signal_capacitance_F < res.capacitance_F  # permittivity falls with bias
    assert res.operating_field_V_per_m == pytest.approx(res.design_field_V_per_m, rel=1e-10)
    assert res.failure_probability == pytest.approx(1e-3, rel=1e-8)


def test_nonlinear_min_thickness():
    res = size_nonlinear(energy_J=0.1, voltage_V=100.0, failure_probability=1e-3, min_thickness_m=20e-6,
                         **CURVE, **CERAMIC)
    assert res.limited_by == "min_thickness" and res.thickness_m == 20e-6
    assert res.energy_J == pytest.approx(0.1, rel=1e-12)
    assert res.failure_probability < 1e-3


def test_nonlinear_refuses_an_operating_field_beyond_the_curve():
    short = dict(bias_field_V_per_m=[0.0, 5e6], differential_permittivity=[2500.0, 2000.0])
    with pytest.raises(DataError, match="extrapolate"):
        size_nonlinear(energy_J=2.0, voltage_V=300.0, failure_probability=1e-3, **short, **CERAMIC)
    res = size_nonlinear(energy_J=2.0, voltage_V=300.0, failure_probability=1e-3, extrapolate=True, **short,
                         **CERAMIC)
    assert any("beyond the DC-bias curve" in n for n in res.notes)


def test_root_in_bracket_agrees_with_scipy_brentq():
    """The hand-written bracketed solver against scipy.optimize.brentq on monotone functions."""
    from scipy.optimize import brentq

    from materials.sizing import root_in_bracket

    fs = ((lambda x: x ** 3 - 2.0, 0.0, 5.0), (lambda x: np.exp(x) - 1e6, -10.0, 40.0),
          (lambda x: np.log(x) + x - 3.0, 0.1, 10.0), (lambda x: np.tanh(x - 0.3), -5.0, 7.0))
    for f, lo, hi in fs:
        ours, _, ok = root_in_bracket(lambda x, idx, f=f: f(x), lo, hi, f_lo=f(lo), f_hi=f(hi))
        assert ok[0]
        assert ours[0] == pytest.approx(brentq(f, lo, hi, xtol=1e-14), rel=1e-11, abs=1e-12)
    # the same four functions solved together, as the shortlist solves many parts at once
    def many(x, idx):
        return np.array([fs[i][0](xi) for xi, i in zip(x, idx, strict=True)])

    lo, hi = np.array([f[1] for f in fs]), np.array([f[2] for f in fs])
    x, _, ok = root_in_bracket(many, lo, hi, f_lo=many(lo, range(4)), f_hi=many(hi, range(4)))
    assert ok.all()
    np.testing.assert_allclose(x, [brentq(f, a, b, xtol=1e-14) for f, a, b in fs], rtol=1e-11, atol=1e-12)
