"""The lab-data commands end to end: the bad-input corpus, imports, add with history, concurrency, the demo."""

from __future__ import annotations

import json
import os
import subprocess
import sys
import tomllib
from pathlib import Path

import numpy as np
import pytest

from lab_support import BAD, EXAMPLES, LAB_CATALOG, build_store, logical_dump, write_set

ROOT = Path(__file__).parent.parent
CASES = tomllib.loads((BAD / "cases.toml").read_text(encoding="utf-8"))["case"]
COMMANDS = {
    "breakdown": ["breakdown", "import", "{file}", "--material", "fixture-film"],
    "breakdown-opt": ["breakdown", "import", "{file}", "--material", "fixture-film"],
    "breakdown-unknown": ["breakdown", "import", "{file}", "--material", "no-such-material"],
    "breakdown-new": ["breakdown", "import", "{file}"],
    "loop": ["loop", "import", "{file}", "--material", "fixture-ceramic"],
    "fit": ["breakdown", "fit", "{file}"],
    "analyze": ["loop", "analyze", "{file}"],
    "add": ["add", "{file}"],
}
OPTION_ONLY = {"breakdown-opt", "breakdown-unknown", "breakdown-new", "fit"}


@pytest.fixture(scope="module")
def shared_url(tmp_path_factory):
    """One store for the whole bad corpus: every failed command must leave it exactly as it was."""
    return build_store(tmp_path_factory.mktemp("bad-store"))


@pytest.fixture
def url(tmp_path):
    return build_store(tmp_path)


def test_corpus_is_large_enough():
    files = {c["file"] for c in CASES}
    assert len(CASES) >= 30 and len(files) >= 30
    assert all((BAD / f).is_file() for f in files)
    on_disk = {p.name for p in BAD.iterdir()} - {"cases.toml"}
    assert on_disk == files, "every bad file has a case, every case a file"


@pytest.mark.parametrize("case", CASES, ids=lambda c: f"{c['cmd']}:{c['file']}")
def test_bad_input_one_line_exit_2_store_unchanged(cli, shared_url, case):
    path = str(BAD / case["file"])
    args = [a.replace("{file}", path) for a in COMMANDS[case["cmd"]]] + case.get("extra", [])
    before = logical_dump(shared_url)
    code, out, err = cli(args, db=shared_url, catalog=LAB_CATALOG)
    assert code == 2, (out, err)
    lines = err.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("holdoff: error: "), err
    assert case["fragment"] in lines[0]
    if case["cmd"] not in OPTION_ONLY:
        where = f"{path}:{case['line']}" if "line" in case else path
        assert f"holdoff: error: {where}" in lines[0]
    assert logical_dump(shared_url) == before


def test_breakdown_fit_json_contract(cli):
    f = EXAMPLES / "ht-film-breakdown-25C.csv"
    code, out, _ = cli(["breakdown", "fit", f, "--json", "--confidence", "95%"])
    assert code == 0
    d = json.loads(out)
    assert set(d) == {"n", "censored", "shape", "shape_unbiased", "scale_V_per_m", "confidence", "shape_bounds",
                      "scale_bounds_V_per_m", "b1_V_per_m", "b10_V_per_m"}
    assert (d["n"], d["censored"], d["confidence"]) == (20, 2, 0.95)
    lo, hi = d["scale_bounds_V_per_m"]
    assert lo < d["scale_V_per_m"] < hi and d["b1_V_per_m"] < d["b10_V_per_m"] < d["scale_V_per_m"]
    # the weakest-link quantile E_p = α(−ln(1−p))^(1/β) (IEC 62539 / IEEE 930, published-values.md §Weibull)
    assert d["b10_V_per_m"] == pytest.approx(d["scale_V_per_m"] * (-np.log(0.9)) ** (1 / d["shape"]))


def test_breakdown_fit_text(cli):
    code, out, _ = cli(["breakdown", "fit", EXAMPLES / "ht-film-breakdown-150C.csv"])
    assert code == 0
    assert "ht-film-breakdown-150C.csv: 20 specimens, 2 censored" in out
    assert "scale α (63.2 %)" in out and "V/µm" in out and "IEEE Std 930" in out


def test_loop_analyze_json_contract(cli):
    code, out, _ = cli(["loop", "analyze", EXAMPLES / "relaxor-loop-25C.csv", "--json"])
    assert code == 0
    d = json.loads(out)
    assert {"stored_J_per_m3", "recovered_J_per_m3", "lost_J_per_m3", "efficiency", "max_field_V_per_m",
            "max_polarization_C_per_m2", "remanent_polarization_C_per_m2"} <= set(d)
    # the energy balance of a loop: W = W_rec + W_loss, η = W_rec/W (AIP Advances 10, 095132 (2020))
    assert d["stored_J_per_m3"] == pytest.approx(d["recovered_J_per_m3"] + d["lost_J_per_m3"])
    assert d["efficiency"] == pytest.approx(d["recovered_J_per_m3"] / d["stored_J_per_m3"])
    assert d["max_field_V_per_m"] == pytest.approx(250e5)


def test_import_json_and_show(cli, url):
    f = EXAMPLES / "ht-film-breakdown-105C.csv"
    code, out, _ = cli(["breakdown", "import", f, "--material", "fixture-film", "--json"], db=url)
    assert code == 0
    d = json.loads(out)
    assert (d["material"], d["n"], d["censored"], d["source"]["kind"]) == ("fixture-film", 20, 2, "invented")
    assert set(d["fit"]) >= {"shape", "scale_V_per_m", "scale_bounds_V_per_m"}
    code, out, _ = cli(["show", "fixture-film", "--json"], db=url)
    sets = json.loads(out)["breakdown_sets"]
    assert [s["label"] for s in sets] == ["HT copolymer film, 105 C, series A"]
    assert sets[0]["n"] == 20 and sets[0]["scale_V_per_m"] == pytest.approx(d["fit"]["scale_V_per_m"])
    code, out, _ = cli(["show", "fixture-film"], db=url)
    assert "HT copolymer film, 105 C, series A" in out and "[invented]" in out
    code, out, err = cli(["breakdown", "import", f, "--material", "fixture-film"], db=url)
    assert code == 2 and "already imported" in err and "--force" in err


def test_options_override_and_text_summary(cli, url, tmp_path):
    f = write_set(tmp_path / "v.csv", [1.8, 1.9, 2.0, 2.1, 2.2], unit="kV").with_suffix(".csv")
    f.write_text(f.read_text().replace("field [kV]", "voltage [kV]"))
    code, out, err = cli(["breakdown", "import", f, "--new-material", "Bench film C", "--family", "polymer-film",
                          "--thickness", "3", "--area", "0.2", "--temp", "85", "--ramp", "1 kV/s",
                          "--waveform", "dc", "--operator", "R. Roe", "--lab", "Bench lab [B]", "--date",
                          "2024-06-01"], db=url)
    assert code == 0, err
    assert "created lab material 'bench-film-c'" in out and "[lab]" in out and "Weibull scale" in out
    code, out, _ = cli(["show", "bench-film-c", "--json"], db=url)
    d = json.loads(out)
    (s,) = d["breakdown_sets"]
    assert (s["thickness_m"], s["area_m2"], s["temperature_K"], s["ramp_V_per_s"]) == (
        pytest.approx(3e-6), pytest.approx(2e-5), pytest.approx(358.15), pytest.approx(1000.0))
    cite = next(v["source"]["citation"] for v in d["values"] if v["property"] == "breakdown_field")
    assert "Bench lab [B]" in cite and "R. Roe" in cite and "2024-06-01" in cite


def test_add_dry_run_then_update_with_history(cli, url, tmp_path):
    src = tmp_path / "sources.toml"
    src.write_text('[bench-book]\nkind = "lab"\ncitation = "Bench lab notebook 3 (test)"\n')
    mat = tmp_path / "bench.toml"
    body = ('key = "bench-glass"\nname = "Bench glass"\nfamily = "glass"\n\n[[value]]\nproperty = '
            '"relative_permittivity"\nvalue = {eps}\ntemperature = "25 degC"\nsource = "bench-book"\n')
    mat.write_text(body.format(eps=6.5))
    before = logical_dump(url)
    code, out, _ = cli(["add", mat, "--dry-run"], db=url)
    assert code == 0 and "would: new material 'bench-glass'" in out and "nothing written" in out
    assert logical_dump(url) == before
    assert cli(["add", mat], db=url)[0] == 0
    mat.write_text(body.format(eps=6.8))
    code, out, _ = cli(["add", mat, "--json"], db=url)
    d = json.loads(out)
    assert d["materials"] == ["bench-glass"] and "6.5 → 6.8" in d["changes"][0]
    code, out, _ = cli(["show", "bench-glass", "--history", "--json"], db=url)
    vals = sorted((v["value"], v.get("retired_reason")) for v in json.loads(out)["values"])
    assert vals == [(6.5, "superseded by holdoff add bench.toml"), (6.8, None)]
    code, out, _ = cli(["show", "bench-glass"], db=url)
    assert "6.5" not in out and "6.8" in out


def test_large_file_is_streamed(cli, url, tmp_path):
    x = 640 * np.random.default_rng(5).weibull(12.0, 12_000)
    f = write_set(tmp_path / "big.csv", x, header={"temperature": "25", "area": "1 cm^2"})
    assert f.stat().st_size > 100_000
    code, out, err = cli(["breakdown", "import", f, "--material", "fixture-film", "--json"], db=url)
    assert code == 0, err
    assert json.loads(out)["n"] == 12_000


def test_two_processes_import_into_one_sqlite_store_at_once(url, tmp_path):
    files = []
    for i in range(2):
        x = 600 * np.random.default_rng(10 + i).weibull(10.0, 20_000)
        files.append(write_set(tmp_path / f"p{i}.csv", x, header={"temperature": f"{25 + 80 * i}"}))
    env = dict(os.environ, HOLDOFF_CATALOG=str(LAB_CATALOG), COLUMNS="120")
    env.pop("HOLDOFF_DB", None)
    procs = [subprocess.Popen([sys.executable, "-m", "cli.app", "--db", url, "breakdown", "import", str(f),
                               "--material", "fixture-film", "--json"], cwd=ROOT, env=env,
                              stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True) for f in files]
    results = [p.communicate(timeout=120) for p in procs]
    assert [p.returncode for p in procs] == [0, 0], results
    from db.labdata import describe_sets, read_points
    from db.store import open_store
    from materials.labfiles import read_breakdown

    st = open_store(url)
    try:
        with st.session() as s:
            sets = describe_sets(s, "fixture-film")["breakdown_sets"]
            assert sorted(x["label"] for x in sets) == ["p0", "p1"]
            assert all(x["n"] == 20_000 for x in sets)
            for i, f in enumerate(files):
                assert np.array_equal(read_points(s, "fixture-film", f"p{i}")[0], read_breakdown(f).fields_V_per_m)
    finally:
        st.dispose()


def test_demo_walk_through(cli, url):
    code, out, err = cli(["add", EXAMPLES / "ht-film.toml", EXAMPLES / "relaxor-values.csv"], db=url)
    assert code == 0, err
    for t in (25, 105, 150):
        code, _, err = cli(["breakdown", "import", EXAMPLES / f"ht-film-breakdown-{t}C.csv", "--material",
                            "demo-ht-copolymer-film"], db=url)
        assert code == 0, err
    for f, key in (("ht-film-loop-25C.csv", "demo-ht-copolymer-film"),
                   ("relaxor-loop-25C.csv", "demo-relaxor-ceramic")):
        code, _, err = cli(["loop", "import", EXAMPLES / f, "--material", key], db=url)
        assert code == 0, err
    code, out, _ = cli(["show", "demo-ht-copolymer-film", "--json"], db=url)
    d = json.loads(out)
    assert [round(s["temperature_K"] - 273.15) for s in d["breakdown_sets"]] == [25, 105, 150]
    assert len(d["loops"]) == 1
    assert {v["source"]["kind"] for v in d["values"]} == {"invented"}
    # a nearly linear film recovers close to ½·ε0·εr·E² = 2.34 J/cm³ at 400 V/µm and εr 3.3
    rec = max((v for v in d["values"] if v["property"] == "recoverable_energy_density"),
              key=lambda v: v["field_V_per_m"])
    assert rec["value"] == pytest.approx(0.5 * 8.8541878128e-12 * 3.3 * 4e8 ** 2, rel=0.05)


def test_every_lab_command_has_help(cli):
    for args in (["add"], ["breakdown", "fit"], ["breakdown", "import"], ["loop", "analyze"], ["loop", "import"]):
        code, out, _ = cli(args + ["--help"])
        assert code == 0 and "Usage" in out
        assert len([line for line in out.splitlines() if line.strip()]) > 3


def test_progress_bar_on_a_terminal_for_large_files(tmp_path, monkeypatch):
    import io

    from rich.console import Console

    import cli.output
    from cli import lab_cmds
    from materials.labfiles import read_breakdown

    buf = io.StringIO()
    monkeypatch.setattr(cli.output, "console",
                        lambda stderr=False: Console(file=buf, force_terminal=True, width=100))
    small = write_set(tmp_path / "small.csv", [600, 610, 620])
    lab_cmds._read(read_breakdown, small, {})
    assert buf.getvalue() == ""
    big = write_set(tmp_path / "big.csv", 640 * np.random.default_rng(6).weibull(12.0, 15_000))
    assert lab_cmds._read(read_breakdown, big, {}).n == 15_000
    assert "reading big.csv" in buf.getvalue()
