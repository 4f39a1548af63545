"""The bad-input corpus of every way in: command options, target files, material TOML and value CSV for ``add``,
lab-file headers and cells, and bundles for ``db load`` (tests/data/bad_input/cases.toml).

Each case must give one line on stderr naming the file (and the line and field where the case says), exit code 2,
and leave the store exactly as it was; a bundle load must not leave the store it would have created behind.
A hypothesis test feeds random bytes and random TOML, CSV and JSON to each entry point: a clean refusal (exit 2)
or a valid import, never a traceback.
"""

from __future__ import annotations

import json
import tomllib
from pathlib import Path

import pytest
from hypothesis import HealthCheck, given, settings, strategies as st

from lab_support import LAB_CATALOG, build_store, logical_dump

CORPUS = Path(__file__).parent / "data" / "bad_input"
CASES = tomllib.loads((CORPUS / "cases.toml").read_text(encoding="utf-8"))["case"]
COMMANDS = {
    "breakdown-opt": ["breakdown", "import", "{file}", "--material", "fixture-film"],
    "breakdown-new": ["breakdown", "import", "{file}"],
    "breakdown": ["breakdown", "import", "{file}", "--material", "fixture-film"],
    "shortlist-opt": ["shortlist"],
    "command-opt": [],
    "target": ["shortlist", "--target", "{file}"],
    "add": ["add", "{file}"],
}
NO_FILE = {"breakdown-opt", "breakdown-new", "shortlist-opt", "command-opt"}  # the options are bad, not the file
ENTRY_POINTS = {"breakdown-opt": "options", "breakdown-new": "options", "shortlist-opt": "options",
                "command-opt": "options",
                "target": "target files", "add": "add (TOML, CSV)", "breakdown": "lab files", "load": "bundles"}


@pytest.fixture(scope="module")
def shared_url(tmp_path_factory):
    """One store for the whole corpus: every refused command must leave it exactly as it was."""
    return build_store(tmp_path_factory.mktemp("bad-input-store"))


def test_corpus_covers_every_entry_point():
    counts: dict[str, int] = {}
    for c in CASES:
        counts[ENTRY_POINTS[c["cmd"]]] = counts.get(ENTRY_POINTS[c["cmd"]], 0) + 1
    assert all(counts.get(e, 0) >= 5 for e in set(ENTRY_POINTS.values())), counts
    named = {c["file"].split("/")[0] for c in CASES} | {"cases.toml", "ok_bundle.jsonl"}
    assert {p.name for p in CORPUS.iterdir()} == named - {"no_file"}, "every file has a case, every case a file"


@pytest.mark.parametrize("case", CASES, ids=lambda c: f"{c['cmd']}:{c['file']}:{' '.join(c.get('extra', []))[:30]}")
def test_bad_input_one_line_exit_2_store_unchanged(cli, shared_url, tmp_path, case):
    path = str(CORPUS / case["file"])
    if case["cmd"] == "load":
        new = tmp_path / "new.sqlite"
        code, out, err = cli(["db", "load", path], db=f"sqlite:///{new}", catalog=LAB_CATALOG)
        assert not new.exists(), "a refused load leaves no store behind"
    else:
        before = logical_dump(shared_url)
        args = [a.replace("{file}", path) for a in COMMANDS[case["cmd"]]] + case.get("extra", [])
        code, out, err = cli(args, db=shared_url, catalog=LAB_CATALOG)
        assert logical_dump(shared_url) == before
    assert code == 2, (out, err)
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("holdoff: error: "), err
    assert case["fragment"] in lines[0], lines[0]
    if case["cmd"] not in NO_FILE:
        named = str(CORPUS / case.get("names", case["file"]))  # a bibliography beside the file may be at fault
        assert (f"{named}:{case['line']}" if "line" in case else named) in lines[0], lines[0]
    if "field" in case:
        assert f"field '{case['field']}'" in lines[0] or f"error: {case['field']}:" in lines[0], lines[0]


def test_the_well_formed_files_of_the_corpus_go_in(cli, tmp_path):
    """The cases are bad only where they say: the same set and bundle, untouched, are accepted."""
    url = build_store(tmp_path)
    code, out, err = cli(["breakdown", "import", CORPUS / "ok_set.csv", "--material", "fixture-film"], db=url,
                         catalog=LAB_CATALOG)
    assert code == 0, err
    new = tmp_path / "loaded.sqlite"
    code, out, err = cli(["db", "load", CORPUS / "ok_bundle.jsonl"], db=f"sqlite:///{new}", catalog=LAB_CATALOG)
    assert code == 0, err
    code, out, err = cli(["db", "check"], db=f"sqlite:///{new}", catalog=LAB_CATALOG)
    assert code == 0, out


# --- random input: a clean refusal or a valid import, never a traceback -----------------------------------------

_scalars = st.one_of(st.text(max_size=12), st.integers(-10**6, 10**6), st.floats(allow_nan=True, allow_infinity=True),
                     st.booleans())
_values = st.one_of(_scalars, st.lists(_scalars, max_size=3), st.lists(st.lists(_scalars, max_size=3), max_size=3))
_WORDS = ["key", "name", "family", "form", "description", "response", "origin", "property", "value", "low", "high",
          "unit", "source", "note", "temperature", "frequency", "field", "thickness", "area", "over", "at_unit",
          "points", "voltage", "tmin", "tmax", "energy", "energy_density", "max_loss_tangent", "margin",
          "families", "thicknesses", "assume_defaults", "strict", "failure_probability"]
_GOOD = {"key": "rand-film", "name": "Random film", "family": "polymer-film", "property": "relative_permittivity",
         "value": 2.2, "source": "lab-fixture-handbook", "voltage": "800 V", "tmin": "-40 degC", "tmax": "85 degC",
         "energy_density": "0.5 J/cm^3"}


def _toml_value(v) -> str:
    if isinstance(v, bool):
        return "true" if v else "false"
    if isinstance(v, float):
        return "nan" if v != v else ("inf" if v == float("inf") else "-inf" if v == float("-inf") else repr(v))
    if isinstance(v, int):
        return str(v)
    if isinstance(v, list):
        return "[" + ", ".join(_toml_value(x) for x in v) + "]"
    return json.dumps(v)  # a TOML basic string (a lone surrogate escape makes the file invalid TOML: also refused)


@st.composite
def _toml_docs(draw, table: str | None):
    """A TOML text with fields drawn from holdoff's own words, mostly well-formed, with random values."""
    fields = draw(st.dictionaries(st.sampled_from(_WORDS), _values, max_size=6))
    body = {**{k: v for k, v in _GOOD.items() if draw(st.booleans())}, **fields}
    lines = [f"{k} = {_toml_value(v)}" for k, v in body.items()]
    if table == "target":
        return "[target]\n" + "\n".join(lines) + "\n"
    value = draw(st.dictionaries(st.sampled_from(_WORDS), _values, max_size=4))
    value = {**{k: _GOOD[k] for k in ("property", "value", "source") if draw(st.booleans())}, **value}
    return ("\n".join(lines) + "\n\n[[value]]\n" + "\n".join(f"{k} = {_toml_value(v)}" for k, v in value.items())
            + "\n")


_cells = st.one_of(st.text(st.characters(blacklist_characters=",\n\r\""), max_size=10),
                   st.floats(allow_nan=True, allow_infinity=True).map(repr), st.integers().map(str))


@st.composite
def _csv_docs(draw, headings):
    cols = draw(st.lists(st.sampled_from(headings), min_size=1, max_size=5, unique=True))
    rows = draw(st.lists(st.lists(_cells, min_size=len(cols), max_size=len(cols)), max_size=6))
    head = draw(st.lists(st.tuples(st.sampled_from(["label", "temperature", "area", "thickness", "ramp", "kind",
                                                    "operator", "bogus"]), _cells), max_size=3))
    return "".join(f"# {k}: {v}\n" for k, v in head) + ",".join(cols) + "\n" + "".join(",".join(r) + "\n"
                                                                                      for r in rows)


_json_scalars = st.one_of(st.none(), st.booleans(), st.integers(-10**12, 10**12), st.floats(allow_nan=False),
                          st.text(max_size=12))
_json = st.recursive(_json_scalars, lambda inner: st.one_of(st.lists(inner, max_size=3),
                                                            st.dictionaries(st.text(max_size=8), inner, max_size=3)),
                     max_leaves=10)


@st.composite
def _bundles(draw):
    """A bundle file: the right header and end line around random records built on the well-formed ones."""
    good = (CORPUS / "ok_bundle.jsonl").read_text(encoding="utf-8").splitlines()
    records = [json.loads(x) for x in good[1:-1]]
    i = draw(st.integers(0, len(records) - 1))
    rec = dict(records[i])
    for k, v in draw(st.dictionaries(st.sampled_from(sorted({k for r in records for k in r} | {"extra"})), _json,
                                     max_size=3)).items():
        rec[k] = v
    records[i] = rec
    lines = [good[0]] + [json.dumps(r) for r in records] + [json.dumps({"type": "end", "records": len(records)})]
    return "\n".join(lines) + "\n"


ENTRY = {
    "add-toml": (".toml", lambda f: ["add", f], _toml_docs(None)),
    "add-csv": (".csv", lambda f: ["add", f],
                _csv_docs(["material", "name", "family", "property", "value", "source", "note", "unit",
                           "temperature [degC]", "frequency [Hz]", "value [V/um]", "bogus"])),
    "target": (".toml", lambda f: ["shortlist", "--target", f], _toml_docs("target")),
    "breakdown": (".csv", lambda f: ["breakdown", "import", f, "--material", "fixture-film"],
                  _csv_docs(["field [V/um]", "voltage [kV]", "censored", "thickness [um]", "field"])),
    "load": (".jsonl", lambda f: ["db", "load", f], _bundles()),
}


_STORES: dict[str, str] = {}


@pytest.mark.parametrize("entry", sorted(ENTRY))
@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(data=st.data())
def test_random_input_is_refused_cleanly_or_imported(cli, tmp_path_factory, entry, data):
    """Property (hypothesis): random bytes, or random text in the entry point's own format, give exit code 0 (a
    valid import or answer) or 2 with one line; a bug would surface as the exception the cli fixture re-raises."""
    suffix, command, structured = ENTRY[entry]
    d = tmp_path_factory.mktemp("rand")
    body = data.draw(st.one_of(st.binary(max_size=200), structured.map(lambda t: t.encode("utf-8", "replace"))))
    f = d / f"input{suffix}"
    f.write_bytes(body)
    if entry not in _STORES:  # one store per entry point: 'before' is taken afresh for every example
        _STORES[entry] = build_store(tmp_path_factory.mktemp("rand-store"))
    url = f"sqlite:///{d / 'new.sqlite'}" if entry == "load" else _STORES[entry]
    before = None if entry == "load" else logical_dump(url)
    code, out, err = cli(command(f), db=url, catalog=LAB_CATALOG)
    assert code in (0, 1, 2), (code, out, err)  # 1: a shortlist that ranks nothing
    if code == 2:
        lines = err.strip().splitlines()
        assert len(lines) == 1 and lines[0].startswith("holdoff: error: "), err
        if before is not None:
            assert logical_dump(url) == before
        else:
            assert not (d / "new.sqlite").exists()


def test_db_check_finds_what_add_and_load_refuse(cli, tmp_path):
    """Rows written around the readers (raw SQL) that 'add' or 'db load' would refuse are errors of 'db check':
    εr = 10⁹, an infinite value, a set at −10 K, a NUL and a bidi override in names, a key with a newline."""
    import sqlite3

    url = build_store(tmp_path)
    path = url.removeprefix("sqlite:///")
    with sqlite3.connect(path) as c:
        mid, sid = c.execute("SELECT m.id, v.source_id FROM material m JOIN property_value v "
                             "ON v.material_id = m.id WHERE m.key = 'fixture-film'").fetchone()
        for value in (1e9, float("inf")):
            c.execute("INSERT INTO property_value (material_id, property, value, source_id, note, created_at) "
                      "VALUES (?, 'relative_permittivity', ?, ?, '', '2026-01-01 00:00:00')", (mid, value, sid))
        c.execute("INSERT INTO breakdown_set (material_id, label, temperature_K, waveform, source_id, file_name, "
                  "sha256, created_at) VALUES (?, 'cold', -10.0, 'dc', ?, '', ?, '2026-01-01 00:00:00')",
                  (mid, sid, "0" * 64))
        c.execute("UPDATE material SET name = ? WHERE id = ?", ("Fixture\x00film", mid))
        c.execute("INSERT INTO material (key, name, family, form, description, origin, response) "
                  "VALUES (?, ?, 'polymer-film', '', '', 'user', 'linear')", ("odd\n", "Odd \u202efilm"))
    code, out, err = cli(["db", "check"], db=url, catalog=LAB_CATALOG)
    assert code == 1, out
    for words in ("relative_permittivity = 1e+09", "value: not a finite number", "temperature: '-10.0' must be "
                  "above absolute zero", "U+0000", "U+202E", "must be a lower-case slug"):
        assert words in out, (words, out)
