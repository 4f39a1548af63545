"""A malformed catalog stops ``holdoff db init`` with one line naming file, entry and field, exit code 2, and
leaves an existing store exactly as it was."""

from __future__ import annotations

import re
import shutil
import sqlite3
from pathlib import Path

import pytest

from materials.catalog_io import load_catalog
from materials.errors import InputError


def _sub(path: Path, old: str, new: str, count: int = 1) -> None:
    text = path.read_text(encoding="utf-8")
    assert old in text, f"{old!r} not in {path.name}"
    path.write_text(text.replace(old, new, count), encoding="utf-8")


def _append(path: Path, text: str) -> None:
    path.write_text(path.read_text(encoding="utf-8") + text, encoding="utf-8")


# (id, how to break the copy, file named, entry named (or None), field named (or None), why)
BREAKAGES = [
    ("missing-source", lambda d: _sub(d / "mini-air.toml", 'value = 1.0006\nsource = "fixture-invented"\n',
                                      "value = 1.0006\n"),
     "mini-air.toml", "mini-air value #1 (relative_permittivity)", "source", "every value needs a source"),
    ("unknown-source-key", lambda d: _sub(d / "mini-glass.toml", 'source = "callister-8e-t18-5"',
                                          'source = "no-such-handbook"'),
     "mini-glass.toml", "mini-glass value #1 (relative_permittivity)", "source", "not in sources.toml"),
    ("unknown-property", lambda d: _sub(d / "mini-air.toml", 'property = "relative_permittivity"',
                                        'property = "colour"'),
     "mini-air.toml", "mini-air value #1 (colour)", "property", "unknown property 'colour'"),
    ("unknown-family", lambda d: _sub(d / "mini-glass.toml", 'family = "glass"', 'family = "plastic"'),
     "mini-glass.toml", "mini-glass", "family", "family 'plastic' is not one of"),
    ("wrong-dimension-unit", lambda d: _sub(d / "mini-air.toml", 'value = "3 MV/m"', 'value = "3 kg"'),
     "mini-air.toml", "mini-air value #2 (breakdown_field)", "value", "unit 'kg' is not a V/m quantity"),
    ("bare-number-for-a-field", lambda d: _sub(d / "mini-air.toml", 'value = "3 MV/m"', "value = 700"),
     "mini-air.toml", "mini-air value #2 (breakdown_field)", "value", "has no unit"),
    ("bare-number-string-for-a-field", lambda d: _sub(d / "mini-air.toml", 'value = "3 MV/m"', 'value = "700"'),
     "mini-air.toml", "mini-air value #2 (breakdown_field)", "value", "has no unit"),
    ("duplicate-material-key", lambda d: shutil.copy(d / "mini-air.toml", d / "mini-air-again.toml"),
     "mini-air.toml", "mini-air", "key", "duplicate material key 'mini-air'"),
    ("nan", lambda d: _sub(d / "mini-glass.toml", "value = 6.9", "value = nan"),
     "mini-glass.toml", "mini-glass value #1 (relative_permittivity)", "value", "not a finite number"),
    ("infinity-low", lambda d: _sub(d / "mini-glass.toml", "value = 6.9", "value = 6.9\nlow = -inf"),
     "mini-glass.toml", "mini-glass value #1 (relative_permittivity)", "low", "not a finite number"),
    ("permittivity-2200-for-a-polymer-film", lambda d: _sub(d / "mini-film.toml", "value = 2.15", "value = 2200"),
     "mini-film.toml", "mini-film value #1 (relative_permittivity)", "value",
     "outside the plausible range .* for a polymer-film material"),
    ("breakdown-in-the-wrong-unit-scale", lambda d: _sub(d / "mini-air.toml", 'value = "3 MV/m"', 'value = "3 V/m"'),
     "mini-air.toml", "mini-air value #2 (breakdown_field)", "value", "outside the plausible range"),
    ("low-above-high", lambda d: _sub(d / "mini-glass.toml", "value = 6.9", "value = 6.9\nlow = 7.5\nhigh = 6.5"),
     "mini-glass.toml", "mini-glass value #1 (relative_permittivity)", "low", "low is above high"),
    ("value-outside-its-range", lambda d: _sub(d / "mini-glass.toml", "value = 6.9", "value = 6.9\nhigh = 6.5"),
     "mini-glass.toml", "mini-glass value #1 (relative_permittivity)", "value", "outside its own low…high range"),
    ("implausible-curve-point", lambda d: _sub(d / "mini-x7r.toml", "[10, 900]", "[10, 9e6]"),
     "mini-x7r.toml", "mini-x7r curve #2 (relative_permittivity)", "points[3]", "outside the plausible range"),
    ("repeated-curve-abscissa", lambda d: _sub(d / "mini-x7r.toml", "[10, 900]", "[5, 900]"),
     "mini-x7r.toml", "mini-x7r curve #2 (relative_permittivity)", "points[3]", "repeated abscissa"),
    ("temperature-below-absolute-zero", lambda d: _sub(d / "mini-glass.toml", 'frequency = "60 Hz"',
                                                       'frequency = "60 Hz"\ntemperature = "-300 degC"'),
     "mini-glass.toml", "mini-glass value #1 (relative_permittivity)", "temperature", "below absolute zero"),
    ("negative-thickness", lambda d: _sub(d / "mini-air.toml", 'thickness = "1 cm"', 'thickness = "-1 cm"'),
     "mini-air.toml", "mini-air value #2 (breakdown_field)", "thickness", "must be positive"),
    ("unknown-field", lambda d: _sub(d / "mini-glass.toml", "value = 6.9", "value = 6.9\ncolour = 'blue'"),
     "mini-glass.toml", "mini-glass value #1 (relative_permittivity)", "colour", "unknown field"),
    ("value-not-a-table", lambda d: (d / "mini-odd.toml").write_text(
        'key = "mini-odd"\nname = "Odd"\nfamily = "glass"\nvalue = [1, 2]\n', encoding="utf-8"),
     "mini-odd.toml", "mini-odd value #1", "value", "must be an array of tables"),
    ("duplicate-value", lambda d: _append(d / "mini-glass.toml",
                                          '\n[[value]]\nproperty = "relative_permittivity"\nvalue = 7.0\n'
                                          'frequency = "60 Hz"\nsource = "callister-8e-t18-5"\n'),
     "mini-glass.toml", "mini-glass value #3 (relative_permittivity)", "property", "duplicates"),
    ("source-not-text", lambda d: _sub(d / "mini-glass.toml", 'source = "callister-8e-t18-5"',
                                       'source = ["callister-8e-t18-5"]'),
     "mini-glass.toml", "mini-glass value #1 (relative_permittivity)", "source", "not in sources.toml"),
    ("property-not-text", lambda d: _sub(d / "mini-air.toml", 'property = "relative_permittivity"',
                                         'property = ["relative_permittivity"]'),
     "mini-air.toml", "mini-air value #1", "property", "unknown property"),
    ("unknown-source-kind", lambda d: _sub(d / "sources.toml", 'kind = "handbook"', 'kind = "hearsay"'),
     "sources.toml", "callister-8e-t18-5", "kind", "kind 'hearsay' is not one of"),
    ("source-without-citation", lambda d: _sub(d / "sources.toml", 'citation = "Breakdown of air',
                                               'note = "Breakdown of air'),
     "sources.toml", "air-3-mv-per-m", "citation", "needs a full citation"),
    ("missing-sources-file", lambda d: (d / "sources.toml").unlink(), "sources.toml", None, None, "cannot read"),
    ("not-toml", lambda d: _append(d / "mini-film.toml", "\n[[value]\nproperty = \n"),
     "mini-film.toml", None, None, "not valid TOML"),
    ("material-key-not-a-slug", lambda d: _sub(d / "mini-glass.toml", 'key = "mini-glass"', 'key = "Mini Glass"'),
     "mini-glass.toml", None, "key", "lower-case slug"),
]


@pytest.fixture(scope="module")
def good_store(tmp_path_factory):
    """A SQLite store built from the intact mini catalog, once; tests copy it."""
    from db.store import build

    path = tmp_path_factory.mktemp("good") / "holdoff.sqlite"
    build(f"sqlite:///{path}", catalog_dir=Path(__file__).parent / "data" / "mini_catalog_foundation")
    return path


def _rows(path: Path) -> dict:
    con = sqlite3.connect(f"file:{path}?immutable=1", uri=True)  # no -wal/-shm left behind
    try:
        tables = [r[0] for r in con.execute("SELECT name FROM sqlite_master WHERE type = 'table' ORDER BY name")]
        return {t: con.execute(f'SELECT * FROM "{t}" ORDER BY 1').fetchall() for t in tables}
    finally:
        con.close()


@pytest.mark.parametrize("case", BREAKAGES, ids=[b[0] for b in BREAKAGES])
def test_bad_catalog_stops_db_init_and_keeps_the_store(case, cli, mini_catalog_copy, good_store, tmp_path):
    _id, breakage, file_name, entry, field, why = case
    db = tmp_path / "store" / "holdoff.sqlite"
    db.parent.mkdir()
    shutil.copy(good_store, db)
    before_bytes, before_rows = db.read_bytes(), _rows(db)

    breakage(mini_catalog_copy)
    code, out, err = cli(["db", "init"], db=f"sqlite:///{db}", catalog=mini_catalog_copy)

    assert code == 2, (out, err)
    assert out == ""
    assert err.endswith("\n") and err.count("\n") == 1, err
    assert err.startswith("holdoff: error: ")
    assert file_name in err
    if entry is not None:
        assert f"entry {entry}" in err
    if field is not None:
        assert f"field '{field}'" in err
    assert re.search(why, err), err
    # The existing store is exactly as it was, and nothing was left beside it.
    assert db.read_bytes() == before_bytes
    assert _rows(db) == before_rows
    assert sorted(p.name for p in db.parent.iterdir()) == ["holdoff.sqlite"]


@pytest.mark.parametrize("case", BREAKAGES, ids=[b[0] for b in BREAKAGES])
def test_the_error_carries_file_entry_and_field(case, mini_catalog_copy):
    _id, breakage, file_name, entry, field, _why = case
    breakage(mini_catalog_copy)
    with pytest.raises(InputError) as exc:
        load_catalog(mini_catalog_copy)
    assert Path(exc.value.file).name == file_name
    if entry is not None:
        assert exc.value.entry == entry
    if field is not None:
        assert exc.value.field == field


def test_line_numbers_point_at_the_table(mini_catalog_copy):
    _sub(mini_catalog_copy / "mini-film.toml", "value = 2.15", "value = 2200")
    with pytest.raises(InputError) as exc:
        load_catalog(mini_catalog_copy)
    lines = (mini_catalog_copy / "mini-film.toml").read_text(encoding="utf-8").splitlines()
    assert lines[exc.value.line - 1] == "[[value]]"
    assert lines[exc.value.line] == 'property = "relative_permittivity"'
    assert "2200" in lines[exc.value.line + 1]


def test_bad_catalog_and_no_store_leaves_no_file(cli, mini_catalog_copy, tmp_path):
    _sub(mini_catalog_copy / "mini-glass.toml", 'family = "glass"', 'family = "plastic"')
    folder = tmp_path / "fresh"
    code, _out, err = cli(["db", "init"], db=f"sqlite:///{folder / 'holdoff.sqlite'}", catalog=mini_catalog_copy)
    assert code == 2 and "family" in err
    assert not folder.exists() or list(folder.iterdir()) == []


def test_the_intact_mini_catalog_builds(cli, mini_catalog, tmp_path):
    code, out, err = cli(["db", "init"], catalog=mini_catalog)
    assert (code, err) == (0, "")
    assert "4 materials, 27 values, 5 sources" in out


def _toml(x) -> str:
    """A TOML value (inline) for the few Python types the strategy below produces."""
    import json
    import math

    if isinstance(x, bool):
        return "true" if x else "false"
    if isinstance(x, float) and not math.isfinite(x):
        return "nan" if math.isnan(x) else ("inf" if x > 0 else "-inf")
    if isinstance(x, (int, float)):
        return repr(x)
    if isinstance(x, str):
        return json.dumps(x)
    if isinstance(x, list):
        return "[" + ", ".join(_toml(i) for i in x) + "]"
    return "{" + ", ".join(f"{json.dumps(k)} = {_toml(v)}" for k, v in x.items()) + "}"


def _strategy():
    from hypothesis import strategies as st

    from materials.properties import PROPERTIES

    scalar = st.one_of(
        st.integers(-10**6, 10**12), st.floats(), st.booleans(), st.text(max_size=8),
        st.sampled_from(["600 V/um", "25 degC", "-300 degC", "1 kHz", "3 um", "1e999 V/m", "2.2", "5 %", "kg", ""]),
        st.lists(st.integers(0, 3), max_size=2))
    value = st.fixed_dictionaries(
        {"property": st.one_of(st.sampled_from(sorted(PROPERTIES)), scalar),
         "source": st.one_of(st.sampled_from(["fixture-invented", "callister-8e-t18-5", "nope"]), scalar)},
        optional={k: scalar for k in ("value", "low", "high", "unit", "temperature", "frequency", "field",
                                      "thickness", "area", "note", "bogus")})
    curve = st.fixed_dictionaries(
        {"property": st.sampled_from(["relative_permittivity", "breakdown_field"]),
         "source": st.just("fixture-invented"),
         "over": st.one_of(st.sampled_from(["temperature", "field"]), scalar)},
        optional={"points": st.one_of(st.lists(st.lists(st.one_of(st.floats(-300, 3000), scalar), max_size=3),
                                               max_size=4), scalar),
                  "at_unit": scalar, "unit": scalar, "frequency": scalar})
    return st.fixed_dictionaries(
        {"key": st.one_of(st.just("mini-fuzz"), st.just("mini-fuzz"), scalar),
         "name": st.one_of(st.just("Fuzz"), scalar),
         "family": st.one_of(st.sampled_from(["polymer-film", "gas", "ceramic-class-2"]),
                             st.sampled_from(["polymer-film", "gas", "ceramic-class-2"]), scalar)},
        optional={"value": st.one_of(st.lists(value, max_size=3), scalar),
                  "curve": st.one_of(st.lists(curve, max_size=2), scalar),
                  "response": scalar, "origin": scalar, "form": scalar})


def test_any_material_file_loads_or_raises_input_error(mini_catalog):
    # No catalog file, however malformed, may crash the reader: it loads, or it is one InputError.
    from hypothesis import HealthCheck, given, settings

    from materials.catalog_io import load_material, load_sources

    sources = load_sources(mini_catalog / "sources.toml")

    @settings(max_examples=200, deadline=None, suppress_health_check=[HealthCheck.too_slow])
    @given(_strategy())
    def check(doc):
        import tempfile

        with tempfile.TemporaryDirectory() as d:
            path = Path(d) / "fuzz.toml"
            path.write_text("".join(f"{k} = {_toml(v)}\n" for k, v in doc.items()), encoding="utf-8")
            try:
                rec = load_material(path, sources)
            except InputError as exc:
                assert str(exc).startswith(str(path)) and exc.file == str(path)
                return
            assert rec.key == doc["key"] and rec.family == doc["family"]

    check()


# --- what the readers accept: a byte-order mark, °F conditions, a file that gives only values ---------------------

FILM = """key = "bom-film"
name = "A film saved with a byte-order mark"
family = "polymer-film"

[[value]]
property = "relative_permittivity"
value = 2.2
temperature = "77 degF"
source = "lab-fixture-handbook"

[[curve]]
property = "loss_tangent"
over = "temperature"
at_unit = "degF"
points = [[-40, 0.0003], [77, 0.0002], [185, 0.0004]]
source = "lab-fixture-handbook"
"""


def test_a_byte_order_mark_is_accepted_and_fahrenheit_conditions_land_on_round_kelvin(tmp_path):
    """77 °F is 298.15 K exactly (NIST SP 811 §B.9: T/K = (t/°F + 459.67)/1.8), not 298.1499999999988 K, so it is
    the same condition as 25 °C; −40 °F = −40 °C = 233.15 K, 185 °F = 85 °C = 358.15 K."""
    from materials.catalog_io import load_material, load_sources

    sources = load_sources(Path(__file__).parent / "data" / "mini_catalog" / "sources.toml")
    f = tmp_path / "bom-film.toml"
    f.write_bytes(b"\xef\xbb\xbf" + FILM.encode("utf-8"))
    rec = load_material(f, sources, origin="user")
    assert rec.key == "bom-film"
    assert [v.temperature_K for v in rec.values] == [298.15, 233.15, 298.15, 358.15]
    same = FILM.replace('"77 degF"', '"25 degC"').replace("loss_tangent", "relative_permittivity", 1)
    (tmp_path / "dup.toml").write_text(same.replace("[[curve]]", "[[value]]\nproperty = \"relative_permittivity\""
                                                    "\nvalue = 2.3\ntemperature = \"77 degF\"\nsource = "
                                                    "\"lab-fixture-handbook\"\n\n[[curve]]"), encoding="utf-8")
    with pytest.raises(InputError, match="duplicates"):
        load_material(tmp_path / "dup.toml", sources)


def test_a_byte_order_mark_in_a_target_file_is_accepted(tmp_path):
    from ranking.target import load_target

    f = tmp_path / "t.toml"
    f.write_bytes(b"\xef\xbb\xbf[target]\nvoltage = \"800 V\"\ntmin = \"-40 degC\"\ntmax = \"185 degF\"\n")
    assert load_target(f).tmax_K == pytest.approx(358.15, abs=1e-9)


def test_a_file_that_gives_only_values_keeps_the_stored_form_and_description(cli, tmp_path):
    """Updating an existing material from a file without form or description changes its values, not its text."""
    from lab_support import LAB_CATALOG, build_store

    url = build_store(tmp_path)
    code, out, err = cli(["show", "fixture-film", "--json"], db=url, catalog=LAB_CATALOG)
    import json

    before = json.loads(out)
    assert before["form"] or before["description"]
    f = tmp_path / "partial.toml"
    f.write_text(f'key = "fixture-film"\nname = "{before["name"]}"\nfamily = "polymer-film"\n\n[[value]]\n'
                 'property = "density"\nvalue = "1.1 g/cm^3"\nsource = "lab-fixture-handbook"\n', encoding="utf-8")
    code, out, err = cli(["add", f], db=url, catalog=LAB_CATALOG)
    assert code == 0, err
    after = json.loads(cli(["show", "fixture-film", "--json"], db=url, catalog=LAB_CATALOG)[1])
    assert (after["form"], after["description"]) == (before["form"], before["description"])
    assert 1100.0 in [v["value"] for v in after["values"] if v["property"] == "density"]
