"""Layered candidates as shortlist candidates (ranking.stack_size): sized for the target, scored and drawn beside
the materials; checked against the series-capacitor hand calculation, a complex-impedance loss computation and the
single material a stack of two equal layers is (source named beside each check)."""

from __future__ import annotations

import json
import math

import numpy as np
import pytest

C = 273.15
EPS0 = 8.8541878188e-12  # CODATA 2022


def _film(make_material, key, eps, ebd, *, loss=1e-3, rho=1000.0, beta=10.0, family="polymer-film"):
    rows = [("relative_permittivity", eps, "handbook"), ("breakdown_field", ebd, "handbook", {"area_m2": 1e-4}),
            ("loss_tangent", loss, "handbook"), ("density", rho, "handbook"), ("max_temperature", 125 + C, "handbook"),
            ("min_temperature", -55 + C, "handbook"), ("self_healing", 1.0, "handbook")]
    if beta is not None:
        rows.append(("weibull_shape", beta, "handbook"))
    return make_material(key, rows, family=family)


def _target(**kw):
    from ranking.target import StackSpec, Target

    stacks = kw.pop("stacks")
    return Target(**{"voltage_V": 2000.0, "tmin_K": 25 + C, "tmax_K": 25 + C, "failure_probability": 0.01,
                     **kw}, stacks=tuple(StackSpec(*s) for s in stacks))


def _size(materials, spec, target):
    from ranking.stack_size import size_stack

    by = {m.key: m for m in materials}
    return size_stack([by[k] for k, _ in spec[1]], spec, target)


def test_sized_film_stack_against_the_series_capacitor_hand_calculation(make_material):
    # Two films in series (εr 2.2 at 500 V/µm, εr 3.2 at 300 V/µm, β 10 on 1 cm²), thickness ratio 2:1, sized for
    # 100 J at 2 kV with p = 1 %. Capacitors in series (Hayt & Buck, Engineering Electromagnetics, dielectric
    # boundaries: normal D continuous): E_i = V/(ε_i·Σ d_j/ε_j), C = 1/Σ(1/C_i) with C_i = ε0·ε_i·A/d_i, W = ½·C·V².
    # The layer with the smaller ε·E_bd (3.2·300 = 960 against 2.2·500 = 1100 V/µm) binds; it sits at its design
    # field E_d = E_bd·(−ln(1−p)·A_t/A)^(1/β) (IEEE Std 930 weakest link). With A = 2·W·D·s/(ε0·V²), s = Σ r_i/ε_i,
    # the binding condition V/(ε_2·s·D) = E_d(A(D)) solves in closed form:
    # D^(1−1/β) = V/(ε_2·s·E_bd,2) · (2·W·s/(−ln(1−p)·A_t·ε0·V²))^(1/β).
    a, b = _film(make_material, "a", 2.2, 500e6), _film(make_material, "b", 3.2, 300e6)
    spec = ("a+b", (("a", 20e-6), ("b", 10e-6)), False)
    t = _target(energy_J=100.0, stacks=[spec])
    ev = _size([a, b], spec, t)
    assert ev.ok, ev.reasons
    V, W, p, beta, At = 2000.0, 100.0, 0.01, 10.0, 1e-4
    r = np.array([2 / 3, 1 / 3])
    eps = np.array([2.2, 3.2])
    s = float(np.sum(r / eps))
    D = (V / (3.2 * s * 300e6) * (2 * W * s / (-math.log1p(-p) * At * EPS0 * V * V)) ** (1 / beta)) \
        ** (1 / (1 - 1 / beta))
    st = ev.details["stack"]
    assert st["thickness_m"] == pytest.approx(D, rel=1e-9)
    d = r * st["thickness_m"]
    fields = [ly["field_ac_V_per_m"] for ly in st["layers"]]
    np.testing.assert_allclose(fields, V / (eps * np.sum(d / eps)), rtol=1e-12)
    assert sum(e * x for e, x in zip(fields, d, strict=True)) == pytest.approx(V, rel=1e-12)   # Kirchhoff
    A = st["area_m2"]
    c_series = 1.0 / np.sum(1.0 / (EPS0 * eps * A / d))
    assert 0.5 * c_series * V * V == pytest.approx(W, rel=1e-9)
    assert st["capacitance_F"] == pytest.approx(c_series, rel=1e-6)
    # the stack's energy density is the stored energy over the whole dielectric volume
    assert ev.values["energy"] == pytest.approx(W / (A * st["thickness_m"]), rel=1e-9)
    assert ev.values["volume"] == pytest.approx(A * st["thickness_m"], rel=1e-9)
    assert ev.values["mass"] == pytest.approx(1000.0 * A * st["thickness_m"], rel=1e-9)
    assert st["first_to_fail"] == "b" and "b (layer 2 of 2)" in ev.binding
    assert st["layers"][1]["margin"] == pytest.approx(1.0, rel=1e-9) and st["layers"][0]["margin"] > 1


def test_stack_loss_is_that_of_lossy_capacitors_in_series(make_material):
    # The dissipation factor of capacitors in series: from the complex impedance Z = Σ 1/(jωC_i(1 − j·tanδ_i))
    # (each layer's complex permittivity ε' − jε'' with tan δ = ε''/ε'), tan δ = Re Z / (−Im Z), computed with numpy
    # complex numbers; the stack's loss criterion (voltage-share weights) agrees to first order in tan δ.
    a = _film(make_material, "a", 2.2, 500e6, loss=2e-4)
    b = _film(make_material, "b", 3.2, 300e6, loss=5e-3)
    spec = ("a+b", (("a", 20e-6), ("b", 10e-6)), False)
    ev = _size([a, b], spec, _target(energy_J=100.0, stacks=[spec]))
    d = np.array(ev.details["stack"]["ratios"]) * ev.details["stack"]["thickness_m"]
    c = EPS0 * np.array([2.2, 3.2]) / d
    z = np.sum(1.0 / (1j * c * (1 - 1j * np.array([2e-4, 5e-3]))))
    assert ev.values["loss"] == pytest.approx(z.real / -z.imag, rel=1e-4)


def test_a_stack_of_two_equal_layers_is_the_material_itself(make_material):
    # Two equal layers of one film in series are one layer of twice the thickness (series capacitors of one
    # dielectric, same area): with no thickness law the sized stack has the material's energy density, volume and
    # mass, and ranks level with it. Film a states no Weibull shape: the stated film prior (5…20) is priced the same
    # way for both, so their low…high ranges, which the Monte Carlo draws, agree too.
    from ranking.shortlist import shortlist

    a, b = _film(make_material, "a", 2.2, 500e6, beta=None), _film(make_material, "b", 3.2, 300e6)
    spec = ("a+a", (("a", 5e-6), ("a", 5e-6)), False)
    res = shortlist([a, b], _target(energy_J=100.0, stacks=[spec]), draws=200)
    rows = {r["key"]: r for r in res["ranked"]}
    assert set(rows) == {"a", "b", "stack:a+a"}
    for n in ("energy", "volume", "mass", "loss"):
        for part in ("criteria", "criteria_low", "criteria_high"):
            assert rows["stack:a+a"][part][n] == pytest.approx(rows["a"][part][n], rel=1e-9)
    assert rows["a"]["criteria_low"]["energy"] < 0.5 * rows["a"]["criteria"]["energy"]   # the prior is priced
    assert rows["stack:a+a"]["score"] == pytest.approx(rows["a"]["score"], rel=1e-9)
    assert rows["stack:a+a"]["design"]["thickness_m"] == pytest.approx(rows["a"]["design"]["thickness_m"], rel=1e-9)
    # both layers sit at the target's p: the part's probability is their union, 1 − (1 − p)²
    assert rows["stack:a+a"]["design"]["failure_probability"] == pytest.approx(1 - 0.99 ** 2, rel=1e-6)
    assert rows["stack:a+a"]["stack"]["layers"][0]["thickness_m"] == pytest.approx(
        rows["a"]["design"]["thickness_m"] / 2, rel=1e-9)


def test_stack_ranked_among_materials_with_ranges_sources_and_monte_carlo(make_material):
    # a film-on-film stack scores between its two films on energy (each layer's εr·E_bd sets its share), is drawn
    # in the Monte Carlo (p_top is a share of draws) and names the layers' sources
    from ranking.shortlist import shortlist

    a, b = _film(make_material, "a", 2.2, 500e6), _film(make_material, "b", 3.2, 300e6)
    spec = ("a+b", (("a", 20e-6), ("b", 10e-6)), False)
    res = shortlist([a, b], _target(energy_J=100.0, stacks=[spec]), draws=300, method="weighted")
    rows = {r["key"]: r for r in res["ranked"]}
    e = {k: r["criteria"]["energy"] for k, r in rows.items()}
    assert min(e["a"], e["b"]) < e["stack:a+b"] < max(e["a"], e["b"])
    st = rows["stack:a+b"]
    assert 0.0 <= st["p_top"] <= 1.0 and sum(r["p_top"] for r in res["ranked"]) == pytest.approx(1.0)
    assert st["family"] == "stack" and st["label"] == "stack:a+b" and st["binding"].startswith("breakdown of b")
    assert st["source_kinds"]["energy"] == ["handbook"] and "handbook-source" in st["sources"]["energy"]
    assert res["stacks"][0]["key"] == "stack:a+b" and res["stacks"][0]["ranked"] is True
    assert res["target"]["stacks"][0]["layers"] == [{"key": "a", "thickness_m": 20e-6},
                                                    {"key": "b", "thickness_m": 10e-6}]


def test_stack_excluded_for_a_layers_rating_and_for_a_short_energy_density(make_material):
    from ranking.shortlist import shortlist

    a, b = _film(make_material, "a", 2.2, 500e6), _film(make_material, "b", 3.2, 300e6)
    spec = ("a+b", (("a", 20e-6), ("b", 10e-6)), False)
    res = shortlist([a, b], _target(energy_J=100.0, tmax_K=150 + C, stacks=[spec]), draws=0)
    (ex,) = [e for e in res["excluded"] if e["key"] == "stack:a+b"]
    assert ex["reasons"][0].startswith("layer a: rated to 125 °C")
    res = shortlist([a, b], _target(energy_J=100.0, energy_density_J_per_m3=50e6, stacks=[spec]), draws=0)
    (ex,) = [e for e in res["excluded"] if e["key"] == "stack:a+b"]
    assert "below the target 50 J/cm³ (set by b)" in ex["reasons"][0]


@pytest.fixture(scope="module")
def shipped(tmp_path_factory):
    return f"sqlite:///{tmp_path_factory.mktemp('stackrank') / 'shipped.sqlite'}"


def test_cli_shortlist_ranks_a_film_stack_beside_the_catalog(tmp_path, cli, shipped):
    # BOPP film on PET film at 2 kV, 100 J, -20…70 °C: sized and ranked in the same table as the catalog; the JSON
    # export carries the row with its sized layers, and the series-capacitor energy ½·C·V² = 100 J holds
    f = tmp_path / "t.toml"
    f.write_text('[target]\nvoltage = "2 kV"\ntmin = "-20 degC"\ntmax = "70 degC"\nenergy = "100 J"\n'
                 'extrapolate = true\n\n[[stack]]\nname = "pp on pet"\n'
                 'layers = ["polypropylene-bopp:6um", "pet-film:3um"]\n')
    out_json = tmp_path / "r.json"
    code, out, err = cli(["shortlist", "--target", f, "--draws", "100", "--export", out_json, "--top", "40"],
                         db=shipped)
    assert code == 0, err
    assert "stack:pp on pet" in out and "layered candidates, sized for the target" in out
    line = next(x for x in out.splitlines() if x.split()[1:2] == ["stack:pp"])
    assert line.split()[0].isdigit()            # a rank in the same table as the materials
    res = json.loads(out_json.read_text())
    (row,) = [r for r in res["ranked"] if r["key"] == "stack:pp on pet"]
    st = row["stack"]
    d = np.array([ly["thickness_m"] for ly in st["layers"]])
    eps = np.array([ly["relative_permittivity"] for ly in st["layers"]])
    assert d[0] / d[1] == pytest.approx(2.0, rel=1e-12)
    c = 1.0 / np.sum(d / (EPS0 * eps * st["area_m2"]))
    assert 0.5 * c * 2000.0 ** 2 == pytest.approx(100.0, rel=1e-3)
    assert row["criteria"]["energy"] == pytest.approx(100.0 / (st["area_m2"] * d.sum()), rel=1e-3)
    assert res["target"]["stacks"][0]["name"] == "pp on pet"
