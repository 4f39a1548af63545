"""Units at the edges: parsing quantities and CLI options into SI, and refusing what cannot be read."""

from __future__ import annotations

import math
import subprocess
import sys

import pytest
import scipy.constants as sc
from hypothesis import given, settings, strategies as st

from materials.errors import InputError, UnitError
from materials.units import (CLI_DEFAULTS, SI_UNITS, celsius_to_kelvin, from_si, kelvin_to_celsius, parse_option,
                             parse_quantity, registry, to_si)


@pytest.mark.parametrize("text, si, expected", [
    ("800V", "V", 800.0),
    ("800 V", "V", 800.0),
    ("0.8 kV", "V", 800.0),
    ("1 MV/m", "V/m", 1e6),
    ("400 V/um", "V/m", 4e8),
    ("400 V/µm", "V/m", 4e8),   # micro sign U+00B5
    ("400 V/μm", "V/m", 4e8),   # Greek mu U+03BC
    ("2.5 kV/mm", "V/m", 2.5e6),
    ("1.5 MV/cm", "V/m", 1.5e8),
    ("1 kHz", "Hz", 1e3),
    ("3 um", "m", 3e-6),
    ("1 cm²", "m2", 1e-4),
    ("1 cm^2", "m2", 1e-4),
    ("1 m**2", "m2", 1.0),
    ("1.2 g/cm^3", "kg/m3", 1200.0),
    ("1.2 g/cm³", "kg/m3", 1200.0),
    ("5 J/cm^3", "J/m3", 5e6),
    ("1e16 ohm*cm", "ohm m", 1e14),
    ("1e16 Ω·cm", "ohm m", 1e14),
    ("1e16 Ω·m", "ohm m", 1e16),
    ("0.2 W/(m K)", "W/(m K)", 0.2),
    ("0.2 W/m/K", "W/(m K)", 0.2),
    ("5 %", "1", 0.05),
    ("7", "1", 7.0),
    ("1e-3", "1", 1e-3),
])
def test_parse_quantity_to_si(text, si, expected):
    assert parse_quantity(text, si=si) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("text", ["25 degC", "25 °C", "25°C", "25 ° C", "25 ℃", "25℃", "25 celsius",
                                  "298.15 K", "298.15 kelvin", "77 degF", "77 °F"])
def test_temperatures_with_offsets(text):
    assert parse_quantity(text, si="K") == pytest.approx(298.15, abs=1e-9)


def test_temperature_conversions_agree_with_scipy():
    # Reference: scipy.constants.convert_temperature (CODATA-independent unit arithmetic).
    for c in (-55.0, -40.0, 0.0, 25.0, 125.0, 200.0):
        assert parse_quantity(f"{c} degC", si="K") == pytest.approx(sc.convert_temperature(c, "C", "K"))
    for f in (-40.0, 32.0, 212.0):
        assert parse_quantity(f"{f} degF", si="K") == pytest.approx(sc.convert_temperature(f, "F", "K"))
    assert celsius_to_kelvin(25.0) == pytest.approx(298.15)
    assert kelvin_to_celsius(398.15) == pytest.approx(125.0)


def test_volts_per_mil_agrees_with_scipy_mil():
    # Callister's Table 18.5 prints strength in V/mil; scipy.constants.mil is the inch/1000 in metres.
    assert parse_quantity("250 V/mil", si="V/m") == pytest.approx(250 / sc.mil)
    assert parse_quantity("250 V/mil", si="V/m") == pytest.approx(9.84e6, rel=1e-3)


@pytest.mark.parametrize("text, si, why", [
    ("800", "V", "has no unit"),                 # a bare number for a dimensioned quantity and no default
    ("700", "V/m", "has no unit"),
    ("800 kg", "V", "is not a V quantity"),      # wrong dimension
    ("25 C", "K", "is not a K quantity"),        # coulomb, not Celsius: a clear refusal, not a guess
    ("1 degC", "V/m", "is not a V/m quantity"),
    ("800 foo", "V", "unknown unit"),
    ("800 v", "V", "unknown unit"),
    ("abc", "V", "cannot read"),
    ("", "V", "cannot read"),
    ("--5 V", "V", "cannot read"),
    ("nan V", "V", "cannot read"),
    ("1e999", "1", "not a finite number"),
    ("1e308 kV", "V", "too large"),
    ("-300 degC", "K", "below absolute zero"),
    ("-1 K", "K", "below absolute zero"),
    ("400 V/um extra", "V/m", "unknown unit"),
])
def test_refusals_are_unit_errors(text, si, why):
    with pytest.raises(UnitError, match=why):
        parse_quantity(text, si=si, name="q")


def test_unit_error_is_an_input_error_with_the_name():
    with pytest.raises(InputError, match=r"^voltage: "):
        parse_quantity("800 kg", si="V", name="voltage")


def test_numbers_pass_through_with_default_unit():
    assert parse_quantity(800, si="V", default_unit="V") == 800.0
    assert parse_quantity(3, si="m", default_unit="um") == pytest.approx(3e-6)
    with pytest.raises(UnitError):
        parse_quantity(float("nan"), si="1")
    with pytest.raises(UnitError):
        parse_quantity(700, si="V/m")


@pytest.mark.parametrize("kind, bare, with_unit, expected", [
    # Defaults documented in DESIGN.md: voltage V, temperature °C, energy J, energy density J/cm³, thickness µm,
    # electrode area cm², capacitor area m², field V/µm, frequency Hz.
    ("voltage", "800", "0.8 kV", 800.0),
    ("temperature", "125", "398.15 K", 398.15),
    ("energy", "5", "5000 mJ", 5.0),
    ("energy_density", "5", "5e6 J/m^3", 5e6),
    ("thickness", "3", "3e-6 m", 3e-6),
    ("electrode_area", "1", "1e-4 m^2", 1e-4),
    ("capacitor_area", "2", "20000 cm^2", 2.0),
    ("field", "400", "400 MV/m", 4e8),
    ("frequency", "1000", "1 kHz", 1e3),
])
def test_parse_option_defaults(kind, bare, with_unit, expected):
    assert parse_option(bare, kind) == pytest.approx(expected, rel=1e-12)
    assert parse_option(with_unit, kind) == pytest.approx(expected, rel=1e-12)


def test_parse_option_wrong_dimension_names_the_option():
    with pytest.raises(UnitError, match="^--voltage: unit 'K'"):
        parse_option("300 K", "voltage", name="--voltage")


def test_every_cli_default_is_in_its_dimension():
    for kind, (unit, si) in CLI_DEFAULTS.items():
        assert si in SI_UNITS
        assert math.isfinite(to_si(1.0, unit, si)), kind


def test_one_registry():
    assert registry() is registry()
    q = registry().Quantity(1.0, "kV") / registry().Quantity(1.0, "mm")
    assert q.to("V/m").magnitude == pytest.approx(1e6)


@settings(max_examples=60, deadline=None)
@given(st.floats(min_value=-1e12, max_value=1e12, allow_nan=False),
       st.sampled_from([("V/um", "V/m"), ("kV/mm", "V/m"), ("degC", "K"), ("degF", "K"), ("um", "m"),
                        ("g/cm**3", "kg/m3"), ("cm**2", "m2"), ("J/cm**3", "J/m3"), ("ohm*cm", "ohm m")]))
def test_to_si_and_from_si_are_inverse(x, units):
    unit, si = units
    assert from_si(to_si(x, unit, si), unit, si) == pytest.approx(x, rel=1e-9, abs=1e-9)


_PIECES = st.sampled_from(list("0123456789.eE+- /*^()%°µ²³·Ω℃'\"[]_;") + [
    "V", "kV", "m", "um", "mm", "K", "degC", "g", "cm", "Hz", "ohm", "mil", "nan", "inf", "1e999", "__import__"])


@settings(max_examples=300, deadline=None)
@given(st.lists(_PIECES, max_size=10).map("".join), st.sampled_from(sorted(SI_UNITS)))
def test_any_text_gives_a_finite_si_number_or_a_unit_error(text, si):
    try:
        v = parse_quantity(text, si=si)
    except UnitError:
        return
    assert isinstance(v, float) and math.isfinite(v)


def test_importing_units_does_not_import_pint():
    code = "import sys, materials.units; print('pint' in sys.modules)"
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert out.strip() == "False"


def test_common_unit_table_agrees_with_pint():
    """Every unit looked up without pint converts exactly as pint itself does (pint as the reference)."""
    from materials.units import _COMMON, _pint_factor

    for (si_key, text), (scale, offset) in _COMMON.items():
        p_scale, p_offset = _pint_factor(text, si_key)
        assert scale == pytest.approx(p_scale, rel=1e-12), (si_key, text)
        assert offset == pytest.approx(p_offset, rel=1e-12, abs=1e-12), (si_key, text)


def test_a_shortlist_target_parses_without_pint():
    import subprocess
    import sys

    code = ("import sys; from materials.units import parse_option as p; "
            "[p(x, k) for x, k in (('800 V', 'voltage'), ('-40', 'temperature'), ('125 degC', 'temperature'), "
            "('80 J', 'energy'), ('1 J/cm^3', 'energy_density'), ('2.5 um', 'thickness'), ('4 cm^2', "
            "'electrode_area'), ('10 kHz', 'frequency'))]; print('pint' in sys.modules)")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    assert out.strip() == "False"
