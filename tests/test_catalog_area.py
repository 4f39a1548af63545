"""Breakdown rows and the weakest-link law: a value that can be carried to another electrode area states its area,
or the engine's assumed test area applies and says so.

Weakest-link scaling E2 = E1·(A1/A2)^(1/β) (IEEE Std 930 / IEC 62539) needs the test area A1 of each solid's breakdown
value. Gases and liquids are never area-scaled (their strength is set by gap and pressure), so they are left out.
"""

from __future__ import annotations

import re

import pytest

from materials.catalog_io import load_catalog
from materials.priors import TEST_AREA, assumed_area_note

FLUIDS = ("gas", "liquid")
WEIBULL_WORDS = re.compile(r"weibull|63\.2 %|characteristic", re.I)


@pytest.fixture(scope="module")
def catalog():
    sources, materials = load_catalog()
    return sources, materials


def breakdown_rows(materials):
    for m in materials:
        if m.family in FLUIDS:
            continue
        for v in m.values:
            if v.property == "breakdown_field":
                yield m, v


def test_weibull_scales_state_their_area_or_say_it_is_missing(catalog):
    """A row that calls itself a Weibull scale (the value area scaling uses) carries area_m2, or its note says the
    area was not stated, so the engine's assumed area is the only one applied."""
    _, materials = catalog
    for m, v in breakdown_rows(materials):
        if WEIBULL_WORDS.search(v.note) and v.area_m2 is None:
            assert re.search(r"area[^.]*not|not[^.]*area|no single test area", v.note, re.I), (m.key, v.note)


def test_stated_areas_are_test_electrodes(catalog):
    """Stated areas are laboratory electrodes (0.01-100 cm²), never a capacitor's active area."""
    _, materials = catalog
    for m, v in breakdown_rows(materials):
        if v.area_m2 is not None:
            assert 1e-6 <= v.area_m2 <= 1e-2, (m.key, v.area_m2)


def test_rows_without_area_fall_back_to_the_marked_prior(catalog):
    """Every solid without a stated area is scaled from the common-practice test area, whose words say 'assumed'."""
    _, materials = catalog
    missing = [m.key for m, v in breakdown_rows(materials) if v.area_m2 is None]
    assert missing  # most published strengths do not state their electrodes
    assert TEST_AREA.low <= TEST_AREA.typical <= TEST_AREA.high
    assert "assumed" in assumed_area_note(TEST_AREA.typical)
    assert TEST_AREA.source.startswith("common-practice")


def test_astm_d149_quarter_inch_electrode_area(catalog):
    """ASTM D149 film rows tested between 6.35 mm (1/4 in) electrodes carry π(3.175 mm)² = 0.3167 cm²."""
    _, materials = catalog
    quarter = [v for m, v in breakdown_rows(materials) if "6.35 mm" in v.note]
    assert quarter
    for v in quarter:
        assert v.area_m2 == pytest.approx(3.14159265 * 3.175e-3 ** 2, rel=1e-3)
