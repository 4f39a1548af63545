"""Parsing of lab files (materials.labfiles): breakdown series, loops and flat value tables, SI out."""

from __future__ import annotations

import hashlib
import math

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from lab_support import EXAMPLES, LAB_CATALOG, write_loop, write_set
from materials.errors import InputError
from materials.labfiles import RETURN_FRACTION, read_breakdown, read_loop, read_value_table


def test_header_block_and_units_to_si(tmp_path):
    f = write_set(tmp_path / "s.csv", [600, 620.5, 640], [0, 0, 1],
                  header={"label": "series 1", "thickness": "3.1", "area": "0.5", "temperature": "105",
                          "ramp": "0.5 kV/s", "waveform": "AC", "operator": "A. Person", "lab": "Bench 2",
                          "date": "2024-05-01"})
    b = read_breakdown(f)
    c = b.conditions
    # bare numbers take the CLI defaults: µm, cm², °C, V/s (DESIGN.md "Units")
    assert c.label == "series 1"
    assert c.thickness_m == pytest.approx(3.1e-6)
    assert c.area_m2 == pytest.approx(0.5e-4)
    assert c.temperature_K == pytest.approx(378.15)
    assert c.ramp_V_per_s == pytest.approx(500.0)
    assert (c.waveform, c.operator, c.lab, c.date, c.kind) == ("ac", "A. Person", "Bench 2", "2024-05-01", "lab")
    assert b.fields_V_per_m.tolist() == pytest.approx([600e6, 620.5e6, 640e6], rel=1e-15)
    assert b.censored.tolist() == [False, False, True]
    assert (b.n, b.n_censored) == (3, 1)
    assert b.sha256 == hashlib.sha256(f.read_bytes()).hexdigest()
    assert c.origin["thickness"] == "header line 2"


def test_options_win_over_header(tmp_path):
    f = write_set(tmp_path / "s.csv", [600, 620, 640], header={"thickness": "3 um", "temperature": "25"})
    b = read_breakdown(f, {"thickness": 4e-6, "label": "from option", "temperature": None})
    assert b.conditions.thickness_m == 4e-6
    assert b.conditions.origin["thickness"] == "option"
    assert b.conditions.temperature_K == pytest.approx(298.15)
    assert b.conditions.label == "from option"


def test_label_defaults_to_file_stem(tmp_path):
    b = read_breakdown(write_set(tmp_path / "run-7.csv", [600, 620, 640]))
    assert b.conditions.label == "run-7"


@pytest.mark.parametrize("unit,factor", [("kV/mm", 1e6), ("MV/m", 1e6), ("kV/cm", 1e5), ("V/mil", 1 / 25.4e-6)])
def test_field_units(tmp_path, unit, factor):
    # unit definitions: 1 mil = 25.4 µm (NIST SP 811, Appendix B); 1 kV/mm = 1 MV/m = 1 V/µm
    b = read_breakdown(write_set(tmp_path / "s.csv", [300, 310, 320], unit=unit))
    assert b.fields_V_per_m.tolist() == pytest.approx([300 * factor, 310 * factor, 320 * factor], rel=1e-12)


def test_voltage_with_thickness_per_specimen(tmp_path):
    f = tmp_path / "v.csv"
    f.write_text("specimen,voltage [kV],thickness [um]\nA,1.8,3.0\nB,2.1,3.5\nC,1.5,2.5\n")
    b = read_breakdown(f)
    assert b.fields_V_per_m.tolist() == pytest.approx([600e6, 600e6, 600e6])
    assert b.thickness_m.tolist() == pytest.approx([3e-6, 3.5e-6, 2.5e-6])
    assert b.conditions.thickness_m == pytest.approx(3e-6)  # the set's thickness: the mean
    assert b.conditions.origin["thickness"] == "mean of the thickness column"


def test_voltage_with_set_thickness_option(tmp_path):
    f = tmp_path / "v.csv"
    f.write_text("voltage [V]\n1800\n1900\n2000\n")
    b = read_breakdown(f, {"thickness": 3e-6})
    assert b.fields_V_per_m.tolist() == pytest.approx([600e6, 1900 / 3e-6, 2000 / 3e-6])
    assert b.thickness_m is None


@pytest.mark.parametrize("sep", [";", "\t"])
def test_semicolon_and_tab_separated(tmp_path, sep):
    f = tmp_path / "s.csv"
    f.write_text(f"field [V/um]{sep}censored\n600{sep}0\n610{sep}1\n620{sep}0\n")
    assert read_breakdown(f).censored.tolist() == [False, True, False]


def test_bom_crlf_blank_lines_and_trailing_separators(tmp_path):
    f = tmp_path / "s.csv"
    f.write_bytes("\ufeff# label: bom\r\nfield [V/um],censored,\r\n600,0,\r\n\r\n610,0,\r\n620,1,\r\n".encode())
    b = read_breakdown(f)
    assert b.conditions.label == "bom"
    assert b.n == 3


def test_free_comments_are_not_header_keys(tmp_path):
    f = tmp_path / "s.csv"
    f.write_text("# INVENTED DEMO DATA: nothing here is real\n# measured on the new press\nfield [V/um]\n"
                 "600\n610\n620\n")
    assert read_breakdown(f).n == 3


def test_progress_callback_reports_bytes(tmp_path):
    f = write_set(tmp_path / "big.csv", np.linspace(500, 700, 10_000))
    seen = []
    read_breakdown(f, on_progress=seen.append)
    assert seen[-1] == f.stat().st_size
    assert seen == sorted(seen) and len(seen) >= 2


def test_error_names_file_line_and_column(tmp_path):
    f = write_set(tmp_path / "s.csv", [600, 620, 640], header={"label": "x"})
    text = f.read_text().replace("620.0", "6x0")
    f.write_text(text)
    with pytest.raises(InputError) as err:
        read_breakdown(f)
    e = err.value
    assert (e.file, e.line, e.field) == (str(f), 4, "field [V/um]")
    assert str(e).startswith(f"{f}:4, field 'field [V/um]': not a number: '6x0' (column 1)")


def test_loop_in_measured_order(tmp_path):
    f = write_loop(tmp_path / "l.csv", [0, 100, 200, 100, 0], [0, 2, 3, 2.5, 1],
                   header={"temperature": "25", "frequency": "1 kHz", "thickness": "10 um"})
    lp = read_loop(f)
    # 1 kV/cm = 1e5 V/m; 1 µC/cm² = 1e-2 C/m² (SI prefixes)
    assert lp.fields_V_per_m.tolist() == pytest.approx([0, 1e7, 2e7, 1e7, 0])
    assert lp.polarization_C_per_m2.tolist() == pytest.approx([0, 0.02, 0.03, 0.025, 0.01])
    assert lp.conditions.frequency_Hz == 1e3
    assert lp.conditions.thickness_m == pytest.approx(1e-5)


def test_loop_british_spelling_and_ignored_time_column(tmp_path):
    f = tmp_path / "l.csv"
    f.write_text("time [ms],field [MV/m],polarisation [C/m^2]\n0,0,0\n1,10,0.1\n2,20,0.2\n3,10,0.15\n4,0,0.05\n")
    lp = read_loop(f)
    assert lp.n == 5
    assert lp.polarization_C_per_m2.max() == pytest.approx(0.2)


def test_loop_must_return_toward_zero(tmp_path):
    e = [0, 100, 200, 300, 250, 300 * RETURN_FRACTION * 1.01]
    with pytest.raises(InputError, match="never returns toward zero field"):
        read_loop(write_loop(tmp_path / "l.csv", e, [0, 1, 2, 3, 2.9, 2.8]))
    e[-1] = 300 * RETURN_FRACTION * 0.99
    assert read_loop(write_loop(tmp_path / "l.csv", e, [0, 1, 2, 3, 2.9, 2.8])).n == 6


def test_value_table_like_the_catalog(tmp_path):
    from materials.catalog_io import load_sources

    sources = load_sources(LAB_CATALOG / "sources.toml")
    f = tmp_path / "v.csv"
    f.write_text("material,name,family,property,value,unit,low,high,temperature [degC],frequency [kHz],source\n"
                 "new-film,New film,polymer-film,relative_permittivity,3.2,,,,25,1,lab-fixture-invented\n"
                 "new-film,,,breakdown_field,650,V/um,600,700,25,,lab-fixture-invented\n"
                 "other,Other glass,glass,density,2.5,g/cm^3,,,,,lab-fixture-invented\n")
    recs = read_value_table(f, sources)
    assert [r.key for r in recs] == ["new-film", "other"]
    film = recs[0]
    assert (film.name, film.family, film.origin) == ("New film", "polymer-film", "user")
    eps, ebd = film.values
    assert (eps.value, eps.temperature_K, eps.frequency_Hz) == (3.2, pytest.approx(298.15), 1e3)
    assert (ebd.value, ebd.low, ebd.high) == (pytest.approx(650e6), pytest.approx(600e6), pytest.approx(700e6))
    assert recs[1].values[0].value == pytest.approx(2500.0)


def test_value_table_unit_in_heading(tmp_path):
    from materials.catalog_io import load_sources

    f = tmp_path / "v.csv"
    f.write_text("material,name,family,property,value [V/um],source\n"
                 "f1,Film one,polymer-film,breakdown_field,500,lab-fixture-invented\n")
    recs = read_value_table(f, load_sources(LAB_CATALOG / "sources.toml"))
    assert recs[0].values[0].value == pytest.approx(5e8)


def test_demo_files_parse_and_are_marked_invented():
    for f in sorted(EXAMPLES.glob("ht-film-breakdown-*.csv")):
        b = read_breakdown(f)
        assert b.conditions.kind == "invented" and "INVENTED" in f.read_text().splitlines()[0]
        assert b.n == 20 and b.n_censored == 2
    for f in sorted(EXAMPLES.glob("*loop*.csv")):
        assert read_loop(f).conditions.kind == "invented"


@settings(max_examples=40, deadline=None)
@given(st.lists(st.floats(min_value=0.2, max_value=4000.0, allow_nan=False), min_size=3, max_size=30),
       st.sampled_from([("V/um", 1e6), ("kV/mm", 1e6), ("MV/m", 1e6)]))
def test_text_round_trip_is_exact(tmp_path_factory, fields, unit):
    """Numbers written with repr() come back bit for bit (times an exact power of ten)."""
    name, factor = unit
    f = write_set(tmp_path_factory.mktemp("rt") / "s.csv", fields, unit=name)
    got = read_breakdown(f).fields_V_per_m
    assert np.array_equal(got, np.asarray(fields) * factor)
    assert all(math.isfinite(x) for x in got)
