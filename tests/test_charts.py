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


# --- map ------------------------------------------------------------------------------------------------------

def test_map_axes_series_and_highlight(mats, make_material):
    lonely = make_material("no-breakdown", [("relative_permittivity", 3.0, "handbook")])
    fig = charts.map_chart(mats + [lonely], highlight=["pp"])
    ax = fig.axes[0]
    assert ax.get_xscale() == "log" and ax.get_yscale() == "log"
    assert "breakdown field" in ax.get_xlabel() and "V/µm" in ax.get_xlabel()
    assert "relative permittivity" in ax.get_ylabel()
    markers = _lines(fig, "material:")
    assert sorted(a.get_gid() for a in markers) == ["material:c0g", "material:pet", "material:pp", "material:x7r"]
    assert fig.skipped and fig.skipped[0][0] == "no-breakdown"
    pp = next(a for a in markers if a.get_gid() == "material:pp")
    x, y = pp.get_xdata()[0], pp.get_ydata()[0]
    assert (x, y) == pytest.approx((700.0, 2.2))
    assert pp.get_markerfacecolor() == "black"
    other = next(a for a in markers if a.get_gid() == "material:pet")
    assert other.get_markerfacecolor() == "white"
    legend = [t.get_text() for t in fig.legends[0].get_texts()]
    assert legend[1:] == ["other", "highlighted"] or set(legend[1:]) == {"other", "highlighted"}


def test_map_constant_energy_lines_have_slope_minus_two_and_the_right_level(mats):
    """U = ½·ε0·εr·E² held constant is εr ∝ E⁻²: slope −2 on log–log axes; ε0 from scipy.constants."""
    from scipy.constants import epsilon_0

    fig = charts.map_chart(mats)
    lines = _lines(fig, "energy-line:")
    assert len(lines) >= 3
    levels = sorted(float(a.get_gid().split(":")[1]) for a in lines)
    assert 1.0 in levels and 10.0 in levels  # the data span 0.4–5 J/cm³: decade lines around them
    for line in lines:
        x = np.asarray(line.get_xdata()) * 1e6  # V/m
        y = np.asarray(line.get_ydata())
        slope = np.polyfit(np.log10(x), np.log10(y), 1)[0]
        assert slope == pytest.approx(-2.0, abs=1e-9)
        u = float(line.get_gid().split(":")[1]) * 1e6
        assert 0.5 * epsilon_0 * y * x ** 2 == pytest.approx(np.full(x.size, u), rel=1e-9)
    labels = [t.get_text() for t in fig.axes[0].texts if "J/cm³" in t.get_text()]
    assert labels, "constant-energy lines are labelled"


def test_map_error_bars_span_the_value_ranges(mats):
    fig = charts.map_chart(mats[:1])
    ax = fig.axes[0]
    cont = ax.containers[0]
    segs = [seg for coll in cont.lines[2] for seg in coll.get_segments()]
    xs = sorted({round(float(p[0]), 6) for seg in segs for p in seg})
    ys = sorted({round(float(p[1]), 6) for seg in segs for p in seg})
    assert xs[0] == pytest.approx(560.0) and xs[-1] == pytest.approx(770.0)   # 700 V/µm, range 0.8…1.1
    assert ys[0] == pytest.approx(1.98) and ys[-1] == pytest.approx(2.42)     # εr 2.2 ± 10 %


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
    fig = charts.map_chart(mats)
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

def test_cli_chart_map_and_ceiling(cli, mini_catalog, tmp_path):
    out = tmp_path / "map.svg"
    code, stdout, stderr = cli(["chart", "map", "--highlight", "mini-film", "--out", out], catalog=mini_catalog)
    assert code == 0, stderr
    assert "<svg" in out.read_text()
    code, _o, stderr = cli(["chart", "map", "--highlight", "nope", "--out", tmp_path / "m2.png"],
                           catalog=mini_catalog)
    assert code == 2 and "nope" in stderr
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


def test_a_big_map_draws_the_rest_as_one_marker_set(make_material):
    """Thousands of separate error-bar artists take minutes to draw; beyond a limit the rest are one set."""
    n = charts.MAP_SINGLE_ARTISTS + 50
    many = [make_material(f"m{i}", [("relative_permittivity", 2.0 + i / n, "handbook"),
                                    ("breakdown_field", 3e8 + 1e5 * i, "handbook")]) for i in range(n)]
    fig = charts.map_chart(many, highlight=["m1", "m2"])
    assert sorted(a.get_gid() for a in _lines(fig, "material:")) == ["material:m1", "material:m2"]
    (rest,) = _lines(fig, "materials:others")
    assert len(rest.get_xdata()) == n - 2
    assert any(t.get_text() == f"other ({n - 2})" for t in fig.legends[0].get_texts())


def test_the_score_chart_shows_the_head_of_a_long_ranking():
    ranked = [{"rank": i + 1, "key": f"m{i}", "label": f"m{i}", "score": 1 - i / 100, "p_top": 0.0}
              for i in range(charts.SCORE_ROWS + 20)]
    fig = charts.score_chart({"ranked": ranked, "method": "topsis", "counts": {"ranked": 5000}})
    assert len(_by_gid(fig, "score:")) == charts.SCORE_ROWS
    assert fig.axes[0].get_title(loc="left") == f"Ranking: the first {charts.SCORE_ROWS} of 5000"
