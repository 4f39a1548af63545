"""A layered candidate of a target file as a shortlist candidate: sized for the target and given the criteria a
material has, so it is ranked, scored and drawn in the Monte Carlo beside the materials.

Sizing keeps the layer thickness ratios ``r_i`` (or, for a stack marked ``fixed``, the thicknesses as given) and
finds the smallest total thickness ``D`` at which every layer holds its design field at every temperature of the
target's range that can be the worst (both ends and each layer's data points in between: the engine's grid). The
field in each layer is the capacitive (AC) division of :func:`materials.stack.layer_fields` and each layer's design
field is the evaluation engine's (:func:`ranking.engine.evaluate` with one thickness per layer, as
:func:`ranking.stack.evaluate_stack` does: Weibull quantile at the accepted failure probability, weakest-link area
scaling, thickness law, gas and liquid gap laws). With a target energy ``W`` the active area follows the thickness,
``A = 2·W·D·s/(ε0·V²)`` with ``s = max_T Σ r_i/ε_i(T)`` (the area that stores ``W`` where the capacitance is
lowest; ``½·C·V²`` with ``C = ε0·A/Σ d_i/ε_i``, the layer capacitances in series); with a target area it is that
area; with neither, each layer keeps its test area (no area scaling), as for a material. At each temperature the
thickness solves ``min_i E_design,i / E_i = 1`` (:func:`materials.sizing.root_in_bracket` on ln D); the stack takes
the largest, and never less than makes every layer at least its thinnest made. The layer with the smallest margin
there binds. Each layer is held at the target's failure probability, so where several layers bind together the
part's probability is up to their number times it (``failure_probability`` in the design says the sum).

Criteria (the stack's own, in the materials' units):

* ``energy`` — the stored energy over the total dielectric volume, ``½·ε0·V²/(D²·s)``; its low…high range is that
  of the binding layer's material sized alone for the target by the engine (the same power laws size the stack),
  or where that material cannot be sized alone, its permittivity and breakdown ranges (``u ∝ εr·E²``) and, where
  its Weibull shape or test area is an assumed range, the design field at the range's ends squared
  (``E_d ∝ (−ln(1−p)·A_test/A)^(1/β)``);
* ``volume`` and ``mass`` — ``W/u`` and ``volume·Σ r_i·ρ_i``;
* ``loss`` — the series-circuit loss tangent ``Σ w_i·tan δ_i`` with ``w_i = (r_i/ε_i)/Σ r_j/ε_j``, each layer's
  share of the voltage (and of the stored energy): exact for layers of small loss in series (the dissipation factor
  of series capacitors), each layer's worst tan δ over the range;
* ``drift`` — the worst layer's; ``healing`` — the least of the layers' (every layer must clear a fault);
  ``confidence`` — the mean of the layers'.

Pure: materials and numbers in, an :class:`ranking.criteria.Evaluation` per stack out.
"""

from __future__ import annotations

import math

import numpy as np

from materials.errors import HoldoffError
from ranking.criteria import CRITERIA_NAMES, Evaluation

#: Row key prefix of a layered candidate in a shortlist.
PREFIX = "stack:"
#: Layer rules that do not apply to a layer of a stack: the stack's own fields, energy, loss and family decide
#: (a layer's rating, missing data, strict refusals and loop limits still exclude the stack).
NOT_FOR_LAYERS = ("family", "thinner-than-made", "thicker-than-made", "over-design-field", "no-size",
                  "area-impractical", "outside-data", "energy-short", "loss-over")


def stack_evaluations(target, table) -> list[Evaluation]:
    """Every layered candidate of ``target`` against it, from the materials of the shortlist's value table."""
    from materials.errors import DataError

    index = {k: i for i, k in enumerate(table.keys)}
    keys = list(dict.fromkeys(k for sp in target.stacks for k, _ in sp[1]))
    missing = [k for k in keys if k not in index]
    if missing:
        raise DataError(f"stack candidate: no material '{missing[0]}' in the store")
    mats = dict(zip(keys, table.materials([index[k] for k in keys]), strict=True))
    return [size_stack([mats[k] for k, _ in sp[1]], sp, target) for sp in target.stacks]


class _Ends:
    """The engine's inputs of one stack's layers at each temperature of the target's range that can be the worst
    (both ends and every permittivity, breakdown or loss data point of a layer in between: the engine's grid), and
    its margins at a size."""

    def __init__(self, materials, ratios, target):
        from materials.table import ValueTable
        from ranking.engine import worst_inputs

        self.table = ValueTable.from_materials(list(materials))
        self.r, self.target = np.asarray(ratios, dtype=float), target
        self.whole = worst_inputs(self.table, tmin_K=target.tmin_K, tmax_K=target.tmax_K,
                                  frequency_Hz=target.frequency_Hz, assume_defaults=target.assume_defaults)
        self.temps = tuple(float(t) for t in np.unique(self.whole.gt))
        self.inp = {t: worst_inputs(self.table, tmin_K=t, tmax_K=t, frequency_Hz=target.frequency_Hz,
                                    assume_defaults=target.assume_defaults) for t in self.temps}
        with np.errstate(all="ignore"):
            self.s = max(float(np.sum(self.r / self.inp[t].eps_v)) for t in self.temps)

    def area(self, D: float) -> float | None:
        """The active area at total thickness ``D`` (see the module docstring)."""
        from materials.energy import EPSILON_0

        tg = self.target
        if tg.energy_J is not None:
            return 2.0 * tg.energy_J * D * self.s / (EPSILON_0 * tg.voltage_V ** 2)
        return tg.area_m2

    def margins(self, t: float, D: float):
        """Each layer's design field over its field at end ``t`` and total thickness ``D``, and the engine's
        columns."""
        from materials.stack import layer_fields
        from ranking.ceiling import apply_gap_laws
        from ranking.engine import evaluate
        from ranking.target import Target

        tg, inp = self.target, self.inp[t]
        d = self.r * D
        apply_gap_laws(inp, d, pressure_Pa=None, temperature_K=t)
        one = Target(voltage_V=tg.voltage_V, tmin_K=t, tmax_K=t, margin=tg.margin, area_m2=self.area(D),
                     failure_probability=tg.failure_probability, segment_area_m2=tg.segment_area_m2,
                     assume_defaults=tg.assume_defaults, extrapolate=True)
        cols = evaluate(inp, one, thickness_m=d)
        e = layer_fields(d, inp.eps_v, tg.voltage_V)
        with np.errstate(all="ignore"):
            return cols.parts["ed"] / e, cols

    def solve(self, t: float, D0: float) -> float:
        """The total thickness at which the weakest layer at end ``t`` sits exactly at its design field."""
        from materials.sizing import root_in_bracket

        def f(x):
            m = self.margins(t, math.exp(x))[0]
            return math.log(float(np.nanmin(m))) if np.isfinite(m).any() and np.nanmin(m) > 0 else -math.inf

        a = math.log(D0)
        fa = f(a)
        step = math.log(2.0) * (1 if fa < 0 else -1)
        for _ in range(80):
            b = a + step
            fb = f(b)
            if (fa < 0) != (fb < 0):
                (lo, flo), (hi, fhi) = sorted(((a, fa), (b, fb)))
                if not math.isfinite(flo):
                    # a margin that is not a number at the thin end (a gas left of its Paschen asymptote): step in
                    return math.exp(hi)
                # ln(margin) is close to linear in ln D (a power law where the thickness and area laws apply): a few
                # secant steps usually find it; else two probes beside the last narrow the bracket of the root finder
                (x0, f0), (x1, f1) = (lo, flo), (hi, fhi)
                for _ in range(4):
                    if f1 == f0 or not math.isfinite(f1 - f0):
                        break
                    x0, f0, x1 = x1, f1, x1 - f1 * (x1 - x0) / (f1 - f0)
                    if not lo < x1 < hi:
                        break
                    f1 = f(x1)
                    if abs(f1) < 1e-12:   # the margin is 1 to 12 digits: the size is found
                        return math.exp(x1)
                p_lo, p_hi = x1 - 1e-9, x1 + 1e-9
                if lo < p_lo and p_hi < hi:
                    f_plo, f_phi = f(p_lo), f(p_hi)
                    if f_plo < 0 <= f_phi:
                        lo, flo, hi, fhi = p_lo, f_plo, p_hi, f_phi
                x, _, ok = root_in_bracket(lambda x, idx: np.array([f(float(x[0]))]), lo, hi, f_lo=flo,
                                           f_hi=fhi, xtol=1e-14)
                if not ok[0]:
                    raise _NoSize()
                return math.exp(float(x[0]))
            a, fa = b, fb
        raise _NoSize()


class _NoSize(Exception):
    pass


def size_stack(materials, spec, target) -> Evaluation:
    """One layered candidate (``spec``: name, layers, fixed) sized and scored for ``target``; an excluded
    candidate carries its reasons (a layer's rating, missing data, a size that cannot hold, a short energy)."""
    from materials.energy import EPSILON_0
    from ranking.reasons import words
    from ranking.stack import evaluate_stack

    name, layers = spec[0], spec[1]
    fixed = bool(spec[2]) if len(spec) > 2 else False
    keys = [k for k, _ in layers]
    given = np.array([d for _, d in layers], dtype=float)
    ratios = given / given.sum()
    ev = Evaluation(key=PREFIX + name, name=name, family="stack")
    ends = _Ends(materials, ratios, target)
    V = float(target.voltage_V)
    # each layer's rating, data and strict refusals over the whole range (the engine's rules, as for a material)
    rng = _range_columns(ends, target, given)
    for i, k in enumerate(keys):
        from ranking.explain import reasons

        for code, q in reasons(rng, i, ignore=NOT_FOR_LAYERS):
            ev.reasons.append(words("stack-layer", key=k, reason=words(code, **q)))
    ev.reasons = list(dict.fromkeys(ev.reasons))   # a material used in two layers says it once
    if ev.reasons:
        return ev
    d_min = np.where(np.isfinite(ends.inp[ends.temps[0]].d_min), ends.inp[ends.temps[0]].d_min, 0.0)
    D_made = float(np.max(d_min / ratios))
    if fixed:
        D = float(given.sum())
        thin = [i for i in range(len(keys)) if given[i] < d_min[i] * (1 - 1e-9)]
        for i in thin:
            ev.reasons.append(words("stack-layer", key=keys[i], reason=words(
                "thinner-than-made", thickness_m=float(given[i]), min_thickness_m=float(d_min[i]))))
    else:
        try:
            need = {t: ends.solve(t, float(given.sum())) for t in ends.temps}
        except _NoSize:
            ev.reasons.append(words("stack-no-size", voltage_V=V))
            return ev
        D = max(max(need.values()), D_made)
    if ev.reasons:
        return ev
    d = ratios * D
    area = ends.area(D)
    runs = []
    try:
        for t in ends.temps:
            runs.append(evaluate_stack(materials, d, voltage_V=V, temperature_K=t, area_m2=area,
                                       failure_probability=target.failure_probability, margin=target.margin,
                                       assume_defaults=target.assume_defaults, extrapolate=target.extrapolate,
                                       segment_area_m2=target.segment_area_m2))
    except HoldoffError as exc:
        ev.reasons.append(str(exc))
        return ev
    worst = min(runs, key=lambda r: r["stack_breakdown_V"])
    first = worst["first_layer"]
    bind = worst["layers"][first]
    ev.details["stack"] = {"name": name, "key": ev.key, "fixed": fixed, "layers": worst["layers"], "thickness_m": D,
                           "ratios": ratios.tolist(), "area_m2": area, "capacitance_F": worst["capacitance_F"],
                           "first_to_fail": worst["first_to_fail"], "stack_breakdown_V": worst["stack_breakdown_V"],
                           "worst_temperature_K": worst["temperature_K"], "mode": worst["mode"]}
    if worst["stack_breakdown_V"] < V * (1 - 1e-6):
        ev.reasons.append(words("stack-over-design", key=bind["key"], layer=first + 1, layers=len(keys),
                                field_V_per_m=bind["field_V_per_m"], design_V_per_m=bind["design_field_V_per_m"],
                                fails_at_V=worst["stack_breakdown_V"], temperature_K=worst["temperature_K"]))
        return ev
    u = 0.5 * EPSILON_0 * V * V / (D * D * ends.s)
    if target.energy_density_J_per_m3 is not None and u < target.energy_density_J_per_m3 * (1 - 1e-9):
        ev.reasons.append(words("stack-energy-short", energy_J_per_m3=u, voltage_V=V,
                                target_J_per_m3=target.energy_density_J_per_m3, key=bind["key"]))
        return ev
    # the criteria
    inp_w = ends.inp[worst["temperature_K"]]
    w_share = (ratios / inp_w.eps_v) / np.sum(ratios / inp_w.eps_v)
    f_lo, f_hi = _energy_range(inp_w, first, target, area, rng)
    W = target.energy_J if target.energy_J is not None else 1.0
    layer_ev = [_layer_words(rng, i) for i in range(len(keys))]
    vals = {"energy": (u, u * f_lo, u * f_hi), "volume": (W / u, W / (u * f_hi), W / (u * f_lo))}
    rho = np.array([float(inp_w.density[i]) for i in range(len(keys))])
    vol = vals["volume"]
    vals["mass"] = tuple(v * float(np.sum(ratios * rho)) for v in vol)
    for crit in ("loss",):
        got = [e.values.get(crit) for e in layer_ev]
        if all(g is not None for g in got):
            vals[crit] = tuple(float(np.sum(w_share * np.array([getattr(e, part)[crit] for e in layer_ev])))
                               for part in ("values", "low", "high"))
    drifts = [e.values.get("drift") for e in layer_ev]
    if all(g is not None for g in drifts):
        vals["drift"] = (max(drifts),) * 3
    vals["healing"] = (min(e.values.get("healing", 0.0) for e in layer_ev),) * 3
    vals["confidence"] = (float(np.mean([e.values.get("confidence", 0.0) for e in layer_ev])),) * 3
    limit = target.max_loss_tangent
    if limit is not None and "loss" in vals and vals["loss"][0] > limit:
        ev.reasons.append(words("loss-over", loss=vals["loss"][0], limit=limit))
        return ev
    for n in CRITERIA_NAMES:
        v = vals.get(n)
        if v is None or not all(math.isfinite(x) for x in v):
            ev.missing.append(n)
            continue
        ev.values[n], ev.low[n], ev.high[n] = v
    # sources and flags: the layers' (the stack evaluation's for what sets the size, the engine's for the rest)
    for i, ly in enumerate(worst["layers"]):
        for n in ("energy", "volume", "mass"):
            _add(ev.sources, n, ly["sources"])
        for n in ("mass", "loss", "drift", "healing"):
            _add(ev.sources, n, layer_ev[i].sources.get(n, []))
        ev.flags += [f"{ly['key']}: {f}" if f not in ("recollection", "invented", "assumed", "extrapolated") else f
                     for f in ly["flags"]]
        ev.flags += [f for f in layer_ev[i].flags if f in ("recollection", "invented")]
    ev.flags = list(dict.fromkeys(ev.flags))
    at_made = not fixed and D_made >= max(need.values())
    if fixed:
        ev.binding = words("binding-stack-fixed", key=bind["key"], layer=first + 1, layers=len(keys),
                           ratio=1.0 / bind["margin"])
    elif at_made:
        j = int(np.argmax(d_min / ratios))
        ev.binding = words("binding-stack-made", key=keys[j], min_thickness_m=float(d_min[j]), total_m=D)
    else:
        ev.binding = words("binding-stack", key=bind["key"], layer=first + 1, layers=len(keys),
                           temperature_K=worst["temperature_K"], field_V_per_m=bind["field_V_per_m"],
                           design_V_per_m=bind["design_field_V_per_m"])
    ev.details.update(
        failure_probability=_part_failure(worst["layers"], inp_w, area, target), thickness_m=D, area_m2=area,
        design_field_V_per_m=bind["design_field_V_per_m"], operating_field_V_per_m=bind["field_V_per_m"],
        weibull_shape=float(inp_w.beta[first]),
        test_area_m2=float(inp_w.test_area[first]), worst_breakdown_K=worst["temperature_K"], method="stack",
        assumptions=[f"{ly['key']}: {n}" for ly in worst["layers"] for n in ly["notes"]],
        stack={**ev.details["stack"], "energy_density_J_per_m3": u, "loss_weights": w_share.tolist(),
               "energy_J": 0.5 * EPSILON_0 * area * V * V / (D * ends.s) if area is not None else None})
    return ev


def _part_failure(layers, inp, area, target) -> float:
    """The part's short-term failure probability at the worst end: any layer failing fails it,
    ``1 − Π(1 − p_i)``, each ``p_i`` the Weibull probability at its field over its weakest-link area (the part's
    area; one segment for a self-healing layer with a segment area; the test gap for a gas)."""
    from materials.sizing import failure_probability

    e = np.array([ly["field_V_per_m"] for ly in layers])
    scale = np.array([ly["breakdown_V_per_m"] for ly in layers])
    link = np.where(inp.no_area_law, inp.test_area, inp.test_area if area is None else area)
    if target.segment_area_m2:
        link = np.where(inp.heals & ~inp.no_area_law, target.segment_area_m2, link)
    with np.errstate(all="ignore"):
        p = failure_probability(e, scale_V_per_m=scale, shape=inp.beta, test_area_m2=inp.test_area, area_m2=link)
    return float(-np.expm1(np.sum(np.log1p(-np.nan_to_num(np.asarray(p, dtype=float))))))


def _add(sources: dict, name: str, keys) -> None:
    lst = sources.setdefault(name, [])
    lst.extend(k for k in keys if k not in lst)


def _range_columns(ends: _Ends, target, given):
    """The engine's columns of the stack's layers over the whole temperature range (ratings, data, loss, drift,
    healing and confidence: the rules that do not depend on the stack's size)."""
    from ranking.engine import evaluate

    return evaluate(ends.whole, target, thickness_m=np.asarray(given, dtype=float))


def _layer_words(cols, i: int) -> Evaluation:
    """One layer's :class:`Evaluation` from the range columns, the rules that are the stack's own set aside."""
    from dataclasses import replace

    from ranking.explain import explain

    cols, i = cols.own(i)
    none = np.zeros(len(cols), dtype=bool)
    one = float(np.atleast_1d(cols.parts["thickness_m"])[i])
    clean = replace(cols, fails={**cols.fails, **{c: none for c in NOT_FOR_LAYERS}},
                    parts={**cols.parts, "thickness_m": one})
    ev = explain(clean, i)
    ev.flags = [f for f in ev.flags if not f.startswith("thickness-")]
    return ev


def _energy_range(inp, i: int, target, area, rng) -> tuple[float, float]:
    """Low and high factors on the stack's energy density from its binding layer ``i``: those of that layer's
    material sized alone for the target by the engine (its permittivity and breakdown ranges, and the sizing repeated
    at the ends of an assumed Weibull shape or test area; a stack bound by one layer sizes by the same power laws),
    else the module docstring's estimate at the stack's area."""
    from ranking.engine import evaluate

    alone = evaluate(rng.parts["inputs"], target)
    with np.errstate(all="ignore"):
        u = float(alone.values["energy"][i])
        lo, hi = float(alone.low["energy"][i]) / u, float(alone.high["energy"][i]) / u
    if all(math.isfinite(x) and x > 0 for x in (u, lo, hi)):
        return min(lo, 1.0), max(hi, 1.0)
    with np.errstate(all="ignore"):
        eps, ebd = float(inp.eps_v[i]), float(inp.ebd_v[i])
        f_eps = (float(inp.eps_lo[i]) / eps, float(inp.eps_hi[i]) / eps)
        f_e = ((float(inp.ebd_lo[i]) / ebd) ** 2, (float(inp.ebd_hi[i]) / ebd) ** 2)
    lo = min(1.0, f_eps[0] * f_e[0]) if all(map(math.isfinite, (f_eps[0], f_e[0]))) else 1.0
    hi = max(1.0, f_eps[1] * f_e[1]) if all(map(math.isfinite, (f_eps[1], f_e[1]))) else 1.0
    if (not inp.shape_found[i] or not inp.area_found[i]) and not inp.no_area_law[i]:
        p = float(target.failure_probability)
        beta = float(inp.beta[i])
        link = area if area is not None else float(inp.test_area[i])
        base = math.log(-math.log1p(-p)) + math.log(float(inp.test_area[i])) - math.log(link)
        for b, a in ((float(inp.beta_lo[i]), float(inp.test_area_lo[i])),
                     (float(inp.beta_hi[i]), float(inp.test_area_hi[i]))):
            end = math.log(-math.log1p(-p)) + math.log(a) - math.log(link if area is not None else a)
            f = math.exp(2.0 * (end / b - base / beta))
            lo, hi = min(lo, f), max(hi, f)
    return lo, hi
