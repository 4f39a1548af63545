"""One candidate's words, from the engine's arrays: its reasons, binding constraint, flags, sources and design.

The engine (:mod:`ranking.engine`) decides for every candidate at once; this module reads one candidate's verdict
back as reason codes with the numbers they quote and renders them through :func:`ranking.reasons.words`.
"""

from __future__ import annotations

import numpy as np

from materials.table import ValueTable
from ranking.criteria import CRITERIA_NAMES, Evaluation
from materials.priors import LAW_FACTOR
from ranking.engine import BIAS, MAX_AREA_M2, METHOD_NAMES, STAGES, THICKNESS_FACTOR, Columns, evaluate
from ranking.reasons import words

# --- words -------------------------------------------------------------------------------------------------------


def _quote(code: str, cols: Columns, i: int) -> tuple[str, dict]:
    """The reason code to show and the numbers it quotes, for rule ``code`` of candidate ``i``."""
    P, inp = cols.parts, cols.parts["inputs"]
    target, t = P["target"], inp.reader.t

    def f(a):
        return float(a[i])

    if code == "family":
        return code, {"family": t.families[i], "families": target.families}
    if code.startswith("rated-"):
        side = code.rsplit("-", 1)[1]
        prop = f"{side}_temperature"
        if code.startswith("rated-missing"):
            return "rated-missing", {"prop": prop}
        return "rated-outside", {"prop": prop, "rated_K": f(inp.rated[prop].value),
                                 "need_K": target.tmax_K if side == "max" else target.tmin_K}
    if code in ("permittivity-missing", "breakdown-missing"):
        return "property-missing", {"prop": "relative_permittivity" if code[0] == "p" else "breakdown_field"}
    if code == "value-invalid":
        for prop, a, rows in (("relative_permittivity", inp.eps_v, inp.eps_g.used0[inp.c_eps]),
                              ("breakdown_field", inp.ebd_v, inp.ebd_g.used0[inp.c_ebd]),
                              ("weibull_shape", inp.beta, inp.sh.used0), ("min_thickness", inp.d_min, inp.thick.used0),
                              ("density", inp.density, inp.dens.used0)):
            if a[i] <= 0 or (prop in ("relative_permittivity", "breakdown_field") and not np.isfinite(a[i])):
                return code, {"prop": prop, "value": f(a), "source": _source_key(t, rows[i])}
        return code, {"prop": "breakdown test area", "value": f(inp.test_area), "source": "—"}
    if code == "shape-too-low":
        return code, {"shape": f(inp.beta), "source": _source_key(t, inp.sh.used0[i])}
    if code == "no-size":
        return code, {"energy_J": target.energy_J, "voltage_V": target.voltage_V}
    if code == "outside-data":
        return code, {"notes": "; ".join(outside_notes(cols, i))}
    if code == "thicker-than-made":
        return code, {"thickness_m": f(P["d"]), "max_thickness_m": f(inp.d_max),
                      "source": _source_key(t, inp.thickmax.used0[i]), "sections": -(-f(P["d"]) // f(inp.d_max)),
                      "allowed": 1 if P["thickness_m"] is not None else int(getattr(target, "max_sections", 1) or 1)}
    if code == "above-loop":
        return code, {"field_V_per_m": f(P["e_op"]), "loop_V_per_m": f(inp.loop_field)}
    if code == "area-impractical":
        shape = f(inp.beta)
        if P.get("life_binds") is not None and P["life_binds"][i]:
            shape *= f(P["life_n"]) / (f(P["life_n"]) + 1.0)   # the life law's effective shape β·n/(n+1)
        return code, {"area_m2": f(P["area"]), "limit_m2": MAX_AREA_M2, "shape": shape}
    if code == "thinner-than-made":
        return code, {"thickness_m": P["thickness_m"], "min_thickness_m": f(inp.d_min)}
    if code == "over-design-field":
        return code, {"thickness_m": P["thickness_m"], "voltage_V": target.voltage_V, "field_V_per_m": f(P["e_op"]),
                      "design_V_per_m": f(P["ed"]), "breakdown_K": f(inp.t_ebd), "shape": f(inp.beta),
                      "failure_probability": target.failure_probability}
    if code == "energy-short":
        return code, {"energy_J_per_m3": f(P["u_op"]), "voltage_V": target.voltage_V,
                      "target_J_per_m3": target.energy_density_J_per_m3, "at_min": bool(P["at_min"][i]),
                      "min_thickness_m": f(inp.d_min), "design_V_per_m": f(P["ed"]), "breakdown_K": f(inp.t_ebd)}
    if code == "loss-over":
        return code, {"loss": f(cols.values["loss"]), "limit": target.max_loss_tangent}
    heat = P.get("heat")
    if code in ("thermal-runaway", "hot-spot-over-rating"):
        q = {"power_W": f(heat["power_ambient_W"] if code == "thermal-runaway" else heat["power_W"]),
             "ambient_K": heat["ambient_K"], "rth_K_per_W": target.thermal_resistance_K_per_W}
        if code == "hot-spot-over-rating":
            q.update(hot_K=f(heat["temperature_K"]), rated_K=f(inp.rated["max_temperature"].value))
        return code, q
    if code == "life-no-size":
        n = f(P["life_n"])
        return code, {"n": n, "shape": f(inp.beta) * n / (n + 1)}
    if code == "life-short":
        return code, {"thickness_m": P["thickness_m"], "voltage_V": target.voltage_V, "field_V_per_m": f(P["e_op"]),
                      "life_V_per_m": f(P["e_life"]), "life_s": target.life_s, "fraction": target.life_fraction,
                      "n": f(P["life_n"])}
    return code, {}


def _rows_behind(lk, c) -> tuple:
    """The rows behind a lookup's answer: the value's, then the weaker rows that lent its shape, if any."""
    return (lk.used0[c], lk.used1[c], lk.shape0[c], lk.shape1[c])


def _source_key(t: ValueTable, row) -> str:
    return t.source_keys[t.source[int(row)]] if int(row) >= 0 else "—"


def _failing(cols: Columns) -> tuple[list[str], np.ndarray]:
    """Every rule's code in stage order and a matrix (material, rule) of which fail, built once per columns."""
    got = cols.__dict__.get("_failing")
    if got is None:
        codes = [c for stage in STAGES for c in stage]
        m = len(cols)
        got = codes, np.column_stack([np.broadcast_to(np.asarray(cols.fails[c], dtype=bool), (m,)) for c in codes])
        cols.__dict__["_failing"] = got
    return got


def reasons(cols: Columns, i: int, *, ignore=()) -> list[tuple[str, dict]]:
    """Candidate ``i``'s reason codes with their quoted numbers: every failing rule of the first failing stage
    (rules named in ``ignore`` do not count)."""
    cols, i = cols.own(i)
    codes, failing = _failing(cols)
    on = {codes[j] for j in np.flatnonzero(failing[i]).tolist()}.difference(ignore)
    if not on:
        return []
    for stage in STAGES:
        hit = [c for c in stage if c in on]
        if hit:
            return [_quote(c, cols, i) for c in hit]
    return []


def binding(cols: Columns, i: int) -> tuple[str, dict]:
    """What limits a candidate: the fixed layer, the thinnest layer made, or breakdown at the worst temperature."""
    cols, i = cols.own(i)
    P, inp = cols.parts, cols.parts["inputs"]
    if P["thickness_m"] is not None:
        return "binding-fixed", {"thickness_m": P["thickness_m"], "ratio": float(P["e_op"][i] / P["ed"][i])}
    if P["at_min"][i]:
        return "binding-min-thickness", {"min_thickness_m": float(inp.d_min[i]),
                                         "voltage_V": P["target"].voltage_V,
                                         "field_V_per_m": float(P["e_op"][i]), "design_V_per_m": float(P["ed"][i])}
    target = P["target"]
    if P.get("life_binds") is not None and P["life_binds"][i]:
        short = float(np.exp(P["log_k_d"][i] - np.log(np.where(P["has_seg"][i], P["seg"][i], P["area"][i]))
                             / inp.beta[i]))
        return "binding-life", {"life_s": target.life_s, "fraction": target.life_fraction,
                                "life_V_per_m": float(P["ed"][i]), "short_V_per_m": short,
                                "n": float(P["life_n"][i])}
    if P.get("heat") is not None and inp.t_ebd[i] > target.tmax_K + 1e-6:
        return "binding-heat", {"breakdown_K": float(inp.t_ebd[i]), "breakdown_V_per_m": float(inp.ebd_v[i]),
                                "design_V_per_m": float(P["ed"][i])}
    return "binding-breakdown", {"breakdown_K": float(inp.t_ebd[i]), "breakdown_V_per_m": float(inp.ebd_v[i]),
                                 "design_V_per_m": float(P["ed"][i])}


def outside_notes(cols: Columns, i: int) -> list[str]:
    """Where candidate ``i`` uses a value outside its data: temperatures beyond the measured ones, or a layer
    thickness beyond what a thickness law may carry."""
    cols, i = cols.own(i)
    return held_notes(cols.parts["inputs"], i) + _thickness_outside(cols, i)


def band_notes(inp, i: int) -> list[str]:
    """Where material ``i`` of the engine's inputs reads its permittivity from a stated band of capacitance change
    over temperature (:meth:`materials.reading.Lookup.within_band`)."""
    if not inp.banded[i]:
        return []
    band = inp.reader.band()
    return [words("permittivity-band", lo_K=float(band.lo_x[i]), hi_K=float(band.hi_x[i]),
                  worst=float(band.worst[i]), source=_source_key(inp.reader.t, band.row[i]))]


def held_notes(inp, i: int) -> list[str]:
    """Where material ``i`` of the engine's inputs reads permittivity, breakdown (other than below its coldest
    point) or a loop outside the temperatures of its data."""
    out = []
    if inp.extrapolated[i]:
        cells = np.arange(int(inp.g_start[i]), int(inp.g_start[i + 1]))
        for prop, lk, mask in (("permittivity", inp.eps_g, inp.eps_g.extrapolated[cells]),
                               ("breakdown", inp.ebd_g, inp.ebd_g.extrapolated[cells] & ~inp.cold[cells])):
            if mask.any():
                c = cells[mask]
                at = inp.gt[c]
                far = c[np.argmax(np.maximum(lk.lo_x[c] - at, at - lk.hi_x[c]))]
                out.append(words("extrapolated", prop=prop, lo_K=float(lk.lo_x[far]), hi_K=float(lk.hi_x[far]),
                                 at_K=float(inp.gt[far])))
    if inp.loop_out[i]:
        at = inp.tmin_K if inp.tmin_K < inp.loop_lo[i] else inp.tmax_K
        out.append(words("extrapolated", prop="loop energy", lo_K=float(inp.loop_lo[i]), hi_K=float(inp.loop_hi[i]),
                         at_K=float(at)))
    return out


def assumption_notes(cols: Columns, i: int) -> list[str]:
    """What candidate ``i``'s numbers assume or how they were carried: series sections, a thickness law, values
    used outside their data, an assumed Weibull shape or test area (with the stated range the Monte Carlo draws
    over)."""
    cols, i = cols.own(i)
    inp, P = cols.parts["inputs"], cols.parts
    out = []
    if P["sections"][i] > 1:
        out.append(words("sections", sections=float(P["sections"][i]), layer_m=float(P["layer"][i]),
                         max_thickness_m=float(inp.d_max[i]),
                         source=_source_key(inp.reader.t, inp.thickmax.used0[i])))
    out.extend(_gap_assumed(cols, i) + _thickness_scaled(cols, i))
    out.extend(band_notes(inp, i) + outside_notes(cols, i))
    if inp.held_cold[i]:
        from materials.priors import COLD_HOLD

        lk, cells = inp.ebd_g, range(int(inp.g_start[i]), int(inp.g_start[i + 1]))
        coldest = min((float(lk.lo_x[c]) for c in cells if np.isfinite(lk.lo_x[c])), default=float("nan"))
        out.append(words("held-cold", coldest_K=coldest, source=COLD_HOLD[0]))
    if not inp.shape_found[i]:
        out.append(words("assumed-shape", shape=float(inp.beta[i]), family=inp.reader.t.families[i]))
    if not inp.area_found[i]:
        out.append(words("assumed-test-area", area_m2=float(inp.test_area[i])))
    return out + service_notes(cols, i)


#: The binding limit of each binding code, in the designer's words (short-term breakdown, life, heat, thickness).
LIMITS = {"binding-fixed": "fixed layer", "binding-min-thickness": "thickness", "binding-breakdown":
          "short-term breakdown", "binding-life": "life", "binding-heat": "heat"}


def service_notes(cols: Columns, i: int) -> list[str]:
    """What candidate ``i``'s heat and life rest on: an assumed life exponent, the ramp time, a loss tangent read
    at another frequency or held outside its temperatures."""
    cols, i = cols.own(i)
    from materials.priors import RAMP_TIME
    from ranking.service import FREQUENCY_FACTOR

    P, inp = cols.parts, cols.parts["inputs"]
    out = []
    heat, life = P.get("heat"), P.get("life")
    if heat is not None and heat["has_loss"][i]:
        t = inp.reader.t
        if heat["loss_frequency_off"][i]:
            for (_, f), rows in zip(P["target"].ripple, heat["loss_rows"], strict=True):
                r = int(rows[i])
                fr = t.frequency_Hz[r] if r >= 0 else float("nan")
                stored = f"{fr:g} Hz" if fr == fr else "no stated frequency"
                if not (fr == fr and abs(np.log(fr / f)) <= np.log(FREQUENCY_FACTOR)):
                    out.append(words("loss-frequency", frequency_Hz=f, stored=stored, factor=FREQUENCY_FACTOR))
        if heat["loss_outside"][i]:
            out.append(words("loss-outside"))
    if life is not None and P["life_has"][i]:
        if not life["found"][i]:
            out.append(words("assumed-life-exponent", n=float(life["n"][i]), source=life["source"][i]))
        out.append(words("ramp-time", t_r=RAMP_TIME.typical, low=RAMP_TIME.low, high=RAMP_TIME.high,
                         source=RAMP_TIME.source))
    return out


#: The service figures of a design (SI), as :func:`service_details` returns them.
SERVICE_KEYS = ("hot_spot_K", "dissipated_power_W", "runaway_margin", "loss_tangent_hot", "capacitance_F",
                "life_exponent", "life_exponent_assumed", "b_life_s", "life_field_V_per_m", "life_fraction",
                "binding_limit", "device_energy_density_J_per_m3")


def service_details(cols: Columns, i: int) -> dict:
    """Candidate ``i``'s service figures (SI): hot spot, losses, margin to runaway, B-life at the operating point,
    the life design field, and the binding limit."""
    cols, i = cols.own(i)
    P = cols.parts
    heat, life, target = P.get("heat"), P.get("life"), P["target"]
    out = {}
    if heat is not None:
        m = float(heat["runaway_margin"][i])
        out.update(hot_spot_K=float(heat["temperature_K"][i]), dissipated_power_W=float(heat["power_W"][i]),
                   runaway_margin=m if np.isfinite(m) else None, loss_tangent_hot=float(heat["tan_delta"][i]),
                   capacitance_F=float(heat["capacitance_F"][i]))
    if life is not None and P["life_has"][i]:
        out.update(life_exponent=float(P["life_n"][i]), life_exponent_assumed=not bool(life["found"][i]),
                   b_life_s=float(P["b_life"][i]), life_field_V_per_m=float(P["e_life"][i]),
                   life_fraction=target.life_fraction)
    if out:
        out["binding_limit"] = LIMITS[binding(cols, i)[0]]
    if target.packing_factor is not None:
        out["device_energy_density_J_per_m3"] = float(P["u_op"][i]) * target.packing_factor
    return out


def law_notes(cols: Columns, i: int) -> list[str]:
    """How candidate ``i``'s breakdown was carried to its layer: an assumed liquid test gap, the thickness (or
    stressed-volume) law, or a layer beyond what the law may carry."""
    cols, i = cols.own(i)
    return _gap_assumed(cols, i) + _thickness_scaled(cols, i) + _thickness_outside(cols, i)


def _gap_assumed(cols: Columns, i: int) -> list[str]:
    from materials.priors import LIQUID_TEST_GAP

    return [words("liquid-gap-assumed", thickness_m=LIQUID_TEST_GAP.typical)] if cols.parts["inputs"].gap_assumed[i] \
        else []


def _thickness_scaled(cols: Columns, i: int) -> list[str]:
    inp, P = cols.parts["inputs"], cols.parts
    if not (P["scaled"][i] and not P["thick_out"][i]):
        return []
    return [words("thickness-scaled", thickness_m=float(P["layer"][i]), test_thickness_m=float(inp.test_thickness[i]),
                  n=float(inp.law_n[i]), source=inp.law_source[i])]


def _thickness_outside(cols: Columns, i: int) -> list[str]:
    inp, P = cols.parts["inputs"], cols.parts
    if not P["thick_out"][i]:
        return []
    return [words("thickness-outside", thickness_m=float(P["layer"][i]), test_thickness_m=float(inp.test_thickness[i]),
                  factor=LAW_FACTOR if inp.has_law[i] else THICKNESS_FACTOR)]


def evaluate_material(material, target, *, thickness_m: float | None = None) -> Evaluation:
    """One material's :class:`Evaluation` (a table of one row through :func:`evaluate` and :func:`explain`)."""
    return explain(evaluate(ValueTable.from_materials([material]), target, thickness_m=thickness_m), 0)


def verdict(cols: Columns, i: int) -> Evaluation:
    """Candidate ``i``'s name and reasons only (what an exclusion list needs): the first part of :func:`explain`."""
    cols, i = cols.own(i)
    t = cols.parts["inputs"].reader.t
    ev = Evaluation(key=t.keys[i], name=t.names[i], family=t.families[i], thickness_m=cols.parts["thickness_m"])
    ev.codes = reasons(cols, i)
    ev.reasons = [words(c, **q) for c, q in ev.codes]
    return ev


def explain(cols: Columns, i: int) -> Evaluation:
    """The :class:`ranking.criteria.Evaluation` of candidate ``i``: reasons or criteria, binding constraint,
    flags, the sources behind each criterion, and the design."""
    cols, i = cols.own(i)
    P, inp = cols.parts, cols.parts["inputs"]
    t, target, thickness_m = inp.reader.t, P["target"], P["thickness_m"]
    ev = verdict(cols, i)
    for prop in ("max_temperature", "min_temperature"):
        lk = inp.rated[prop]
        if lk.present[i]:
            ev.details[prop + "_K"] = float(lk.value[i])
    if ev.codes and ev.codes[0][0] in ("family", "rated-missing", "rated-outside", "property-missing",
                                       "nonlinear-no-data", "shape-missing", "test-area-missing",
                                       "life-exponent-missing"):
        return ev
    src, kinds = t.source, t.source_kinds

    def add(name, *rows):
        lst = ev.sources.setdefault(name, [])
        for r in rows:
            r = int(r)
            if r >= 0:
                k = t.source_keys[src[r]]
                if k not in lst:
                    lst.append(k)

    if inp.extrapolated[i]:
        ev.flags.append("extrapolated")
    if inp.held_cold[i]:
        ev.flags.append("held-cold")
    if not inp.shape_found[i]:
        ev.flags.append("assumed-shape")
    if not inp.area_found[i]:
        ev.flags.append("assumed-test-area")
    if inp.gap_assumed[i]:
        ev.flags.append("assumed-gap")
    if inp.lent[i]:
        ev.flags.append("shape-lent")
    if inp.banded[i]:
        ev.flags.append("permittivity-band")
    if P["thick_out"][i]:
        ev.flags.append("thickness-extrapolated")
    elif P["scaled"][i]:
        ev.flags.append("thickness-scaled")
    c_eps, c_ebd, sh = inp.c_eps[i], inp.c_ebd[i], inp.sh
    eps_rows = _rows_behind(inp.eps_g, c_eps)
    ebd_rows = _rows_behind(inp.ebd_g, c_ebd)
    beta_rows = (sh.used0[i], sh.used1[i]) if sh.present[i] else ()
    add("energy", *eps_rows, *ebd_rows, *beta_rows)
    # the stated priors and laws the numbers rest on, by their source keys (materials.priors)
    from materials.priors import COLD_HOLD, LIQUID_TEST_GAP, TEST_AREA, shape_prior

    laws = ([shape_prior(t.families[i]).source] if not inp.shape_found[i] else []) + \
        ([TEST_AREA.source] if not inp.area_found[i] else []) + \
        ([inp.law_source[i]] if P["scaled"][i] and inp.law_source[i] else []) + \
        ([COLD_HOLD[0]] if inp.held_cold[i] else []) + \
        ([LIQUID_TEST_GAP.source] if inp.gap_assumed[i] else [])
    for name in ("energy", "volume", "mass"):
        lst = ev.sources.setdefault(name, [])
        lst.extend(k for k in laws if k not in lst)
    if inp.thick.present[i]:
        add("volume", inp.thick.used0[i], inp.thick.used1[i])
    if inp.dens.present[i]:
        add("mass", inp.dens.used0[i], inp.dens.used1[i])
    if P["has_seg"][i]:
        ev.flags.append("segment-scaled")
    if ev.codes and ev.codes[0][0] in ("value-invalid", "shape-too-low", "thinner-than-made", "over-design-field",
                                       "no-size", "area-impractical", "above-loop", "thicker-than-made"):
        return ev
    if thickness_m is None and target.energy_J is None and np.isnan(P["area"][i]):
        ev.flags.append("no-area-scaling")
    code, q = binding(cols, i)
    ev.binding = words(code, **q)
    if P["sections"][i] > 1:
        ev.binding += ", " + words("binding-sections", sections=float(P["sections"][i]), layer_m=float(P["layer"][i]))
    for name in CRITERIA_NAMES:
        v = float(cols.values[name][i])
        if v == v:
            ev.values[name], ev.low[name], ev.high[name] = v, float(cols.low[name][i]), float(cols.high[name][i])
        else:
            ev.missing.append(name)
    add("volume", *eps_rows, *ebd_rows)
    area = float(P["area"][i])
    ev.details.update(thickness_m=float(P["d"][i]), area_m2=area if area == area else None,
                      design_field_V_per_m=float(P["ed"][i]), operating_field_V_per_m=float(P["e_op"][i]),
                      worst_eps_K=float(inp.t_eps[i]), worst_breakdown_K=float(inp.t_ebd[i]),
                      weibull_shape=float(inp.beta[i]), test_area_m2=float(inp.test_area[i]),
                      method=METHOD_NAMES[int(inp.kind[i])], sections=int(P["sections"][i]),
                      layer_thickness_m=float(P["layer"][i]))
    if thickness_m is None and area == area:
        ev.details["failure_probability"] = float(P["fail"][i])
    ev.details["assumptions"] = assumption_notes(cols, i)
    ev.details.update(service_details(cols, i))
    life, heat = P.get("life"), P.get("heat")
    if life is not None and P["life_has"][i]:
        lk = life["lk"]
        if life["found"][i]:
            add("energy", lk.used0[i], lk.used1[i])
            add("volume", lk.used0[i], lk.used1[i])
        else:
            ev.flags.append("assumed-life-exponent")
        from materials.priors import RAMP_TIME

        for name in ("energy", "volume", "mass"):
            lst = ev.sources.setdefault(name, [])
            lst.extend(k for k in ([RAMP_TIME.source] + ([life["source"][i]] if not life["found"][i] else []))
                       if k not in lst)
    if heat is not None:
        add("loss", *[rows[i] for rows in heat["loss_rows"]])
        if heat["loss_frequency_off"][i]:
            ev.flags.append("loss-frequency")
        if heat["loss_outside"][i]:
            ev.flags.append("loss-extrapolated")
    if inp.has_loss[i]:
        c_loss = inp.c_loss[i]
        add("loss", inp.ls.used0[c_loss], inp.ls.used1[c_loss])
    cells = range(int(inp.g_start[i]), int(inp.g_start[i + 1]))
    if inp.n_eps_temps[i] >= 2:
        add("drift", inp.ref.used0[i], inp.ref.used1[i], *[r for c in cells for r in _rows_behind(inp.eps_g, c)])
    elif np.isfinite(inp.d_t_cc[i]):
        cc = inp.cc_rows[inp.reader.mat[inp.cc_rows] == i]
        lst = ev.sources.setdefault("drift", [])
        lst.extend(k for k in sorted({t.source_keys[src[r]] for r in cc}) if k not in lst)
    if inp.kind[i] == BIAS:
        add("drift", *inp.bias.row[i, :int(inp.bias.n[i])])
    if "drift" in ev.values:
        d_t = float(P["d_t"][i])
        ev.details["drift_temperature"] = d_t if d_t == d_t else None
        ev.details["drift_bias"] = float(P["d_b"][i])
    if inp.heal.present[i]:
        add("healing", inp.heal.used0[i], inp.heal.used1[i])
    else:
        ev.flags.append("self-healing not stated")
    kinds_used = {kinds[src[int(r)]] for c in cells for g in (inp.eps_g, inp.ebd_g) for r in _rows_behind(g, c)
                  if r >= 0}
    kinds_used |= {kinds[src[int(r)]] for r in beta_rows if r >= 0}
    for flag in ("recollection", "invented"):
        if flag in kinds_used:
            ev.flags.append(flag)
    return ev
