"""The first commands on the mini catalog, with a pinned terminal width: catalog, show, sources, db init/check."""

from __future__ import annotations

import json
import subprocess
import sys
from pathlib import Path

import pytest

MINI = Path(__file__).parent / "data" / "mini_catalog_foundation"
C = 273.15


@pytest.fixture
def run(mini_cli):
    return mini_cli


def _one_line_error(code, out, err, *needles, exit_code=2):
    assert code == exit_code, (out, err)
    assert out == ""
    assert err.startswith("holdoff: error: ") and err.count("\n") == 1, err
    for n in needles:
        assert n in err, err


def _table_rows(out: str) -> dict[str, str]:
    """Plain-text table lines keyed by their first cell."""
    return {line.split()[0]: line for line in out.splitlines() if line.strip()}


# --- catalog -------------------------------------------------------------------------------------------------------

def test_catalog_lists_every_material_with_units(run):
    code, out, err = run("catalog")
    assert (code, err) == (0, "")
    assert out.splitlines()[0] == "4 materials"
    header = out.splitlines()[1].split()
    assert header[:3] == ["key", "name", "family"] and "εr" in header and "E_bd" in header
    rows = _table_rows(out)
    assert set(rows) >= {"mini-air", "mini-film", "mini-glass", "mini-x7r"}
    film = rows["mini-film"]
    assert "polymer-film" in film and "600 V/µm" in film and "-55 °C … 105 °C" in film and "2.2" in film
    assert "9.84 V/µm" in rows["mini-glass"]          # Callister's 250 V/mil, in V/µm
    assert "recollection" in rows["mini-x7r"]          # the flags column names unpublished kinds
    assert "about 25 °C and 1 kHz" in out


def test_catalog_family(run):
    code, out, err = run("catalog", "--family", "gas")
    assert (code, err) == (0, "")
    assert out.splitlines()[0] == "1 materials"
    assert "mini-air" in out and "mini-film" not in out


def test_gas_permittivity_keeps_its_digits(run):
    # εr of a gas differs from 1 in the fourth decimal: 1.0006 must not be shown as 1.001.
    code, out, _ = run("catalog", "--family", "gas")
    assert code == 0 and "1.0006" in _table_rows(out)["mini-air"]
    assert "1.0006" in run("show", "mini-air")[1]


def test_catalog_unknown_family(run):
    _one_line_error(*run("catalog", "--family", "plastic"), "--family", "plastic", "polymer-film")


def test_catalog_where(run):
    code, out, _ = run("catalog", "--where", "max_temperature >= 125 degC")
    assert code == 0 and set(_table_rows(out)) & {"mini-air", "mini-film", "mini-glass", "mini-x7r"} == {"mini-x7r"}
    code, out, _ = run("catalog", "--where", "breakdown_field > 100 V/um and not family = ceramic-class-2")
    assert code == 0 and "mini-film" in out and "mini-x7r" not in out and "mini-glass" not in out
    # Nothing passes: the (empty) listing is still printed, and exit code 1 tells a script so.
    code, out, _ = run("catalog", "--family", "glass", "--where", "relative_permittivity > 100")
    assert code == 1 and out.splitlines()[0] == "0 materials"


def test_catalog_where_error_points_at_the_position(run):
    code, out, err = run("catalog", "--where", "relative_permittivity > 3 and colour = red")
    _one_line_error(code, out, err, "unknown property 'colour'", "at position 31", "and »colour")


def test_catalog_where_refuses_code(run):
    _one_line_error(*run("catalog", "--where", "__import__('os').system('echo hacked')"), "--where")


def test_catalog_json(run):
    code, out, _ = run("catalog", "--json")
    assert code == 0
    rows = {r["key"]: r for r in json.loads(out)}
    assert set(rows) == {"mini-air", "mini-film", "mini-glass", "mini-x7r"}
    film = rows["mini-film"]
    assert film["family"] == "polymer-film"
    assert film["relative_permittivity"] == pytest.approx(2.20)
    assert film["breakdown_field_V_per_m"] == pytest.approx(6e8)
    assert film["max_temperature_K"] == pytest.approx(105 + C)
    assert rows["mini-air"]["loss_tangent"] is None


def test_catalog_rich_table_fits_the_pinned_width(run, monkeypatch):
    import cli.output

    monkeypatch.setattr(cli.output, "is_terminal", lambda: True)
    code, out, _ = run("catalog")
    assert code == 0
    lines = out.splitlines()
    assert max(len(line) for line in lines) <= 120
    assert any("mini-film" in line for line in lines)
    assert any(set(line) <= {"-", " "} and line for line in lines)  # the heading underlined, no frame


# --- show ----------------------------------------------------------------------------------------------------------

def test_show_prints_values_conditions_and_sources(run):
    code, out, err = run("show", "mini-x7r")
    assert (code, err) == (0, "")
    assert out.startswith("Test X7R ceramic  (mini-x7r)\n")
    assert "family ceramic-class-2; nonlinear response" in out
    lines = out.splitlines()
    bias = [line for line in lines if "bias 5 V/µm" in line]
    assert len(bias) == 1 and "1400" in bias[0] and "25 °C, 1 kHz" in bias[0]
    assert any("125 °C" in line and "max_temperature" in line and "eia-198-x7r [standard]" in line
               for line in lines)
    # A recollection source is flagged with '!' beside the value and in the list of sources.
    bd = next(line for line in lines if line.startswith("breakdown_field"))
    assert "50 V/µm" in bd and "fixture-recollection [recollection] !" in bd
    assert "eia-198-x7r [standard]: ANSI/EIA-198-1" in out
    assert "fixture-recollection [recollection]: A value remembered" in out
    assert "! values resting on recollection or invented sources" in out


def test_show_published_values_are_not_flagged(run):
    code, out, _ = run("show", "mini-glass")
    assert code == 0
    assert "!" not in out
    assert "callister-8e-t18-5 [handbook]: W. D. Callister" in out
    rows = [line for line in out.splitlines() if line.startswith(("relative_permittivity", "breakdown_field"))]
    assert any("6.9" in r and "60 Hz" in r for r in rows)
    assert any("9.84 V/µm" in r and "not stated" in r for r in rows)


def test_show_units_of_the_display(run):
    code, out, _ = run("show", "mini-film")
    assert code == 0
    for text in ("600 V/µm", "25 °C, d 3 µm, A 1 cm²", "105 °C", "0.905 g/cm³", "2 µm", "25 °C, 1 MHz"):
        assert text in out, text


def test_show_json_contract(run):
    # DESIGN.md: {key, name, family, values: [{property, value, low, high, unit, temperature_K, frequency_Hz,
    # field_V_per_m, thickness_m, area_m2, source: {key, kind, citation}}]}
    code, out, _ = run("show", "mini-film", "--json")
    assert code == 0
    data = json.loads(out)
    assert {"key", "name", "family", "values"} <= set(data)
    assert (data["key"], data["name"], data["family"]) == ("mini-film", "Test polymer film", "polymer-film")
    keys = {"property", "value", "low", "high", "unit", "temperature_K", "frequency_Hz", "field_V_per_m",
            "thickness_m", "area_m2", "source"}
    assert len(data["values"]) == 13
    for v in data["values"]:
        assert keys <= set(v)
        assert set(v["source"]) >= {"key", "kind", "citation"}
        assert v["source"]["kind"] == "invented"
    bd = sorted((v for v in data["values"] if v["property"] == "breakdown_field"), key=lambda v: v["temperature_K"])
    assert [v["value"] for v in bd] == [pytest.approx(6e8), pytest.approx(5e8), pytest.approx(4.5e8)]
    assert bd[0]["unit"] == "V/m" and bd[0]["thickness_m"] == pytest.approx(3e-6)
    assert bd[0]["area_m2"] == pytest.approx(1e-4) and bd[0]["temperature_K"] == pytest.approx(25 + C)
    density = next(v for v in data["values"] if v["property"] == "density")
    assert density["value"] == pytest.approx(905.0) and density["unit"] == "kg/m3"
    assert density["temperature_K"] is None and density["low"] is None


def test_show_json_bias_rows(run):
    code, out, _ = run("show", "mini-x7r", "--json")
    fields = sorted(v["field_V_per_m"] for v in json.loads(out)["values"] if v["field_V_per_m"] is not None)
    assert fields == [pytest.approx(e) for e in (2e6, 5e6, 10e6, 20e6)]


def test_show_unknown_key(run):
    _one_line_error(*run("show", "no-such-material"), "no material 'no-such-material'")


# --- sources -------------------------------------------------------------------------------------------------------

def test_sources(run):
    code, out, err = run("sources")
    assert (code, err) == (0, "")
    assert out.splitlines()[0] == "5 sources"
    rows = _table_rows(out)
    assert rows["callister-8e-t18-5"].split()[1:3] == ["handbook", "2"]
    assert rows["fixture-invented"].split()[1:3] == ["invented", "21"]
    assert "published (handbook, standard, paper, web): 4 of 27 values (15%)" in out
    assert "recollection = remembered, not checked" in out


def test_sources_kind(run):
    code, out, _ = run("sources", "--kind", "standard")
    assert code == 0
    assert out.splitlines()[0] == "1 sources" and "eia-198-x7r" in out and "callister" not in out


def test_sources_unknown_kind(run):
    _one_line_error(*run("sources", "--kind", "hearsay"), "--kind", "hearsay")


def test_sources_json(run):
    code, out, _ = run("sources", "--json")
    assert code == 0
    data = json.loads(out)
    by_key = {s["key"]: s for s in data["sources"]}
    assert by_key["air-3-mv-per-m"] == {"key": "air-3-mv-per-m", "kind": "common-practice",
                                        "citation": by_key["air-3-mv-per-m"]["citation"], "note": "", "values": 1}
    assert data["values"] == 27
    assert data["values_by_kind"] == {"handbook": 2, "standard": 2, "common-practice": 1, "recollection": 1,
                                      "invented": 21}
    assert data["published_share"] == pytest.approx(4 / 27)


# --- db ------------------------------------------------------------------------------------------------------------

def test_db_init_and_check(cli, tmp_path):
    url = f"sqlite:///{tmp_path / 'new' / 'holdoff.sqlite'}"
    code, out, err = cli(["db", "init"], db=url, catalog=MINI)
    assert (code, err) == (0, "")
    assert out.strip() == f"built {url}: 4 materials, 27 values, 5 sources"
    code, out, err = cli(["db", "check"], db=url, catalog=MINI)
    assert (code, out, err) == (0, "store OK\n", "")
    code, out, _ = cli(["db", "check", "--json"], db=url, catalog=MINI)
    assert code == 0 and json.loads(out) == {"ok": True, "findings": []}


def test_db_init_json(cli, tmp_path):
    code, out, _ = cli(["db", "init", "--json"], db=f"sqlite:///{tmp_path / 'x.sqlite'}", catalog=MINI)
    assert code == 0
    info = json.loads(out)
    assert (info["materials"], info["values"], info["sources"]) == (4, 27, 5)
    assert info["values_by_kind"]["invented"] == 21


def _store_edited_behind_our_back(cli, tmp_path, sql: str) -> str:
    """A store built by 'db init' from the mini catalog, then changed with raw SQL; its URL."""
    import sqlite3

    path = tmp_path / "holdoff.sqlite"
    url = f"sqlite:///{path}"
    assert cli(["db", "init"], db=url, catalog=MINI)[0] == 0
    con = sqlite3.connect(path)
    with con:
        con.execute(sql)
    con.close()
    return url


def test_db_check_finds_a_broken_row(cli, tmp_path):
    url = _store_edited_behind_our_back(
        cli, tmp_path, "UPDATE property_value SET value = 2200 WHERE property = 'relative_permittivity' AND "
        "material_id = (SELECT id FROM material WHERE key = 'mini-film')")
    code, out, _ = cli(["db", "check"], db=url, catalog=MINI)
    assert code == 1
    assert "error: " in out and "mini-film" in out and "plausible range" in out


def test_db_check_on_a_missing_store(cli, tmp_path):
    path = tmp_path / "absent.sqlite"
    # A store that is not there cannot be opened: exit code 3, not 2.
    _one_line_error(*cli(["db", "check"], db=f"sqlite:///{path}", catalog=MINI), "no store", "db init", exit_code=3)
    assert not path.exists()


def test_first_use_builds_the_store(cli, tmp_path):
    path = tmp_path / "first.sqlite"
    code, out, _ = cli(["catalog", "--family", "glass"], db=f"sqlite:///{path}", catalog=MINI)
    assert code == 0 and "mini-glass" in out and path.exists()


def test_global_db_option(cli, mini_db):
    code, out, _ = cli(["--db", mini_db, "show", "mini-air"], db="sqlite:///" + "/nonexistent/never/used.sqlite",
                       catalog=MINI)
    assert code == 0 and "Test air" in out


# --- help ----------------------------------------------------------------------------------------------------------

def _walk(cmd, path=("holdoff",)):
    yield path, cmd
    for name, sub in sorted(getattr(cmd, "commands", {}).items()):
        yield from _walk(sub, path + (name,))


def test_every_command_and_option_has_help():
    import typer.main

    from cli.app import app

    missing = []
    for path, cmd in _walk(typer.main.get_command(app)):
        if not (cmd.help or "").strip():
            missing.append(" ".join(path))
        for p in cmd.params:
            if p.name != "help" and not (getattr(p, "help", None) or "").strip():
                missing.append(f"{' '.join(path)} {p.name}")
    assert missing == []
    assert len(list(_walk(typer.main.get_command(app)))) >= 8


def test_help_of_every_command_runs(cli):
    import typer.main

    from cli.app import app

    for path, _cmd in _walk(typer.main.get_command(app)):
        code, out, err = cli([*path[1:], "--help"])
        assert code == 0, (path, err)
        assert out.startswith("Usage: ") and len(out.strip().splitlines()) > 2, path


def test_help_is_cheap():
    # No heavy import for --help: the CLI must start instantly (STYLE.md, 'No work at import time').
    code = ("import sys\n"
            "from cli.app import app\n"
            "import typer.main\n"
            "for args in (['--help'], ['show', '--help'], ['db', 'init', '--help'], ['catalog', '--help']):\n"
            "    try:\n"
            "        typer.main.get_command(app).main(args, prog_name='holdoff')\n"
            "    except SystemExit:\n"
            "        pass\n"
            "print('HEAVY', [m for m in ('sqlalchemy', 'pandas', 'scipy', 'pint', 'matplotlib')"
            " if m in sys.modules])\n")
    res = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True,
                         env={"PATH": "/usr/bin:/bin", "COLUMNS": "120", "HOME": str(Path.home())})
    last = res.stdout.strip().splitlines()[-1]
    assert last == "HEAVY []", res.stdout[-2000:]


def test_console_script_help():
    exe = Path(sys.executable).with_name("holdoff")
    if not exe.exists():
        pytest.skip("the console script is not installed in this environment")
    res = subprocess.run([str(exe), "--help"], capture_output=True, text=True, env={"COLUMNS": "120",
                                                                                      "PATH": "/usr/bin:/bin"})
    assert res.returncode == 0 and "Usage: holdoff" in res.stdout and res.stderr == ""


def test_show_history_keeps_retired_values(cli, tmp_path):
    url = _store_edited_behind_our_back(
        cli, tmp_path, "UPDATE property_value SET retired_at = '2026-01-02 03:04:05', retired_reason = 'unit slip' "
        "WHERE property = 'density'")
    code, out, _ = cli(["show", "mini-film"], db=url, catalog=MINI)
    assert code == 0 and "density" not in out
    code, out, _ = cli(["show", "mini-film", "--history"], db=url, catalog=MINI)
    line = next(line for line in out.splitlines() if line.startswith("density"))
    assert "0.905 g/cm³" in line and "retired 2026-01-02 03:04:05: unit slip" in out
    code, out, _ = cli(["show", "mini-film", "--history", "--json"], db=url, catalog=MINI)
    density = next(v for v in json.loads(out)["values"] if v["property"] == "density")
    assert (density["retired_at"], density["retired_reason"]) == ("2026-01-02 03:04:05", "unit slip")
    code, out, _ = cli(["catalog", "--where", "has density"], db=url, catalog=MINI)
    assert code == 1 and out.splitlines()[0] == "0 materials"
