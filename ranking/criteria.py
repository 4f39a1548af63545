"""The ranking criteria and the verdict record of one candidate (a material, or material × layer thickness).

The rules that compute them live in :mod:`ranking.engine`, for every candidate at once.

Every criterion is computed with the ``materials`` physics at the worst case over the target's temperature range,
on a grid of both ends plus every data point in between. The worst case combines the lowest permittivity and the
lowest breakdown field over the range even where they occur at different temperatures (conservative).

Criteria (SI unit — formula):

* ``energy`` (J/m³, benefit) — energy density at the operating field, ``½·ε0·εr,min·E_op²`` (or ``∫E dD`` along a
  DC-bias curve), with ``E_op = min(E_design, V/d_min)`` and ``E_design = E_bd,min·(A_test/A)^(1/β)·
  (−ln(1−p))^(1/β) / margin`` (Weibull quantile at the accepted failure probability, weakest-link area scaling);
* ``volume`` (m³, cost) — dielectric volume for the target energy, ``W / u_op`` (per joule when no energy given);
* ``mass`` (kg, cost) — ``volume · density``;
* ``loss`` (1, cost) — the largest loss tangent over the range at the target frequency;
* ``drift`` (1, cost) — capacitance change, ``1 − (1 − |ΔC/C|_T)(1 − |ΔC/C|_bias)`` with the temperature part the
  largest ``|εr(T)/εr(25 °C) − 1|`` over the range and the bias part ``|D(E_op)/(ε0·εr(0)·E_op) − 1|``;
* ``healing`` (1, benefit) — 1 if the dielectric self-heals (metallised film), else 0;
* ``confidence`` (1, benefit) — mean evidence score of the source kinds behind the numbers
  (lab/standard 1, handbook 0.9, paper 0.85, web 0.7, common-practice 0.6, recollection 0.35, invented 0.1).
"""

from __future__ import annotations

from dataclasses import dataclass, field


@dataclass(frozen=True)
class Criterion:
    name: str
    label: str
    unit: str
    display_unit: str
    benefit: bool
    weight: float
    formula: str


CRITERIA: dict[str, Criterion] = {c.name: c for c in (
    Criterion("energy", "design energy density", "J/m3", "J/cm**3", True, 3.0,
              "½·ε0·εr,min·E_op² (or ∫E dD on a bias curve), worst case over the range"),
    Criterion("volume", "dielectric volume", "m3", "cm**3", False, 1.0, "W / u_op (per joule without a target energy)"),
    Criterion("mass", "dielectric mass", "kg", "g", False, 1.0, "volume · density"),
    Criterion("loss", "worst loss tangent", "1", "", False, 1.0, "max tan δ over the range"),
    Criterion("drift", "capacitance drift", "1", "%", False, 1.0,
              "1 − (1 − |ΔC/C|_temperature)(1 − |ΔC/C|_bias)"),
    Criterion("healing", "self-healing", "1", "", True, 0.5, "1 if self-healing, else 0"),
    Criterion("confidence", "data confidence", "1", "", True, 1.0, "mean evidence score of the sources used"),
)}


@dataclass
class Evaluation:
    """The verdict on one candidate: ranked (``ok``) with criteria, or excluded with reasons."""

    key: str
    name: str
    family: str
    thickness_m: float | None = None
    reasons: list[str] = field(default_factory=list)
    values: dict[str, float] = field(default_factory=dict)
    low: dict[str, float] = field(default_factory=dict)
    high: dict[str, float] = field(default_factory=dict)
    sources: dict[str, list[str]] = field(default_factory=dict)
    flags: list[str] = field(default_factory=list)
    missing: list[str] = field(default_factory=list)
    binding: str = ""
    details: dict = field(default_factory=dict)
    codes: list[tuple[str, dict]] = field(default_factory=list)   # reason codes and the numbers they quote

    @property
    def ok(self) -> bool:
        return not self.reasons

    @property
    def label(self) -> str:
        return self.key if self.thickness_m is None else f"{self.key} @ {self.thickness_m * 1e6:g} µm"


CRITERIA_NAMES = tuple(CRITERIA)
