"""The shortlist: every material ranked or excluded with reasons, scores taken apart, robustness measured."""

from __future__ import annotations

import numpy as np

from materials.errors import InputError
from materials.records import MaterialData
from ranking.criteria import CRITERIA, Evaluation, evaluate

METHODS = ("topsis", "weighted", "pareto")
FLAGGED_KINDS = ("recollection", "invented")


def weights_for(target) -> dict[str, float]:
    """Default weights, overridden by the target's; criteria absent from the target energy are kept."""
    w = {name: c.weight for name, c in CRITERIA.items()}
    w.update(target.weights or {})
    return w


def _impute(evals: list[Evaluation], names: list[str]) -> None:
    """A missing criterion takes the worst value among the candidates (and is flagged), never a flattering one."""
    if "mass" in names:
        dens = [e.values["mass"] / e.values["volume"] for e in evals if "mass" in e.values and e.values["volume"]]
        if dens:
            rho = max(dens)
            for e in evals:
                if "mass" not in e.values:
                    e.values["mass"] = e.values["volume"] * rho
                    e.low["mass"], e.high["mass"] = e.low["volume"] * rho, e.high["volume"] * rho
                    e.flags.append("density missing: the densest candidate's density assumed")
    for name in names:
        have = [e.values[name] for e in evals if name in e.values]
        if not have:
            continue
        worst = max(have) if not CRITERIA[name].benefit else min(have)
        for e in evals:
            if name not in e.values:
                e.values[name] = e.low[name] = e.high[name] = worst
                e.flags.append(f"{name} missing: worst of the field assumed")


def _matrices(evals, names):
    typ = np.array([[e.values[n] for n in names] for e in evals], dtype=float)
    lo = np.array([[e.low.get(n, e.values[n]) for n in names] for e in evals], dtype=float)
    hi = np.array([[e.high.get(n, e.values[n]) for n in names] for e in evals], dtype=float)
    return np.minimum(lo, typ), typ, np.maximum(hi, typ)


def _fmt_criterion(name: str, value: float) -> str:
    from materials.units import from_si

    c = CRITERIA[name]
    if c.display_unit == "%":
        return f"{value * 100:.3g} %"
    if c.display_unit:
        return f"{from_si(value, c.display_unit, c.unit):.4g} {c.display_unit.replace('**3', '³')}"
    return f"{value:.3g}"


def shortlist(materials: list[MaterialData], target, *, method: str = "topsis", top_k: int = 3,
              draws: int = 1000, seed: int = 0) -> dict:
    """Rank ``materials`` against ``target``; the result follows the shortlist JSON contract (see README)."""
    from ranking import methods as M
    from ranking.robustness import monte_carlo

    if method not in METHODS:
        raise InputError(f"method '{method}' is not one of {', '.join(METHODS)}")
    thicknesses = list(target.thicknesses_m) or [None]
    evals = [evaluate(m, target, thickness_m=t) for m in materials for t in thicknesses]
    ok = [e for e in evals if e.ok]
    excluded = [e for e in evals if not e.ok]
    weights = weights_for(target)
    names = [n for n in CRITERIA if weights.get(n, 0) > 0]
    if not names:
        raise InputError("every criterion has weight 0")
    _impute(ok, names)
    # A criterion no candidate has cannot separate them: it is left out (and so shown in no table).
    names = [n for n in names if not ok or all(n in e.values for e in ok)]
    ranked = []
    if ok:
        lo, typ, hi = _matrices(ok, names)
        w = np.array([weights[n] for n in names], dtype=float)
        benefit = np.array([CRITERIA[n].benefit for n in names])
        front = M.pareto_front(typ, benefit)
        dom = M.dominators(typ, benefit)
        if method == "topsis":
            score = M.topsis(typ, w, benefit)
            contrib = M.topsis_contributions(typ, w, benefit)
        else:
            score = M.weighted_sum(typ, w, benefit)
            contrib = M.weighted_sum_contributions(typ, w, benefit)
        if method == "pareto":
            # Non-dominated first; within each group by the min–max weighted score.
            order = sorted(range(len(ok)), key=lambda i: (not front[i], -score[i], ok[i].label))
        else:
            order = sorted(range(len(ok)), key=lambda i: (-score[i], ok[i].label))
        mc_method = "topsis" if method == "topsis" else "weighted"
        if draws > 0:
            rob = monte_carlo(lo, typ, hi, w, benefit, method=mc_method, draws=draws, top_k=min(top_k, len(ok)),
                              seed=seed, rank_stats=False)
            p_first, p_top_k = rob.p_first, rob.p_top_k
        else:
            p_first = p_top_k = np.full(len(ok), np.nan)
        win = order[0]
        for rank, i in enumerate(order, 1):
            e = ok[i]
            row = {
                "rank": rank, "key": e.key, "name": e.name, "family": e.family, "thickness_m": e.thickness_m,
                "label": e.label, "score": float(score[i]),
                "criteria": {n: float(typ[i, j]) for j, n in enumerate(names)},
                "criteria_low": {n: float(lo[i, j]) for j, n in enumerate(names)},
                "criteria_high": {n: float(hi[i, j]) for j, n in enumerate(names)},
                "contributions": {n: float(contrib[i, j]) for j, n in enumerate(names)},
                "p_top": float(p_first[i]), "p_top_k": float(p_top_k[i]),
                "pareto": bool(front[i]), "dominated_by": ok[dom[i]].label if dom[i] >= 0 else None,
                "binding": e.binding, "confidence": float(e.values.get("confidence", 0.0)),
                "sources": {n: e.sources.get(n, []) for n in names},
                "flags": sorted(set(e.flags)),
                "design": _design(e),
                "versus_winner": "" if i == win else _versus(ok[win], e, names, contrib[win], contrib[i]),
            }
            ranked.append(row)
    srcs = {}
    for m in materials:
        for v in m.values:
            srcs.setdefault(v.source.key, {"kind": v.source.kind, "citation": v.source.citation})
    used = {k for r in ranked for lst in r["sources"].values() for k in lst}
    from materials.sizing import CAUTION

    return {
        "target": {**target.to_dict(), "weights": {n: weights[n] for n in names}},
        "method": method,
        "criteria": [{"name": n, "label": CRITERIA[n].label, "unit": CRITERIA[n].unit,
                      "display_unit": CRITERIA[n].display_unit, "benefit": CRITERIA[n].benefit,
                      "weight": weights[n], "formula": CRITERIA[n].formula} for n in names],
        "ranked": ranked,
        "excluded": [{"key": e.key, "name": e.name, "family": e.family, "label": e.label,
                      "thickness_m": e.thickness_m, "reasons": e.reasons} for e in excluded],
        "robustness": {"draws": draws, "seed": seed, "top_k": min(top_k, len(ok)) if ok else 0,
                       "weights": "Dirichlet around the given weights",
                       "values": "triangular within each value's low…high range"},
        "sources": {k: srcs[k] for k in sorted(used) if k in srcs},
        "cautions": [CAUTION],
    }


def _design(e: Evaluation) -> dict:
    d = e.details
    out = {k: d.get(k) for k in ("thickness_m", "area_m2", "design_field_V_per_m", "operating_field_V_per_m",
                                 "failure_probability", "weibull_shape", "test_area_m2")}
    out["worst_temperature_K"] = d.get("worst_breakdown_K")
    return out


def _versus(win: Evaluation, e: Evaluation, names, c_win, c_e) -> str:
    """What separates a runner-up from the winner.

    Behind / ahead is judged on the criterion values themselves (a TOPSIS contribution also depends on the row's
    distances, so it can favour a worse value); the criteria it is behind on are ordered by the score they cost.
    """
    def better(n, a, b):
        tol = 1e-9 * max(abs(a), abs(b), 1e-300)
        return a > b + tol if CRITERIA[n].benefit else a < b - tol

    idx = {n: j for j, n in enumerate(names)}
    behind = sorted((n for n in names if better(n, win.values[n], e.values[n])),
                    key=lambda n: -(c_win[idx[n]] - c_e[idx[n]]))
    ahead = [n for n in names if better(n, e.values[n], win.values[n])]
    parts = [f"{CRITERIA[n].label} {_fmt_criterion(n, e.values[n])} vs {_fmt_criterion(n, win.values[n])}"
             for n in behind[:2]]
    text = "behind on " + "; ".join(parts) if parts else "level with the winner on every criterion"
    if ahead:
        text += "; ahead on " + ", ".join(CRITERIA[n].label for n in ahead[:3])
    return text
