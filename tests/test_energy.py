"""Energy densities: linear, DC-bias curves and polarisation loops, checked against published and analytic values."""

import math

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from materials.energy import (
    EPSILON_0,
    BiasCurve,
    LoopEnergies,
    charge_density,
    differential_permittivity_at,
    linear_energy_density,
    loop_energies,
    nonlinear_energy_density,
)
from materials.errors import DataError, InputError

J_PER_CM3 = 1e6  # J/m³ in one J/cm³


def unipolar(e_max, n=2001):
    """Fields 0 → e_max → 0 with n points on each branch."""
    up = np.linspace(0.0, e_max, n)
    return np.concatenate([up, up[::-1][1:]])


# --- linear -------------------------------------------------------------------------------------------------

def test_epsilon_0_is_scipy_codata_value():
    # scipy.constants (CODATA 2022) is the reference; the module writes the value out to keep imports cheap
    import scipy.constants

    assert EPSILON_0 == scipy.constants.epsilon_0


def test_polypropylene_at_640_MV_per_m_stores_3_99_J_per_cm3():
    # ½ε0εrE² with εr 2.2 at 640 MV/m: 3.99 J/cm³ (BOPP short-term small-area ceiling, reference notes §5)
    assert linear_energy_density(2.2, 640e6) / J_PER_CM3 == pytest.approx(3.99, abs=0.005)


def test_dc_link_film_at_200_V_per_um_stores_0_39_J_per_cm3():
    # DC-link PP film design field 200 V/µm (Energies 16(18), 6631 (2023)), εr 2.2 → 0.39 J/cm³
    assert linear_energy_density(2.2, 200e6) / J_PER_CM3 == pytest.approx(0.39, abs=0.005)


def test_air_at_its_3_MV_per_m_strength_stores_about_40_J_per_m3():
    # air's dielectric strength ≈ 3.0 MV/m (Wikipedia "Dielectric strength" table; common practice)
    assert linear_energy_density(1.0006, 3e6) == pytest.approx(40.0, rel=0.01)


def test_pet_at_580_V_per_um_stores_4_91_J_per_cm3():
    # PET εr 3.3 and 580 V/µm (ITWissen encyclopedia): ½ε0εrE² = 4.91 J/cm³
    assert linear_energy_density(3.3, 580e6) / J_PER_CM3 == pytest.approx(4.91, abs=0.005)


def test_linear_energy_density_broadcasts():
    out = linear_energy_density(np.array([2.2, 3.3]), np.array([[1e8], [2e8]]))
    assert out.shape == (2, 2)
    assert out[1, 0] == pytest.approx(4 * out[0, 0])
    assert isinstance(linear_energy_density(2.2, 1e8), float)


# --- DC-bias curves -----------------------------------------------------------------------------------------

def test_constant_bias_curve_is_linear():
    fields = np.linspace(-3e8, 3e8, 7)
    got = nonlinear_energy_density([0, 4e8], [2.2, 2.2], fields)
    np.testing.assert_allclose(got, linear_energy_density(2.2, fields), rtol=1e-13)
    np.testing.assert_allclose(charge_density([0, 4e8], [2.2, 2.2], fields), EPSILON_0 * 2.2 * fields,
                               rtol=1e-13)


def test_permittivity_linear_in_field_matches_closed_form():
    # εr(e) = p + q·e: D = ε0(pE + qE²/2), U = ε0(pE²/2 + qE³/3) (analytic integrals)
    p, top = 1000.0, 20e6
    q = (400.0 - p) / top
    e = np.linspace(0, top, 9)
    np.testing.assert_allclose(charge_density([0, top], [p, 400.0], e), EPSILON_0 * (p * e + q * e**2 / 2),
                               rtol=1e-12, atol=1e-18)
    np.testing.assert_allclose(nonlinear_energy_density([0, top], [p, 400.0], e),
                               EPSILON_0 * (p * e**2 / 2 + q * e**3 / 3), rtol=1e-12, atol=1e-12)


def test_bias_curve_energy_matches_scipy_quad():
    # scipy.integrate.quad of ε0·e·εr(e) with numpy.interp as the reference interpolant
    from scipy.integrate import quad

    bias = np.array([0.0, 5e6, 10e6, 20e6, 30e6])
    perm = np.array([2500.0, 2100.0, 1200.0, 600.0, 450.0])
    for e in (1e6, 7.5e6, 10e6, 24e6, 30e6):
        knots = [k for k in bias if k < e]
        ref_u = quad(lambda x: EPSILON_0 * x * np.interp(x, bias, perm), 0, e, points=knots[1:], epsabs=0)[0]
        ref_d = quad(lambda x: EPSILON_0 * np.interp(x, bias, perm), 0, e, points=knots[1:], epsabs=0)[0]
        assert nonlinear_energy_density(bias, perm, e) == pytest.approx(ref_u, rel=1e-10)
        assert charge_density(bias, perm, e) == pytest.approx(ref_d, rel=1e-10)


def test_bias_curve_is_symmetric_in_field():
    bias, perm = [0, 1e7, 2e7], [2000.0, 1000.0, 700.0]
    assert nonlinear_energy_density(bias, perm, -1.5e7) == nonlinear_energy_density(bias, perm, 1.5e7)
    assert charge_density(bias, perm, -1.5e7) == -charge_density(bias, perm, 1.5e7)


def test_bias_curve_is_flat_below_its_first_point():
    assert nonlinear_energy_density([1e6, 2e7], [800.0, 400.0], 5e5) == pytest.approx(
        linear_energy_density(800.0, 5e5))


def test_bias_curve_refuses_fields_beyond_it_unless_asked():
    bias, perm = [0, 1e7], [1000.0, 500.0]
    with pytest.raises(DataError, match="extrapolate"):
        nonlinear_energy_density(bias, perm, 1.2e7)
    inside = nonlinear_energy_density(bias, perm, 1e7)
    beyond = nonlinear_energy_density(bias, perm, 1.2e7, extrapolate=True)
    assert beyond == pytest.approx(inside + EPSILON_0 * 500.0 * (1.2e7**2 - 1e14) / 2, rel=1e-12)


def test_differential_permittivity_interpolates_the_curve():
    assert differential_permittivity_at([0, 1e7], [1000.0, 500.0], 2.5e6) == pytest.approx(875.0)
    assert differential_permittivity_at([0, 1e7], [1000.0, 500.0], 2e7, extrapolate=True) == 500.0


def test_bias_curve_may_come_unsorted():
    curve = BiasCurve([2e7, 0, 1e7], [400.0, 1000.0, 700.0])
    assert curve.permittivity(5e6) == pytest.approx(850.0)


@pytest.mark.parametrize("bias, perm", [([0, -1e6], [3.0, 3.0]), ([0, 1e6, 1e6], [3.0, 2.0, 1.0]),
                                        ([0, 1e6], [3.0, 0.0]), ([0, 1e6], [3.0]), ([0, np.nan], [3.0, 3.0])])
def test_malformed_bias_curves_are_refused(bias, perm):
    with pytest.raises(InputError):
        nonlinear_energy_density(bias, perm, 1e5)


# --- loops ----------------------------------------------------------------------------------------------------

def test_linear_dielectric_loop_recovers_half_eps_e_squared():
    # analytic: P = ε0(εr-1)E gives D = ε0εrE, so ∫E dD = ½ε0εrE² on both branches
    e = unipolar(500e6)
    res = loop_energies(e, EPSILON_0 * (2.2 - 1) * e)
    expected = linear_energy_density(2.2, 500e6)
    assert res.stored_J_per_m3 == pytest.approx(expected, rel=1e-6)
    assert res.recovered_J_per_m3 == pytest.approx(expected, rel=1e-6)
    assert res.efficiency == pytest.approx(1.0, abs=1e-9)
    assert res.max_field_V_per_m == 500e6
    assert res.remanent_polarization_C_per_m2 == pytest.approx(0.0, abs=1e-15)


def test_low_permittivity_loop_counts_the_vacuum_part():
    # a vacuum-like film (P = 0) still stores ½ε0E²: the ε0E term of D = ε0E + P is included
    e = unipolar(100e6)
    res = loop_energies(e, np.zeros_like(e))
    assert res.stored_J_per_m3 == pytest.approx(0.5 * EPSILON_0 * 100e6**2, rel=1e-9)


@settings(max_examples=40, deadline=None)
@given(er=st.floats(1.0, 1e4), e_max=st.floats(1e5, 1e9), n=st.integers(2, 300))
def test_linear_loops_recover_exactly(er, e_max, n):
    e = unipolar(e_max, n)
    res = loop_energies(e, EPSILON_0 * (er - 1) * e)
    assert res.recovered_J_per_m3 == pytest.approx(0.5 * EPSILON_0 * er * e_max**2, rel=1e-9)
    assert res.stored_J_per_m3 == pytest.approx(res.recovered_J_per_m3, rel=1e-9)


def test_elliptical_loop_loses_pi_e0_p0_sin_delta_per_cycle():
    # analytic: E = E0 cos ωt, P = P0 cos(ωt - δ) encloses π·E0·P0·sin δ per full cycle (two halves)
    t = np.linspace(0, 2 * np.pi, 400_001)
    e0, p0, delta = 20e6, 0.30, 0.3
    res = loop_energies(e0 * np.cos(t), p0 * np.cos(t - delta))
    assert res.halves == ("positive", "negative")
    assert 2 * res.lost_J_per_m3 == pytest.approx(math.pi * e0 * p0 * math.sin(delta), rel=1e-6)
    assert res.remanent_polarization_C_per_m2 == pytest.approx(p0 * math.sin(delta), rel=1e-6)
    assert res.max_polarization_C_per_m2 == pytest.approx(p0, rel=1e-6)


def published_like_loop(n=20001):
    """A synthetic unipolar loop built to give W = 2.46 and W_rec = 1.89 J/cm³.

    Charge D = Dmax·E/Emax (W = Dmax·Emax/2); discharge D = Dr + (Dmax - Dr)(E/Emax)²
    (W_rec = (Dmax - Dr)·Emax·2/3).
    """
    e_max = 20e6
    d_max = 2 * 2.46e6 / e_max
    d_r = d_max - 1.89e6 * 1.5 / e_max
    up = np.linspace(0, e_max, n)
    down = up[::-1][1:]
    d = np.concatenate([d_max * up / e_max, d_r + (d_max - d_r) * (down / e_max) ** 2])
    e = np.concatenate([up, down])
    return e, d - EPSILON_0 * e, d_r


def test_published_loop_figures_are_consistent():
    # Yan et al., Inorg. Chem. 56, 13510 (2017): W = 2.46, W_rec = 1.89 J/cm³, η = 77 %
    e, p, d_r = published_like_loop()
    res = loop_energies(e, p)
    assert res.stored_J_per_m3 / J_PER_CM3 == pytest.approx(2.46, rel=1e-6)
    assert res.recovered_J_per_m3 / J_PER_CM3 == pytest.approx(1.89, rel=1e-6)
    assert res.efficiency == pytest.approx(0.77, abs=0.005)
    assert res.efficiency == res.recovered_J_per_m3 / res.stored_J_per_m3
    assert res.stored_J_per_m3 == pytest.approx(res.recovered_J_per_m3 + res.lost_J_per_m3, rel=1e-15)
    assert res.remanent_polarization_C_per_m2 == pytest.approx(d_r, rel=1e-12)


def test_several_cycles_use_the_last_one():
    e, p, _ = published_like_loop(2001)
    virgin = np.linspace(0, 20e6, 2001)
    first = np.concatenate([virgin, e[2001:]])  # first poling: different charging branch
    p_first = np.concatenate([0.5 * p[:2001], p[2001:]])
    many = loop_energies(np.concatenate([first, e, e]), np.concatenate([p_first, p, p]))
    one = loop_energies(e, p)
    assert many.stored_J_per_m3 == pytest.approx(one.stored_J_per_m3, rel=1e-12)
    assert many.recovered_J_per_m3 == pytest.approx(one.recovered_J_per_m3, rel=1e-12)


def test_bipolar_halves_are_averaged():
    e = np.concatenate([unipolar(1e7, 101), -unipolar(1e7, 101)[1:]])
    er = np.where(e >= 0, 3.0, 5.0)
    res = loop_energies(e, EPSILON_0 * (er - 1) * e)
    assert res.halves == ("positive", "negative")
    assert res.stored_J_per_m3 == pytest.approx(linear_energy_density(4.0, 1e7), rel=1e-12)


def test_small_negative_overshoot_is_not_a_half():
    e = np.concatenate([unipolar(1e7, 101), [-2e5, 0.0]])
    res = loop_energies(e, EPSILON_0 * 2 * e)
    assert res.halves == ("positive",)


def test_unipolar_cycles_that_stop_short_of_zero_are_split():
    # cycles returning to 3 % of the peak: the last one charges from its lowest field, 0.3 MV/m
    one = unipolar(1e7, 101)
    e = np.concatenate([one[:-3], one[3:]])
    res = loop_energies(e, EPSILON_0 * 2 * e)
    assert res.stored_J_per_m3 == pytest.approx(0.5 * EPSILON_0 * 3.0 * (1e14 - 9e10), rel=1e-12)
    assert res.recovered_J_per_m3 == pytest.approx(linear_energy_density(3.0, 1e7), rel=1e-12)


def test_loop_energies_as_dict_has_the_json_keys():
    e = unipolar(1e7, 11)
    d = loop_energies(e, EPSILON_0 * e).as_dict()
    assert {"stored_J_per_m3", "recovered_J_per_m3", "lost_J_per_m3", "efficiency", "max_field_V_per_m",
            "max_polarization_C_per_m2", "remanent_polarization_C_per_m2"} <= set(d)
    assert isinstance(loop_energies(e, EPSILON_0 * e), LoopEnergies)


@pytest.mark.parametrize("e, p, message", [
    ([0.0, 1e6], [0.0, 1e-3], "at least 3"),
    (np.linspace(0, 1e7, 50), np.linspace(0, 0.1, 50), "never returns"),
    (np.linspace(1e7, 0, 50), np.linspace(0.1, 0, 50), "no charging branch"),
    ([0.0, 1e6, 0.0], [0.0, 1e-3], "polarisation samples"),
    ([0.0, np.nan, 0.0], [0.0, 1e-3, 0.0], "finite"),
    ([0.0, 0.0, 0.0], [0.0, 1e-3, 0.0], "no field"),
])
def test_bad_loops_are_refused(e, p, message):
    with pytest.raises(InputError, match=message):
        loop_energies(e, p)


def test_discharge_profile_is_the_integral_of_e_dD_on_an_analytic_loop():
    """A tanh-model loop (charge P = Ps·tanh((E − Ec)/δ), discharge P = Ps·tanh((E + Ec)/δ)): the recoverable energy
    up to each field is ε0·E²/2 + ∫0^E e·dP_dis (scipy.integrate.quad), and at the peak it is the loop's recovered
    energy."""
    from scipy.integrate import quad

    from materials.energy import discharge_profile

    ps, ec, delta, e_max = 0.3, 2e6, 1.5e7, 4e7          # C/m², V/m
    up = np.linspace(0, e_max, 4001)
    down = up[::-1][1:]
    e = np.concatenate([up, down])
    p = np.concatenate([ps * np.tanh((up - ec) / delta), ps * np.tanh((down + ec) / delta)])
    fields, u = discharge_profile(e, p)

    def exact(x):
        dp = quad(lambda s: s * ps / delta / np.cosh((s + ec) / delta) ** 2, 0, x, epsabs=0)[0]
        return 0.5 * EPSILON_0 * x * x + dp

    # below the tip (this model's two branches meet with a step at the peak, which the recorded loop crosses)
    np.testing.assert_allclose(u[:-1], [exact(x) for x in fields[:-1]], rtol=2e-4, atol=1e-3)
    assert u[-1] == pytest.approx(loop_energies(e, p).recovered_J_per_m3, rel=1e-12)
