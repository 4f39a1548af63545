"""The column-wise criteria (ranking.columnar) against the per-material rules (ranking.criteria.evaluate).

Both paths must reach the same verdict and the same numbers (to rounding) for every material the column-wise
path covers; a shortlist run on a table must equal one that evaluates every material on its own.
"""

from __future__ import annotations

import numpy as np
import pytest

from materials.records import MaterialData, SourceRef, StoredValue
from materials.table import ValueTable
from ranking.columnar import evaluate_columns, explain
from ranking.criteria import CRITERIA, evaluate
from ranking.target import Target

C = 273.15
KINDS = ("handbook", "paper", "web", "recollection", "invented", "standard", "common-practice", "lab")


def _random_material(rng, i: int) -> MaterialData:
    """An invented material with the irregularities stores hold: duplicates, unstated conditions, gaps."""
    rows = []

    def add(prop, value, **cond):
        kind = KINDS[rng.integers(len(KINDS) - (0 if rng.random() < 0.15 else 1))]  # lab rows now and then
        if rng.random() < 0.15 and "frequency_Hz" not in cond:
            cond["frequency_Hz"] = float(rng.choice([50.0, 500.0, 1e3, 2e3, 1e5]))
        rows.append((prop, float(value), kind, cond))

    eps = rng.uniform(2, 12)
    if rng.random() > 0.05:
        temps = np.sort(rng.choice([-55, -40, 0, 25, 60, 85, 105, 125, 150], size=rng.integers(1, 5), replace=False))
        for t in temps:
            lo, hi = (eps * rng.uniform(0.85, 1), eps * rng.uniform(1, 1.15)) if rng.random() < 0.6 else (None, None)
            add("relative_permittivity", eps * rng.uniform(0.9, 1.1), temperature_K=t + C, low=lo, high=hi)
        if rng.random() < 0.2:  # a duplicate at one temperature, from another source
            add("relative_permittivity", eps * rng.uniform(0.9, 1.1), temperature_K=temps[0] + C)
        if rng.random() < 0.15:  # a figure with no temperature
            add("relative_permittivity", eps)
    ebd = rng.uniform(100e6, 800e6)
    if rng.random() > 0.05:
        for t in np.sort(rng.choice([-40, 25, 70, 85, 100, 125], size=rng.integers(1, 4), replace=False)):
            cond = {"temperature_K": t + C}
            if rng.random() < 0.7:
                cond["area_m2"] = float(rng.choice([1e-5, 1e-4, 2e-4]))
            if rng.random() < 0.3:
                cond["thickness_m"] = float(rng.choice([3e-6, 10e-6, 50e-6]))
            if rng.random() < 0.5:
                cond["low"], cond["high"] = 0.9 * ebd, 1.1 * ebd
            add("breakdown_field", ebd * rng.uniform(0.6, 1.1), **cond)
        if rng.random() < 0.25:
            add("breakdown_field", ebd * rng.uniform(0.8, 1.2), temperature_K=25 + C,
                thickness_m=float(rng.choice([5e-6, 20e-6])), area_m2=1e-4)
        if rng.random() < 0.1:
            add("breakdown_field", ebd)
    if rng.random() < 0.7:
        add("weibull_shape", rng.uniform(1.5, 25), **({"temperature_K": 25 + C} if rng.random() < 0.3 else {}))
    if rng.random() < 0.2:
        add("weibull_shape", rng.uniform(4, 15), temperature_K=100 + C)
    if rng.random() > 0.05:
        add("max_temperature", C + rng.choice([85, 105, 125, 125, 150, 200]))
    if rng.random() > 0.05:
        add("min_temperature", C + rng.choice([-65, -55, -55, -40, -25]))
    if rng.random() < 0.8:
        for t in rng.choice([-40, 25, 85, 125], size=rng.integers(1, 3), replace=False):
            add("loss_tangent", rng.uniform(1e-4, 8e-3), temperature_K=t + C,
                **({"low": 5e-5, "high": 3e-2} if rng.random() < 0.3 else {}))
    if rng.random() < 0.8:
        add("density", rng.uniform(800, 6000))
    if rng.random() < 0.7:
        add("min_thickness", rng.uniform(0.5e-6, 30e-6))
    if rng.random() < 0.8:
        add("self_healing", float(rng.integers(0, 2)))
    values = []
    order = rng.permutation(len(rows))
    for rid, j in enumerate(order, 1):
        prop, value, kind, cond = rows[j]
        src = SourceRef(key=f"{kind}-{rng.integers(3)}", kind=kind, citation=f"an invented {kind} source")
        values.append(StoredValue(id=int(rid), property=prop, value=value, source=src, **cond))
    fam = ("polymer-film", "ceramic-class-1", "glass")[i % 3]
    return MaterialData(key=f"m{i:03d}", name=f"invented {i}", family=fam, values=values)


def _targets():
    yield Target(voltage_V=800.0, tmin_K=-40 + C, tmax_K=105 + C, energy_J=80.0, failure_probability=1e-3,
                 assume_defaults=True)
    yield Target(voltage_V=800.0, tmin_K=-40 + C, tmax_K=105 + C, energy_J=80.0, failure_probability=1e-3,
                 assume_defaults=True, segment_area_m2=4e-4, margin=1.2)
    yield Target(voltage_V=450.0, tmin_K=-55 + C, tmax_K=85 + C, failure_probability=0.01)
    yield Target(voltage_V=1200.0, tmin_K=0 + C, tmax_K=125 + C, area_m2=0.5, max_loss_tangent=5e-3,
                 assume_defaults=True)
    yield Target(voltage_V=600.0, tmin_K=25 + C, tmax_K=25 + C, energy_density_J_per_m3=1.5e6, energy_J=5.0,
                 assume_defaults=True, families=("polymer-film", "glass"))
    yield Target(voltage_V=400.0, tmin_K=-40 + C, tmax_K=85 + C, energy_J=1.0, thicknesses_m=(2.5e-6, 6e-6),
                 assume_defaults=True)


def _compare(materials, target):
    table = ValueTable.from_materials(materials)
    covered = 0
    for t in list(target.thicknesses_m) or [None]:
        cols = evaluate_columns(table, target, thickness_m=t)
        for i, md in enumerate(materials):
            if cols.slow[i]:
                continue
            covered += 1
            e = evaluate(md, target, thickness_m=t)
            assert bool(cols.ok[i]) == e.ok, (md.key, t, e.reasons)
            x = explain(cols, i)
            assert x.reasons == e.reasons, md.key
            if not e.ok:
                continue
            assert x.binding == e.binding, md.key
            assert sorted(set(x.flags)) == sorted(set(e.flags)), md.key
            assert {k: v for k, v in x.sources.items() if v} == {k: v for k, v in e.sources.items() if v}, md.key
            assert x.details.keys() - {"sizing"} == e.details.keys() - {"sizing"}, md.key
            for k, v in e.details.items():
                if k != "sizing":
                    assert x.details[k] == (v if v is None else pytest.approx(v, rel=1e-12)), (md.key, k)
            for name in CRITERIA:
                got = cols.values[name][i]
                if name not in e.values:
                    assert np.isnan(got), (md.key, name)
                    continue
                for d_cols, d_e in ((cols.values, e.values), (cols.low, e.low), (cols.high, e.high)):
                    assert d_cols[name][i] == pytest.approx(d_e[name], rel=1e-12, abs=1e-300), (md.key, name)
    return covered


@pytest.mark.parametrize("seed", range(6))
def test_random_materials_same_verdicts_and_numbers(seed):
    rng = np.random.default_rng(seed)
    mats = [_random_material(rng, i) for i in range(60)]
    for target in _targets():
        assert _compare(mats, target) == 60 * max(1, len(target.thicknesses_m))


def test_catalog_materials_same_verdicts_and_numbers(mem_store):
    from db.query import load_table

    with mem_store.session() as s:
        table = load_table(s)
    mats = table.materials()
    covered = sum(_compare(mats, t) for t in _targets())
    assert covered > 0


def test_bias_curves_and_nonlinear_materials_go_per_material(make_material):
    base = [("relative_permittivity", 3.0, "handbook", {"temperature_K": 298.15}),
            ("breakdown_field", 5e8, "handbook", {"temperature_K": 298.15})]
    mats = [make_material("plain", base),
            make_material("lab", base + [("breakdown_field", 4e8, "lab", {"temperature_K": 298.15})]),
            make_material("bias", base + [("relative_permittivity", 2.5, "paper", {"field_V_per_m": 1e7})]),
            make_material("freq", base + [("loss_tangent", 1e-3, "paper", {"frequency_Hz": 1e3})]),
            make_material("nonlinear", base, response="nonlinear")]
    cols = evaluate_columns(ValueTable.from_materials(mats), next(_targets()))
    assert cols.slow.tolist() == [False, False, True, False, True]


def test_a_dense_temperature_sweep_goes_per_material(make_material):
    """A property with more than MAX_POINTS temperatures would make the padded arrays huge: left per material."""
    from ranking.columnar import MAX_POINTS

    sweep = [("relative_permittivity", 3.0 - i * 1e-3, "paper", {"temperature_K": 200.0 + i})
             for i in range(MAX_POINTS + 1)]
    rest = [("breakdown_field", 5e8, "handbook", {"temperature_K": 298.15}), ("max_temperature", 420.0, "handbook"),
            ("min_temperature", 200.0, "handbook")]
    mats = [make_material("dense", sweep + rest), make_material("sparse", sweep[:MAX_POINTS] + rest)]
    target = Target(voltage_V=400.0, tmin_K=233.15, tmax_K=358.15, energy_J=1.0, assume_defaults=True)
    cols = evaluate_columns(ValueTable.from_materials(mats), target)
    assert cols.slow.tolist() == [True, False]
    assert _compare(mats, target) == 1


def test_shortlist_on_a_table_equals_the_per_material_run(mem_store, monkeypatch):
    """The ranking from the column-wise path equals the one from evaluating each material on its own."""
    import ranking.columnar as col
    from db.query import load_table
    from ranking.shortlist import shortlist

    rng = np.random.default_rng(7)
    mats = [_random_material(rng, i) for i in range(80)]
    with mem_store.session() as s:
        mats += load_table(s).materials()
    real = col.evaluate_columns

    def all_slow(tab, tgt, *, thickness_m=None):
        out = real(tab, tgt, thickness_m=thickness_m)
        out.slow[:] = True
        out.ok[:] = False
        return out

    for target in _targets():
        fast = shortlist(mats, target, draws=0)
        with monkeypatch.context() as mp:
            mp.setattr(col, "evaluate_columns", all_slow)
            slow = shortlist(mats, target, draws=0)
        assert fast["counts"] == slow["counts"]
        assert [r["label"] for r in fast["ranked"]] == [r["label"] for r in slow["ranked"]]
        assert fast["excluded"] == slow["excluded"]
        for a, b in zip(fast["ranked"], slow["ranked"]):
            assert a["score"] == pytest.approx(b["score"], rel=1e-9)
            for k in ("flags", "binding", "sources", "versus_winner", "dominated_by", "pareto"):
                assert a[k] == b[k], (a["label"], k)
            for n, v in a["criteria"].items():
                assert v == pytest.approx(b["criteria"][n], rel=1e-12)


def _with_bias_and_odd_frequencies(rng, m: MaterialData) -> MaterialData:
    """Add what the reference lookup must step over: DC-bias rows, zero frequencies, bias-only properties."""
    extra = []
    if rng.random() < 0.5:
        extra.append(StoredValue(id=1000, property="relative_permittivity", value=1.5, field_V_per_m=1e7,
                                 temperature_K=298.15, source=SourceRef("paper-x", "paper", "bias paper")))
    if rng.random() < 0.3:
        extra.append(StoredValue(id=1001, property="loss_tangent", value=5e-3, frequency_Hz=0.0,
                                 source=SourceRef("paper-x", "paper", "bias paper")))
    if rng.random() < 0.3:  # a property known only under bias
        extra.append(StoredValue(id=1002, property="recoverable_energy_density", value=2e6, field_V_per_m=2e8,
                                 source=SourceRef("paper-x", "paper", "bias paper")))
    return MaterialData(key=m.key, name=m.name, family=m.family, values=m.values + extra)


def test_reference_values_equal_the_per_material_lookup(mem_store):
    from db.query import load_table
    from materials.lookup import reference_value
    from materials.lookup_columns import reference_values

    rng = np.random.default_rng(11)
    mats = [_with_bias_and_odd_frequencies(rng, _random_material(rng, i)) for i in range(200)]
    with mem_store.session() as s:
        mats += load_table(s).materials()
    table = ValueTable.from_materials(mats)
    props = sorted({v.property for m in mats for v in m.values})
    got = reference_values(table, props)
    for i, m in enumerate(mats):
        for p in props:
            want = reference_value(m, p)
            if want is None:
                assert np.isnan(got[p][i]), (m.key, p)
            else:
                assert got[p][i] == pytest.approx(want, rel=1e-15, abs=0), (m.key, p)


def _old_summary(m) -> dict:
    """The catalog listing row as it was computed per material."""
    from materials.lookup import reference_value

    def ref(p):
        return reference_value(m, p)

    return {"key": m.key, "name": m.name, "family": m.family, "form": m.form, "origin": m.origin,
            "response": m.response, "relative_permittivity": ref("relative_permittivity"),
            "loss_tangent": ref("loss_tangent"), "breakdown_field_V_per_m": ref("breakdown_field"),
            "min_temperature_K": ref("min_temperature"), "max_temperature_K": ref("max_temperature"),
            "source_kinds": sorted({v.source.kind for v in m.values})}


@pytest.mark.parametrize("family, where", [
    (None, None), ("polymer-film", None), (None, "relative_permittivity > 3 and max_temperature >= 125 degC"),
    (None, "not has loss_tangent or family = gas"), (None, "breakdown_field > 300 V/um and response = linear"),
    ("ceramic-class-2", "relative_permittivity > 1000"),
])
def test_catalog_listing_equals_the_per_material_listing(mem_store, family, where):
    from db.query import list_materials, summaries

    with mem_store.session() as s:
        old = [_old_summary(m) for m in list_materials(s, family=family, where=where)]
        new = summaries(s, family=family, where=where)
    assert new == old


def test_materials_without_values_and_empty_lists(make_material):
    """No value at all in the table (or no material): verdicts with reasons, not an index error."""
    from materials.lookup_columns import reference_values
    from ranking.shortlist import shortlist

    target = next(_targets())
    assert shortlist([], target)["counts"] == {"ranked": 0, "excluded": 0}
    bare = make_material("bare", [])
    res = shortlist([bare], target)
    assert res["counts"] == {"ranked": 0, "excluded": 1}
    assert "relative_permittivity missing" in res["excluded"][0]["reasons"]
    one = make_material("one", [("density", 905.0, "handbook")])
    res = shortlist([bare, one], target)
    assert [e["key"] for e in res["excluded"]] == ["bare", "one"]
    refs = reference_values(ValueTable.from_materials([bare, one]), ["density", "loss_tangent"])
    assert np.isnan(refs["density"][0]) and refs["density"][1] == 905.0 and np.isnan(refs["loss_tangent"]).all()
