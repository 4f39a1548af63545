"""The shortlist: every material ranked or excluded with reasons, scores taken apart, robustness measured."""

from __future__ import annotations

import numpy as np

from materials.errors import InputError
from ranking.criteria import CRITERIA, Evaluation

METHODS = ("topsis", "weighted", "pareto")
FLAGGED_KINDS = ("recollection", "invented")


def weights_for(target) -> dict[str, float]:
    """Default weights, overridden by the target's; criteria absent from the target energy are kept."""
    w = {name: c.weight for name, c in CRITERIA.items()}
    w.update(target.weights or {})
    return w


def _impute(typ: dict, lo: dict, hi: dict, names: list[str], flags: list[list[str]]) -> None:
    """A missing criterion (NaN) takes the worst value among the candidates (and is flagged), never a flattering
    one; a missing mass takes the densest candidate's density."""
    if "mass" in names:
        have = np.isfinite(typ["mass"]) & (typ["volume"] != 0)
        miss = ~np.isfinite(typ["mass"])
        if have.any() and miss.any():
            rho = float(np.max(typ["mass"][have] / typ["volume"][have]))
            for d, src in ((typ, typ), (lo, lo), (hi, hi)):
                d["mass"] = np.where(miss, src["volume"] * rho, d["mass"])
            for i in np.flatnonzero(miss):
                flags[i].append("density missing: the densest candidate's density assumed")
    for name in names:
        v = typ[name]
        have = np.isfinite(v)
        if not have.any() or have.all():
            continue
        worst = float(v[have].max() if not CRITERIA[name].benefit else v[have].min())
        for d in (typ, lo, hi):
            d[name] = np.where(have, d[name], worst)
        for i in np.flatnonzero(~have):
            flags[i].append(f"{name} missing: worst of the field assumed")


def _fmt_criterion(name: str, value: float) -> str:
    from materials.numfmt import fmt_quantity

    c = CRITERIA[name]
    return fmt_quantity(value, c.display_unit, c.unit, 3)


def _label(key: str, thickness_m: float | None) -> str:
    return key if thickness_m is None else f"{key} @ {thickness_m * 1e6:g} µm"


def shortlist(materials, target, *, method: str = "topsis", top_k: int = 3, draws: int = 1000, seed: int = 0,
              rows: int | None = None, excluded_rows: int | None = None, evidence_top: int = 10) -> dict:
    """Rank ``materials`` against ``target``; the result follows the shortlist JSON contract (see README).

    ``materials`` is a list of :class:`materials.records.MaterialData` or a :class:`materials.table.ValueTable`;
    every candidate goes through the one evaluation engine (:mod:`ranking.engine`). ``rows`` and
    ``excluded_rows`` build only the first so many entries of ``ranked`` and ``excluded``; ``counts`` always
    gives the full numbers.
    """
    from materials.table import ValueTable
    from ranking import methods as M
    from ranking.engine import evaluate, inputs_for
    from ranking.explain import explain, verdict
    from ranking.robustness import monte_carlo

    if method not in METHODS:
        raise InputError(f"method '{method}' is not one of {', '.join(METHODS)}")
    table = materials if isinstance(materials, ValueTable) else ValueTable.from_materials(list(materials))
    thicknesses = list(target.thicknesses_m) or [None]
    from materials.priors import sources as prior_sources

    stated = prior_sources()
    # a stated prior range stands in for data: its numbers are "assumed"; a published law keeps its kind
    kind_of = {**{k: ("assumed" if v["kind"] == "common-practice" else v["kind"]) for k, v in stated.items()},
               **dict(zip(table.source_keys, table.source_kinds, strict=True))}
    weights = weights_for(target)
    names = [n for n in CRITERIA if weights.get(n, 0) > 0]
    if not names:
        raise InputError("every criterion has weight 0")
    evals: dict[tuple[int, int], Evaluation] = {}

    def full(i: int, ti: int) -> Evaluation:
        if (i, ti) not in evals:
            evals[i, ti] = explain(cols[ti], i)
        return evals[i, ti]

    inputs = inputs_for(table, target)
    cols = [evaluate(inputs, target, thickness_m=t) for t in thicknesses]
    # Candidates in material-major order: (material, thickness) pairs flattened as material · T + thickness.
    n_t = len(thicknesses)
    ok = np.column_stack([c.ok for c in cols]).ravel()
    typ_all, lo_all, hi_all = ({n: np.column_stack([getattr(c, part)[n] for c in cols]).ravel() for n in names}
                               for part in ("values", "low", "high"))
    good = np.flatnonzero(ok)
    cand_ok = [(f // n_t, f % n_t) for f in good.tolist()]
    cand_bad = [(f // n_t, f % n_t) for f in np.flatnonzero(~ok).tolist()]
    typ_d, lo_d, hi_d = ({n: d[n][good] for n in names} for d in (typ_all, lo_all, hi_all))
    stacks = _add_stacks(target, table, evals, cand_ok, cand_bad, names, (typ_d, lo_d, hi_d))
    extra_flags: list[list[str]] = [[] for _ in cand_ok]
    _impute(typ_d, lo_d, hi_d, names, extra_flags)
    # A criterion no candidate has cannot separate them: it is left out (and so shown in no table).
    names = [n for n in names if not cand_ok or np.isfinite(typ_d[n]).all()]
    labels = [_label(table.keys[i], thicknesses[ti]) if i != STACK else evals[i, ti].label for i, ti in cand_ok]
    ranked = []
    n_ok = len(cand_ok)
    if n_ok:
        typ = np.column_stack([typ_d[n] for n in names])
        lo = np.minimum(np.column_stack([lo_d[n] for n in names]), typ)
        hi = np.maximum(np.column_stack([hi_d[n] for n in names]), typ)
        w = np.array([weights[n] for n in names], dtype=float)
        benefit = np.array([CRITERIA[n].benefit for n in names])
        # One Pareto pass; a dominator is looked up only for the rows built below.
        front = M.pareto_front(typ, benefit)
        if method == "topsis":
            score = M.topsis(typ, w, benefit)
            contrib = M.topsis_contributions(typ, w, benefit)
        else:
            score = M.weighted_sum(typ, w, benefit)
            contrib = M.weighted_sum_contributions(typ, w, benefit)
        if method == "pareto":
            # Non-dominated first; within each group by the min–max weighted score.
            order = np.lexsort((np.array(labels), -score, ~front)).tolist()
        else:
            order = np.lexsort((np.array(labels), -score)).tolist()
        mc_method = "topsis" if method == "topsis" else "weighted"
        if draws > 0:
            rob = monte_carlo(lo, typ, hi, w, benefit, method=mc_method, draws=draws, top_k=min(top_k, n_ok),
                              seed=seed, rank_stats=False, screen=True)
            p_first, p_top_k = rob.p_first, rob.p_top_k
        else:
            p_first = p_top_k = np.full(n_ok, np.nan)
        win = order[0]
        shown = order[:rows] if rows is not None else order
        dom = M.dominator_of(typ, benefit, front, shown, size=n_ok)
        win_values = {n: float(typ[win, j]) for j, n in enumerate(names)}
        for rank, c in enumerate(shown, 1):
            i, ti = cand_ok[c]
            e = full(i, ti)
            values = {n: float(typ[c, j]) for j, n in enumerate(names)}
            row = {
                "rank": rank, "key": e.key, "name": e.name, "family": e.family, "thickness_m": e.thickness_m,
                "label": labels[c], "score": float(score[c]),
                "criteria": values,
                "criteria_low": {n: float(lo[c, j]) for j, n in enumerate(names)},
                "criteria_high": {n: float(hi[c, j]) for j, n in enumerate(names)},
                "contributions": {n: float(contrib[c, j]) for j, n in enumerate(names)},
                "p_top": float(p_first[c]), "p_top_k": float(p_top_k[c]),
                "pareto": bool(front[c]), "dominated_by": labels[dom[c]] if dom[c] >= 0 else None,
                "binding": e.binding,
                "confidence": float(values["confidence"] if "confidence" in values
                                    else e.values.get("confidence", 0.0)),
                "sources": {n: e.sources.get(n, []) for n in names},
                "flags": sorted(set(e.flags) | set(extra_flags[c])),
                "design": _design(e),
                "source_kinds": _source_kinds(e, names, kind_of),
                "versus_winner": "" if c == win else _versus(win_values, values, names, contrib[win], contrib[c]),
            }
            if i == STACK:
                row["stack"] = e.details["stack"]
            ranked.append(row)
    excluded = []
    for i, ti in (cand_bad[:excluded_rows] if excluded_rows is not None else cand_bad):
        e = evals[i, ti] if (i, ti) in evals else verdict(cols[ti], i)
        excluded.append({"key": e.key, "name": e.name, "family": e.family, "label": e.label,
                         "thickness_m": e.thickness_m, "reasons": e.reasons})
    srcs = {**stated, **{k: {"kind": kind, "citation": cit} for k, kind, cit in
                         zip(table.source_keys, table.source_kinds, table.source_citations, strict=True)}}
    used = {k for r in ranked for lst in r["sources"].values() for k in lst}
    from materials.sizing import CAUTION

    return {
        "target": {**target.to_dict(), "weights": {n: weights[n] for n in names}},
        "evidence": evidence_share(ranked[:evidence_top]),
        "method": method,
        "criteria": [{"name": n, "label": CRITERIA[n].label, "unit": CRITERIA[n].unit,
                      "display_unit": CRITERIA[n].display_unit, "benefit": CRITERIA[n].benefit,
                      "weight": weights[n], "formula": CRITERIA[n].formula} for n in names],
        "ranked": ranked,
        "excluded": excluded,
        "counts": {"ranked": n_ok, "excluded": len(cand_bad)},
        "robustness": {"draws": draws, "seed": seed, "top_k": min(top_k, n_ok) if n_ok else 0,
                       "weights": "Dirichlet around the given weights",
                       "values": "triangular within each value's low…high range"},
        "sources": {k: srcs[k] for k in sorted(used) if k in srcs},
        "cautions": [CAUTION],
        **({"stacks": stacks} if target.stacks else {}),
    }


#: The candidate index of a layered candidate (its pair is (STACK, the stack's position in the target)).
STACK = "stack"


def _add_stacks(target, table, evals, cand_ok, cand_bad, names, parts) -> list[dict]:
    """Put the target's layered candidates (:mod:`ranking.stack_size`) among the candidates: their evaluations into
    ``evals``, their pairs into ``cand_ok`` / ``cand_bad`` and their criteria after the materials' in ``parts``
    (typical, low, high). Returns each stack's design and verdict for the result's ``stacks``."""
    if not target.stacks:
        return []
    from ranking.stack_size import stack_evaluations

    evs = stack_evaluations(target, table)
    ok = [j for j, e in enumerate(evs) if e.ok]
    for j, e in enumerate(evs):
        evals[STACK, j] = e
        (cand_ok if e.ok else cand_bad).append((STACK, j))
    for d, attr in zip(parts, ("values", "low", "high"), strict=True):
        for n in names:
            d[n] = np.concatenate([d[n], [getattr(evs[j], attr).get(n, np.nan) for j in ok]])
    return [{"key": e.key, "name": e.name, "ranked": e.ok, "reasons": e.reasons, **(e.details.get("stack") or {})}
            for e in evs]


#: Evidence classes of the used-evidence line, by source kind ("assumed" marks a stated prior or an imputed value).
EVIDENCE_CLASS = {"handbook": "published", "standard": "published", "paper": "published", "web": "published",
                  "lab": "lab", "common-practice": "common_practice", "recollection": "assumed_or_recollected",
                  "invented": "assumed_or_recollected", "assumed": "assumed_or_recollected"}


def _source_kinds(e: Evaluation, names, kind_of: dict) -> dict[str, list[str]]:
    """Per criterion, the kinds of the sources behind its number; "assumed" where a stated prior or an imputation
    stands in for data (an assumed Weibull shape or test area, a criterion taken as the worst of the field)."""
    out = {}
    for n in names:
        kinds = {kind_of.get(k, "common-practice") for k in e.sources.get(n, [])}
        if n in e.missing:
            kinds.add("assumed")
        out[n] = sorted(kinds)
    return out


def evidence_share(rows: list[dict]) -> dict:
    """What the given ranked rows rest on: the share of their (criterion, source kind) items that are published,
    lab, common practice, or assumed or recollected."""
    counts = {"published": 0, "lab": 0, "common_practice": 0, "assumed_or_recollected": 0}
    for r in rows:
        for kinds in r.get("source_kinds", {}).values():
            for k in kinds:
                counts[EVIDENCE_CLASS.get(k, "assumed_or_recollected")] += 1
    total = sum(counts.values())
    return {"rows": len(rows), **{k: (v / total if total else 0.0) for k, v in counts.items()}}


def _design(e: Evaluation) -> dict:
    d = e.details
    out = {k: d.get(k) for k in ("thickness_m", "area_m2", "design_field_V_per_m", "operating_field_V_per_m",
                                 "failure_probability", "weibull_shape", "test_area_m2", "sections",
                                 "layer_thickness_m")}
    out["worst_temperature_K"] = d.get("worst_breakdown_K")
    out["energy_method"] = d.get("method")
    out["assumptions"] = d.get("assumptions", [])
    from ranking.explain import SERVICE_KEYS

    out.update({k: d[k] for k in SERVICE_KEYS if k in d})
    return out


def _versus(win: dict, e: dict, names, c_win, c_e) -> str:
    """What separates a runner-up (criterion values ``e``) from the winner (``win``).

    Behind / ahead is judged on the criterion values themselves (a TOPSIS contribution also depends on the row's
    distances, so it can favour a worse value); the criteria it is behind on are ordered by the score they cost.
    """
    def better(n, a, b):
        tol = 1e-9 * max(abs(a), abs(b), 1e-300)
        return a > b + tol if CRITERIA[n].benefit else a < b - tol

    idx = {n: j for j, n in enumerate(names)}
    behind = sorted((n for n in names if better(n, win[n], e[n])), key=lambda n: -(c_win[idx[n]] - c_e[idx[n]]))
    ahead = [n for n in names if better(n, e[n], win[n])]
    parts = [f"{CRITERIA[n].label} {_fmt_criterion(n, e[n])} vs {_fmt_criterion(n, win[n])}" for n in behind[:2]]
    text = "behind on " + "; ".join(parts) if parts else "level with the winner on every criterion"
    if ahead:
        text += "; ahead on " + ", ".join(CRITERIA[n].label for n in ahead[:3])
    return text
