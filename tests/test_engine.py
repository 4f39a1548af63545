"""The evaluation engine against hand calculations and reference libraries, and its robustness to bad data.

Each check names what it reproduces: the parallel-plate relations, the Weibull quantile with weakest-link area
scaling (IEEE Std 930 / IEC 62539) through ``scipy.stats.weibull_min``, ``∫E dD`` through ``scipy.integrate.quad``
and self-consistent sizing through ``scipy.optimize.brentq``.
"""

from __future__ import annotations

import math
import subprocess

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from materials.table import ValueTable
from ranking.engine import evaluate, worst_inputs
from ranking.explain import evaluate_material, explain
from ranking.shortlist import shortlist
from ranking.target import Target

C = 273.15
EPS0 = 8.8541878188e-12
BIAS = [(0.0, 3000.0), (2e6, 2600.0), (5e6, 1800.0), (10e6, 1000.0), (20e6, 500.0)]   # V/m, εr,diff


def film(make_material, key, *, eps=2.2, ebd=600e6, beta=12.0, area=1e-4, dmin=None, heal=1.0, kind="handbook"):
    rows = [("relative_permittivity", eps, kind, {"temperature_K": 25 + C}),
            ("breakdown_field", ebd, kind, {"temperature_K": 25 + C, "area_m2": area}),
            ("weibull_shape", beta, kind, {"source": f"{key}-weibull-set"}), ("max_temperature", 105 + C, kind),
            ("min_temperature", -55 + C, kind), ("loss_tangent", 2e-4, kind), ("density", 905.0, kind),
            ("self_healing", heal, kind)]
    if dmin:
        rows.append(("min_thickness", dmin, kind))
    return make_material(key, rows)


def ceramic(make_material, key, *, beta=10.0, response="nonlinear"):
    rows = [("relative_permittivity", BIAS[0][1], "handbook", {"temperature_K": 25 + C}),
            ("breakdown_field", 80e6, "handbook", {"temperature_K": 25 + C, "area_m2": 1e-5}),
            ("weibull_shape", beta, "handbook"), ("max_temperature", 125 + C, "handbook"),
            ("min_temperature", -55 + C, "handbook"), ("density", 6000.0, "handbook")]
    rows += [("relative_permittivity", v, "handbook", {"temperature_K": 25 + C, "field_V_per_m": e})
             for e, v in BIAS[1:]]
    return make_material(key, rows, family="ceramic-class-2", response=response)


def target(**kw):
    base = dict(voltage_V=800.0, tmin_K=25 + C, tmax_K=25 + C, energy_J=80.0, failure_probability=1e-3)
    base.update(kw)
    return Target(**base)


def test_design_field_is_the_scipy_weibull_quantile_scaled_to_the_part_area(make_material):
    """E_design = F⁻¹(p; β, α·(A_test/A)^(1/β)) / margin: scipy.stats.weibull_min.ppf on the area-scaled scale."""
    from scipy.stats import weibull_min

    ev = evaluate_material(film(make_material, "f"), target(area_m2=0.5, energy_J=None, margin=1.2))
    alpha_part = 600e6 * (1e-4 / 0.5) ** (1 / 12.0)
    expected = weibull_min.ppf(1e-3, 12.0, scale=alpha_part) / 1.2
    assert ev.details["design_field_V_per_m"] == pytest.approx(expected, rel=1e-10)
    # and the failure probability the part reaches at that field is p / margin^β in the Weibull exponent
    assert ev.details["failure_probability"] == pytest.approx(
        weibull_min.cdf(ev.details["operating_field_V_per_m"], 12.0, scale=alpha_part), rel=1e-9)


def test_linear_sizing_is_the_closed_form_and_brentq_agrees(make_material):
    """A = (cV/K)^(β/(β−1)) with c = 2W/(ε0·εr·V²), K = α·(−ln(1−p)·A_test)^(1/β)/margin — by hand, then by
    scipy.optimize.brentq on ln A − ln(c·V/E_d(A)) = 0."""
    from scipy.optimize import brentq

    W, V, er, a, b, at, p = 80.0, 800.0, 2.2, 600e6, 12.0, 1e-4, 1e-3
    K = a * (-math.log1p(-p) * at) ** (1 / b)
    c = 2 * W / (EPS0 * er * V**2)
    area_hand = (c * V / K) ** (b / (b - 1))
    area_brentq = math.exp(brentq(lambda x: x - math.log(c * V / (K * math.exp(-x / b))), -20, 40, xtol=1e-14))
    ev = evaluate_material(film(make_material, "f"), target())
    assert ev.details["area_m2"] == pytest.approx(area_hand, rel=1e-10)
    assert ev.details["area_m2"] == pytest.approx(area_brentq, rel=1e-10)
    d = ev.details["thickness_m"]
    assert 0.5 * EPS0 * er * ev.details["area_m2"] / d * V**2 == pytest.approx(W, rel=1e-10)   # W = ½CV²
    assert ev.details["operating_field_V_per_m"] == pytest.approx(V / d, rel=1e-12)             # E = V/d


def test_bias_curve_energy_is_scipy_quad_of_e_dD(make_material):
    """u(E) = ε0·∫0^E e·εr,diff(e) de on the piecewise-linear curve (scipy.integrate.quad)."""
    from scipy.integrate import quad

    from ranking.engine import energy_density

    m = ceramic(make_material, "x")
    inp = worst_inputs(ValueTable.from_materials([m]), tmin_K=25 + C, tmax_K=25 + C)
    xs, ys = zip(*BIAS, strict=True)
    for e in (1e6, 4e6, 12e6, 20e6):
        ref = quad(lambda x: EPS0 * x * np.interp(x, xs, ys), 0, e, points=xs[1:-1], epsabs=0)[0]
        assert energy_density(inp, [0], [e])[0] == pytest.approx(ref, rel=1e-9)


def test_nonlinear_sizing_agrees_with_brentq_on_the_curve(make_material):
    """W(A) = A·d(A)·u(V/d(A)) with d = V/E_d(A): the engine's bracketed root against scipy.optimize.brentq."""
    from scipy.integrate import quad
    from scipy.optimize import brentq

    W, V, a, b, at, p = 0.5, 100.0, 80e6, 10.0, 1e-5, 1e-3
    xs, ys = zip(*BIAS, strict=True)

    def u(e):
        return quad(lambda x: EPS0 * x * np.interp(x, xs, ys), 0, e, points=[x for x in xs if 0 < x < e] or None,
                    epsabs=0)[0]

    K = a * (-math.log1p(-p) * at) ** (1 / b)

    def g(x):
        e = K * math.exp(-x / b)
        return x + math.log(V / e) + math.log(u(e)) - math.log(W)

    area_ref = math.exp(brentq(g, -30, 30, xtol=1e-13))
    ev = evaluate_material(ceramic(make_material, "x"), target(voltage_V=V, energy_J=W))
    assert ev.ok, ev.reasons
    assert ev.details["area_m2"] == pytest.approx(area_ref, rel=1e-8)
    assert ev.details["method"] == "bias-curve"


def test_loop_material_sizes_self_consistently(make_material):
    """A material known by a loop's recoverable density: the stored energy A·d·u(E_op) equals the target."""
    rows = [("relative_permittivity", 1500.0, "handbook"), ("breakdown_field", 40e6, "handbook", {"area_m2": 1e-5}),
            ("weibull_shape", 8.0, "handbook"), ("max_temperature", 125 + C, "handbook"),
            ("min_temperature", -55 + C, "handbook"),
            ("recoverable_energy_density", 2e6, "lab", {"field_V_per_m": 20e6})]
    m = make_material("relaxor", rows, family="ceramic-bulk", response="nonlinear")
    ev = evaluate_material(m, target(voltage_V=500.0, energy_J=1.0))
    assert ev.ok, ev.reasons
    d, area = ev.details["thickness_m"], ev.details["area_m2"]
    e_op = 500.0 / d
    u = 2e6 * (min(e_op, 20e6) / 20e6) ** 2
    assert area * d * u == pytest.approx(1.0, rel=1e-9)
    # d = V/E_design(A): the weakest-link design field at the area found
    K = 40e6 * (-math.log1p(-1e-3) * 1e-5) ** (1 / 8.0)
    assert e_op == pytest.approx(K * area ** (-1 / 8.0), rel=1e-9)


@pytest.mark.parametrize("beta", [0.75, 1.0])
def test_a_shape_of_one_or_less_excludes_only_that_material(make_material, beta):
    good = film(make_material, "good")
    bad = film(make_material, "scattered", beta=beta)
    res = shortlist([good, bad], target(), draws=50)
    assert [r["key"] for r in res["ranked"]] == ["good"]
    (ex,) = res["excluded"]
    assert ex["key"] == "scattered"
    assert f"Weibull shape {beta:g}" in ex["reasons"][0] and "scattered-weibull-set" in ex["reasons"][0]


@pytest.mark.parametrize("beta", [1.05, 1.2])
def test_a_shape_just_above_one_never_raises(make_material, beta):
    """β just above 1 on a nonlinear material: a physical size or a stated exclusion, never a traceback."""
    res = shortlist([ceramic(make_material, "c", beta=beta), film(make_material, "f")],
                    target(voltage_V=100.0, energy_J=0.5), draws=50)
    by_key = {r["key"]: r for r in res["ranked"]}
    assert "f" in by_key
    if "c" in by_key:
        assert by_key["c"]["design"]["area_m2"] < 1e6
    else:
        assert res["excluded"][0]["reasons"]


def test_invalid_stored_value_is_that_candidate_reason(make_material):
    bad = film(make_material, "neg", ebd=-5e8)
    res = shortlist([bad, film(make_material, "ok")], target(), draws=20)
    assert [r["key"] for r in res["ranked"]] == ["ok"]
    reason = res["excluded"][0]["reasons"][0]
    assert "breakdown_field" in reason and "not a positive" in reason


def test_tiny_failure_probability_agrees_between_size_and_shortlist(make_material):
    """One failure-probability formula (−expm1): 1e-12 stays 1e-12 to many digits in both commands."""
    from ranking.part import size_material

    m = film(make_material, "f")
    sized = size_material(m, energy_J=80.0, voltage_V=800.0, tmin_K=25 + C, tmax_K=25 + C, failure_probability=1e-12)
    ranked = shortlist([m], target(failure_probability=1e-12), draws=10)["ranked"][0]
    assert sized["failure_probability"] == pytest.approx(1e-12, rel=1e-9)
    assert ranked["design"]["failure_probability"] == pytest.approx(sized["failure_probability"], rel=1e-9)


def test_one_table_many_materials_equals_one_by_one(make_material):
    """A table of many rows gives each material what a table of one gives it (the engine has one path)."""
    mats = [film(make_material, f"f{i}", eps=2 + i / 10, ebd=(4 + i) * 1e8, beta=6 + i, dmin=(i % 3) * 1e-6 or None)
            for i in range(6)] + [ceramic(make_material, "c")]
    tg = target(voltage_V=400.0, energy_J=2.0, tmin_K=-40 + C, tmax_K=85 + C, assume_defaults=True)
    cols = evaluate(ValueTable.from_materials(mats), tg)
    for i, m in enumerate(mats):
        one = evaluate_material(m, tg)
        many = explain(cols, i)
        assert one.reasons == many.reasons and one.sources == many.sources and one.flags == many.flags
        for k, v in one.values.items():
            assert many.values[k] == pytest.approx(v, rel=1e-12)


def test_each_exclusion_message_is_written_once():
    """`git grep` for a message finds one definition (ranking/reasons.py)."""
    for text in ("is thinner than the thinnest layer made", "above the design field", "rated temperature range "
                 "not stated", "that can be made)", "not among the target's", "above the limit"):
        out = subprocess.run(["git", "grep", "--untracked", "-l", "-F", text, "--", "*.py", ":!tests"],
                             capture_output=True, text=True, cwd=__file__.rsplit("/tests/", 1)[0]).stdout.split()
        assert out == ["ranking/reasons.py"], (text, out)


def test_bias_curve_at_another_temperature_is_the_whole_curve_scaled(make_material):
    """A DC-bias curve measured at 25 °C, used at −30 °C where the small-signal εr is a quarter: the whole curve is
    scaled by εr(−30 °C)/εr(25 °C) and ∫E dD follows (scipy.integrate.quad of the scaled curve, by hand)."""
    from scipy.integrate import quad

    from ranking.engine import energy_density

    rows = [("relative_permittivity", 12000.0, "handbook", {"temperature_K": 25 + C}),
            ("relative_permittivity", 3000.0, "handbook", {"temperature_K": -30 + C}),
            ("breakdown_field", 35e6, "handbook", {"area_m2": 1e-5}), ("weibull_shape", 8.0, "handbook")]
    bias = [(0.0, 12000.0), (2e6, 6000.0), (5e6, 2500.0), (10e6, 1200.0), (20e6, 600.0)]
    rows += [("relative_permittivity", v, "handbook", {"temperature_K": 25 + C, "field_V_per_m": e})
             for e, v in bias[1:]]
    m = make_material("y5v-like", rows, family="ceramic-class-2", response="nonlinear")
    xs, ys = zip(*bias, strict=True)
    for t_C, scale in ((25.0, 1.0), (-30.0, 0.25)):
        inp = worst_inputs(ValueTable.from_materials([m]), tmin_K=t_C + C, tmax_K=t_C + C)
        for e in (1e6, 8e6, 20e6):
            hand = quad(lambda x, s=scale: EPS0 * x * s * np.interp(x, xs, ys), 0, e, points=xs[1:-1], epsabs=0)[0]
            assert energy_density(inp, [0], [e])[0] == pytest.approx(hand, rel=1e-9)


def test_a_scattered_lab_set_stops_no_one_else(cli, tmp_path):
    """A lab imports a scattered breakdown set (fitted β well below 1) into the real catalog's PPS film: every
    shortlist still answers, PPS film alone is excluded, and its reason names the shape and the lab's set."""
    import json
    import sys
    from pathlib import Path

    sys.path.insert(0, str(Path(__file__).parent))
    from lab_support import write_set

    rng = np.random.default_rng(7)
    fields = 300.0 * rng.weibull(0.75, 25)            # V/µm, invented scatter
    path = write_set(tmp_path / "scattered.csv", fields, header={
        "label": "scattered set", "thickness": "4 um", "area": "1 cm^2", "temperature": "25 degC",
        "operator": "test (invented data)", "lab": "test bench (invented)"})
    code, out, err = cli(["breakdown", "import", str(path), "--material", "pps-film"])
    assert code == 0, err
    code, out, err = cli(["shortlist", "--voltage", "800", "--tmin", "25", "--tmax", "25", "--energy", "80",
                          "--json", "--draws", "100"])
    assert code == 0, err
    res = json.loads(out)
    assert res["ranked"] and "pps-film" not in {r["key"] for r in res["ranked"]}
    (pps,) = [e for e in res["excluded"] if e["key"] == "pps-film"]
    assert "Weibull shape 0." in pps["reasons"][0] and "1 or less" in pps["reasons"][0]


# Temperatures on a 0.1 °C grid, as data state them: a range end then either equals a data point or clears it.
_TENTHS = st.integers(-600, 2000).map(lambda x: x / 10)


@settings(max_examples=60, deadline=None)
@given(eps_t=st.lists(_TENTHS, min_size=1, max_size=4, unique=True),
       ebd_t=st.lists(_TENTHS, min_size=1, max_size=4, unique=True),
       lo=st.integers(-600, 1500).map(lambda x: x / 10), span=st.integers(0, 1000).map(lambda x: x / 10))
def test_no_value_is_used_outside_its_data_unless_flagged(make_material, eps_t, ebd_t, lo, span):
    """Property: a candidate that reads permittivity outside the temperatures its data state, or breakdown above
    the warmest of them, is refused unless extrapolating (then flagged ``extrapolated``); breakdown below the
    coldest is held as a lower bound and flagged ``held-cold``; one read inside is neither."""
    rows = [("relative_permittivity", 2.2 + 0.001 * t, "handbook", {"temperature_K": t + C}) for t in eps_t]
    rows += [("breakdown_field", 6e8 - 1e6 * t, "handbook", {"temperature_K": t + C, "area_m2": 1e-4})
             for t in ebd_t]
    rows += [("weibull_shape", 10.0, "handbook"), ("max_temperature", 300 + C, "handbook"),
             ("min_temperature", -100 + C, "handbook")]
    m = make_material("m", rows)
    ev = evaluate_material(m, target(tmin_K=lo + C, tmax_K=lo + span + C))
    held = evaluate_material(m, target(tmin_K=lo + C, tmax_K=lo + span + C, extrapolate=True))
    tol = 1e-6
    outside = lo < min(eps_t) - tol or lo + span > max(eps_t) + tol or lo + span > max(ebd_t) + tol
    assert ("extrapolated" in held.flags) == outside
    assert any("refused (--extrapolate" in r for r in ev.reasons) == outside
    assert ("held-cold" in held.flags) == (lo < min(ebd_t) - tol)


def test_a_layer_far_from_the_tested_thickness_is_refused_unless_extrapolating(make_material):
    """Breakdown measured on 3 µm film, a 20 kV part sized at the design field: a layer more than 10× thicker than
    the specimens is beyond what the thickness law may carry: refused, naming why; with extrapolate it is used and
    flagged."""
    rows = [("relative_permittivity", 2.2, "handbook"),
            ("breakdown_field", 600e6, "handbook", {"thickness_m": 3e-6, "area_m2": 1e-4}),
            ("weibull_shape", 12.0, "handbook"), ("max_temperature", 105 + C, "handbook"),
            ("min_temperature", -55 + C, "handbook")]
    m = make_material("thin-tested", rows)
    thin = evaluate_material(m, target(voltage_V=400.0, energy_J=1.0))        # a few µm: inside the factor
    assert thin.ok and "thickness-extrapolated" not in thin.flags
    refused = evaluate_material(m, target(voltage_V=20000.0, energy_J=1.0))     # about 140 µm
    assert not refused.ok and "3 µm specimens" in refused.reasons[0] and "--extrapolate" in refused.reasons[0]
    thick = evaluate_material(m, target(voltage_V=20000.0, energy_J=1.0, extrapolate=True))
    assert thick.ok and "thickness-extrapolated" in thick.flags
    assert any("3 µm specimens" in a for a in thick.details["assumptions"])
    strict = evaluate_material(m, target(voltage_V=20000.0, energy_J=1.0, strict=True))
    assert not strict.ok and "3 µm specimens" in strict.reasons[0]


def test_thickness_law_exponent_is_the_weibull_relative_spread_per_zhao_liu():
    """Zhao & Liu, Nanomaterials 10, 2473 (2020): the exponent of E ∝ d^-a is about the relative standard error of
    the breakdown distribution — for a Weibull of shape β, std/mean from scipy.stats.weibull_min."""
    from scipy.stats import weibull_min

    from materials.priors import weibull_relative_spread

    for beta in (3.0, 8.0, 12.0, 30.0):
        assert weibull_relative_spread(beta) == pytest.approx(weibull_min(beta).std() / weibull_min(beta).mean(),
                                                              rel=1e-9)


def test_thickness_law_sizing_against_brentq(make_material):
    """A film tested at 3 µm sized for 2 kV: d = V/E_d(A, d) with E_d = α·(−ln(1−p)·A_t/A)^(1/β)·(d/d0)^-n and
    A = c·d, solved by scipy.optimize.brentq, equals the engine's folded closed form; the part's failure
    probability at the scale carried to d is p."""
    from scipy.optimize import brentq
    from scipy.stats import weibull_min

    a, b, at, d0, p, V, W, er = 600e6, 12.0, 1e-4, 3e-6, 1e-3, 2000.0, 50.0, 2.2
    n = weibull_min(b).std() / weibull_min(b).mean()
    rows = [("relative_permittivity", er, "handbook"),
            ("breakdown_field", a, "handbook", {"thickness_m": d0, "area_m2": at}),
            ("weibull_shape", b, "handbook"), ("max_temperature", 105 + C, "handbook"),
            ("min_temperature", -55 + C, "handbook")]
    ev = evaluate_material(make_material("law-film", rows), target(voltage_V=V, energy_J=W, failure_probability=p))
    c = 2 * W / (EPS0 * er * V ** 2)

    def g(log_d):
        d = np.exp(log_d)
        e_d = a * (-np.log1p(-p) * at / (c * d)) ** (1 / b) * (d / d0) ** -n
        return log_d - np.log(V / e_d)

    d_ref = np.exp(brentq(g, np.log(1e-7), np.log(1e-2), xtol=1e-14))
    assert ev.ok, ev.reasons
    assert ev.details["thickness_m"] == pytest.approx(d_ref, rel=1e-9)
    assert "thickness-scaled" in ev.flags and any("E ∝ d^-n" in s for s in ev.details["assumptions"])
    assert ev.details["failure_probability"] == pytest.approx(p, rel=1e-6)


def test_class_2_layers_use_the_measured_mlcc_exponent(make_material):
    """BaTiO3 multilayers: E_B ∝ d^-0.5 (the base-metal MLCC thickness study): a layer four times thicker than the
    tested one gets half its breakdown field at equal area."""
    rows = [("relative_permittivity", 2000.0, "handbook"),
            ("breakdown_field", 80e6, "handbook", {"thickness_m": 10e-6, "area_m2": 1e-5}),
            ("weibull_shape", 10.0, "handbook"), ("max_temperature", 125 + C, "handbook"),
            ("min_temperature", -55 + C, "handbook")]
    m = make_material("x7r-like", rows, family="ceramic-class-2")
    ev = evaluate_material(m, target(voltage_V=30e6 * 40e-6, energy_J=None, area_m2=1e-5, failure_probability=0.5,
                                     thicknesses_m=(40e-6,)), thickness_m=40e-6)
    # design field at 40 µm with the test area and p = 0.5: 80 V/µm · (ln 2)^(1/10) · (40/10)^-0.5
    assert ev.details["design_field_V_per_m"] == pytest.approx(80e6 * np.log(2) ** 0.1 * 0.5, rel=1e-9)
    assert "paper-mlcc-thickness-exponent" in " ".join(ev.details["assumptions"])


def _relaxor_with_loops(make_material, loops):
    """A nonlinear ceramic known by loop profiles ``{temperature °C: [(field V/m, recoverable J/m³)…]}``."""
    rows = [("relative_permittivity", 1500.0, "handbook"), ("breakdown_field", 40e6, "handbook", {"area_m2": 1e-5}),
            ("weibull_shape", 8.0, "handbook"), ("max_temperature", 150 + C, "handbook"),
            ("min_temperature", -55 + C, "handbook")]
    rows += [("recoverable_energy_density", u, "lab", {"field_V_per_m": e, "temperature_K": tc + C})
             for tc, pts in loops.items() for e, u in pts]
    return make_material("relaxor", rows, family="ceramic-bulk", response="nonlinear")


def test_loops_at_several_temperatures_use_the_weakest_inside_the_range(make_material):
    """Loops at 25 and 120 °C (the hotter one weaker): over 25…120 °C the 120 °C loop sets the energy, its
    profile read at the operating field (√u linear between stored fields); over 25…60 °C the 25 °C loop does."""
    m = _relaxor_with_loops(make_material, {25: [(10e6, 0.6e6), (20e6, 2.0e6)], 120: [(10e6, 0.4e6), (20e6, 1.5e6)]})
    tg = dict(voltage_V=500.0, energy_J=None, area_m2=1e-4)
    hot = evaluate_material(m, target(tmin_K=25 + C, tmax_K=120 + C, **tg))
    cool = evaluate_material(m, target(tmin_K=25 + C, tmax_K=60 + C, **tg))
    assert hot.ok and cool.ok
    for ev, (u1, u2) in ((hot, (0.4e6, 1.5e6)), (cool, (0.6e6, 2.0e6))):
        e = ev.details["operating_field_V_per_m"]
        s = math.sqrt(u1) + (math.sqrt(u2) - math.sqrt(u1)) * (min(e, 20e6) - 10e6) / 10e6
        assert ev.values["energy"] == pytest.approx(s * s, rel=1e-9)


def test_a_loop_used_outside_its_temperatures_is_refused_unless_extrapolating(make_material):
    m = _relaxor_with_loops(make_material, {25: [(10e6, 0.6e6), (20e6, 2.0e6)]})
    tg = dict(voltage_V=500.0, energy_J=None, area_m2=1e-4, tmin_K=-40 + C, tmax_K=25 + C)
    ev = evaluate_material(m, target(**tg))
    assert not ev.ok and "loop energy known at 25 °C only, held at the end of its data at -40 °C" in ev.reasons[0]
    held = evaluate_material(m, target(extrapolate=True, **tg))
    assert held.ok and "extrapolated" in held.flags


def _glass(make_material, key="g"):
    """Breakdown stated on 58 µm and on 5 µm specimens (400 and 1100 MV/m, as Murata et al., J. Am. Ceram. Soc.
    95 (2012) give for alkali-free glass), one evidence tier, no temperature; the thinnest layer made 5 µm."""
    rows = [("relative_permittivity", 6.0, "paper", {"temperature_K": 25 + C}),
            ("breakdown_field", 400e6, "paper", {"thickness_m": 58e-6, "area_m2": 1e-5}),
            ("breakdown_field", 1100e6, "paper", {"thickness_m": 5e-6, "area_m2": 1e-5}),
            ("weibull_shape", 20.0, "paper"), ("max_temperature", 150 + C, "paper"),
            ("min_temperature", -55 + C, "paper"), ("density", 2400.0, "paper"), ("min_thickness", 5e-6, "paper")]
    return make_material(key, rows, family="glass")


def test_specimens_chosen_again_for_one_material_leave_the_others_as_they_were(make_material):
    """A material whose design is redone from the specimens nearest its layer gets the same answer, words
    included, in a table of many as alone; the other materials' answers are those of a table without it."""
    mats = [film(make_material, "f1"), _glass(make_material), film(make_material, "f2", eps=3.0, ebd=500e6)]
    tg = target(tmin_K=-40 + C, tmax_K=105 + C)
    many = evaluate(ValueTable.from_materials(mats), tg)
    assert "redo" in many.parts and many.parts["redo"][0].tolist() == [-1, 0, -1]
    for i, m in enumerate(mats):
        alone = evaluate(ValueTable.from_materials([m]), tg)
        assert many.ok[i] == alone.ok[0]
        for name in many.values:
            np.testing.assert_array_equal(many.values[name][i], alone.values[name][0])
            np.testing.assert_array_equal(many.low[name][i], alone.low[name][0])
        a, b = explain(many, i), explain(alone, 0)
        assert (a.reasons, a.binding, a.flags, a.sources) == (b.reasons, b.binding, b.flags, b.sources)
    # the glass is designed from its 5 µm specimens (1100 MV/m), not from the 58 µm ones the first pass read
    assert many.parts["inputs"].ebd_v[1] == pytest.approx(400e6)
    again, j = many.own(1)
    assert len(again) == 1 and again.parts["inputs"].ebd_v[j] == pytest.approx(1100e6)


def test_a_subset_of_a_table_holds_the_same_materials(make_material):
    mats = [film(make_material, "f1"), _glass(make_material), film(make_material, "f2", eps=3.0)]
    table = ValueTable.from_materials(mats)
    sub, rows = table.subset(np.array([0, 2]))
    assert sub.materials() == table.materials([0, 2])
    assert rows.sum() == len(sub.value) and (table.material_of_row[rows] != 1).all()
