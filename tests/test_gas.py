"""Gas breakdown: Paschen's law, the air engineering formula and the SF6 limit, against published values."""

import math

import numpy as np
import pytest

from materials.errors import InputError
from materials.gas import (
    AIR_A_PER_PA_M,
    AIR_B_V_PER_PA_M,
    PA_PER_TORR,
    air_breakdown_voltage,
    paschen_minimum,
    paschen_voltage,
    relative_air_density,
    sf6_breakdown_field,
)

AIR = dict(a_per_Pa_m=AIR_A_PER_PA_M, b_V_per_Pa_m=AIR_B_V_PER_PA_M, gamma=0.01)


def test_air_constants_are_raizers_in_si():
    # Raizer, Gas Discharge Physics (1991) Table 4.1: air A = 15 /(cm·Torr), B = 365 V/(cm·Torr)
    assert AIR_A_PER_PA_M * 0.01 * PA_PER_TORR == pytest.approx(15.0)
    assert AIR_B_V_PER_PA_M * 0.01 * PA_PER_TORR == pytest.approx(365.0)


def test_paschen_minimum_of_air_lands_near_the_published_minimum():
    # Published minimum sparking potential of air: 327 V at pd = 0.567 Torr·cm = 0.756 Pa·m (the table of minimum
    # sparking potentials in Meek & Craggs, Electrical Breakdown of Gases, 1953, as reproduced in high-voltage
    # texts (recollection); the same 327 V at 7.5 µm in 1 atm is on highvoltageconnection.com's Paschen-curve
    # article). With Raizer's A, B and an assumed γ = 0.01 the three-constant law gives 305 V at 1.12 Pa·m:
    # 7 % low in voltage; the minimum sits at E/p = B, inside the E/p range the constants were fitted over, but
    # the fitted α(E/p) is flat there, so the position of the minimum is the least certain part (about 1.5x).
    pd_min, v_min = paschen_minimum(**AIR)
    assert v_min == pytest.approx(327.0, rel=0.10)
    assert 0.756 / 1.5 < pd_min < 0.756 * 1.5
    assert v_min / pd_min == pytest.approx(AIR_B_V_PER_PA_M)


def test_closed_form_minimum_is_the_minimum_of_the_curve():
    from scipy.optimize import minimize_scalar

    for gamma in (0.001, 0.01, 0.1):
        kw = dict(AIR, gamma=gamma)
        pd_min, v_min = paschen_minimum(**kw)
        res = minimize_scalar(lambda x, kw=kw: paschen_voltage(x, **kw), bounds=(0.3 * pd_min, 5 * pd_min),
                              method="bounded", options={"xatol": 1e-10})
        assert res.x == pytest.approx(pd_min, rel=1e-4)
        assert res.fun == pytest.approx(v_min, rel=1e-9)


def test_no_breakdown_left_of_the_asymptote():
    asymptote = math.log1p(1 / 0.01) / AIR_A_PER_PA_M
    v = paschen_voltage(np.array([0.0, 0.5, 0.999, 1.001, 2.0]) * asymptote, **AIR)
    assert np.all(np.isnan(v[:3]))
    # just right of the asymptote the voltage climbs steeply
    assert np.all(v[3:] > 0) and v[3] > 10 * v[4]


@pytest.mark.parametrize("gap_cm, published_kV, rel, source", [
    (0.5, 16.9, 0.02, "IEC 60052 sphere-gap table, 15-25 cm spheres"),
    (1.0, 31.4, 0.02, "IEC 60052 sphere-gap table, 25 cm spheres"),
    (10.0, 262.0, 0.03, "IEC 60052 sphere-gap table, 100-200 cm spheres"),
    (0.1, 4.95, 0.10, "Peek, Dielectric Phenomena in High-Voltage Engineering, 60 Hz sphere gap"),
])
def test_air_formula_against_published_near_uniform_gaps(gap_cm, published_kV, rel, source):
    # IEC 60052:2002 disruptive-discharge voltages (kV peak, standard atmosphere 20 °C, 101.3 kPa; gaps less than
    # a tenth of the sphere diameter are near-uniform), read in the table reproduced at
    # home.earthlink.net/~jimlux/hv/spherev.htm; Peek's 1 mm value as quoted in the pupman.com list archive
    # (1995/february/msg00065). Small gaps scatter ±10 % between sources, hence the wider band at 1 mm.
    assert air_breakdown_voltage(gap_cm / 100) / 1e3 == pytest.approx(published_kV, rel=rel), source


def test_air_breaks_down_near_3_mv_per_m_at_1_cm():
    assert air_breakdown_voltage(0.01) / 0.01 == pytest.approx(3.0e6, rel=0.05)


def test_air_formula_depends_on_density_times_gap_only():
    # Paschen's similarity law: the same δ·d gives the same voltage
    a = air_breakdown_voltage(0.02, pressure_Pa=50e3, temperature_K=293.15)
    b = air_breakdown_voltage(0.01, pressure_Pa=100e3, temperature_K=293.15)
    c = air_breakdown_voltage(0.01, pressure_Pa=50e3, temperature_K=293.15 / 2)
    assert a == pytest.approx(b) and b == pytest.approx(c)
    assert relative_air_density(pressure_Pa=101.3e3, temperature_K=293.15) == pytest.approx(1.0)


def test_sf6_limit_gives_89_kv_per_cm_bar():
    # Christophorou & Van Brunt (1995): (E/N)_lim = 361 Td; Kuffel, Zaengl & Kuffel (2000): (E/p)_crit about
    # 89 kV/(cm·bar) at 20 °C. The two published figures agree through N = p/(k·T).
    e = sf6_breakdown_field(pressure_Pa=1e5, temperature_K=293.15)
    assert e / 1e5 == pytest.approx(89.0, rel=0.01)  # kV/cm per bar
    np.testing.assert_allclose(sf6_breakdown_field(pressure_Pa=[1e5, 4e5]), [e, 4 * e])


def test_bad_inputs_refused():
    with pytest.raises(InputError):
        paschen_voltage(-1.0, **AIR)
    with pytest.raises(InputError):
        paschen_voltage(1.0, a_per_Pa_m=0.0, b_V_per_Pa_m=1.0, gamma=0.01)
    with pytest.raises(InputError):
        air_breakdown_voltage(0.0)
