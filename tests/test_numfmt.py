"""The program's one number formatter and one unit pretty-printer (materials.numfmt)."""

from __future__ import annotations

import math

import pytest
from hypothesis import given
from hypothesis import strategies as st

from materials.numfmt import MISSING, fmt_celsius, fmt_number, fmt_quantity, pretty_unit, to_display


@given(st.floats(allow_nan=False, allow_infinity=False), st.integers(min_value=1, max_value=8))
def test_the_text_holds_the_value_rounded_as_python_rounds_significant_figures(x, digits):
    """Reference: Python's own ``format(x, '.Ng')`` (correctly rounded to N significant figures); whatever the
    notation, the number written is that one."""
    assert float(fmt_number(x, digits)) == float(format(x, f".{digits}g"))


@given(st.floats(min_value=1e-6, max_value=9.9e8) | st.floats(min_value=-9.9e8, max_value=-1e-6))
def test_positional_between_1e_minus_6_and_1e9(x):
    text = fmt_number(x)
    assert "e" not in text
    assert not (("." in text) and text.endswith("0"))  # no trailing zeros after the point


@pytest.mark.parametrize("value,digits,text", [
    (2.5, 4, "2.5"), (73060.0, 4, "73060"), (725060.3, 3, "725000"), (0.0002, 4, "0.0002"),
    (1.447e-05, 4, "0.00001447"), (1.5e-05, 4, "0.000015"), (1.35e7, 3, "13500000"), (9999999.7, 4, "10000000"),
    (1.447e-07, 4, "1.447e-07"), (1.35e9, 3, "1.35e+09"),
    (9.99996, 4, "10"), (-40.0, 4, "-40"), (0.0, 4, "0"), (None, 4, MISSING), (math.nan, 4, MISSING),
    (math.inf, 4, "inf")])
def test_number_examples(value, digits, text):
    assert fmt_number(value, digits) == text


@pytest.mark.parametrize("unit,text", [
    ("J/cm**3", "J/cm³"), ("g/cm**3", "g/cm³"), ("V/um", "V/µm"), ("degC", "°C"), ("ohm m", "Ω·m"),
    ("W/(m K)", "W/(m·K)"), ("J/(kg K)", "J/(kg·K)"), ("cm**2", "cm²"), ("m^2", "m²"), ("uF", "µF"),
    ("kV/cm", "kV/cm"), ("%", "%"), ("", ""), ("1", ""), (None, "")])
def test_unit_examples(unit, text):
    assert pretty_unit(unit) == text


@pytest.mark.parametrize("unit,si", [
    ("J/cm**3", "J/m3"), ("g/cm**3", "kg/m3"), ("V/um", "V/m"), ("degC", "K"), ("ohm m", "ohm m"),
    ("W/(m K)", "W/(m K)"), ("J/(kg K)", "J/(kg K)"), ("cm**2", "m2"), ("uF", "F"), ("kV/cm", "V/m")])
def test_a_pretty_unit_reads_back_as_the_same_unit(unit, si):
    """What a reader sees can be typed back: the program's pint registry reads the pretty form as the original."""
    from materials.units import parse_quantity

    assert parse_quantity(f"3 {pretty_unit(unit)}", si=si) == pytest.approx(parse_quantity(f"3 {unit}", si=si))


def test_quantities_in_display_units():
    """600 V/µm is 6e8 V/m; 0.905 g/cm³ is 905 kg/m³; 2 % is 0.02; 105 °C is 378.15 K (ISO 80000-5)."""
    assert fmt_quantity(6e8, "V/um", "V/m") == "600 V/µm"
    assert fmt_quantity(905.0, "g/cm**3", "kg/m3") == "0.905 g/cm³"
    assert fmt_quantity(0.02, "%", "1", 3) == "2 %"
    assert fmt_quantity(2.2, "", "1") == "2.2"
    assert fmt_quantity(None, "V/um", "V/m") == MISSING
    assert to_display(378.15, "K", "degC") == pytest.approx(105.0)
    assert fmt_celsius(378.15) == "105 °C" and fmt_celsius(None) == MISSING


@pytest.mark.parametrize("value,unit,text", [
    (4.7e-6, "F", "4.7 µF"), (0.005093, "W", "5.09 mW"), (1e4, "Hz", "10 kHz"), (2.689e-2, "m3", "26.9 L"),
    (37.65, "kg", "37.6 kg"), (0.9996, "F", "1 F"), (8.1e-7, "m3", "810 mm³"), (0.5, "J", "500 mJ"),
    (147.3e6, "V/m", "147 V/µm"), (None, "F", MISSING), (0.0, "W", "0 W")])
def test_engineering_prefix_per_value(value, unit, text):
    """Three significant figures with the prefix that puts the number between 1 and 1000 (SI brochure, 9th ed.,
    section 3: prefixes are chosen so that the numerical value lies between 0.1 and 1000)."""
    from materials.numfmt import fmt_eng

    assert fmt_eng(value, unit) == text
