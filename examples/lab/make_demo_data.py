"""Write the invented demo lab files of examples/lab/ (seeded, so the files are reproducible).

INVENTED DEMO DATA: the Tallmere Dielectrics Lab, its film and its ceramic do not exist. The numbers are drawn from
made-up Weibull distributions and made-up loop shapes; they are not measurements of any real material.

Run from the repository root: ``python examples/lab/make_demo_data.py``.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np

from materials.energy import EPSILON_0 as EPS0

HERE = Path(__file__).parent
LAB = "Tallmere Dielectrics Lab (invented)"
CITATION = ("Invented demo data for holdoff's examples: the Tallmere Dielectrics Lab and its materials do not "
            "exist; not a measurement of any real material")
BANNER = "# INVENTED DEMO DATA - not a measurement of any real material; the lab is fictional."

# temperature (°C) -> (Weibull scale V/um, shape) of the made-up distributions
FILM_SETS = {25: (680.0, 14.0), 105: (610.0, 12.0), 150: (520.0, 10.0)}


def _header(**items) -> str:
    lines = [BANNER]
    lines += [f"# {k}: {v}" for k, v in items.items()]
    return "\n".join(lines) + "\n"


def breakdown_sets(rng) -> None:
    for t, (scale, shape) in FILM_SETS.items():
        x = scale * rng.weibull(shape, 20)
        # the supply stopped just below the two strongest specimens: those two are right-censored there
        stop = float(np.sort(x)[-3] + 0.5 * (np.sort(x)[-2] - np.sort(x)[-3]))
        censored = x > stop
        x = np.where(censored, stop, x)
        head = _header(label=f"HT copolymer film, {t} C, series A", thickness="3.5 um", area="1 cm^2",
                       temperature=f"{t} degC", ramp="500 V/s", waveform="dc", operator="demo operator",
                       lab=LAB, date=f"2024-03-{4 + list(FILM_SETS).index(t):02d}", kind="invented",
                       citation=CITATION)
        rows = "".join(f"S{i + 1:02d},{v:.1f},{int(c)}\n" for i, (v, c) in enumerate(zip(x, censored, strict=True)))
        (HERE / f"ht-film-breakdown-{t}C.csv").write_text(head + "specimen,field [V/um],censored\n" + rows)


def film_loop() -> None:
    # a nearly linear film, unipolar 0 -> 400 V/um -> 0, with a small phase lag (a little loss)
    eps_r, e_max, lag = 3.3, 400.0, 0.03
    t = np.linspace(0.0, 1.0, 201)
    e = e_max * np.sin(np.pi * t)                         # V/um
    chi_p = EPS0 * (eps_r - 1) * e_max * 1e6 * 100        # µC/cm² amplitude
    p = chi_p * (np.sin(np.pi * t - lag) + np.sin(lag))   # starts at 0, ends at a small remanent value
    head = _header(label="HT copolymer film loop, 25 C", thickness="3.5 um", temperature="25 degC",
                   frequency="10 Hz", operator="demo operator", lab=LAB, date="2024-03-08", kind="invented",
                   citation=CITATION)
    rows = "".join(f"{ei * 1e4 / 1e3:.3f},{pi:.5f}\n" for ei, pi in zip(e, p, strict=True))  # V/um -> kV/cm
    (HERE / "ht-film-loop-25C.csv").write_text(head + "field [kV/cm],polarization [uC/cm^2]\n" + rows)


def relaxor_loop(rng) -> None:
    # a slim bipolar loop: ascending branch Ps·tanh((E - Ec)/E0), descending Ps·tanh((E + Ec)/E0)
    ps, ec, e0, e_max = 34.0, 8.0, 80.0, 250.0            # µC/cm², kV/cm
    n = 100
    up = np.linspace(0, e_max, n, endpoint=False)
    down = np.linspace(e_max, -e_max, 2 * n, endpoint=False)
    back = np.linspace(-e_max, 0, n + 1)
    e = np.concatenate([up, down, back])
    ascending = np.concatenate([np.ones(n, bool), np.zeros(2 * n, bool), np.ones(n + 1, bool)])
    p = np.where(ascending, ps * np.tanh((e - ec) / e0), ps * np.tanh((e + ec) / e0))
    p = p + rng.normal(0.0, 0.03, p.size)
    head = _header(label="Relaxor ceramic loop, 25 C, 250 kV/cm", thickness="0.15 mm", temperature="25 degC",
                   frequency="10 Hz", operator="demo operator", lab=LAB, date="2024-03-11", kind="invented",
                   citation=CITATION)
    rows = "".join(f"{ei:.2f},{pi:.4f}\n" for ei, pi in zip(e, p, strict=True))
    (HERE / "relaxor-loop-25C.csv").write_text(head + "field [kV/cm],polarization [uC/cm^2]\n" + rows)


def film_endurance() -> None:
    """Constant-field life tests of the film at 150 °C: 10 units at each of three fields, stopped at 2000 h (units
    still working then are censored). Made-up law: Weibull in time, shape 1.6, scale 800 h at 300 V/um, n = 9."""
    rng = np.random.default_rng(20261202)   # its own stream: the files above stay as they were
    head = _header(label="ht-film endurance 150C", thickness="3.5 um", area="1 cm^2", temperature="150 degC",
                   operator="R. Okafor (invented)", lab=LAB, date="2024-05-20", kind="invented", citation=CITATION)
    rows = ""
    unit = 0
    for field in (350.0, 300.0, 260.0):
        t = 800.0 * (field / 300.0) ** -9.0 * rng.weibull(1.6, 10)
        for ti in np.sort(t):
            unit += 1
            stop = ti > 2000.0
            rows += f"U{unit:02d},{min(ti, 2000.0):.1f},{field:g},{int(stop)}\n"
    (HERE / "ht-film-endurance-150C.csv").write_text(head + "specimen,time [h],field [V/um],censored\n" + rows)


def main() -> None:
    rng = np.random.default_rng(20240304)
    breakdown_sets(rng)
    film_loop()
    relaxor_loop(rng)
    film_endurance()


if __name__ == "__main__":
    main()
