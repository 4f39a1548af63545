"""Storing lab data (db.labdata): sets, loops, derived values, history, duplicates, and the round trip."""

from __future__ import annotations

import numpy as np
import pytest
from scipy.constants import epsilon_0

from db.store import open_store
from lab_support import EXAMPLES, LAB_CATALOG, build_store, logical_dump, write_loop, write_set
from materials.errors import InputError
from materials.labfiles import read_breakdown, read_loop

HEADER = {"thickness": "3 um", "area": "1 cm^2", "ramp": "500", "lab": "Bench lab", "operator": "T. Tester",
          "date": "2024-05-02"}


@pytest.fixture
def store(tmp_path):
    st = open_store(build_store(tmp_path))
    yield st
    st.dispose()


def _weibull(n, scale, shape, seed):
    return scale * np.random.default_rng(seed).weibull(shape, n)


def _set_file(tmp_path, name, temp_C, scale, shape=12.0, seed=1, n=20, censored=None):
    return write_set(tmp_path / name, _weibull(n, scale, shape, seed), censored,
                     header={**HEADER, "label": name, "temperature": f"{temp_C} degC"})


def _import(store, path, **kw):
    from db.labdata import import_breakdown

    data = read_breakdown(path)
    with store.session() as s:
        return import_breakdown(s, data, **({"material_key": "fixture-film"} | kw))


def _material(store, key):
    from db.query import get_material

    with store.session() as s:
        return get_material(s, key, include_retired=True)


def test_import_stores_points_fit_and_provenance(store, tmp_path):
    from sqlalchemy import select

    from db.models import BreakdownSet, Source

    f = _set_file(tmp_path, "s25.csv", 25, 650, censored=[0] * 18 + [1, 1])
    res = _import(store, f)
    assert (res.n, res.censored, res.kind, res.material) == (20, 2, "lab", "fixture-film")
    with store.session() as s:
        bset = s.execute(select(BreakdownSet)).scalar_one()
        src = s.execute(select(Source).where(Source.key == res.source)).scalar_one()
        assert (bset.thickness_m, bset.area_m2, bset.ramp_V_per_s) == (pytest.approx(3e-6), pytest.approx(1e-4),
                                                                       500.0)
        assert bset.sha256 == res.sha256 and bset.file_name == "s25.csv"
        assert src.kind == "lab"
        for part in ("Bench lab", "T. Tester", "2024-05-02", "s25.csv", res.sha256):
            assert part in src.citation
    m = _material(store, "fixture-film")
    rows = {v.property: v for v in m.values if v.breakdown_set == "s25.csv"}
    assert set(rows) == {"breakdown_field", "weibull_shape"}
    ebd = rows["breakdown_field"]
    assert ebd.value == pytest.approx(res.figures["scale_V_per_m"])
    assert (ebd.low, ebd.high) == pytest.approx(res.figures["scale_bounds_V_per_m"])
    assert (ebd.temperature_K, ebd.thickness_m, ebd.area_m2) == (pytest.approx(298.15), pytest.approx(3e-6),
                                                                 pytest.approx(1e-4))
    assert rows["weibull_shape"].value == pytest.approx(res.figures["shape_unbiased"])


def test_fit_matches_scipy_on_a_complete_sample(store, tmp_path):
    """Reference library side by side: scipy.stats.weibull_min.fit(x, floc=0) on the same points."""
    from scipy.stats import weibull_min

    x = _weibull(25, 600e6, 11.0, seed=7)
    f = write_set(tmp_path / "c.csv", x / 1e6, header={**HEADER, "temperature": "25"})
    res = _import(store, f)
    shape, _, scale = weibull_min.fit(read_breakdown(f).fields_V_per_m, floc=0)
    assert res.figures["shape"] == pytest.approx(shape, rel=1e-5)
    assert res.figures["scale_V_per_m"] == pytest.approx(scale, rel=1e-5)
    # Ross (1994) unbiasing, (n-2)/(n-0.68): 0.9457 at n = 25 (published-values.md, computed table)
    assert res.figures["shape_unbiased"] / res.figures["shape"] == pytest.approx(23 / 24.32)


def test_round_trip_raw_points_identical(store, tmp_path):
    from db.labdata import read_loop_points, read_points

    x = _weibull(200, 640, 10.0, seed=3)
    cens = np.random.default_rng(4).random(200) < 0.1
    f = write_set(tmp_path / "rt.csv", x, cens, header={"temperature": "25"})
    data = read_breakdown(f)
    _import(store, f)
    lf = write_loop(tmp_path / "loop.csv", [0, 100.5, 200.25, 100.125, 0.0], [0, 2.5, 3.75, 2.875, 1.0625])
    loop = read_loop(lf)
    from db.labdata import import_loop

    with store.session() as s:
        import_loop(s, loop, material_key="fixture-ceramic")
    with store.session() as s:
        fields, flags, thick = read_points(s, "fixture-film", "rt")
        e, p = read_loop_points(s, "fixture-ceramic", "loop")
    assert np.array_equal(fields, data.fields_V_per_m) and np.array_equal(flags, data.censored)
    assert thick is None
    assert np.array_equal(e, loop.fields_V_per_m) and np.array_equal(p, loop.polarization_C_per_m2)


def test_sets_at_three_temperatures_form_a_curve_that_supersedes_the_catalog(store, tmp_path):
    from materials.lookup import value_at

    before = value_at(_material(store, "fixture-film"), "breakdown_field", temperature_K=298.15)
    assert before.rows[0].source.kind == "handbook"
    scales = {}
    for t, scale in ((25, 700), (105, 600), (150, 500)):
        scales[t] = _import(store, _set_file(tmp_path, f"s{t}.csv", t, scale, seed=t)).figures["scale_V_per_m"]
    m = _material(store, "fixture-film")
    at25 = value_at(m, "breakdown_field", temperature_K=298.15)
    assert at25.value == pytest.approx(scales[25]) and at25.rows[0].source.kind == "lab"
    mid = value_at(m, "breakdown_field", temperature_K=273.15 + 65)
    assert mid.value == pytest.approx(0.5 * (scales[25] + scales[105]))
    assert value_at(m, "weibull_shape", temperature_K=273.15 + 150).rows[0].source.kind == "lab"
    from materials.errors import DataError

    with pytest.raises(DataError):  # the lab data stop at 150 °C; the catalog rows no longer count
        value_at(m, "breakdown_field", temperature_K=273.15 + 175)


def test_same_file_twice_is_refused_unless_forced(store, tmp_path):
    f = _set_file(tmp_path, "dup.csv", 25, 650)
    _import(store, f)
    url = store.url
    before = logical_dump(url)
    with pytest.raises(InputError, match="already imported as breakdown set 'dup.csv'"):
        _import(store, f)
    with pytest.raises(InputError, match="already imported"):  # to another material as well
        _import(store, f, material_key="fixture-ceramic")
    assert logical_dump(url) == before
    res = _import(store, f, material_key="fixture-ceramic", force=True)
    assert res.material == "fixture-ceramic"


def test_replacing_a_set_retires_its_fit_and_keeps_its_points(store, tmp_path):
    from db.labdata import describe_sets, read_points

    first = _import(store, _set_file(tmp_path, "a.csv", 25, 650, seed=1))
    g = _set_file(tmp_path, "b.csv", 25, 600, seed=2)
    with pytest.raises(InputError, match="already has a breakdown set labelled 'a.csv'"):
        _import(store, write_set(tmp_path / "a2.csv", [600, 610, 620], header={"label": "a.csv"}))
    data = read_breakdown(g, {"label": "a.csv"})
    from db.labdata import import_breakdown

    with store.session() as s:
        res = import_breakdown(s, data, material_key="fixture-film", force=True)
    assert res.replaced and res.replaced.startswith("a.csv (replaced ")
    m = _material(store, "fixture-film")
    retired = [v for v in m.values if v.breakdown_set == res.replaced]
    assert {v.property for v in retired} == {"breakdown_field", "weibull_shape"}
    assert all(v.retired_at and "replaced by b.csv" in v.retired_reason for v in retired)
    active = [v for v in m.values if v.breakdown_set == "a.csv" and not v.retired_at]
    assert [v.value for v in active if v.property == "breakdown_field"] == [pytest.approx(res.figures["scale_V_per_m"])]
    with store.session() as s:
        sets = describe_sets(s, "fixture-film")["breakdown_sets"]
        assert [x["label"] for x in sets] == ["a.csv"]
        assert len(describe_sets(s, "fixture-film", include_replaced=True)["breakdown_sets"]) == 2
        old_points, _, _ = read_points(s, "fixture-film", res.replaced)  # the replaced set's points are kept
    assert len(old_points) == first.n


def test_refit_only_when_the_set_changed(store, tmp_path):
    from sqlalchemy import select, update

    from db.labdata import refit_set
    from db.models import BreakdownPoint, BreakdownSet, PropertyValue

    _import(store, _set_file(tmp_path, "r.csv", 25, 650))
    with store.session() as s:
        sid = s.execute(select(BreakdownSet.id)).scalar_one()
        assert refit_set(s, sid) is False
        s.execute(update(BreakdownPoint).where(BreakdownPoint.set_id == sid, BreakdownPoint.seq == 0)
                  .values(field_V_per_m=300e6))
        assert refit_set(s, sid, reason="point 0 corrected") is True
        rows = s.execute(select(PropertyValue).where(PropertyValue.breakdown_set_id == sid)).scalars().all()
    assert len(rows) == 4
    assert sum(r.retired_reason == "point 0 corrected" for r in rows) == 2


def test_loop_import_stores_energies_at_peak_field(store, tmp_path):
    """A linear dielectric's loop recovers exactly ½·ε0·εr·E² (the textbook energy density)."""
    from db.labdata import describe_sets, import_loop

    eps_r, e_max = 2000.0, 200.0  # kV/cm
    e = np.concatenate([np.linspace(0, e_max, 51), np.linspace(e_max, 0, 51)[1:]])
    p = epsilon_0 * (eps_r - 1) * e * 1e5 * 100  # µC/cm²
    lf = write_loop(tmp_path / "lin.csv", e, p, header={"temperature": "85", "frequency": "100 Hz"})
    with store.session() as s:
        res = import_loop(s, read_loop(lf), material_key="fixture-ceramic")
    want = 0.5 * epsilon_0 * eps_r * (e_max * 1e5) ** 2
    assert res.figures["recovered_J_per_m3"] == pytest.approx(want, rel=1e-9)
    assert res.figures["efficiency"] == pytest.approx(1.0)
    m = _material(store, "fixture-ceramic")
    rec = [v for v in m.values if v.loop == "lin"]
    assert {v.property for v in rec} == {"recoverable_energy_density", "efficiency"}
    assert all(v.temperature_K == pytest.approx(358.15) and v.frequency_Hz == 100 for v in rec)
    at_peak = [v for v in rec if v.field_V_per_m == pytest.approx(2e7)]
    assert {v.property for v in at_peak} == {"recoverable_energy_density", "efficiency"}
    # the discharge branch up to each tenth of the peak field: ½·ε0·εr·E² for a linear loop
    profile = sorted((v.field_V_per_m, v.value) for v in rec if v.property == "recoverable_energy_density")
    assert [e for e, _ in profile] == pytest.approx([2e6 * k for k in range(1, 11)])
    assert [u for _, u in profile] == pytest.approx([0.5 * epsilon_0 * eps_r * e ** 2 for e, _ in profile], rel=1e-6)
    with store.session() as s:
        loops = describe_sets(s, "fixture-ceramic")["loops"]
    assert loops[0]["recovered_J_per_m3"] == pytest.approx(want, rel=1e-9) and loops[0]["n"] == 101


def test_new_material_is_created_once_and_reused(store, tmp_path):
    r1 = _import(store, _set_file(tmp_path, "n1.csv", 25, 650, seed=1), material_key=None,
                 new_material="Bench  film B", family="polymer-film")
    r2 = _import(store, _set_file(tmp_path, "n2.csv", 105, 600, seed=2), material_key=None,
                 new_material="Bench film B", family="polymer-film")
    assert (r1.material, r1.new_material, r2.material, r2.new_material) == ("bench-film-b", True,
                                                                            "bench-film-b", False)
    m = _material(store, "bench-film-b")
    assert (m.origin, m.family, m.name) == ("lab", "polymer-film", "Bench film B")
    with pytest.raises(InputError, match="already exists"):
        _import(store, _set_file(tmp_path, "n3.csv", 25, 650, seed=3), material_key=None,
                new_material="Bench film B", family="glass")


def test_failed_import_leaves_the_store_as_it_was(store, tmp_path):
    f = write_set(tmp_path / "flat.csv", [600, 600, 600, 600], header={"temperature": "25"})
    before = logical_dump(store.url)
    with pytest.raises(InputError, match="Weibull"):
        _import(store, f, material_key=None, new_material="Never made", family="polymer-film")
    assert logical_dump(store.url) == before


def test_add_materials_with_history(store, tmp_path):
    from db.labdata import add_materials
    from materials.records import MaterialRec, SourceRec, ValueRec

    src = {"bench-notes": SourceRec("bench-notes", "lab", "Bench lab notebook 7, p. 12 (test)")}

    def rec(eps, loss):
        return MaterialRec(key="bench-film", name="Bench film", family="polymer-film", origin="user", values=[
            ValueRec("relative_permittivity", eps, "bench-notes", temperature_K=298.15, frequency_Hz=1e3),
            ValueRec("loss_tangent", loss, "bench-notes", frequency_Hz=1e3)])

    with store.session() as s:
        assert add_materials(s, [rec(3.1, 1e-3)], src) == [
            "new source 'bench-notes' (lab)", "new material 'bench-film' (Bench film, polymer-film) with 2 value(s)"]
    with store.session() as s:
        assert add_materials(s, [rec(3.1, 1e-3)], src) == ["bench-film: unchanged (2 value(s))"]
    before = logical_dump(store.url)
    with store.session() as s:
        planned = add_materials(s, [rec(3.3, 1e-3)], src, dry_run=True)
    assert logical_dump(store.url) == before
    with store.session() as s:
        done = add_materials(s, [rec(3.3, 1e-3)], src, reason="re-measured")
    assert planned == done and len(done) == 1 and "3.1 → 3.3" in done[0]
    eps = [v for v in _material(store, "bench-film").values if v.property == "relative_permittivity"]
    assert sorted((v.value, v.retired_reason) for v in eps) == [(3.1, "re-measured"), (3.3, None)]
    # a catalog value cited to another source is a separate row, never retired by a lab value
    cat = MaterialRec(key="fixture-film", name="Fixture polymer film", family="polymer-film",
                      form="biaxially oriented film",
                      description="A made-up film with a catalog breakdown curve, which imported lab sets must "
                                  "supersede.",
                      values=[ValueRec("loss_tangent", 3e-4, "bench-notes", frequency_Hz=1e3)])
    with store.session() as s:
        assert add_materials(s, [cat], {}) == ["fixture-film: loss_tangent at frequency 1000 Hz: new value 0.0003 "
                                               "(bench-notes)"]
    loss = [v for v in _material(store, "fixture-film").values if v.property == "loss_tangent"]
    assert sorted(v.source.key for v in loss if not v.retired_at) == ["bench-notes", "lab-fixture-handbook"]


def test_add_refuses_a_changed_source(store):
    from db.labdata import add_materials
    from materials.records import SourceRec

    with store.session() as s, pytest.raises(InputError, match="sources are not edited in place"):
        add_materials(s, [], {"lab-fixture-handbook": SourceRec("lab-fixture-handbook", "handbook", "Other")})


def test_read_add_files_uses_sibling_sources(store, tmp_path):
    from db.labdata import read_add_files

    with store.session() as s:
        recs, srcs = read_add_files(s, [EXAMPLES / "ht-film.toml", EXAMPLES / "relaxor-values.csv"])
    assert [r.key for r in recs] == ["demo-ht-copolymer-film", "demo-relaxor-ceramic"]
    assert list(srcs) == ["demo-tallmere-invented"] and srcs["demo-tallmere-invented"].kind == "invented"
    assert recs[0].origin == "lab" and recs[1].origin == "user"


@pytest.mark.postgres
def test_import_round_trip_on_postgresql(pg_url, tmp_path):
    """The same import on PostgreSQL (Core executemany instead of the SQLite driver path), in a retried write."""
    from db.labdata import describe_sets, import_breakdown, import_loop, read_loop_points, read_points
    from db.store import build

    build(pg_url, catalog_dir=LAB_CATALOG, force=True)
    st = open_store(pg_url, create=False)
    try:
        x = _weibull(5000, 640, 11.0, seed=9)
        cens = np.random.default_rng(9).random(5000) < 0.05
        data = read_breakdown(write_set(tmp_path / "pg.csv", x, cens, header={**HEADER, "temperature": "25"}))
        res = st.write(lambda s: import_breakdown(s, data, material_key="fixture-film"))
        lf = write_loop(tmp_path / "pgloop.csv", [0, 100.5, 200.25, 100.125, 0.0], [0, 2.5, 3.75, 2.875, 1.0625])
        loop = read_loop(lf)
        st.write(lambda s: import_loop(s, loop, material_key="fixture-ceramic"))
        with st.session() as s:
            fields, flags, _ = read_points(s, "fixture-film", "pg")
            e, p = read_loop_points(s, "fixture-ceramic", "pgloop")
            sets = describe_sets(s, "fixture-film")["breakdown_sets"]
        assert np.array_equal(fields, data.fields_V_per_m) and np.array_equal(flags, data.censored)
        assert np.array_equal(e, loop.fields_V_per_m) and np.array_equal(p, loop.polarization_C_per_m2)
        assert sets[0]["n"] == 5000 and sets[0]["scale_V_per_m"] == pytest.approx(res.figures["scale_V_per_m"])
        with pytest.raises(InputError, match="already imported"):
            st.write(lambda s: import_breakdown(s, data, material_key="fixture-film"))
    finally:
        st.dispose()
