"""Designs at the hot spot and for a service life, checked against published figures, analytic results,
simulation and the reference libraries named beside each check."""

from __future__ import annotations

import math

import numpy as np
import pytest

from materials.table import ValueTable
from ranking.engine import evaluate
from ranking.explain import evaluate_material
from ranking.target import Target

C = 273.15
HOUR = 3600.0


def film(make_material, key="f", *, life_exponent=None, loss=None, beta=12.0, ebd=600e6, area=1e-4, tmax=150.0):
    """A film with temperature-independent data from 25 °C to 150 °C (a loss table over temperature if given)."""
    rows = [("relative_permittivity", 2.2, "handbook", {"temperature_K": 25 + C}),
            ("relative_permittivity", 2.2, "handbook", {"temperature_K": 150 + C}),
            ("breakdown_field", ebd, "handbook", {"temperature_K": 25 + C, "area_m2": area}),
            ("breakdown_field", ebd, "handbook", {"temperature_K": 150 + C, "area_m2": area}),
            ("weibull_shape", beta, "handbook"), ("max_temperature", tmax + C, "handbook"),
            ("min_temperature", -55 + C, "handbook"), ("density", 905.0, "handbook")]
    for t_c, tand in (loss or [(25.0, 2e-4), (150.0, 2e-4)]):
        rows.append(("loss_tangent", tand, "handbook", {"temperature_K": t_c + C, "frequency_Hz": 1e4}))
    if life_exponent is not None:
        rows.append(("life_exponent", life_exponent, "lab"))
    return make_material(key, rows)


def target(**kw):
    base = dict(voltage_V=800.0, tmin_K=25 + C, tmax_K=25 + C, energy_J=80.0, failure_probability=1e-3)
    base.update(kw)
    return Target(**base)


# --- life ------------------------------------------------------------------------------------------------------

def test_mil_prf_123_eight_to_one_life_halves_the_design_field_for_n_3(make_material):
    # MIL-PRF-123 §1.1: 8:1 acceleration at 200 % of rated voltage, i.e. n = 3. With a stored n = 3 and the
    # energy-density form of the design (fixed area, no sizing loop), eight times the life must halve the field.
    m = film(make_material, life_exponent=3.0)
    fields = []
    for life_h in (1000.0, 8000.0):
        ev = evaluate_material(m, target(energy_J=None, area_m2=1e-4, life_s=life_h * HOUR))
        assert ev.details["binding_limit"] == "life"
        fields.append(ev.details["design_field_V_per_m"])
    assert fields[0] / fields[1] == pytest.approx(2.0, rel=1e-9)


def test_b_life_at_a_life_bound_design_is_the_life_asked_and_matches_ramp_to_constant(make_material):
    # At the design for a life L (margin 1) the B-life reached is L itself; and at the test area it is the
    # constant-stress life of materials.life.ramp_to_constant (Starr & Endicott 1961, checked there by a cumulative
    # damage simulation), scaled by η·q^(1/β_t).
    from materials.life import ramp_to_constant
    from materials.priors import RAMP_TIME
    from ranking.service import b_life_at

    m = film(make_material, life_exponent=9.0)
    ev = evaluate_material(m, target(life_s=20000 * HOUR, life_fraction=0.01))
    assert ev.details["binding_limit"] == "life"
    assert ev.details["b_life_s"] == pytest.approx(20000 * HOUR, rel=1e-6)
    alpha, beta, n, e = 600e6, 12.0, 9.0, 150e6
    conv = ramp_to_constant(ramp_scale_V_per_m=alpha, ramp_shape=beta, ramp_rate_V_per_m_s=alpha / RAMP_TIME.typical,
                            n=n, field_V_per_m=e)
    got = b_life_at(field_V_per_m=e, scale_V_per_m=alpha, beta=beta, test_area_m2=1e-4, area_m2=1e-4, n=n,
                    ramp_time_s=RAMP_TIME.typical, fraction=0.05)
    assert got == pytest.approx(conv.b_life(0.05), rel=1e-12)


def test_b_life_area_scaling_is_the_weakest_link_of_the_ramp_distribution():
    # A part k times the test area has the ramp Weibull scale α·k^(-1/β) (IEEE Std 930 weakest link); its life at a
    # field is then ramp_to_constant at that scale, at the same ramp rate.
    from materials.life import ramp_to_constant
    from ranking.service import b_life_at

    alpha, beta, n, e, t_r, k = 500e6, 10.0, 7.0, 120e6, 15.0, 250.0
    got = b_life_at(field_V_per_m=e, scale_V_per_m=alpha, beta=beta, test_area_m2=1e-4, area_m2=k * 1e-4, n=n,
                    ramp_time_s=t_r, fraction=0.01)
    conv = ramp_to_constant(ramp_scale_V_per_m=alpha * k ** (-1 / beta), ramp_shape=beta,
                            ramp_rate_V_per_m_s=alpha / t_r, n=n, field_V_per_m=e)
    assert got == pytest.approx(conv.b_life(0.01), rel=1e-12)


def test_sized_life_design_is_self_consistent_by_brentq(make_material):
    # Sizing for an energy with a life: the area A and thickness d returned satisfy V/d = E_L(A) and
    # ½·ε0·εr·(V/d)²·A·d = W, E_L(A) = K_L·A^(-1/β_L); scipy.optimize.brentq solves the same equation in A.
    from scipy.optimize import brentq

    m = film(make_material, life_exponent=8.0)
    ev = evaluate_material(m, target(life_s=30000 * HOUR))
    d, a = ev.details["thickness_m"], ev.details["area_m2"]
    e_l = ev.details["life_field_V_per_m"]
    eps0 = 8.8541878188e-12
    assert 800.0 / d == pytest.approx(e_l, rel=1e-9)
    k_times = e_l * a ** (1 / (12.0 * 8 / 9))

    def f(area):
        e = k_times * area ** (-1 / (12.0 * 8 / 9))
        return 0.5 * eps0 * 2.2 * e * 800.0 * area - 80.0       # W = ½·ε0·εr·E·V·A (d = V/E)

    assert brentq(f, 1e-6, 1e9, xtol=1e-14, rtol=1e-13) == pytest.approx(a, rel=1e-7)


def test_assumed_life_exponent_is_priced_and_a_stored_one_is_not(make_material):
    from materials.priors import LIFE_EXPONENT

    prior = LIFE_EXPONENT["polymer-film"]
    ev = evaluate_material(film(make_material), target(life_s=10000 * HOUR))
    assert ev.details["life_exponent"] == prior.typical and ev.details["life_exponent_assumed"]
    assert "assumed-life-exponent" in ev.flags
    assert ev.low["energy"] < ev.values["energy"] < ev.high["energy"]
    assert any(prior.source in n for n in ev.details["assumptions"])


# --- heat ------------------------------------------------------------------------------------------------------

def test_dissipation_counts_the_series_resistance(make_material):
    # P = Σ I²·(R_s + tan δ/(ωC)) (IEC 60384-1 series model): 50 A at 10 kHz through 2 mΩ is 5 W of metal loss on
    # top of the dielectric's tan δ/(ωC) share (which alone is a few hundredths of a watt here).
    from ranking.part import size_material

    m = film(make_material)
    common = dict(capacitance_F=250e-6, voltage_V=800.0, tmin_K=25 + C, tmax_K=85 + C, ripple_current_A=50.0,
                  frequency_Hz=1e4)
    bare = size_material(m, **common)
    metal = size_material(m, **common, series_resistance_ohm=2e-3)
    dielectric = 2500.0 * 2e-4 / (2 * math.pi * 1e4 * bare["capacitance_F"])
    assert bare["dissipated_power_W"] == pytest.approx(dielectric, rel=1e-9)
    assert metal["dissipated_power_W"] - bare["dissipated_power_W"] == pytest.approx(5.0, rel=1e-12)


def test_hot_spot_is_ambient_plus_rth_times_losses_and_the_design_reads_breakdown_there(make_material):
    # Constant losses: θ = θ_amb + R_th·P exactly; the breakdown used is the one at the hot spot.
    m = film(make_material, loss=[(25.0, 1e-3), (150.0, 1e-3)])
    m.values[3].value = 400e6   # breakdown at 150 °C lower than at 25 °C: the hot spot reads between them
    cap = 2 * 80.0 / 800.0 ** 2
    t = target(tmax_K=85 + C, ripple=((40.0, 1e4),), series_resistance_ohm=1e-3, thermal_resistance_K_per_W=3.0)
    ev = evaluate_material(m, t)
    p = 1600.0 * (1e-3 + 1e-3 / (2 * math.pi * 1e4 * cap))
    assert ev.details["dissipated_power_W"] == pytest.approx(p, rel=1e-9)
    hot = 85 + C + 3.0 * p
    assert ev.details["hot_spot_K"] == pytest.approx(hot, rel=1e-9)
    assert ev.details["worst_breakdown_K"] == pytest.approx(hot, rel=1e-9)
    assert ev.details["binding_limit"] == "heat"
    assert ev.details["runaway_margin"] is None


def test_semenov_runaway_margin_and_the_runaway_exclusion(make_material):
    # Losses P0·e^(a(θ−θ_amb)) (tan δ rising exponentially, no metal loss) run away when a·R_th·P0 > 1/e
    # (Semenov 1928): the margin reported is 1/(e·a·R_th·P0), and a current √margin times larger is excluded.
    a, amb = 0.04, 85 + C
    temps = np.linspace(85.0, 385.0, 301)
    loss = [(float(tc), float(1e-3 * math.exp(a * (tc - 85.0)))) for tc in temps]
    m = film(make_material, loss=loss, tmax=400.0)
    cap = 2 * 80.0 / 800.0 ** 2
    base = dict(tmax_K=amb, thermal_resistance_K_per_W=2.0)
    i0 = 20.0
    ev = evaluate_material(m, target(ripple=((i0, 1e4),), **base))
    p0 = i0 ** 2 * 1e-3 / (2 * math.pi * 1e4 * cap)
    # (the loss table is read piecewise-linearly in steps of 2.5 K, which bends e^(aθ) by up to (a·Δθ)²/8 ≈ 0.1 %)
    assert ev.details["runaway_margin"] == pytest.approx(1 / (math.e * a * 2.0 * p0), rel=5e-3)
    from materials.thermal import semenov_temperature_rise

    assert ev.details["hot_spot_K"] - amb == pytest.approx(
        float(semenov_temperature_rise(p0_W=p0, a_per_K=a, rth_K_per_W=2.0)), rel=1e-3)
    over = i0 * math.sqrt(ev.details["runaway_margin"]) * 1.05
    ev = evaluate_material(m, target(ripple=((over, 1e4),), **base))
    assert any("thermal runaway" in r for r in ev.reasons)


def test_dc_link_capacitance_target_sizes_half_c_v_squared(make_material):
    # Single-phase DC link, C = P/(2π·f·V·ΔV) (Hu et al., IEEE TPEL 28(6) 2013): 10 kW, 50 Hz line, 400 V, 20 V
    # ripple → 398 µF; the target built from it sizes the energy ½·C·V² and reports that capacitance back.
    from materials.thermal import dc_link_capacitance

    cap = float(dc_link_capacitance(power_W=10e3, line_frequency_Hz=50.0, voltage_V=400.0, ripple_V=20.0))
    assert cap == pytest.approx(10e3 / (2 * math.pi * 50 * 400 * 20))
    t = Target(voltage_V=400.0, tmin_K=25 + C, tmax_K=25 + C, capacitance_F=cap)
    assert t.energy_J == pytest.approx(0.5 * cap * 400.0 ** 2)
    cols = evaluate(ValueTable.from_materials([film(make_material)]), t)
    P = cols.parts
    eps0 = 8.8541878188e-12
    assert eps0 * 2.2 * P["area"][0] / P["d"][0] == pytest.approx(cap, rel=1e-9)


def test_target_file_and_options_for_service(tmp_path):
    from ranking.target import load_target, target_from_options

    f = tmp_path / "t.toml"
    f.write_text('[target]\nvoltage = "800 V"\ntmin = "-40 degC"\ntmax = "125 degC"\ncapacitance = "250 uF"\n'
                 'ripple = [["60 A", "10 kHz"], ["25 A", "20 kHz"]]\nseries_resistance = "1 mohm"\n'
                 'thermal_resistance = "2 K/W"\nambient = "105 degC"\nlife = "30000 h"\nlife_fraction = 0.01\n',
                 encoding="utf-8")
    t = load_target(f)
    assert t.ripple == ((60.0, 1e4), (25.0, 2e4)) and t.energy_J == pytest.approx(80.0)
    assert (t.series_resistance_ohm, t.thermal_resistance_K_per_W, t.ambient_K, t.life_s) == \
        pytest.approx((1e-3, 2.0, 105 + C, 30000 * HOUR))
    o = target_from_options(target_file=f, energy="100")
    assert o.capacitance_F is None and o.energy_J == 100.0
    from materials.errors import InputError

    with pytest.raises(InputError, match="thermal resistance"):
        target_from_options(voltage="800", tmin="25", tmax="85", energy="80", ripple="50A@10kHz")
    with pytest.raises(InputError, match="CURRENT@FREQUENCY"):
        target_from_options(voltage="800", tmin="25", tmax="85", energy="80", ripple="50A",
                            thermal_resistance="2")


def test_strict_refuses_an_assumed_life_exponent_and_keeps_a_stored_one(make_material):
    t = target(life_s=10000 * HOUR, strict=True)
    ev = evaluate_material(film(make_material), t)
    assert ev.reasons and ev.reasons[0].startswith("life_exponent missing")
    ev = evaluate_material(film(make_material, life_exponent=9.0), t)
    assert ev.ok and ev.details["life_exponent"] == 9.0 and not ev.details["life_exponent_assumed"]
    assert any(k == "lab-source" for k in ev.sources["energy"])
