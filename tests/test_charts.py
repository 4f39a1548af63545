"""Charts, checked on the matplotlib figure: axis labels, series, constant-energy lines, fitted Weibull lines,
shaded loop areas; and the ``holdoff chart`` commands."""

from __future__ import annotations

import json

import numpy as np
import pytest

from materials.errors import InputError
from ranking import charts


def _by_gid(fig, prefix):
    return [a for ax in fig.axes for a in ax.get_children() + list(ax.lines)
            if (a.get_gid() or "").startswith(prefix)]


def _lines(fig, prefix):
    seen, out = set(), []
    for a in _by_gid(fig, prefix):
        if id(a) not in seen:
            seen.add(id(a))
            out.append(a)
    return out


@pytest.fixture
def mats(make_material):
    def m(key, eps, ebd, family="polymer-film", **kw):
        return make_material(key, [
            ("relative_permittivity", eps, "handbook", {"low": eps * 0.9, "high": eps * 1.1}),
            ("breakdown_field", ebd, "handbook", {"low": ebd * 0.8, "high": ebd * 1.1, "area_m2": 1e-4}),
            ("weibull_shape", 12.0, "handbook"),
            ("max_temperature", 378.15, "handbook"), ("min_temperature", 218.15, "handbook"),
        ], family=family, **kw)

    return [m("pp", 2.2, 700e6), m("pet", 3.3, 570e6), m("c0g", 60.0, 60e6, "ceramic-class-1"),
            m("x7r", 2500.0, 20e6, "ceramic-class-2")]


# --- headroom -------------------------------------------------------------------------------------------------

def _target(**kw):
    from ranking.target import Target

    base = dict(voltage_V=800.0, tmin_K=233.15, tmax_K=378.15, energy_J=50.0, failure_probability=0.01, margin=1.2)
    return Target(**{**base, **kw})


def test_headroom_bars_run_from_the_design_value_to_the_worst_temperature_ceiling(mats):
    """Each bar starts at the shortlist's own design energy density and ends at ½·ε0·εr·E_bd² with the values of
    the worst temperature (ε0 from scipy.constants); rank order top to bottom, target line where asked."""
    from scipy.constants import epsilon_0

    from ranking.shortlist import shortlist

    target = _target(energy_density_J_per_m3=0.05e6)
    result = shortlist(mats[:3], target, draws=0)
    ceilings = charts.worst_ceilings(mats[:3], target)
    fig = charts.headroom_chart(result, ceilings)
    for r in result["ranked"]:
        rank, design, ceiling = fig.values[r["label"]]
        assert rank == r["rank"] and design == r["criteria"]["energy"]
        bar = _by_gid(fig, f"headroom:{r['label']}")[0]
        assert bar.get_x() == pytest.approx(design / 1e6)
        assert bar.get_x() + bar.get_width() == pytest.approx(ceiling / 1e6)
    # the fixture's values do not change with temperature: the ceiling is the 25 °C one
    eps, ebd = 2.2, 700e6
    assert fig.values["pp"][2] == pytest.approx(0.5 * epsilon_0 * eps * ebd ** 2, rel=1e-9)
    ys = [_by_gid(fig, f"headroom:{r['label']}")[0].get_y() for r in result["ranked"]]
    assert ys == sorted(ys, reverse=True)
    (tline,) = [a for a in _lines(fig, "target") if a.get_gid() == "target"]
    assert tline.get_xdata()[0] == pytest.approx(0.05)
    texts = [t.get_text() for t in fig.axes[0].texts]
    assert {str(r["rank"]) for r in result["ranked"]} <= set(texts)


def test_every_plotted_value_is_its_table_cell(mats, tmp_path):
    """The report's figures and its table come from one evaluation: every design value drawn (headroom bar start,
    the worst-case segment of the temperature figure) equals the table cell it stands for, as the table prints
    it; the temperature figure honours a segment area and a fixed layer."""
    from ranking.report import document, from_shortlist, report_charts
    from ranking.shortlist import shortlist

    for kw in ({}, {"segment_area_m2": 4e-4}, {"thicknesses_m": (4e-6,), "energy_J": None,
                                               "energy_density_J_per_m3": None}):
        target = _target(**kw)
        result = shortlist(mats[:3], target, draws=0)
        rep = from_shortlist(result, materials=mats[:3])
        doc = document(rep)
        col = [c["label"] for c in doc["columns"]].index("design energy density")
        table = {r["label"]: r["cells"][col]["value"] for r in doc["rows"]}
        figs = {title: fig for title, _cap, fig in report_charts(rep)}
        head = figs["Headroom by rank"]
        temp = figs["Design energy density across the operating range"]
        from materials.numfmt import fmt_number

        for label, cell in table.items():
            assert fmt_number(head.values[label][1] / 1e6) == cell
            assert fmt_number(temp.values[label] / 1e6) == cell
            seg = _by_gid(temp, f"table:{label}")[0]
            assert fmt_number(seg.get_ydata()[0]) == cell
            # the range ends are evaluated, and no point lies outside the range
            t, _u = temp.curves[label]
            assert t[0] == pytest.approx(target.tmin_K) and t[-1] == pytest.approx(target.tmax_K)
            # with values flat in temperature, every evaluated point is the table's worst case
            assert np.nanmax(np.abs(_u - temp.values[label])) <= 1e-9 * temp.values[label]
            # both figures carry the row's evidence mark, the same one
            (tick,) = [x.get_text() for x in head.axes[0].get_yticklabels() if x.get_text().startswith(label)]
            mark = tick[len(label):].strip()
            assert [x.get_text() for x in temp.legends[0].get_texts()
                    if x.get_text().split(". ", 1)[1].startswith(label)][0].endswith(f"{label} {mark}".strip())


def test_the_comparison_figure_plots_the_ceiling_column(mats):
    """The comparison's figure plots the ceiling (its axis says so) and at the table's temperature gives the
    table's ceiling column."""
    from ranking.report import from_materials, report_charts
    from materials.lookup import REFERENCE_TEMPERATURE_K

    rep = from_materials(mats)
    ((title, cap, fig),) = report_charts(rep)
    assert "ceiling" in fig.axes[0].get_ylabel() and "no area scaling" in cap
    for r in rep.rows:
        temps, u, _ex = fig.curves[r.key]
        j = int(np.argmin(np.abs(temps - REFERENCE_TEMPERATURE_K)))
        assert u[j] == pytest.approx(r.values["ceiling"], rel=1e-12)


# --- ceiling --------------------------------------------------------------------------------------------------

def test_ceiling_chart_series_target_and_values(mats):
    from ranking.ceiling import ceiling_at

    temps = np.linspace(233.15, 398.15, 12)
    target = {"energy_density_J_per_m3": 2e6, "tmin_K": 233.15, "tmax_K": 378.15, "area_m2": 0.01,
              "failure_probability": 0.01, "margin": 1.2}
    fig = charts.ceiling_chart(mats[:3], temps, target=target)
    ax = fig.axes[0]
    assert ax.get_xlabel() == "temperature (°C)"
    assert ax.get_ylabel() == "design energy density (J/cm³)"
    curves = _lines(fig, "ceiling:")
    assert [c.get_gid() for c in curves] == ["ceiling:pp", "ceiling:pet", "ceiling:c0g"]
    (tline,) = [a for a in _lines(fig, "target") if a.get_gid() == "target"]
    assert tline.get_ydata()[0] == pytest.approx(2.0)
    pp = fig.curves["pp"]
    c = ceiling_at(mats[0], temperature_K=float(temps[3]), area_m2=0.01, failure_probability=0.01, margin=1.2,
                   extrapolate=True)
    assert pp[1][3] == pytest.approx(c.design_J_per_m3)
    # above the rated 105 °C the curve stops
    assert np.isnan(pp[1][temps > 378.15 + 1e-6]).all()
    assert not np.isnan(pp[1][temps <= 378.15]).any()


def test_ceiling_chart_skips_materials_it_cannot_compute(mats, make_material):
    bare = make_material("bare", [("relative_permittivity", 3.0, "handbook")])
    fig = charts.ceiling_chart([mats[0], bare], [298.15, 348.15])
    assert list(fig.curves) == ["pp"]
    assert fig.skipped[0][0] == "bare"
    with pytest.raises(InputError):
        charts.ceiling_chart(mats, [])


# --- Weibull --------------------------------------------------------------------------------------------------

def _sample(seed=7, n=20, scale=450e6, shape=11.0):
    return scale * np.random.default_rng(seed).weibull(shape, n)


def test_weibull_chart_matches_reliability_fit():
    """The fitted line's slope in (ln E, ln(−ln(1−F))) is β and it crosses 0 at α, as the `reliability`
    library's Fit_Weibull_2P gives them for the same censored data."""
    from reliability.Fitters import Fit_Weibull_2P

    x = _sample()
    cens = np.zeros(x.size, dtype=bool)
    cens[np.argsort(x)[-3:]] = True
    x[cens] = x[cens].min()  # three specimens survived to the test stop
    fig = charts.weibull_chart([{"label": "A", "fields": x, "censored": cens}, ("B", _sample(8, 15, 380e6, 8.0))])
    ax = fig.axes[0]
    assert ax.get_ylabel() == "ln(−ln(1 − F))"
    assert "breakdown field" in ax.get_xlabel() and "V/µm" in ax.get_xlabel()
    assert ax.get_xscale() == "log"
    assert len(_lines(fig, "fit:")) == 2 and len(_lines(fig, "data:")) == 2 and len(_by_gid(fig, "band:")) == 2
    # reliability's optimiser wants numbers near 1: give it V/µm (in V/m it stops ~1 % short of the optimum)
    ref = Fit_Weibull_2P(failures=x[~cens] / 1e6, right_censored=x[cens] / 1e6, show_probability_plot=False,
                         print_results=False)
    fit_line = next(a for a in _lines(fig, "fit:") if a.get_gid() == "fit:A")
    lx = np.log(np.asarray(fit_line.get_xdata()) * 1e6)
    ly = np.asarray(fit_line.get_ydata())
    slope, intercept = np.polyfit(lx, ly, 1)
    assert slope == pytest.approx(ref.beta, rel=1e-4)
    assert np.exp(-intercept / slope) == pytest.approx(ref.alpha * 1e6, rel=1e-4)
    pts = next(a for a in _lines(fig, "data:") if a.get_gid() == "data:A")
    assert len(pts.get_xdata()) == x.size - 3  # censored specimens are not plotted as failures


def test_weibull_plotting_positions_are_bernards_median_ranks():
    """Complete sample: F_i = (i − 0.3)/(n + 0.4) (Bernard's approximation, IEEE Std 930)."""
    x = _sample(3, 10)
    fig = charts.weibull_chart([x])
    pts = _lines(fig, "data:")[0]
    n = x.size
    f = (np.arange(1, n + 1) - 0.3) / (n + 0.4)
    assert np.asarray(pts.get_xdata()) * 1e6 == pytest.approx(np.sort(x))
    assert np.asarray(pts.get_ydata()) == pytest.approx(np.log(-np.log(1 - f)))


def test_weibull_confidence_band_brackets_the_fit():
    x = _sample(5, 25)
    fig = charts.weibull_chart([("A", x)])
    band = _by_gid(fig, "band:")[0]
    fit = fig.fits["A"]
    verts = band.get_paths()[0].vertices
    e_mid = fit.quantile(0.5) / 1e6
    y_mid = np.log(-np.log(0.5))
    near = verts[np.abs(verts[:, 1] - y_mid) < 0.05][:, 0]
    assert near.min() < e_mid < near.max()


# --- loop -----------------------------------------------------------------------------------------------------

def _shoelace(xy):
    x, y = xy[:, 0], xy[:, 1]
    return 0.5 * abs(np.dot(x, np.roll(y, -1)) - np.dot(y, np.roll(x, -1)))


def test_loop_chart_shades_the_energies_it_prints():
    """Worked example: a unipolar loop whose discharge branch sits Pr·(1 − E/Emax) above the charging branch
    loses ∫(P_dis − P_ch) dE = Pr·Emax/2 per cycle; here Pr = 0.08 C/m², Emax = 30 V/µm → 1.2 J/cm³."""
    t = np.linspace(0.0, 1.0, 401)
    e = 30e6 * np.sin(np.pi * t)
    rising = t <= 0.5
    p_ch = 0.3 * np.tanh(e / 15e6)
    p = np.where(rising, p_ch, p_ch + 0.08 * (1 - e / 30e6))
    fig = charts.loop_chart(e, p)
    ax = fig.axes[0]
    assert ax.get_xlabel() == "electric field E (kV/cm)" and ax.get_ylabel() == "polarisation P (µC/cm²)"
    lost = _by_gid(fig, "lost")[0]
    rec = _by_gid(fig, "recovered")[0]
    to_J_per_m3 = 1e5 * 1e-2  # (kV/cm)·(µC/cm²) in J/m³
    assert _shoelace(lost.get_xy()) * to_J_per_m3 == pytest.approx(1.2e6, rel=2e-3)
    assert fig.energies.lost_J_per_m3 == pytest.approx(1.2e6, rel=2e-3)
    # recovered = ∫E dD on discharge = the shaded ∫E dP plus ½·ε0·E_max² from the vacuum part of D
    eps0_part = 0.5 * 8.8541878188e-12 * 30e6 ** 2
    assert _shoelace(rec.get_xy()) * to_J_per_m3 + eps0_part == pytest.approx(fig.energies.recovered_J_per_m3,
                                                                              rel=2e-3)
    text = " ".join(t.get_text() for t in ax.texts)
    assert "lost       1.2 J/cm³" in text and "efficiency" in text


def test_loop_chart_refuses_mismatched_arrays():
    with pytest.raises(InputError):
        charts.loop_chart([0, 1, 2], [0, 1])


# --- files ----------------------------------------------------------------------------------------------------

def test_save_png_and_svg_by_extension(mats, tmp_path):
    fig = charts.ceiling_chart(mats, [233.15, 298.15, 358.15])
    png = charts.save(fig, tmp_path / "m.png")
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    svg = charts.save(fig, tmp_path / "m.svg")
    assert "<svg" in svg.read_text()[:2000]
    with pytest.raises(InputError, match="exists"):
        charts.save(fig, tmp_path / "m.png")
    with pytest.raises(InputError, match=".png or .svg"):
        charts.save(fig, tmp_path / "m.jpg")
    import matplotlib.image

    img = matplotlib.image.imread(png)
    assert img.std() > 0.05  # not a blank canvas


def test_score_chart_bars(mats):
    result = {"method": "topsis", "ranked": [{"rank": 1, "key": "a", "score": 0.8, "p_top": 0.6},
                                             {"rank": 2, "key": "b", "score": 0.5, "p_top": 0.4}]}
    fig = charts.score_chart(result)
    bars = _by_gid(fig, "score:")
    assert [b.get_width() for b in bars] == pytest.approx([0.8, 0.5])
    assert fig.axes[0].get_xlabel() == "score (topsis)"


# --- CLI ------------------------------------------------------------------------------------------------------

def test_cli_chart_headroom_and_ceiling(cli, mini_catalog, tmp_path):
    out = tmp_path / "headroom.svg"
    code, stdout, stderr = cli(["chart", "headroom", "--voltage", "400", "--tmin", "-20", "--tmax", "85",
                                "--energy-density", "0.01", "--out", out, "--json"], catalog=mini_catalog)
    assert code == 0, stderr
    assert "<svg" in out.read_text()
    values = json.loads(stdout)["values"]
    assert values and [v["rank"] for v in values] == sorted(v["rank"] for v in values)
    assert all(v["ceiling_J_per_m3"] >= v["design_J_per_m3"] for v in values)
    code, _o, stderr = cli(["chart", "map", "--out", tmp_path / "m2.png"], catalog=mini_catalog)
    assert code == 2 and "No such command" in stderr
    out = tmp_path / "ceil.png"
    code, stdout, stderr = cli(["chart", "ceiling", "mini-film", "--tmin", "-40", "--tmax", "105",
                                "--target-density", "1", "--range", "-20,85", "--out", out, "--json"],
                               catalog=mini_catalog)
    assert code == 0, stderr
    assert json.loads(stdout)["file"] == str(out) and out.stat().st_size > 1000
    code, _o, stderr = cli(["chart", "ceiling", "mini-film", "--tmin", "100", "--tmax", "20", "--out",
                            tmp_path / "c2.png"], catalog=mini_catalog)
    assert code == 2 and "--tmax" in stderr


def test_cli_chart_weibull_and_loop_from_files(cli, tmp_path):
    bd = tmp_path / "bd.csv"
    x = np.sort(_sample(11, 12)) / 1e6
    bd.write_text("# label: film at 25 degC\nfield [V/um],censored\n"
                  + "".join(f"{v:.2f},{1 if i == 11 else 0}\n" for i, v in enumerate(x)))
    out = tmp_path / "w.png"
    code, stdout, stderr = cli(["chart", "weibull", bd, "--out", out, "--json"])
    assert code == 0, stderr
    fits = json.loads(stdout)["fits"]
    assert fits["film at 25 degC"]["n"] == 12 and fits["film at 25 degC"]["censored"] == 1
    t = np.linspace(0.0, 1.0, 201)
    e = 300 * np.sin(np.pi * t)  # kV/cm
    p = 20 * np.tanh(e / 150) + np.where(t > 0.5, 4 * (1 - e / 300), 0.0)  # µC/cm²
    loop = tmp_path / "loop.csv"
    loop.write_text("field [kV/cm],polarization [uC/cm^2]\n"
                    + "".join(f"{a:.4f},{b:.5f}\n" for a, b in zip(e, p, strict=True)))
    out = tmp_path / "l.svg"
    code, stdout, stderr = cli(["chart", "loop", loop, "--out", out, "--json"])
    assert code == 0, stderr
    data = json.loads(stdout)
    # lost = Pr·Emax/2 = 4 µC/cm² · 300 kV/cm / 2 = 0.6 J/cm³
    assert data["lost_J_per_m3"] == pytest.approx(0.6e6, rel=1e-2)
    code, _o, stderr = cli(["chart", "loop", "--out", tmp_path / "l2.png"])
    assert code == 2 and "loop CSV" in stderr


def test_cli_chart_weibull_of_stored_sets(cli, tmp_path):
    """Import a lab series into a fresh store, then plot the stored set by material key."""
    bd = tmp_path / "bd.csv"
    x = np.sort(_sample(12, 10)) / 1e6
    bd.write_text("# label: set 1\n# thickness: 5 um\n# area: 1 cm^2\n# temperature: 25 degC\nfield [V/um]\n"
                  + "".join(f"{v:.2f}\n" for v in x))
    code, _o, stderr = cli(["breakdown", "import", bd, "--material", "polypropylene-bopp"])
    assert code == 0, stderr
    out = tmp_path / "w.png"
    code, stdout, stderr = cli(["chart", "weibull", "--material", "polypropylene-bopp", "--out", out, "--json"])
    assert code == 0, stderr
    assert "polypropylene-bopp: set 1" in json.loads(stdout)["fits"]
    code, _o, stderr = cli(["chart", "weibull", "--material", "pet-film", "--out", tmp_path / "w2.png"])
    assert code == 2 and "no stored breakdown sets" in stderr


def test_the_score_chart_shows_the_head_of_a_long_ranking():
    ranked = [{"rank": i + 1, "key": f"m{i}", "label": f"m{i}", "score": 1 - i / 100, "p_top": 0.0}
              for i in range(charts.SCORE_ROWS + 20)]
    fig = charts.score_chart({"ranked": ranked, "method": "topsis", "counts": {"ranked": 5000}})
    assert len(_by_gid(fig, "score:")) == charts.SCORE_ROWS
    assert fig.axes[0].get_title(loc="left") == f"Ranking: the first {charts.SCORE_ROWS} of 5000"


def test_dense_series_are_thinned_for_the_picture_not_for_the_numbers():
    """A loop of 20,000 points and a breakdown set of 3,000 draw at most a few hundred points each; the energies
    and the fit still use every point (the loop's worked example: lost = Pr·Emax/2 = 1.2 J/cm³)."""
    from ranking.charts.common import THIN_LIMIT

    t = np.linspace(0.0, 1.0, 20_001)
    e = 30e6 * np.sin(np.pi * t)
    p_ch = 0.3 * np.tanh(e / 15e6)
    p = np.where(t <= 0.5, p_ch, p_ch + 0.08 * (1 - e / 30e6))
    fig = charts.loop_chart(e, p)
    (line,) = _lines(fig, "loop")
    assert len(line.get_xdata()) <= THIN_LIMIT + 2 and max(line.get_xdata()) == pytest.approx(300.0)
    assert fig.energies.lost_J_per_m3 == pytest.approx(1.2e6, rel=2e-3)
    x = _sample(4, 3000)
    fig = charts.weibull_chart([("big", x)])
    assert len(_lines(fig, "data:")[0].get_xdata()) <= THIN_LIMIT
    assert fig.fits["big"].n == 3000
