"""Ripple heating: the Semenov runaway limit, the hot spot against scipy's brentq, a worked DC-link example."""

import math

import numpy as np
import pytest

from materials.errors import InputError
from materials.thermal import (
    LossTable,
    dc_link_capacitance,
    dielectric_esr,
    hot_spot,
    ripple_losses,
    runaway_power,
    semenov_temperature_rise,
)

AMBIENT, A, RTH, C, F, I_RMS = 300.0, 0.05, 10.0, 10e-6, 10e3, 5.0
OMEGA = 2 * math.pi * F


def exponential_part(p0):
    """A capacitor whose only loss is dielectric with tan δ = tan δ0·e^(a(θ - θ_amb)), P0 at ambient."""
    tand0 = p0 * OMEGA * C / I_RMS**2
    return dict(ambient_K=AMBIENT, rth_K_per_W=RTH, currents_A_rms=[I_RMS], frequencies_Hz=[F], capacitance_F=C,
                tan_delta=lambda f, t: tand0 * np.exp(A * (t - AMBIENT)))


def test_runaway_power_is_one_over_e_a_rth():
    # Semenov (1928): steady state iff a·R_th·P0 <= 1/e
    assert runaway_power(a_per_K=A, rth_K_per_W=RTH) == pytest.approx(1 / (math.e * A * RTH), rel=1e-15)


@pytest.mark.parametrize("margin", [0.01, 0.001])
def test_semenov_limit_steady_just_below_and_runaway_just_above(margin):
    p_crit = runaway_power(a_per_K=A, rth_K_per_W=RTH)
    below = hot_spot(**exponential_part((1 - margin) * p_crit))
    above = hot_spot(**exponential_part((1 + margin) * p_crit))
    assert below.steady and not above.steady
    assert math.isnan(above.temperature_K)
    # the steady rise approaches 1/a at the limit (x·e^-x = 1/e at x = 1)
    assert below.temperature_K - AMBIENT == pytest.approx(1 / A, rel=3 * math.sqrt(2 * margin))


@pytest.mark.parametrize("fraction", [0.1, 0.5, 0.9, 0.99])
def test_hot_spot_matches_lambert_w_and_brentq_for_exponential_losses(fraction):
    from scipy.optimize import brentq
    from scipy.special import lambertw

    p0 = fraction * runaway_power(a_per_K=A, rth_K_per_W=RTH)
    h = hot_spot(**exponential_part(p0))
    closed = -lambertw(-A * RTH * p0).real / A
    root = brentq(lambda d: RTH * p0 * math.exp(A * d) - d, 0.0, 1 / A, xtol=1e-14)
    assert h.temperature_K - AMBIENT == pytest.approx(closed, rel=1e-10)
    assert h.temperature_K - AMBIENT == pytest.approx(root, rel=1e-10)
    assert semenov_temperature_rise(p0_W=p0, a_per_K=A, rth_K_per_W=RTH) == pytest.approx(closed, rel=1e-12)
    assert h.power_W == pytest.approx(p0 * math.exp(A * closed), rel=1e-10)


def test_semenov_rise_is_nan_past_runaway():
    rises = semenov_temperature_rise(p0_W=np.array([0.5, 1.5]) * runaway_power(a_per_K=A, rth_K_per_W=RTH),
                                     a_per_K=A, rth_K_per_W=RTH)
    assert np.isfinite(rises[0]) and np.isnan(rises[1])


# A loss table rising steeply with temperature (illustrative numbers for a test, not material data).
TABLE = LossTable(temperatures_K=[250, 300, 350, 400, 420], tan_delta=[2e-4, 3e-4, 6e-4, 2e-3, 5e-3])
SPECTRUM = dict(currents_A_rms=[10.0, 3.0, 1.0], frequencies_Hz=[20e3, 40e3, 100], capacitance_F=20e-6,
                esr_ohm=2e-3)


def test_hot_spot_with_a_loss_table_matches_brentq_elementwise():
    from scipy.optimize import brentq

    ambients = np.array([260.0, 300.0, 330.0, 360.0])
    rth = np.array([[20.0], [200.0]])
    h = hot_spot(ambient_K=ambients, rth_K_per_W=rth, tan_delta=TABLE, **SPECTRUM)
    assert h.temperature_K.shape == (2, 4)
    for (j, k), theta in np.ndenumerate(h.temperature_K):
        amb, r = ambients[k], rth[j, 0]

        def g(t, amb=amb, r=r):
            return amb + r * ripple_losses(temperature_K=t, tan_delta=TABLE, **SPECTRUM) - t

        # the first sign change on a 0.01 K scan, closed by brentq
        scan = np.linspace(amb, TABLE.max_temperature_K, int((TABLE.max_temperature_K - amb) / 0.01) + 1)
        below = np.flatnonzero(g(scan) <= 0)
        if below.size == 0:  # runs off the table
            assert not h.steady[j, k] and np.isnan(theta)
            continue
        ref = brentq(g, scan[below[0] - 1], scan[below[0]], xtol=1e-12)
        assert h.steady[j, k] and theta == pytest.approx(ref, rel=1e-12)
    assert not h.steady.all() and h.steady.any()


def test_ripple_losses_over_a_spectrum_by_hand():
    # Σ I_k²·(R_s + tan δ/(ω_k·C)) with a constant tan δ = 3e-4:
    # 100·(2e-3 + 3e-4/(2π·20e3·20e-6)) + 9·(2e-3 + 3e-4/(2π·40e3·20e-6)) + 1·(2e-3 + 3e-4/(2π·100·20e-6))
    expected = sum(i * i * (2e-3 + 3e-4 / (2 * math.pi * f * 20e-6)) for i, f in ((10, 20e3), (3, 40e3), (1, 100)))
    assert ripple_losses(tan_delta=3e-4, **SPECTRUM) == pytest.approx(expected, rel=1e-14)
    # tan δ = ω·C·ESR (IEC 60384-1 series model): 1e-3 at 1 kHz on 1 µF is 0.159 Ω
    assert dielectric_esr(tan_delta=1e-3, frequency_Hz=1e3, capacitance_F=1e-6) == pytest.approx(0.1591549, rel=1e-6)


def test_single_harmonic_agrees_with_the_sizing_dissipation():
    from materials.sizing import _ripple_power

    assert ripple_losses(currents_A_rms=[7.0], frequencies_Hz=[5e3], capacitance_F=4e-6, tan_delta=1e-3) == (
        pytest.approx(_ripple_power(4e-6, 1e-3, 7.0, 5e3), rel=1e-14))


def test_loss_table_refuses_temperatures_outside_it():
    with pytest.raises(InputError, match="outside the loss table"):
        ripple_losses(temperature_K=430.0, tan_delta=TABLE, **SPECTRUM)
    with pytest.raises(InputError, match="temperature_K"):
        ripple_losses(tan_delta=TABLE, **SPECTRUM)
    with pytest.raises(InputError, match="increasing"):
        LossTable(temperatures_K=[300, 300], tan_delta=[1e-3, 2e-3])


def test_dc_link_worked_example_and_simulation():
    # By hand: 3 kW single-phase at 50 Hz on a 400 V link with 20 V peak-to-peak ripple:
    # C = 3000/(2π·50·400·20) = 1.194 mF.
    from scipy.integrate import solve_ivp

    p, f, v, dv = 3000.0, 50.0, 400.0, 20.0
    c = dc_link_capacitance(power_W=p, line_frequency_Hz=f, voltage_V=v, ripple_V=dv)
    assert c == pytest.approx(3000 / (2 * math.pi * 50 * 400 * 20), rel=1e-15)
    assert c == pytest.approx(1.194e-3, rel=1e-3)
    # Simulation: the load draws P(1 - cos 2ωt), the source P; the capacitor carries the difference,
    # C·v·dv/dt = P·cos(2ωt). Started at the middle of the swing, the ripple is ΔV about the mean V.
    w = 2 * math.pi * f
    sol = solve_ivp(lambda t, y: [p * math.cos(2 * w * t) / (c * y[0])], (0, 3 / f),
                    [math.sqrt(v * v + dv * dv / 4)], max_step=1e-5, rtol=1e-10, atol=1e-10)
    vmax, vmin = sol.y[0].max(), sol.y[0].min()
    assert vmax - vmin == pytest.approx(dv, rel=1e-4)
    assert 0.5 * (vmax + vmin) == pytest.approx(v, rel=1e-6)
