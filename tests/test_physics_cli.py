"""``holdoff ceiling`` and ``holdoff size`` on the shipped catalog, and the part-sizing layer behind ``size``."""

from __future__ import annotations

import json
import math

import pytest

C = 273.15
EPS0 = 8.8541878188e-12  # CODATA 2022


def _film(make_material, **kw):
    rows = [("relative_permittivity", kw.get("eps", 2.2), "handbook", {"temperature_K": 25 + C}),
            ("breakdown_field", kw.get("ebd", 640e6), "handbook", {"temperature_K": 25 + C, "area_m2": 1e-4}),
            ("weibull_shape", 10.0, "handbook"), ("max_temperature", 105 + C, "handbook"),
            ("min_temperature", -55 + C, "handbook"), ("density", 905.0, "handbook"),
            ("loss_tangent", 2e-4, "handbook")]
    return make_material("pp", rows)


def test_ceiling_polypropylene_published_figure(make_material):
    """Published figure (§5 of the reference notes): εr 2.2 at 640 MV/m → about 3.99 J/cm³."""
    from ranking.ceiling import ceiling_at

    c = ceiling_at(_film(make_material), temperature_K=25 + C)
    assert c.ceiling_J_per_m3 / 1e6 == pytest.approx(3.99, abs=0.01)
    assert c.design_J_per_m3 == pytest.approx(c.ceiling_J_per_m3)


def test_ceiling_area_scaling_worked_figure(make_material):
    """Weakest-link worked figure: 600 V/µm on 1 cm² with β = 10 → 239 V/µm on 1 m² (same percentile)."""
    from ranking.ceiling import ceiling_at

    c = ceiling_at(_film(make_material, ebd=600e6), temperature_K=25 + C, area_m2=1.0)
    assert c.design_field_V_per_m / 1e6 == pytest.approx(239, abs=0.5)


def test_ceiling_refuses_outside_data_unless_asked(make_material):
    from materials.errors import DataError
    from ranking.ceiling import ceiling_at

    m = _film(make_material)
    with pytest.raises(DataError, match="outside the data"):
        ceiling_at(m, temperature_K=105 + C)
    assert ceiling_at(m, temperature_K=105 + C, extrapolate=True).extrapolated


def test_size_material_parallel_plate_relations(make_material):
    """Sizing satisfies C = ε0·εr·A/d, W = ½·C·V², d = V/E (parallel-plate textbook relations)."""
    from ranking.part import size_material

    r = size_material(_film(make_material), energy_J=80.0, voltage_V=800.0, tmin_K=-40 + C, tmax_K=25 + C,
                      extrapolate=True, failure_probability=1e-3, margin=1.2)
    assert r["capacitance_F"] == pytest.approx(EPS0 * 2.2 * r["area_m2"] / r["thickness_m"], rel=1e-9)
    assert 0.5 * r["capacitance_F"] * 800.0 ** 2 == pytest.approx(80.0, rel=1e-9)
    assert r["operating_field_V_per_m"] == pytest.approx(800.0 / r["thickness_m"], rel=1e-12)
    # The margin lowers the field: 1 − exp(−(−ln(1 − p))·(1/margin)^β) is reached, below p itself.
    expected = 1 - math.exp(math.log(1 - 1e-3) * 1.2 ** -10)
    assert r["failure_probability"] == pytest.approx(expected, rel=1e-6)
    assert r["cautions"]


def test_size_notes_a_range_outside_the_rating(make_material):
    from ranking.part import size_material

    r = size_material(_film(make_material), energy_J=1.0, voltage_V=400.0, tmin_K=25 + C, tmax_K=125 + C,
                      extrapolate=True,
                      failure_probability=1e-2)
    assert any("outside the rated range" in n for n in r["notes"])


def test_ceiling_cli_json_contract(cli):
    code, out, err = cli(["ceiling", "polypropylene-bopp", "--temp", "25", "--json", "--assume-defaults",
                          "--area", "0.5", "--failure-prob", "0.001"])
    assert code == 0, err
    row = json.loads(out)[0]
    for k in ("key", "temperature_K", "relative_permittivity", "breakdown_field_V_per_m", "ceiling_J_per_m3",
              "design_field_V_per_m", "design_J_per_m3", "extrapolated", "sources", "cautions"):
        assert k in row
    assert row["design_J_per_m3"] < row["ceiling_J_per_m3"]
    assert math.isclose(row["temperature_K"], 298.15)


def test_ceiling_cli_table_has_caution(cli):
    code, out, err = cli(["ceiling", "polypropylene-bopp", "--temp", "25 degC"])
    assert code == 0, err
    assert "CAUTION" in out and "polypropylene-bopp" in out and "J/cm³" in out


def test_size_cli_json_contract(cli):
    code, out, err = cli(["size", "polypropylene-bopp", "--energy", "80", "--voltage", "800", "--tmin", "-40",
                          "--tmax", "85", "--failure-prob", "0.001", "--margin", "1.2", "--assume-defaults",
                          "--ripple-current", "20", "--frequency", "10 kHz", "--json"])
    assert code == 0, err
    d = json.loads(out)
    for k in ("key", "thickness_m", "area_m2", "volume_m3", "mass_kg", "capacitance_F", "operating_field_V_per_m",
              "design_field_V_per_m", "energy_J", "failure_probability", "cautions"):
        assert k in d
    assert d["energy_J"] == pytest.approx(80.0, rel=1e-6)
    assert d["dissipated_power_W"] > 0


def test_size_cli_missing_data_named_without_defaults(cli):
    code, out, err = cli(["size", "polypropylene-bopp", "--energy", "80", "--voltage", "800"])
    assert code in (0, 2)
    if code == 2:
        assert len(err.strip().splitlines()) == 1
        assert "weibull_shape" in err or "area" in err


def test_size_cli_wrong_unit_is_one_line(cli):
    code, out, err = cli(["size", "polypropylene-bopp", "--energy", "80 V", "--voltage", "800"])
    assert code == 2 and "--energy" in err and len(err.strip().splitlines()) == 1


def test_ceiling_failure_probability_without_area_or_test_area(make_material):
    """No part area: the quantile is taken at the test coupon, whatever its (unstated) area."""
    from ranking.ceiling import ceiling_at

    rows = [("relative_permittivity", 2.2, "handbook"), ("breakdown_field", 600e6, "handbook"),
            ("weibull_shape", 10.0, "handbook")]
    c = ceiling_at(make_material("m", rows), temperature_K=298.15, failure_probability=0.01)
    assert c.design_field_V_per_m == pytest.approx(600e6 * (-math.log(0.99)) ** 0.1, rel=1e-9)
