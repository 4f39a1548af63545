"""A property's value at a condition: interpolation, refusal outside the data, flagged extrapolation, evidence."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from materials.errors import DataError
from materials.lookup import bias_curve, reference_value, temperature_points, value_at

C = 273.15
EPS_T = [(-40.0, 2.30), (25.0, 2.20), (105.0, 2.10)]       # °C, εr
BIAS = [(2e6, 1800.0), (5e6, 1400.0), (10e6, 900.0), (20e6, 500.0)]  # V/m, εr


@pytest.fixture(scope="module")
def film():
    from materials.records import MaterialData, SourceRef, StoredValue

    hb = SourceRef("hb", "handbook", "a handbook")
    rows = [StoredValue(id=i, property="relative_permittivity", value=v, source=hb, temperature_K=t + C,
                        frequency_Hz=1e3, low=v - 0.05, high=v + 0.05) for i, (t, v) in enumerate(EPS_T, 1)]
    rows.append(StoredValue(id=9, property="relative_permittivity", value=2.15, source=hb, temperature_K=25 + C,
                            frequency_Hz=1e6))
    rows.append(StoredValue(id=10, property="loss_tangent", value=2e-4, source=hb))
    return MaterialData(key="film", name="film", family="polymer-film", values=rows)


@pytest.fixture(scope="module")
def x7r():
    from materials.records import MaterialData, SourceRef, StoredValue

    hb = SourceRef("hb", "handbook", "a handbook")
    rows = [StoredValue(id=1, property="relative_permittivity", value=2000.0, source=hb, temperature_K=25 + C,
                        frequency_Hz=1e3),
            StoredValue(id=2, property="relative_permittivity", value=1800.0, source=hb, temperature_K=125 + C,
                        frequency_Hz=1e3)]
    rows += [StoredValue(id=10 + i, property="relative_permittivity", value=v, source=hb, temperature_K=25 + C,
                         frequency_Hz=1e3, field_V_per_m=e) for i, (e, v) in enumerate(BIAS)]
    return MaterialData(key="x7r", name="x7r", family="ceramic-class-2", response="nonlinear", values=rows)


@pytest.mark.parametrize("t_C", [-40.0, -10.0, 0.0, 25.0, 60.0, 104.9, 105.0])
def test_interpolation_over_temperature_agrees_with_numpy(film, t_C):
    # Reference: numpy.interp (piecewise-linear) on the same points.
    got = value_at(film, "relative_permittivity", temperature_K=t_C + C)
    xs, ys = zip(*EPS_T, strict=True)
    assert got.value == pytest.approx(np.interp(t_C, xs, ys), rel=1e-12)
    assert got.low == pytest.approx(np.interp(t_C, xs, [y - 0.05 for y in ys]), rel=1e-12)
    assert got.high == pytest.approx(np.interp(t_C, xs, [y + 0.05 for y in ys]), rel=1e-12)
    assert not got.extrapolated
    assert got.covered == (pytest.approx(-40 + C), pytest.approx(105 + C))


def test_midpoint_and_the_rows_behind_it(film):
    got = value_at(film, "relative_permittivity", temperature_K=65 + C)
    assert got.value == pytest.approx(2.15)
    assert [r.temperature_K - C for r in got.rows] == [pytest.approx(25.0), pytest.approx(105.0)]
    at_point = value_at(film, "relative_permittivity", temperature_K=25 + C)
    assert [r.id for r in at_point.rows] == [2]
    assert got.sources == ["hb"]
    assert all(r.source.citation for r in got.rows)


@pytest.mark.parametrize("t_C", [-55.0, 125.0, 200.0])
def test_outside_the_data_is_refused(film, t_C):
    with pytest.raises(DataError, match=r"known only over -40 °C…105 °C"):
        value_at(film, "relative_permittivity", temperature_K=t_C + C)


@pytest.mark.parametrize("t_C, end", [(-55.0, 2.30), (125.0, 2.10)])
def test_extrapolation_holds_the_end_value_and_is_flagged(film, t_C, end):
    got = value_at(film, "relative_permittivity", temperature_K=t_C + C, extrapolate=True)
    assert got.value == pytest.approx(end)
    assert got.extrapolated


def test_frequency_picks_the_nearest_stated_rows(film):
    # 1 MHz data exist only at 25 °C: the answer there is the 1 MHz row, and 65 °C at 1 MHz is outside its data.
    assert value_at(film, "relative_permittivity", temperature_K=25 + C, frequency_Hz=1e6).value == 2.15
    assert value_at(film, "relative_permittivity", temperature_K=25 + C, frequency_Hz=2e3).value == 2.20
    with pytest.raises(DataError):
        value_at(film, "relative_permittivity", temperature_K=65 + C, frequency_Hz=1e6)


def test_a_single_unconditioned_value_holds_everywhere(film):
    got = value_at(film, "loss_tangent", temperature_K=150 + C)
    assert got.value == 2e-4 and not got.extrapolated and got.covered is None


def test_missing_property_is_a_data_error(film):
    with pytest.raises(DataError, match="film has no breakdown_field"):
        value_at(film, "breakdown_field")
    assert reference_value(film, "breakdown_field") is None


def test_reference_value_is_25_C(film):
    assert reference_value(film, "relative_permittivity") == pytest.approx(2.20)


@pytest.mark.parametrize("e, expected", [(2e6, 1800.0), (3.5e6, 1600.0), (7.5e6, 1150.0), (15e6, 700.0),
                                         (20e6, 500.0)])
def test_interpolation_over_bias_field(x7r, e, expected):
    got = value_at(x7r, "relative_permittivity", field_V_per_m=e)
    xs, ys = zip(*BIAS, strict=True)
    assert got.value == pytest.approx(expected) == pytest.approx(np.interp(e, xs, ys))
    assert not got.extrapolated
    assert all(r.field_V_per_m is not None for r in got.rows)


def test_below_the_first_bias_point_runs_to_the_small_signal_value(x7r):
    # Zero field is the small-signal value (2000 at 25 °C): between 0 and 2 V/µm the curve is still data.
    got = value_at(x7r, "relative_permittivity", field_V_per_m=1e6)
    assert got.value == pytest.approx(1900.0)
    assert not got.extrapolated
    assert {r.field_V_per_m for r in got.rows} == {None, 2e6}


def test_bias_field_beyond_the_data(x7r):
    with pytest.raises(DataError, match=r"known only over 2 V/µm…20 V/µm"):
        value_at(x7r, "relative_permittivity", field_V_per_m=30e6)
    got = value_at(x7r, "relative_permittivity", field_V_per_m=30e6, extrapolate=True)
    assert got.value == 500.0 and got.extrapolated


def test_without_field_the_bias_rows_do_not_count(x7r):
    got = value_at(x7r, "relative_permittivity", temperature_K=75 + C)
    assert got.value == pytest.approx(1900.0)
    assert all(r.field_V_per_m is None for r in got.rows)


def test_no_bias_data_is_a_data_error(film):
    with pytest.raises(DataError, match="under DC bias"):
        value_at(film, "relative_permittivity", field_V_per_m=1e7)


def test_bias_curve_starts_at_zero_field(x7r):
    fields, eps, rows = bias_curve(x7r)
    assert fields == [0.0] + [e for e, _ in BIAS]
    assert eps == [2000.0] + [v for _, v in BIAS]
    assert len(rows) == len(fields)


def test_temperature_points(x7r):
    assert temperature_points(x7r, ["relative_permittivity"]) == [pytest.approx(25 + C), pytest.approx(125 + C)]


def test_lab_rows_supersede_the_catalog(make_material):
    m = make_material("m", [
        ("breakdown_field", 6.0e8, "handbook", {"temperature_K": 25 + C}),
        ("breakdown_field", 5.0e8, "handbook", {"temperature_K": 85 + C}),
        ("breakdown_field", 6.5e8, "lab", {"temperature_K": 25 + C, "source": "our-lab-2026"}),
    ])
    got = value_at(m, "breakdown_field", temperature_K=25 + C)
    assert got.value == 6.5e8
    assert got.sources[0] == "our-lab-2026"
    # The lab measured only at 25 °C: the handbook curve lends its shape (5/6 from 25 to 85 °C), anchored to the
    # lab's value, and says so; beyond the handbook's data the answer is refused as before.
    hot = value_at(m, "breakdown_field", temperature_K=85 + C)
    assert hot.value == pytest.approx(6.5e8 * 5.0 / 6.0) and hot.lent and not hot.extrapolated
    assert hot.sources == ["our-lab-2026", "handbook-source"]
    with pytest.raises(DataError):
        value_at(m, "breakdown_field", temperature_K=105 + C)


def test_recollected_curve_never_displaces_a_published_value(make_material):
    """A published single value sets the level; a recollected temperature curve lends only its shape."""
    m = make_material("m", [
        ("breakdown_field", 6.5e8, "handbook"),
        ("breakdown_field", 7.0e8, "recollection", {"temperature_K": 25 + C}),
        ("breakdown_field", 5.6e8, "recollection", {"temperature_K": 105 + C}),
    ])
    room = value_at(m, "breakdown_field", temperature_K=25 + C)
    assert room.value == pytest.approx(6.5e8) and room.lent
    hot = value_at(m, "breakdown_field", temperature_K=105 + C)
    assert hot.value == pytest.approx(6.5e8 * 0.8)
    assert {r.source.kind for r in hot.rows} == {"handbook", "recollection"}


def test_a_stronger_curve_ignores_weaker_rows(make_material):
    m = make_material("m", [
        ("relative_permittivity", 2.2, "paper", {"temperature_K": 25 + C}),
        ("relative_permittivity", 2.1, "paper", {"temperature_K": 105 + C}),
        ("relative_permittivity", 9.9, "recollection", {"temperature_K": 65 + C}),
    ])
    got = value_at(m, "relative_permittivity", temperature_K=65 + C)
    assert got.value == pytest.approx(2.15) and not got.lent
    assert {r.source.kind for r in got.rows} == {"paper"}


def test_a_better_tier_wins_at_the_same_condition(make_material):
    m = make_material("m", [
        ("density", 1400.0, "recollection"),
        ("density", 1390.0, "handbook"),
        ("density", 1395.0, "web"),
    ])
    got = value_at(m, "density")
    assert got.value == 1390.0 and got.rows[0].source.kind == "handbook"


def test_retired_rows_are_not_used(make_material):
    m = make_material("m", [
        ("density", 9999.0, "handbook", {"retired_at": "2026-01-01 00:00:00", "retired_reason": "typo"}),
        ("density", 1390.0, "handbook"),
    ])
    assert value_at(m, "density").value == 1390.0


def test_lookup_through_the_store_returns_source_rows(mini_store):
    from db.query import value_at as db_value_at

    with mini_store.session() as s:
        got = db_value_at(s, "mini-film", "breakdown_field", temperature_K=95 + C)
    assert got.value == pytest.approx(4.75e8)
    assert got.sources == ["fixture-invented"]
    assert {r.source.kind for r in got.rows} == {"invented"}
    assert all(r.thickness_m == pytest.approx(3e-6) for r in got.rows)


@settings(max_examples=80, deadline=None)
@given(pts=st.lists(st.tuples(st.floats(-100, 300), st.floats(1.5, 50.0)), min_size=1, max_size=6,
                    unique_by=lambda p: round(p[0], 6)),
       t=st.floats(-150, 350))
def test_interpolation_stays_within_the_data_and_refuses_outside(make_material, pts, t):
    m = make_material("m", [("relative_permittivity", v, "paper", {"temperature_K": tc + C}) for tc, v in pts])
    xs = sorted(tc + C for tc, _ in pts)
    ys = [v for _, v in pts]
    inside = xs[0] - 1e-9 * xs[-1] <= t + C <= xs[-1] + 1e-9 * xs[-1]
    if not inside:
        with pytest.raises(DataError):
            value_at(m, "relative_permittivity", temperature_K=t + C)
        assert value_at(m, "relative_permittivity", temperature_K=t + C, extrapolate=True).extrapolated
        return
    got = value_at(m, "relative_permittivity", temperature_K=t + C)
    assert min(ys) - 1e-9 <= got.value <= max(ys) + 1e-9
    assert not got.extrapolated


# --- a stated band of capacitance change over temperature ----------------------------------------------------

def _banded(curve_kind: str, band_kind: str):
    """A class 2 body: εr 2000 at 25 °C and 1800 at 125 °C (``curve_kind``), a −15 … +15 % band at −55 and 125 °C
    (``band_kind``, as EIA-198 letter R states it), and a DC-bias curve at 25 °C."""
    from materials.records import MaterialData, SourceRef, StoredValue

    curve, band = SourceRef("c", curve_kind, "curve"), SourceRef("b", band_kind, "band")
    rows = [StoredValue(id=1, property="relative_permittivity", value=2000.0, source=curve, temperature_K=25 + C),
            StoredValue(id=2, property="relative_permittivity", value=1800.0, source=curve, temperature_K=125 + C)]
    rows += [StoredValue(id=3 + i, property="capacitance_change", value=-0.15, low=-0.15, high=0.15, source=band,
                         temperature_K=t + C) for i, t in enumerate((-55.0, 125.0))]
    rows += [StoredValue(id=10 + i, property="relative_permittivity", value=v, source=curve, temperature_K=25 + C,
                         field_V_per_m=e) for i, (e, v) in enumerate(BIAS)]
    return MaterialData(key="x7r", name="x7r", family="ceramic-class-2", response="nonlinear", values=rows)


@pytest.mark.parametrize("t_C", [-55.0, -20.0, 60.0, 125.0])
def test_a_stronger_band_bounds_the_permittivity_over_its_span(t_C):
    # A standard's band outranks a remembered curve: anywhere in −55 … 125 °C but 25 °C the permittivity is the
    # 25 °C value at the band's lower end, 2000 × 0.85 = 1700; the band's row is behind it.
    m = _banded("recollection", "standard")
    got = value_at(m, "relative_permittivity", temperature_K=t_C + C)
    assert got.value == pytest.approx(1700.0, rel=1e-12) and got.banded and not got.extrapolated
    assert got.covered == (pytest.approx(-55 + C), pytest.approx(125 + C))
    assert {r.source.key for r in got.rows} == {"c", "b"}
    at_25 = value_at(m, "relative_permittivity", temperature_K=25 + C)
    assert at_25.value == 2000.0 and not at_25.banded


def test_a_band_beyond_its_span_is_refused_and_a_weaker_band_is_ignored():
    with pytest.raises(DataError, match="outside the data"):
        value_at(_banded("recollection", "standard"), "relative_permittivity", temperature_K=130 + C)
    # the same band from weaker evidence than the curve: the curve's own interpolation (numpy.interp)
    m = _banded("lab", "standard")
    got = value_at(m, "relative_permittivity", temperature_K=75 + C)
    assert got.value == pytest.approx(np.interp(75.0, [25.0, 125.0], [2000.0, 1800.0])) and not got.banded


def test_the_bias_curve_follows_the_band():
    # At 125 °C the DC-bias curve measured at 25 °C is scaled by εr(125 °C)/εr(25 °C) = 0.85, the band's end.
    m = _banded("recollection", "standard")
    e, v = BIAS[1]
    got = value_at(m, "relative_permittivity", temperature_K=125 + C, field_V_per_m=e)
    assert got.value == pytest.approx(v * 0.85, rel=1e-12)
