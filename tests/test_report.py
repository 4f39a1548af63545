"""Comparison reports: the table model, every export format read back, traceability marks, the CLI commands."""

from __future__ import annotations

import json
import math
from html.parser import HTMLParser

import pandas as pd
import pytest

from materials.errors import InputError
from ranking import report

EPS0 = 8.8541878188e-12


@pytest.fixture
def materials(make_material):
    """Three films: one on handbook values, one resting on a recollection, one on invented demo data."""
    def film(key, eps, ebd_V_per_m, kind, **extra):
        rows = [("relative_permittivity", eps, kind, {"low": eps * 0.95, "high": eps * 1.05}),
                ("breakdown_field", ebd_V_per_m, kind, {"low": ebd_V_per_m * 0.8, "high": ebd_V_per_m * 1.1,
                                                        "area_m2": 1e-4}),
                ("loss_tangent", 2e-4, "handbook", {"frequency_Hz": 1e3}),
                ("max_temperature", 378.15, "handbook"), ("min_temperature", 218.15, "handbook")]
        return make_material(key, rows, **extra)

    return [film("film-a", 2.2, 700e6, "handbook"), film("film-b", 3.3, 570e6, "recollection"),
            film("demo-ceramic", 1800.0, 25e6, "invented", family="ceramic-class-2")]


@pytest.fixture
def result():
    """A hand-made shortlist result in the shape of ranking.shortlist.shortlist's."""
    crit = [
        {"name": "energy", "label": "design energy density", "unit": "J/m3", "display_unit": "J/cm**3",
         "benefit": True, "weight": 3.0, "formula": "½·ε0·εr,min·E_op²"},
        {"name": "volume", "label": "dielectric volume", "unit": "m3", "display_unit": "cm**3", "benefit": False,
         "weight": 1.0, "formula": "W / u_op"},
        {"name": "drift", "label": "capacitance drift", "unit": "1", "display_unit": "%", "benefit": False,
         "weight": 1.0, "formula": "…"},
        {"name": "confidence", "label": "data confidence", "unit": "1", "display_unit": "", "benefit": True,
         "weight": 1.0, "formula": "mean evidence score"},
    ]
    ranked = [
        {"rank": 1, "key": "film-a", "name": "Film A", "family": "polymer-film", "thickness_m": None,
         "label": "film-a", "score": 0.81, "criteria": {"energy": 2.5e6, "volume": 2e-5, "drift": 0.02,
                                                          "confidence": 0.9},
         "contributions": {"energy": 0.5, "volume": 0.2, "drift": 0.05, "confidence": 0.06}, "p_top": 0.7,
         "p_top_k": 0.95, "binding": "breakdown at 105 °C", "versus_winner": "", "dominated_by": None,
         "confidence": 0.9, "sources": {"energy": ["hb-1"], "volume": ["hb-1"], "drift": ["hb-1"],
                                         "confidence": ["hb-1"]}, "flags": [],
         "source_kinds": {"energy": ["handbook"], "volume": ["handbook"], "drift": ["handbook"],
                          "confidence": ["handbook"]}},
        {"rank": 2, "key": "film-b", "name": "Film B", "family": "polymer-film", "thickness_m": None,
         "label": "film-b", "score": 0.64, "criteria": {"energy": 1.9e6, "volume": 2.6e-5, "drift": 0.05,
                                                          "confidence": 0.35},
         "contributions": {"energy": 0.4, "volume": 0.15, "drift": 0.04, "confidence": 0.05}, "p_top": 0.3,
         "p_top_k": 0.9, "binding": "breakdown at 105 °C", "versus_winner": "behind on design energy density",
         "dominated_by": "film-a", "confidence": 0.35,
         "sources": {"energy": ["mem-1", "hb-1"], "volume": ["mem-1"], "drift": [], "confidence": ["mem-1"]},
         "flags": ["drift missing: worst of the field assumed", "recollection"],
         "source_kinds": {"energy": ["handbook", "recollection"], "volume": ["recollection"], "drift": ["assumed"],
                          "confidence": ["recollection"]}},
    ]
    return {
        "target": {"name": "test bank", "voltage_V": 800.0, "tmin_K": 233.15, "tmax_K": 378.15,
                   "energy_density_J_per_m3": 1e6, "energy_J": None, "failure_probability": 0.001, "margin": 1.2,
                   "area_m2": None, "max_loss_tangent": None, "frequency_Hz": None, "families": [],
                   "weights": {"energy": 3.0, "volume": 1.0, "drift": 1.0, "confidence": 1.0}},
        "method": "topsis", "criteria": crit, "ranked": ranked,
        "excluded": [{"key": "demo-ceramic", "name": "Demo ceramic", "family": "ceramic-class-2",
                      "reasons": ["rated to 85 °C (max); target needs 105 °C", "weibull_shape missing"]}],
        "robustness": {"draws": 100, "seed": 0, "top_k": 2},
        "sources": {"hb-1": {"kind": "handbook", "citation": "A Handbook, 3rd ed., table 4"},
                    "mem-1": {"kind": "recollection", "citation": "remembered by the curators, not checked"}},
        "cautions": ["Caution: screening estimates, not a rating; follow the applicable standards."],
    }


def assert_same_table(back, df):
    """A table read back from a file equals the one written: numbers to 12 digits, text with blanks as ''."""
    assert list(back.columns) == list(df.columns)

    def norm(frame):
        out = frame.copy()
        for c in out.columns:
            if pd.api.types.is_numeric_dtype(df[c]):
                out[c] = pd.to_numeric(out[c]).astype(float)
            else:
                out[c] = out[c].astype(object).where(out[c].notna(), "").astype(str)
        return out

    pd.testing.assert_frame_equal(norm(back), norm(df), check_exact=False, rtol=1e-12)


# --- the table ------------------------------------------------------------------------------------------------

def test_shortlist_frame_has_units_in_headers_and_sources_beside_values(result):
    df = report.comparison_frame(result)
    assert list(df["key"]) == ["film-a", "film-b"]
    assert "design energy density [J/cm³]" in df.columns
    assert "dielectric volume [cm³]" in df.columns
    assert "capacitance drift [%]" in df.columns
    # SI in the result, display units in the table: 2.5e6 J/m³ = 2.5 J/cm³; 2e-5 m³ = 20 cm³; 0.02 = 2 %.
    a = df.iloc[0]
    assert a["design energy density [J/cm³]"] == pytest.approx(2.5)
    assert a["dielectric volume [cm³]"] == pytest.approx(20.0)
    assert a["capacitance drift [%]"] == pytest.approx(2.0)
    assert a["design energy density: sources"] == "hb-1"
    b = df.iloc[1]
    assert b["design energy density: sources"] == "mem-1 (recollection); hb-1"
    assert "recollection" in b["flags"] and "drift missing" in b["flags"]
    assert b["P(top 2)"] == pytest.approx(0.9)


def test_materials_frame_at_the_reference_condition(materials):
    df = report.comparison_frame(materials)
    row = df.set_index("key").loc["film-a"]
    assert row["relative permittivity εr"] == pytest.approx(2.2)
    assert row["breakdown field [V/µm]"] == pytest.approx(700.0)
    assert row["rated maximum temperature [°C]"] == pytest.approx(105.0)
    # Worked example: ½·ε0·εr·E² with εr 2.2 and 700 V/µm is 4.77 J/cm³ (ε0 = 8.854e-12 F/m).
    assert row["energy-density ceiling ½·ε0·εr·E_bd² [J/cm³]"] == pytest.approx(0.5 * EPS0 * 2.2 * 7e8 ** 2 / 1e6)
    assert row["energy-density ceiling ½·ε0·εr·E_bd² [J/cm³]"] == pytest.approx(4.77, abs=0.01)
    assert df.set_index("key").loc["film-b", "breakdown field: sources"] == "recollection-source (recollection)"


def test_ceiling_column_against_scipy_epsilon0(materials):
    """The ceiling uses ε0 from CODATA 2022 as scipy.constants gives it."""
    from scipy.constants import epsilon_0

    rep = report.from_materials(materials)
    for row in rep.rows:
        u = row.values["ceiling"]
        assert u == pytest.approx(0.5 * epsilon_0 * row.values["relative_permittivity"]
                                  * row.values["breakdown_field"] ** 2, rel=1e-9)


def test_comparison_outside_the_data_is_left_empty_unless_extrapolated(make_material):
    m = make_material("curve-film", [
        ("relative_permittivity", 2.3, "handbook", {"temperature_K": 233.15}),
        ("relative_permittivity", 2.1, "handbook", {"temperature_K": 378.15}),
        ("breakdown_field", 6e8, "handbook")])
    rep = report.from_materials([m], temperature_K=423.15)
    assert "relative_permittivity" not in rep.rows[0].values
    assert "outside the data" in rep.rows[0].notes["relative_permittivity"]
    rep = report.from_materials([m], temperature_K=423.15, extrapolate=True)
    assert rep.rows[0].values["relative_permittivity"] == pytest.approx(2.1)
    assert "extrapolated" in rep.rows[0].flags


# --- traceability marks -----------------------------------------------------------------------------------------

def test_one_evidence_mark_per_cell_the_weakest_that_applies(result, materials):
    from ranking.report.marks import LEGEND, MARKS, ORDER

    assert len(set(MARKS.values())) == len(ORDER) == 7 and set(LEGEND) == set(MARKS)
    assert not any(m.isalnum() or m in "+-.eE°%" for m in MARKS.values())  # never read as a digit, sign or unit
    rep = report.from_shortlist(result)
    a, b = rep.rows
    assert rep.mark(a, "energy") == MARKS["published"]
    assert rep.mark(b, "energy") == MARKS["recollection"]   # a handbook value beside a recollection: the weaker
    assert rep.mark(b, "drift") == MARKS["imputed"]         # the worst of the field, no source of its own
    cmp_rep = report.from_materials(materials)
    demo = next(r for r in cmp_rep.rows if r.key == "demo-ceramic")
    assert cmp_rep.mark(demo, "relative_permittivity") == MARKS["invented"]
    assert cmp_rep.mark(demo, "loss_tangent") == MARKS["published"]  # the loss tangent rests on a handbook


def test_the_same_mark_in_every_format(result, tmp_path):
    """Terminal rule (row_evidence on the shortlist row), JSON, CSV, XLSX, Markdown and HTML agree cell by cell."""
    from ranking.report.marks import MARKS, row_evidence

    rep = report.from_shortlist(result)
    names = [c.name for c in rep.columns]
    data = json.loads(report.write(result, tmp_path / "r.json").read_text())
    csv = pd.read_csv(report.write(result, tmp_path / "r.csv"))
    xlsx = pd.read_excel(report.write(result, tmp_path / "r.xlsx"), sheet_name="comparison")
    md = report.write(result, tmp_path / "r.md").read_text()
    html = report.write(result, tmp_path / "r.html", charts=False).read_text()
    for i, (raw, row) in enumerate(zip(result["ranked"], rep.rows, strict=True)):
        terminal = row_evidence(raw, names)
        for c in rep.columns:
            cls = rep.evidence(row, c.name)
            assert terminal[c.name] == cls == data["ranked"][i]["evidence"][c.name]
            assert data["ranked"][i]["marks"][c.name] == MARKS[cls]
            assert csv[f"{c.label}: evidence"][i] == cls == xlsx[f"{c.label}: evidence"][i]
    assert "1.9 ? [2,1]" in md and "| 5 \\_ |" in md
    assert 'class="num ev-recollection' in html and 'class="num ev-imputed' in html
    for text in (md, html):
        assert "recollection: remembered, not checked" in text and "imputed: missing" in text


def test_footnote_numbers_cover_every_cited_source(result):
    rep = report.from_shortlist(result)
    assert rep.source_numbers() == {"hb-1": 1, "mem-1": 2}


# --- writers ----------------------------------------------------------------------------------------------------

def test_xlsx_reads_back_equal_to_the_table(result, tmp_path):
    path = report.write(result, tmp_path / "r.xlsx")
    df = report.comparison_frame(result)
    back = pd.read_excel(path, sheet_name="comparison")
    assert_same_table(back, df)
    sheets = pd.read_excel(path, sheet_name=None)
    assert set(sheets) == {"comparison", "excluded", "sources", "target", "notes"}
    ex = sheets["excluded"].set_index("reason")
    assert ex.loc["weibull_shape missing", "materials"] == "demo-ceramic"
    assert ex.loc["rated to 85 °C (max); target needs 105 °C", "candidates"] == 1
    src = sheets["sources"].set_index("key")
    assert src.loc["mem-1", "kind"] == "recollection"
    assert src.loc["hb-1", "citation"] == "A Handbook, 3rd ed., table 4"


def test_xlsx_layout_frozen_header_number_formats_flagged_cells(result, tmp_path):
    from openpyxl import load_workbook

    path = report.write(result, tmp_path / "r.xlsx")
    ws = load_workbook(path)["comparison"]
    assert ws.freeze_panes == "C2"  # header row and the rank/key columns stay in view
    headers = [c.value for c in ws[1]]
    col = headers.index("design energy density [J/cm³]") + 1
    assert ws.cell(row=2, column=col).number_format == "0.000"
    assert ws.cell(row=2, column=headers.index("P(first)") + 1).number_format == "0%"
    # the evidence sits in the column beside each value, no comment per cell
    ev = headers.index("design energy density: evidence") + 1
    assert ws.cell(row=3, column=ev).value == "recollection" and ws.cell(row=2, column=ev).value == "published"
    assert all(c.comment is None for row in ws.iter_rows() for c in row)
    notes = [c.value for row in load_workbook(path)["notes"].iter_rows() for c in row]
    assert any(v and v.startswith("? recollection:") for v in notes)


def test_xlsx_of_a_comparison(materials, tmp_path):
    path = report.write(materials, tmp_path / "c.xlsx")
    back = pd.read_excel(path, sheet_name="comparison")
    assert_same_table(back, report.comparison_frame(materials))
    assert "condition" in pd.read_excel(path, sheet_name=None)


def test_csv_reads_back(result, tmp_path):
    path = report.write(result, tmp_path / "r.csv")
    back = pd.read_csv(path)
    assert_same_table(back, report.comparison_frame(result))


def test_json_round_trip_through_load_json(result, materials, tmp_path):
    path = report.write(result, tmp_path / "r.json")
    data = json.loads(path.read_text())
    assert data["ranked"][0]["key"] == "film-a" and data["sources"]["mem-1"]["kind"] == "recollection"
    again = report.load_json(path)
    pd.testing.assert_frame_equal(report.comparison_frame(again), report.comparison_frame(result))
    cpath = report.write(materials, tmp_path / "c.json")
    back = report.load_json(cpath)
    assert back.kind == "comparison"
    pd.testing.assert_frame_equal(report.comparison_frame(back), report.comparison_frame(materials))


def test_markdown_has_footnotes_marks_and_legend(result, tmp_path):
    text = report.write(result, tmp_path / "r.md").read_text()
    assert "| 1 | Film A (`film-a`)" in text
    assert "- [1] `hb-1` (handbook, =): A Handbook, 3rd ed., table 4" in text
    assert "- [2] `mem-1` (recollection, ?)" in text
    assert "1.9 ? [2,1]" in text and "[^" not in text  # references [n], never footnote superscripts
    assert "| 5 \\_ |" in text and "imputed: missing" in text  # the imputed mark, escaped for Markdown
    assert "| P(top 2) |" in text
    assert "## Excluded, by reason" in text and "rated to 85 °C" in text
    assert "**Caution:** Screening estimates" in text


def test_refuses_to_overwrite_and_unknown_extensions(result, tmp_path):
    path = tmp_path / "r.html"
    report.write(result, path, charts=False)
    with pytest.raises(InputError, match="exists"):
        report.write(result, path)
    report.write(result, path, force=True, charts=False)
    with pytest.raises(InputError, match="format"):
        report.write(result, tmp_path / "r.txt")
    with pytest.raises(InputError, match="not a saved shortlist"):
        (tmp_path / "x.json").write_text('{"a": 1}')
        report.load_json(tmp_path / "x.json")


def test_exports_and_charts_pass_the_same_check_before_writing(result, tmp_path):
    from ranking import charts
    from ranking.outfile import check_output

    missing = tmp_path / "no-such-folder"
    for write in (lambda: report.write(result, missing / "r.md"), lambda: charts.save(None, missing / "c.png")):
        with pytest.raises(InputError, match="no-such-folder does not exist"):
            write()
    assert check_output(tmp_path / "R.HTM", report.FORMATS, aliases=report.ALIASES) == (tmp_path / "R.HTM", "html")
    with pytest.raises(InputError, match=r"'\.pdf': use \.csv, \.xlsx, \.md, \.html or \.json"):
        check_output(tmp_path / "r.pdf", report.FORMATS)


# --- HTML -------------------------------------------------------------------------------------------------------

class _Collect(HTMLParser):
    def __init__(self):
        super().__init__()
        self.tags, self.attrs, self.text = [], [], []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        self.attrs.append((tag, dict(attrs)))

    def handle_data(self, data):
        self.text.append(data)


def _parse(text):
    p = _Collect()
    p.feed(text)
    p.close()
    return p


def test_html_is_self_contained_and_holds_table_sources_and_svg(result, materials, tmp_path):
    path = report.export_result(result, tmp_path / "r.html", materials=materials)
    text = path.read_text()
    p = _parse(text)
    body = " ".join(p.text)
    assert p.tags.count("table") >= 3  # target, ranking, excluded
    assert p.tags.count("svg") >= 1   # scores (the engine's figures need a target the hand-made result lacks)
    assert "style" in p.tags and "script" not in p.tags and "link" not in p.tags
    assert "Film A" in body and "rated to 85 °C (max)" in body
    assert "A Handbook, 3rd ed., table 4" in body and "remembered by the curators" in body
    for tag, attrs in p.attrs:
        for name in ("src", "href", "xlink:href"):
            if name in attrs:
                assert attrs[name].startswith("#"), f"{tag} {name}={attrs[name]} leaves the page"
    assert "http://" not in text.split("<svg", 1)[0] and "https://" not in text.split("<svg", 1)[0]
    assert "@import" not in text and "url(http" not in text
    # every footnote link lands on a source entry; ids are unique across the inlined SVGs
    ids = [a["id"] for _t, a in p.attrs if "id" in a]
    assert len(ids) == len(set(ids))
    targets = {a["href"][1:] for t, a in p.attrs if t == "a" and a.get("href", "").startswith("#src-")}
    assert targets == {"src-1", "src-2"} and targets <= set(ids)
    assert "@page { size: A4 portrait" in text and "counter(pages)" in text and "@media print" in text
    assert 'class="refs">[<a href="#src-2"' in text and "<sup" not in text  # references [n], not superscripts
    assert "P(top 2)" in body and "prepared by" in body and "checked by" in body
    # the flagged value carries its mark; the legend explains it
    assert '1.9&#8239;<span class="mark">?</span>' in text and "remembered, not checked" in text


def test_hostile_text_comes_out_escaped(result, tmp_path):
    """Markup in data (a material's name, a note, a reason, a citation, the target's name) is shown as text: no
    element of it reaches the HTML page, and Markdown prints it with a backslash before the '<' (CommonMark
    backslash escapes), so no renderer reads it as raw HTML."""
    import copy

    bad = copy.deepcopy(result)
    bad["target"]["name"] = '"><script>alert(1)</script>'
    bad["ranked"][0]["name"] = "<script>alert(2)</script> | *bold*"
    bad["ranked"][0]["label"] = 'film-a" onmouseover="alert(3)'
    bad["ranked"][1]["binding"] = "<img src=x onerror=alert(4)>"
    bad["excluded"][0]["reasons"] = ["<iframe src=//example.invalid></iframe>"]
    bad["sources"]["hb-1"]["citation"] = "A & B <a href='http://example.invalid'>link</a>"
    text = report.write(bad, tmp_path / "bad.html", charts=False).read_text()
    p = _parse(text)
    assert not {"script", "img", "iframe"} & set(p.tags)
    assert not [a for t, a in p.attrs if t == "a" and not a.get("href", "").startswith("#")]
    assert not [a for _t, a in p.attrs if "onmouseover" in a or "onerror" in a]
    body = "".join(p.text)
    for s in ("<script>alert(2)</script>", "<img src=x onerror=alert(4)>", "A & B <a href='http://example.invalid'>",
              '"><script>alert(1)</script>'):
        assert s in body
    assert "&lt;script&gt;alert(2)&lt;/script&gt;" in text
    md = report.write(bad, tmp_path / "bad.md").read_text()
    assert "\\<script>alert(2)\\</script> \\| \\*bold\\*" in md
    assert "\\<img src=x onerror=alert(4)>" in md and "\\<iframe" in md
    assert md.count("<script>") == md.count("\\<script>")


def test_html_of_a_comparison_has_the_ceiling_chart(materials, tmp_path):
    text = report.write(materials, tmp_path / "c.html").read_text()
    p = _parse(text)
    assert p.tags.count("svg") == 1
    assert "Ceiling against temperature" in text and "ceiling energy density" in text
    assert '<span class="mark">!</span>' in text and "invented: demo data" in text


def test_shortlist_of_the_real_catalog_exports_to_every_format(mem_store, tmp_path):
    """Integration: the shipped catalog, the real shortlist, every format written and read."""
    from db.query import load_materials
    from ranking.shortlist import shortlist
    from ranking.target import Target

    with mem_store.session() as s:
        mats = load_materials(s)
    t = Target(voltage_V=800.0, tmin_K=233.15, tmax_K=378.15, energy_J=50.0, failure_probability=1e-3,
               margin=1.2, assume_defaults=True)
    res = shortlist(mats, t, draws=50)
    assert res["ranked"], "the real catalog should rank something for this target"
    for ext in report.FORMATS:
        report.export_result(res, tmp_path / f"s.{ext}", materials=mats)
    df = report.comparison_frame(res)
    back = pd.read_excel(tmp_path / "s.xlsx", sheet_name="comparison")
    assert_same_table(back, df)
    used = {k for r in res["ranked"] for v in r["sources"].values() for k in v}
    text = (tmp_path / "s.html").read_text()
    for key in used:
        assert key in text
    assert _parse(text).tags.count("svg") == 3


# --- CLI --------------------------------------------------------------------------------------------------------

def test_cli_export_keys_and_from_json(cli, mini_catalog, tmp_path):
    out = tmp_path / "cmp.md"
    code, stdout, stderr = cli(["export", "mini-film", "mini-glass", "--to", out], catalog=mini_catalog)
    assert code == 0, stderr
    assert "wrote" in stdout and out.exists()
    assert "mini-film" in out.read_text()
    code, _o, stderr = cli(["export", "mini-film", "--to", out], catalog=mini_catalog)
    assert code == 2 and "exists" in stderr
    js = tmp_path / "cmp.json"
    assert cli(["export", "mini-film", "mini-glass", "--to", js], catalog=mini_catalog)[0] == 0
    code, stdout, _e = cli(["export", "--from", js, "--to", tmp_path / "again.csv", "--json"], catalog=mini_catalog)
    assert code == 0 and json.loads(stdout)["rows"] == 2
    code, _o, stderr = cli(["export", "--from", js, "mini-film", "--to", tmp_path / "x.csv"], catalog=mini_catalog)
    assert code == 2 and "cannot be combined" in stderr


def test_cli_export_family_and_bad_inputs(cli, mini_catalog, tmp_path):
    code, stdout, stderr = cli(["export", "--family", "glass", "--to", tmp_path / "g.xlsx", "--json"],
                               catalog=mini_catalog)
    assert code == 0, stderr
    assert json.loads(stdout)["kind"] == "comparison"
    assert cli(["export", "--family", "nonsense", "--to", tmp_path / "n.csv"], catalog=mini_catalog)[0] == 2
    code, _o, stderr = cli(["export", "no-such-key", "--to", tmp_path / "n.csv"], catalog=mini_catalog)
    assert code == 2 and "no-such-key" in stderr
    code, _o, stderr = cli(["export", "mini-film", "--to", tmp_path / "n.pdf"], catalog=mini_catalog)
    assert code == 2 and ".pdf" in stderr


def test_cli_export_from_a_target_file(cli, tmp_path):
    """A fresh shortlist of the shipped catalog against a target file, exported as HTML."""
    target = tmp_path / "t.toml"
    target.write_text('[target]\nvoltage = "800 V"\ntmin = "-40 degC"\ntmax = "105 degC"\nenergy = "50 J"\n'
                      "failure_probability = 0.001\nmargin = 1.2\nassume_defaults = true\n")
    out = tmp_path / "s.html"
    code, stdout, stderr = cli(["export", "--target", target, "--to", out, "--json"])
    assert code == 0, stderr
    info = json.loads(stdout)
    assert info["kind"] == "shortlist" and info["rows"] > 0
    assert "<svg" in out.read_text()


def test_every_new_command_has_help(cli):
    for args in (["export"], ["chart"], ["chart", "headroom"], ["chart", "ceiling"], ["chart", "weibull"],
                 ["chart", "loop"]):
        code, stdout, _e = cli([*args, "--help"])
        assert code == 0 and len(stdout) > 200, args


@pytest.mark.parametrize("value,text", [(2.5, "2.5"), (73060.0, "73100"), (0.0002, "0.0002"), (1.447e-05,
                                                                                             "0.0000145"),
                                        (None, "—"), (math.nan, "—"), (0.0, "0")])
def test_number_formatting(value, text):
    assert report.fmt_number(value) == text
