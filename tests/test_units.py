"""Units at the edges: parsing quantities and CLI options into SI, and refusing what cannot be read."""

from __future__ import annotations

import json
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


@pytest.mark.parametrize("text", ["25 degC", "25 °C", "25°C", "25 ° C", "25 ℃", "25℃", "25 celsius", "25C",
                                  "25 C", "25 deg C", "298.15 K", "298.15 kelvin", "77 degF", "77 °F", "77F", "77 F"])
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
    ("25 C", "V", "is not a V quantity"),        # coulomb: C is Celsius only where a temperature is expected
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
                        ("g/cm**3", "kg/m3"), ("cm**2", "m2"), ("J/cm**3", "J/m3"), ("ohm*cm", "ohm m"),
                        ("cm2", "m2"), ("C", "K"), ("F", "K"), ("kVdc", "V"), ("V/mil", "V/m")]))
def test_to_si_and_from_si_are_inverse(x, units):
    unit, si = units
    assert from_si(to_si(x, unit, si), unit, si) == pytest.approx(x, rel=1e-9, abs=1e-9)


_PIECES = st.sampled_from(list("0123456789.eE+- /*^()%°µ²³·Ω℃'\"[]_;") + [
    "V", "kV", "m", "um", "mm", "K", "degC", "g", "cm", "Hz", "ohm", "mil", "nan", "inf", "1e999", "__import__",
    "C", "F", "A", "dc", "rms", "in", "deg"])


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


# Units as engineers type them, each beside the same quantity in pint's own unit names; the reference is the
# program's pint registry converting the pint spelling to SI.
ENGINEER_FORMS = [
    # areas and volumes: a 2 or 3 straight after a length unit is its power
    ("1cm2", "m2", 1, "centimeter ** 2"),
    ("25mm2", "m2", 25, "millimeter ** 2"),
    ("0.5 m2", "m2", 0.5, "meter ** 2"),
    ("4 cm^2", "m2", 4, "centimeter ** 2"),
    ("4 cm²", "m2", 4, "centimeter ** 2"),
    ("3 um2", "m2", 3, "micrometer ** 2"),
    ("2 in2", "m2", 2, "inch ** 2"),
    ("3 mil", "m", 3, "thou"),
    ("3 mil2", "m2", 3, "thou ** 2"),
    ("1.2 g/cm3", "kg/m3", 1.2, "gram / centimeter ** 3"),
    ("5 J/cm3", "J/m3", 5, "joule / centimeter ** 3"),
    # temperatures: C and F are scales where a temperature is expected
    ("85C", "K", 85, "degree_Celsius"),
    ("-40C", "K", -40, "degree_Celsius"),
    ("85 C", "K", 85, "degree_Celsius"),
    ("125°C", "K", 125, "degree_Celsius"),
    ("85 degC", "K", 85, "degree_Celsius"),
    ("85 deg C", "K", 85, "degree_Celsius"),
    ("358 K", "K", 358, "kelvin"),
    ("185F", "K", 185, "degree_Fahrenheit"),
    ("185 °F", "K", 185, "degree_Fahrenheit"),
    # volts and amps with their waveform: the value is taken as given
    ("500Vdc", "V", 500, "volt"),
    ("500 VDC", "V", 500, "volt"),
    ("500 V dc", "V", 500, "volt"),
    ("230Vac", "V", 230, "volt"),
    ("230 Vrms", "V", 230, "volt"),
    ("1.2kVdc", "V", 1.2, "kilovolt"),
    ("1.2 kVpk", "V", 1.2, "kilovolt"),
    ("50 A", "A", 50, "ampere"),
    ("50Arms", "A", 50, "ampere"),
    ("200 µArms", "A", 200, "microampere"),
    # fields
    ("10 kV/mm", "V/m", 10, "kilovolt / millimeter"),
    ("250 V/mil", "V/m", 250, "volt / thou"),
    ("400 MV/m", "V/m", 400, "megavolt / meter"),
    ("400 V/um", "V/m", 400, "volt / micrometer"),
    ("400 V/µm", "V/m", 400, "volt / micrometer"),
    ("100 kV/cm", "V/m", 100, "kilovolt / centimeter"),
    # capacitance, energy, frequency
    ("500uF", "F", 500, "microfarad"),
    ("500 µF", "F", 500, "microfarad"),
    ("220 pF", "F", 220, "picofarad"),
    ("80 kJ", "J", 80, "kilojoule"),
    ("1e16 ohm cm", "ohm m", 1e16, "ohm * centimeter"),
    ("1e16 Ω·m", "ohm m", 1e16, "ohm * meter"),
    ("1.2 g/cm³", "kg/m3", 1.2, "gram / centimeter ** 3"),
    ("10kHz", "Hz", 10, "kilohertz"),
]


def _pint_si(number, pint_unit, si):
    return registry().Quantity(float(number), pint_unit).to(SI_UNITS[si]).magnitude


@pytest.mark.parametrize("text, si, number, pint_unit", ENGINEER_FORMS)
def test_engineer_forms_agree_with_pint(text, si, number, pint_unit):
    assert parse_quantity(text, si=si) == pytest.approx(_pint_si(number, pint_unit, si), rel=1e-12)


def test_every_rewrite_is_exercised_by_a_form_checked_against_pint():
    from materials.units import _ALIASES, _TEMPERATURE_LETTERS

    texts = [t for t, *_ in ENGINEER_FORMS]
    for pattern, _ in _ALIASES:
        assert any(pattern.search(t) for t in texts), pattern.pattern
    for letter in _TEMPERATURE_LETTERS:
        assert any(t.endswith(letter) and si == "K" for t, si, *_ in ENGINEER_FORMS), letter


def test_c_and_f_stay_coulomb_and_farad_outside_temperatures():
    assert parse_quantity("2 C/m2", si="C/m2") == pytest.approx(_pint_si(2, "coulomb / meter ** 2", "C/m2"))
    assert parse_quantity("5 F", si="F") == 5.0


# Options as typed on a command line or in a target file, each a form of ENGINEER_FORMS. These are the frequent
# forms: all of them are read from the table of common units, without importing pint.
OPTION_FORMS = [
    ("1cm2", "electrode_area"), ("25mm2", "electrode_area"), ("4 cm²", "electrode_area"),
    ("0.5 m2", "capacitor_area"),
    ("85C", "temperature"), ("-40C", "temperature"), ("85 C", "temperature"), ("125°C", "temperature"),
    ("185F", "temperature"), ("358 K", "temperature"),
    ("500Vdc", "voltage"), ("230 Vrms", "voltage"), ("1.2kVdc", "voltage"),
    ("10 kV/mm", "field"), ("250 V/mil", "field"), ("400 V/µm", "field"), ("100 kV/cm", "field"),
    ("3 mil", "thickness"), ("5 J/cm3", "energy_density"), ("10kHz", "frequency"), ("50Arms", "current"),
]


def test_option_forms_agree_with_pint_and_are_read_without_pint():
    code = ("import json, sys; from materials.units import parse_option as p; "
            f"print(json.dumps([[p(x, k) for x, k in {OPTION_FORMS!r}], 'pint' in sys.modules]))")
    out = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True).stdout
    values, pint_imported = json.loads(out)
    assert pint_imported is False
    pint_spelling = {text: (number, pint_unit) for text, _, number, pint_unit in ENGINEER_FORMS}
    for (text, kind), value in zip(OPTION_FORMS, values, strict=True):
        assert value == pytest.approx(_pint_si(*pint_spelling[text], CLI_DEFAULTS[kind][1]), rel=1e-12), text


@pytest.mark.parametrize("text, kind, message", [
    ("85C", "voltage", r"^--voltage: unit 'C' is not a V quantity \(it is coulomb\)$"),
    ("185F", "voltage", r"^--voltage: unit 'F' is not a V quantity \(it is farad\)$"),
    ("1cm2", "thickness", r"^--thickness: unit 'cm2' is not a m quantity \(it is centimeter \*\* 2\)$"),
    ("10 kV/mm", "thickness", r"^--thickness: unit 'kV/mm' is not a m quantity"),
    ("25 mm2", "field", r"^--field: unit 'mm2' is not a V/m quantity"),
    ("500Vdc", "temperature", r"^--temperature: unit 'Vdc' is not a K quantity \(it is volt\)$"),
    ("50Arms", "voltage", r"^--voltage: unit 'Arms' is not a V quantity \(it is ampere\)$"),
    ("85 c", "temperature", r"^--temperature: unit 'c' is not a K quantity \(it is speed_of_light\)$"),
    ("230 Vpp", "voltage", r"^--voltage: unknown unit 'Vpp'$"),            # peak-to-peak is not a suffix dropped
    ("5 m23", "electrode_area", r"^--electrode_area: unknown unit 'm23'$"),
])
def test_wrong_dimension_or_ambiguous_input_names_the_option(text, kind, message):
    with pytest.raises(UnitError, match=message):
        parse_option(text, kind, name=f"--{kind}")


def test_a_long_unit_is_refused_before_pint_sees_it(monkeypatch):
    import materials.units as units

    def no_pint(*args, **kwargs):
        raise AssertionError("pint was asked about an over-long unit")

    monkeypatch.setattr(units, "_pint_factor", no_pint)
    for text in ("1 " + "x" * 100_000, "1 kV" + "/m*m" * 25_000, "1 x" + " " * 100_000 + "x"):
        with pytest.raises(UnitError, match=r"^--voltage: unit '.{40}…' \(\d+ characters\) is longer than 100 "
                                            r"characters$") as refused:
            parse_option(text, "voltage", name="--voltage")
        assert len(str(refused.value)) < 150
    with pytest.raises(UnitError, match=r"^unit 'V{40}…' \(101 characters\) is longer than 100 characters$"):
        to_si(1.0, "V" * 101, "V")
    with pytest.raises(UnitError, match=r"^--voltage: cannot read 'a{40}…' \(100000 characters\) as a number"):
        parse_option("a" * 100_000, "voltage", name="--voltage")


def test_a_unit_of_the_longest_length_is_read():
    unit = "kV" + " " * 95 + "/mm"
    assert len(unit) == 100
    assert to_si(1.0, unit, "V/m") == pytest.approx(1e6)
    with pytest.raises(UnitError, match="longer than 100 characters"):
        to_si(1.0, unit + " ", "V/m")
