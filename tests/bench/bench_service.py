"""Benchmark: the evaluation of 10,000 films with a ripple spectrum, a thermal path and a service life, side by
side with the same table and target without them (the reference: the engine's plain design).

Goal: within 10× the plain evaluation. The hot spot scans every candidate's heat balance on 2049 temperatures
per harmonic (``materials.thermal.hot_spot``), so this is the cost to watch as tables grow.
Run: ``python tests/bench/bench_service.py`` or with pytest on this file (``-s`` to see the figures).
"""

import dataclasses
import statistics
import time

from materials.records import MaterialData, SourceRef, StoredValue
from materials.table import ValueTable
from ranking.engine import evaluate
from ranking.target import Target

C = 273.15
GOAL_RATIO = 10.0


def table(m=10_000) -> ValueTable:
    src = SourceRef(key="bench", kind="handbook", citation="synthetic benchmark data")
    mats = []
    for i in range(m):
        rows = [("relative_permittivity", 2.2, {"temperature_K": 25 + C}),
                ("relative_permittivity", 2.2, {"temperature_K": 150 + C}),
                ("breakdown_field", 600e6, {"temperature_K": 25 + C, "area_m2": 1e-4}),
                ("breakdown_field", 500e6, {"temperature_K": 150 + C, "area_m2": 1e-4}),
                ("weibull_shape", 12.0, {}), ("max_temperature", 150 + C, {}), ("min_temperature", -55 + C, {}),
                ("loss_tangent", 2e-4, {"temperature_K": 25 + C}),
                ("loss_tangent", 1e-3 * (1 + i % 5), {"temperature_K": 150 + C})]
        mats.append(MaterialData(key=f"m{i}", name=f"m{i}", family="polymer-film", response="linear",
                                 origin="catalog", values=[StoredValue(id=j, property=p, value=v, source=src, **k)
                                                           for j, (p, v, k) in enumerate(rows, 1)]))
    return ValueTable.from_materials(mats)


def run(repeats=3):
    t = table()
    plain = Target(voltage_V=800.0, tmin_K=25 + C, tmax_K=85 + C, energy_J=80.0)
    service = dataclasses.replace(plain, ripple=((60.0, 1e4), (25.0, 2e4)), thermal_resistance_K_per_W=2.0,
                                  series_resistance_ohm=1e-3, life_s=30000 * 3600.0)
    out = {}
    for name, target in (("plain", plain), ("ripple + life", service)):
        times = []
        for _ in range(repeats):
            t0 = time.perf_counter()
            evaluate(t, target)
            times.append(time.perf_counter() - t0)
        out[name] = statistics.median(times)
    return out


def test_service_evaluation_speed():
    r = run()
    print(f"\n10,000 films: plain {r['plain']:.2f} s, ripple + life {r['ripple + life']:.2f} s "
          f"({r['ripple + life'] / r['plain']:.1f}×, goal {GOAL_RATIO:g}×)")


if __name__ == "__main__":
    test_service_evaluation_speed()
