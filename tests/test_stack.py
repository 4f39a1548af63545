"""Layered dielectrics: hand-derived two-layer capacitors, an independent circuit simulation, property tests."""

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from materials.energy import EPSILON_0
from materials.errors import InputError
from materials.gas import AIR_A_PER_PA_M, AIR_B_V_PER_PA_M, paschen_voltage
from materials.stack import (
    interface_charges,
    layer_fields,
    layer_fields_transient,
    maxwell_wagner_time_constants,
    pd_inception_voltage,
    polarity_reversal_fields,
    stack_capacitance_per_area,
    stack_energy_per_area,
    void_field,
)

# Two-layer parallel-plate capacitor: 1 mm of εr = 2 over 2 mm of εr = 4, 1 kV across, conductivities
# 1e-12 and 1e-14 S/m.
D, EPS, SIGMA, V = [1e-3, 2e-3], [2.0, 4.0], [1e-12, 1e-14], 1000.0


def test_two_layer_capacitor_by_hand_ac():
    # Worked by hand as in the two-dielectric parallel-plate capacitor of engineering electromagnetics texts
    # (Hayt & Buck, Engineering Electromagnetics, ch. 5 boundary conditions: normal D continuous):
    # 2·E1 = 4·E2 and E1·1 mm + E2·2 mm = 1000 V  ->  E2 = 250 kV/m, E1 = 500 kV/m;
    # C/A = ε0/(1 mm/2 + 2 mm/4) = ε0/1 mm; W/A = ½(C/A)V² = 4.427e-3 J/m², also ½ε0(2·E1²·d1 + 4·E2²·d2).
    np.testing.assert_allclose(layer_fields(D, EPS, V), [500e3, 250e3], rtol=1e-14)
    assert stack_capacitance_per_area(D, EPS) == pytest.approx(EPSILON_0 / 1e-3, rel=1e-14)
    assert stack_energy_per_area(D, EPS, V) == pytest.approx(0.5 * EPSILON_0 / 1e-3 * V**2, rel=1e-14)
    np.testing.assert_allclose(interface_charges(D, EPS, V, conductivities=SIGMA, mode="ac"), [0.0], atol=1e-20)


def test_two_layer_capacitor_by_hand_dc_steady_state():
    # Current continuity 1e-12·E1 = 1e-14·E2  ->  E2 = 100·E1; E1·1 mm + E2·2 mm = 1000 V  ->  E1 = 1000/0.201 V/m.
    # Interface charge ε0(4·E2 - 2·E1) (Gauss's law at the interface).
    e1 = 1000.0 / 0.201
    np.testing.assert_allclose(layer_fields(D, EPS, V, conductivities=SIGMA, mode="dc"), [e1, 100 * e1], rtol=1e-13)
    assert interface_charges(D, EPS, V, conductivities=SIGMA)[0] == pytest.approx(EPSILON_0 * (400 - 2) * e1)


def test_two_layer_polarity_reversal_by_hand():
    # From DC steady state at +1 kV to -1 kV: E = E_dc(+V) + E_ac(-2V):
    # layer 1: 4975.1 - 1e6 V/m; layer 2: 497 512 - 500 000 V/m
    e1 = 1000.0 / 0.201
    np.testing.assert_allclose(polarity_reversal_fields(D, EPS, V, conductivities=SIGMA),
                               [e1 - 1e6, 100 * e1 - 5e5], rtol=1e-12)


def test_two_layer_maxwell_wagner_time_constant_closed_form():
    # τ = ε0(ε1/d1 + ε2/d2)/(σ1/d1 + σ2/d2) = ε0·4000/(1e-9 + 5e-12) = 35.24 s
    tau = maxwell_wagner_time_constants(D, EPS, SIGMA)
    assert tau.shape == (1,)
    assert tau[0] == pytest.approx(EPSILON_0 * 4000.0 / (1e-9 + 5e-12), rel=1e-12)


def simulate(d, eps, sigma, v_before, v_after, times):
    """Layer voltages of leaky capacitors in series, integrated with scipy (an independent formulation).

    Per unit area each layer is C_i = ε0·ε_i/d_i in parallel with G_i = σ_i/d_i; the series current is common:
    C_i·dv_i/dt + G_i·v_i = J, with Σ v_i = V fixed after the step. Starts from the steady state at v_before
    plus the capacitive division of the step.
    """
    from scipy.integrate import solve_ivp

    c, g = EPSILON_0 * np.asarray(eps) / np.asarray(d), np.asarray(sigma) / np.asarray(d)
    v0 = v_before * (1 / g) / np.sum(1 / g) + (v_after - v_before) * (1 / c) / np.sum(1 / c)

    def rhs(_, v):
        j = np.sum(g * v / c) / np.sum(1 / c)
        return (j - g * v) / c

    sol = solve_ivp(rhs, (0, times[-1]), v0, t_eval=times, method="Radau", rtol=1e-11, atol=1e-9)
    return (sol.y / np.asarray(d)[:, None]).T


@pytest.mark.parametrize("v_before, v_after", [(0.0, 1000.0), (1000.0, -1000.0)])
def test_three_layer_transient_matches_circuit_simulation(v_before, v_after):
    d, eps, sigma = [1e-3, 2e-3, 0.5e-3], [2.0, 4.0, 3.0], [1e-12, 1e-14, 3e-13]
    tau = maxwell_wagner_time_constants(d, eps, sigma)
    times = np.array([0.0, 0.1, 1.0, 10.0, 30.0, 100.0, 300.0, 2000.0])
    ours = layer_fields_transient(d, eps, v_after, times, conductivities=sigma, initial_voltage_V=v_before)
    np.testing.assert_allclose(ours, simulate(d, eps, sigma, v_before, v_after, times), rtol=1e-6, atol=1e-3)
    # the simulation decays with the two time constants: at 20·τ_max only e^-20 of the step remains
    late = layer_fields_transient(d, eps, v_after, [20 * tau[0]], conductivities=sigma, initial_voltage_V=v_before)
    np.testing.assert_allclose(late[0], layer_fields(d, eps, v_after, conductivities=sigma, mode="dc"), atol=1e-2)
    if v_before:
        np.testing.assert_allclose(ours[0], polarity_reversal_fields(d, eps, v_before, conductivities=sigma))


layer_lists = st.integers(min_value=1, max_value=6).flatmap(lambda n: st.tuples(
    st.lists(st.floats(1e-7, 1e-2), min_size=n, max_size=n),
    st.lists(st.floats(1.0, 5000.0), min_size=n, max_size=n),
    st.lists(st.floats(1e-18, 1e-6), min_size=n, max_size=n)))


@settings(max_examples=200, deadline=None)
@given(layers=layer_lists, voltage=st.floats(-1e6, 1e6))
def test_layer_fields_times_thicknesses_sum_to_the_voltage(layers, voltage):
    d, eps, sigma = (np.array(x) for x in layers)
    for mode in ("ac", "dc"):
        e = layer_fields(d, eps, voltage, conductivities=sigma, mode=mode)
        assert np.sum(e * d) == pytest.approx(voltage, rel=1e-9, abs=1e-9)
    assert np.sum(polarity_reversal_fields(d, eps, voltage, conductivities=sigma) * d) == pytest.approx(
        -voltage, rel=1e-9, abs=1e-9)


def test_fields_broadcast_over_stacks_and_voltages():
    d = np.array([[1e-3, 2e-3], [2e-3, 2e-3]])
    e = layer_fields(d, EPS, np.array([[1000.0], [2000.0]])[..., 0])
    assert e.shape == (2, 2)
    np.testing.assert_allclose(e[0], [500e3, 250e3])
    np.testing.assert_allclose(stack_capacitance_per_area(d, EPS), [EPSILON_0 / 1e-3, EPSILON_0 / 1.5e-3])


def test_flat_void_sees_permittivity_times_solid_field_and_starts_discharging_at_paschen_voltage():
    # One 1 mm layer of εr = 4 holding a flat air void 0.1 mm thick at 1 atm. By hand (D continuous through the
    # void): E_void = V/(t + (d - t)/ε), and inception when E_void·t = V_b(p·t); V_b from Paschen's law with
    # Raizer's air constants (γ = 0.01).
    p, t, d, eps = 101325.0, 1e-4, 1e-3, 4.0

    def vb(gap):
        return paschen_voltage(p * gap, a_per_Pa_m=AIR_A_PER_PA_M, b_V_per_Pa_m=AIR_B_V_PER_PA_M, gamma=0.01)

    v_inc = pd_inception_voltage([d], [eps], void_layer=0, void_thickness_m=t, gas_breakdown_V=vb)
    assert v_inc == pytest.approx(vb(t) * (t + (d - t) / eps) / t, rel=1e-14)
    # thin-void limit: E_void -> ε·E_solid (flat-cavity enhancement factor εr, Niemeyer 1995)
    thin = 1e-9
    e_void = 1.0 / (thin + (d - thin) / eps)
    assert e_void / void_field(field_V_per_m=layer_fields([d], [eps], 1.0)[0], permittivity=eps) == pytest.approx(
        1.0, rel=1e-5)
    # in a two-layer stack a given breakdown voltage needs the same displacement: V_inc scales with Σ d/ε
    two = pd_inception_voltage([d, d], [eps, 2.0], void_layer=1, void_thickness_m=t, gas_breakdown_V=1000.0)
    assert two == pytest.approx(1000.0 * (d / eps + d / 2.0 - t / 2.0 + t) / t)


def test_bad_stacks_refused():
    with pytest.raises(InputError, match="conductivities"):
        layer_fields(D, EPS, V, mode="dc")
    with pytest.raises(InputError, match="layer count"):
        layer_fields(D, [2.0, 3.0, 4.0], V)
    with pytest.raises(InputError, match="thinner"):
        pd_inception_voltage(D, EPS, void_layer=0, void_thickness_m=2e-3, gas_breakdown_V=300.0)
    with pytest.raises(InputError, match="mode"):
        layer_fields(D, EPS, V, mode="pulse")
