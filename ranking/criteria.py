"""Hard constraints and ranking criteria of one material (or material × layer thickness) against a target.

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

import math
from dataclasses import dataclass, field

from materials.errors import DataError
from materials.lookup import CONFIDENCE, REFERENCE_TEMPERATURE_K, bias_curve, value_at
from materials.records import MaterialData
from ranking.worstcase import worst_case


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

EPS0 = 8.8541878188e-12  # F/m, CODATA 2022 (checked against scipy.constants in the tests)


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

    @property
    def ok(self) -> bool:
        return not self.reasons

    @property
    def label(self) -> str:
        return self.key if self.thickness_m is None else f"{self.key} @ {self.thickness_m * 1e6:g} µm"


def _c(t_K: float) -> str:
    return f"{t_K - 273.15:g} °C"


def _add(ev: Evaluation, name: str, *vals) -> None:
    lst = ev.sources.setdefault(name, [])
    for v in vals:
        for s in v.sources:
            if s not in lst:
                lst.append(s)


def _rated(material: MaterialData, target, ev: Evaluation) -> None:
    for prop, need, worse in (("max_temperature", target.tmax_K, lambda rated, t: rated < t - 1e-6),
                              ("min_temperature", target.tmin_K, lambda rated, t: rated > t + 1e-6)):
        try:
            rated = value_at(material, prop).value
        except DataError:
            ev.reasons.append(f"{prop} missing: rated temperature range not stated")
            continue
        if worse(rated, need):
            ev.reasons.append(f"rated to {_c(rated)} ({prop.split('_')[0]}); target needs {_c(need)}")
        ev.details[prop + "_K"] = rated


def evaluate(material: MaterialData, target, *, thickness_m: float | None = None) -> Evaluation:
    """Check the hard constraints and compute every criterion of ``material`` for ``target``."""
    from materials.energy import charge_density
    from materials.sizing import design_field
    from ranking.part import self_heals, size_worst_case
    from ranking.ceiling import energy_density_at

    ev = Evaluation(key=material.key, name=material.name, family=material.family, thickness_m=thickness_m)
    if target.families and material.family not in target.families:
        ev.reasons.append(f"family {material.family} not among the target's ({', '.join(target.families)})")
        return ev
    _rated(material, target, ev)
    for prop in ("relative_permittivity", "breakdown_field"):
        if not material.has(prop):
            ev.reasons.append(f"{prop} missing")
    if (material.response == "nonlinear" and bias_curve(material) is None
            and not any(r.field_V_per_m for r in material.rows("recoverable_energy_density"))):
        ev.reasons.append("nonlinear response but no DC-bias curve or loop data: its energy cannot be computed")
    if ev.reasons:
        return ev
    try:
        wc = worst_case(material, tmin_K=target.tmin_K, tmax_K=target.tmax_K, frequency_Hz=target.frequency_Hz,
                        assume_defaults=target.assume_defaults)
    except DataError as exc:
        ev.reasons.append(str(exc))
        return ev
    ev.flags += wc.flags
    grid, eps_at, ebd_at, t_eps, t_ebd = wc.grid, wc.eps_at, wc.ebd_at, wc.t_eps, wc.t_ebd
    eps, ebd, beta, beta_v, test_area = wc.eps, wc.ebd, wc.beta, wc.beta_v, wc.test_area_m2
    curve0 = wc.bias_curve(material)
    _add(ev, "energy", eps, ebd, *([beta_v] if beta_v else []))
    d_min = wc.min_thickness.value if wc.min_thickness else None
    if wc.min_thickness:
        _add(ev, "volume", wc.min_thickness)
    density = wc.density.value if wc.density else None
    if wc.density:
        _add(ev, "mass", wc.density)
    V, p = target.voltage_V, target.failure_probability
    seg = target.segment_area_m2 if target.segment_area_m2 and self_heals(material) else None
    if seg:
        ev.flags.append("segment-scaled")

    def e_design(area):
        return float(design_field(scale_V_per_m=ebd.value, shape=beta, test_area_m2=test_area,
                                  area_m2=seg or area, failure_probability=p, margin=target.margin))

    def u_at(e):
        return energy_density_at(material, e, temperature_K=t_eps, eps=eps)[0]

    area = target.area_m2
    if thickness_m is not None:
        d = thickness_m
        if d_min is not None and d < d_min * (1 - 1e-9):
            ev.reasons.append(f"{d * 1e6:g} µm is thinner than the thinnest layer made ({d_min * 1e6:g} µm)")
            return ev
        e_op = V / d
        u_op = u_at(e_op)
        if area is None and target.energy_J is not None:
            area = target.energy_J / u_op / d
        ed = e_design(area if area is not None else test_area)
        if e_op > ed * (1 + 1e-9):
            ev.reasons.append(f"{d * 1e6:g} µm at {V:g} V runs at {e_op / 1e6:.4g} V/µm, above the design field "
                              f"{ed / 1e6:.4g} V/µm (breakdown at {_c(t_ebd)}, β {beta:.3g}, p {p:g})")
            return ev
        ev.binding = f"fixed layer {d * 1e6:g} µm: {e_op / ed:.0%} of the design field"
    elif target.energy_J is not None and (curve0 is not None or material.response == "linear"):
        res = size_worst_case(material, wc, energy_J=target.energy_J, voltage_V=V, failure_probability=p,
                              margin=target.margin, segment_area_m2=seg)
        d, area, ed, e_op = res.thickness_m, res.area_m2, res.design_field_V_per_m, res.operating_field_V_per_m
        u_op = u_at(e_op)
        ev.details["sizing"] = res
    else:
        if area is None and target.energy_J is not None:
            # Nonlinear: fixed point on the area (a larger area lowers the design field).
            area = test_area
            for _ in range(60):
                ed = e_design(area)
                d = V / ed if d_min is None else max(V / ed, d_min)
                new = target.energy_J / u_at(V / d) / d
                if abs(new - area) <= 1e-9 * area:
                    area = new
                    break
                area = new
        ed = e_design(area if area is not None else test_area)
        d = V / ed
        if d_min is not None and d < d_min:
            d = d_min
        e_op = V / d
        u_op = u_at(e_op)
        if area is None:
            ev.flags.append("no-area-scaling")
    layer_limited(ev, target, d=d, d_min=d_min, ed=ed, e_op=e_op, u_op=u_op, t_ebd=t_ebd, ebd=ebd.value,
                  thickness_m=thickness_m)
    # Energy and its range from the permittivity and breakdown ranges (u ∝ εr·E² on the linear part).
    ev.values["energy"] = u_op
    f_eps_lo = eps.low / eps.value if eps.value else 1.0
    f_eps_hi = eps.high / eps.value if eps.value else 1.0
    f_e_lo = (ebd.low / ebd.value) ** 2 if ebd.value else 1.0
    f_e_hi = (ebd.high / ebd.value) ** 2 if ebd.value else 1.0
    if d_min is not None and d <= d_min * (1 + 1e-9):
        f_e_lo = min(1.0, f_e_lo) if f_e_lo < 1 else 1.0
        f_e_hi = 1.0  # the field is set by the layer, not by breakdown
    ev.low["energy"] = u_op * min(1.0, f_eps_lo * f_e_lo)
    ev.high["energy"] = u_op * max(1.0, f_eps_hi * f_e_hi)
    w = target.energy_J if target.energy_J is not None else 1.0
    ev.values["volume"] = w / u_op
    ev.low["volume"], ev.high["volume"] = w / ev.high["energy"], w / ev.low["energy"]
    _add(ev, "volume", eps, ebd)
    if density is not None:
        ev.values["mass"] = ev.values["volume"] * density
        ev.low["mass"], ev.high["mass"] = ev.low["volume"] * density, ev.high["volume"] * density
    else:
        ev.missing.append("mass")
    ev.details.update(thickness_m=d, area_m2=area, design_field_V_per_m=ed, operating_field_V_per_m=e_op,
                      worst_eps_K=t_eps, worst_breakdown_K=t_ebd, weibull_shape=beta, test_area_m2=test_area)
    if thickness_m is None and area is not None:
        from materials.breakdown import scale_to_area

        ev.details["failure_probability"] = _failure_probability(e_op, ebd.value, beta,
                                                                 test_area, seg or area, scale_to_area)
    # Loss: the largest tan δ over the grid.
    if wc.loss is not None:
        worst = wc.loss
        ev.values["loss"], ev.low["loss"], ev.high["loss"] = worst.value, worst.low, worst.high
        _add(ev, "loss", worst)
        if target.max_loss_tangent is not None and worst.value > target.max_loss_tangent:
            ev.reasons.append(f"loss tangent {worst.value:.3g} above the limit {target.max_loss_tangent:.3g}")
    elif target.max_loss_tangent is not None:
        ev.reasons.append("loss_tangent missing (the target limits it)")
    else:
        ev.missing.append("loss")
    # Drift over temperature and under bias.
    eps_temps = {r.temperature_K for r in material.rows("relative_permittivity")
                 if r.temperature_K is not None and not r.field_V_per_m}
    d_t = None
    if len(eps_temps) >= 2:
        ref = value_at(material, "relative_permittivity", temperature_K=REFERENCE_TEMPERATURE_K, extrapolate=True)
        d_t = max(abs(eps_at[t].value / ref.value - 1) for t in grid)
        _add(ev, "drift", ref, *eps_at.values())
    elif material.has("capacitance_change"):
        rows = [r for r in material.rows("capacitance_change") if r.temperature_K is not None
                and target.tmin_K - 1e-6 <= r.temperature_K <= target.tmax_K + 1e-6 and not r.field_V_per_m]
        if rows:
            d_t = max(abs(r.value) for r in rows)
            ev.sources.setdefault("drift", []).extend(sorted({r.source.key for r in rows}))
    d_b = 0.0
    curve = bias_curve(material, temperature_K=t_eps)
    if curve is not None:
        fields, eps_diff, rows = curve
        dd = float(charge_density(fields, eps_diff, e_op, extrapolate=True))
        d_b = abs(dd / (EPS0 * eps_diff[0] * e_op) - 1)
        ev.sources.setdefault("drift", []).extend(k for k in dict.fromkeys(r.source.key for r in rows)
                                                  if k not in ev.sources.get("drift", []))
    if d_t is None and curve is None:
        ev.missing.append("drift")
    else:
        ev.values["drift"] = 1 - (1 - (d_t or 0.0)) * (1 - d_b)
        ev.details["drift_temperature"], ev.details["drift_bias"] = d_t, d_b
    # Self-healing.
    if material.has("self_healing"):
        sh = value_at(material, "self_healing")
        ev.values["healing"] = float(sh.value >= 0.5)
        _add(ev, "healing", sh)
    else:
        ev.values["healing"] = 0.0
        ev.flags.append("self-healing not stated")
    # Confidence of the evidence behind the numbers.
    kinds = [r.source.kind for v in (*eps_at.values(), *ebd_at.values()) for r in v.rows]
    if beta_v is not None:
        kinds += [r.source.kind for r in beta_v.rows]
    ev.values["confidence"] = sum(CONFIDENCE.get(k, 0.0) for k in kinds) / len(kinds) if kinds else 0.0
    for flag in ("recollection", "invented"):
        if any(k == flag for k in kinds):
            ev.flags.append(flag)
    for name in ("drift", "healing", "confidence"):
        if name in ev.values:
            ev.low.setdefault(name, ev.values[name])
            ev.high.setdefault(name, ev.values[name])
    return ev


def layer_limited(ev: Evaluation, target, *, d, d_min, ed, e_op, u_op, t_ebd, ebd, thickness_m) -> None:
    """The binding constraint (thinnest layer made, or breakdown) and the energy-density shortfall, if any."""
    V = target.voltage_V
    at_min = d_min is not None and d <= d_min * (1 + 1e-9) and thickness_m is None
    if at_min:
        ev.binding = (f"thinnest layer made ({d_min * 1e6:g} µm) at {V:g} V: field {e_op / 1e6:.4g} V/µm, "
                      f"below the design field {ed / 1e6:.4g} V/µm")
    elif not ev.binding:
        ev.binding = f"breakdown at {_c(t_ebd)} ({ebd / 1e6:.4g} → design {ed / 1e6:.4g} V/µm)"
    if target.energy_density_J_per_m3 is not None and u_op < target.energy_density_J_per_m3 * (1 - 1e-9):
        why = (f"stores {u_op / 1e6:.3g} J/cm³ at {V:g} V, below the target {target.energy_density_J_per_m3 / 1e6:.3g}"
               " J/cm³")
        if at_min:
            why += f" (needs a layer thinner than the {d_min * 1e6:g} µm that can be made)"
        else:
            why += f" (design field {ed / 1e6:.4g} V/µm, breakdown at {_c(t_ebd)})"
        ev.reasons.append(why)


def _failure_probability(field_V_per_m, scale, shape, test_area, area, scale_to_area) -> float:
    """Short-term failure probability of the part's whole area at a field (Weibull, weakest link)."""
    scale_part = float(scale_to_area(scale, area_from_m2=test_area, area_to_m2=area, shape=shape))
    return 1.0 - math.exp(-((field_V_per_m / scale_part) ** shape))
