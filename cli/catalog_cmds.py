"""``holdoff catalog``, ``show`` and ``sources``: what the store knows and according to whom."""


from pathlib import Path
from typing import Annotated, Optional

import typer

from cli import state
from cli.output import JsonOpt

FLAG_KINDS = ("recollection", "invented")
LISTED = 2000  # materials the text listing shows by default; a store of 100,000 is counted beyond them


def _nothing_matched(rows, *filters) -> None:
    """Exit 1 (after the listing is printed) when a filter was given and nothing passed it."""
    if not rows and any(filters):
        from materials.errors import NOTHING_MATCHED

        raise typer.Exit(NOTHING_MATCHED)


def _value_json(v) -> dict:
    from materials.properties import PROPERTIES

    unit = PROPERTIES[v.property].si
    d = {"property": v.property, "value": v.value, "low": v.low, "high": v.high, "unit": unit,
         "temperature_K": v.temperature_K, "frequency_Hz": v.frequency_Hz, "field_V_per_m": v.field_V_per_m,
         "thickness_m": v.thickness_m, "area_m2": v.area_m2,
         "source": {"key": v.source.key, "kind": v.source.kind, "citation": v.source.citation}, "note": v.note}
    if v.breakdown_set:
        d["breakdown_set"] = v.breakdown_set
    if v.loop:
        d["loop"] = v.loop
    if v.retired_at:
        d["retired_at"], d["retired_reason"] = v.retired_at, v.retired_reason
    return d


def catalog(family: Annotated[Optional[str], typer.Option("--family", help="Only this family "
                                                          "(polymer-film, ceramic-class-2, …).")] = None,
            where: Annotated[Optional[str], typer.Option("--where", help="Filter, e.g. "
                             "\"relative_permittivity > 3 and max_temperature >= 125 degC\".")] = None,
            limit: Annotated[int, typer.Option("--limit", metavar="N", help="Rows listed as text (0: all); the "
                                               "rest are counted. --json lists all.")] = LISTED,
            json_out: JsonOpt = False):
    """List materials with their headline values (reference: small-signal, ~25 °C, ~1 kHz); exit code 1 when
    --family or --where leaves none."""
    from db.query import summaries
    from materials.errors import InputError
    from materials.properties import FAMILIES

    if family and family not in FAMILIES:
        raise InputError(f"--family: '{family}' is not one of {', '.join(FAMILIES)}")
    if limit < 0:
        raise InputError(f"--limit: {limit} must be 0 (list all) or more")
    if where:
        from db.where import parse_where

        parse_where(where)  # a bad expression fails before the store is opened
    with state.store().reading() as conn:
        # as text only the rows listed are built; the rest are counted
        rows, total = summaries(conn, family=family, where=where, limit=None if json_out or not limit else limit)
    if json_out:
        from cli.output import print_json

        print_json(rows)
        _nothing_matched(rows, family, where)
        return
    from cli.fmt import display
    from cli.output import table
    from materials.numfmt import fmt_celsius

    body = []
    for r in rows:
        t = f"{fmt_celsius(r['min_temperature_K'])} … {fmt_celsius(r['max_temperature_K'])}"
        flags = ", ".join(k for k in r["source_kinds"] if k in FLAG_KINDS)
        body.append([r["key"], r["name"], r["family"], display("relative_permittivity", r["relative_permittivity"]),
                     display("loss_tangent", r["loss_tangent"]),
                     display("breakdown_field", r["breakdown_field_V_per_m"]), t, flags])
    table(["key", "name", "family", "εr", "tan δ", "E_bd", "rated T", "flags"], body, right={3, 4, 5},
          title=f"{total} materials", caption="εr, tan δ and E_bd at about 25 °C and 1 kHz; "
          "flags name source kinds that are not published (see 'holdoff show KEY')."
          + (f" The first {len(body)} of {total} are listed (--limit 0 lists all, --json gives all)."
             if len(body) < total else ""))
    _nothing_matched(rows, family, where)


def show(key: Annotated[str, typer.Argument(help="Material key (see 'holdoff catalog').")],
         history: Annotated[bool, typer.Option("--history", help="Include retired values.")] = False,
         json_out: JsonOpt = False):
    """Every value of one material with its conditions and its source."""
    from db.query import get_material

    with state.store().session(read_only=True) as s:
        m = get_material(s, key, include_retired=history)
        sets = _sets(s, key)
    if json_out:
        from cli.output import print_json

        print_json({"key": m.key, "name": m.name, "family": m.family, "form": m.form,
                    "description": m.description, "origin": m.origin, "response": m.response,
                    "values": [_value_json(v) for v in m.values], **sets})
        return
    from cli.fmt import conditions, display
    from cli.output import esc, say, table

    say(f"[bold]{esc(m.name)}[/]  ({esc(m.key)})", wrap=True)
    say(esc(f"family {m.family}; {m.response} response; origin {m.origin}" + (f"; {m.form}" if m.form else "")),
        wrap=True)
    if m.description:
        say(esc(m.description), wrap=True)
    from materials.properties import PROPERTIES

    order = {p: i for i, p in enumerate(PROPERTIES)}
    body, cited = [], {}
    for v in sorted(m.values, key=lambda v: (order.get(v.property, 99), v.field_V_per_m or 0,
                                             v.temperature_K or 0, v.frequency_Hz or 0)):
        rng = (f"{display(v.property, v.low, with_unit=False)} … {display(v.property, v.high, with_unit=False)}"
               if v.low is not None or v.high is not None else "")
        src = f"{v.source.key} [{v.source.kind}]"
        if v.source.kind in FLAG_KINDS:
            src += " !"
        status = f"retired {v.retired_at}: {v.retired_reason}" if v.retired_at else ""
        body.append([v.property, display(v.property, v.value), rng, conditions(v), src,
                     (v.note + (" " + status if status else "")).strip()])
        cited[v.source.key] = v.source
    table(["property", "value", "range", "conditions", "source [kind]", "note"], body, right={1})
    if sets["breakdown_sets"] or sets["loops"] or sets["endurance_sets"]:
        from cli.lab_cmds import print_sets

        print_sets(sets)
    say("sources:")
    for k, src in cited.items():
        say(esc(f"  {k} [{src.kind}]: {src.citation}"), wrap=True)
    if any(src.kind in FLAG_KINDS for src in cited.values()):
        say("  ! values resting on recollection or invented sources: check them before relying on them.", wrap=True)


def _sets(session, key: str) -> dict:
    """Breakdown sets and loops of a material, with their fitted figures, for ``show``."""
    from db.labdata import describe_sets

    return describe_sets(session, key)


def sources(kind: Annotated[Optional[str], typer.Option("--kind", help="Only sources of this kind.")] = None,
            used: Annotated[Optional[Path], typer.Option("--used", metavar="TARGET.toml", help="Also the share of "
                                                         "evidence behind what a shortlist for this target file "
                                                         "uses, beside the share stored.")] = None,
            json_out: JsonOpt = False):
    """The bibliography: every source, its evidence tier and how many values cite it; exit code 1 when --kind
    leaves none."""
    from db.query import counts_by_kind, sources as list_sources
    from materials.errors import InputError
    from materials.properties import PUBLISHED_KINDS, SOURCE_KINDS

    if kind and kind not in SOURCE_KINDS:
        raise InputError(f"--kind: '{kind}' is not one of {', '.join(SOURCE_KINDS)}")
    with state.store().session(read_only=True) as s:
        rows = list_sources(s, kind=kind)
        counts = counts_by_kind(s)
    total = sum(counts.values())
    published = sum(n for k, n in counts.items() if k in PUBLISHED_KINDS)
    share = published / total if total else 0.0
    in_use = _used_evidence(used) if used else None
    if json_out:
        from cli.output import print_json

        print_json({"sources": rows, "values_by_kind": counts, "values": total, "published_share": share,
                    **({"used": in_use} if in_use else {})})
        _nothing_matched(rows, kind)
        return
    from cli.output import say, table

    table(["key", "kind", "values", "citation"], [[r["key"], r["kind"], r["values"], r["citation"]] for r in rows],
          right={2}, title=f"{len(rows)} sources")
    say("values per source kind: " + ", ".join(f"{k} {counts.get(k, 0)} ({counts.get(k, 0) / total:.0%})"
                                               for k in SOURCE_KINDS if counts.get(k)) if total else "no values",
        wrap=True)
    say(f"published (handbook, standard, paper, web): {published} of {total} values ({share:.0%})")
    if in_use:
        say(f"used by the shortlist for {used} ({in_use['rows']} ranked): {in_use['published']:.0%} published, "
            f"{in_use['lab']:.0%} lab, {in_use['common_practice']:.0%} common-practice, "
            f"{in_use['assumed_or_recollected']:.0%} assumed or recollected", wrap=True)
    say("kinds: handbook/standard/paper/web = published, cited with edition/table or DOI/URL; common-practice = a "
        "fact of the trade with no single source; recollection = remembered, not checked; lab = your own "
        "measurements; invented = demo data only.", wrap=True)
    _nothing_matched(rows, kind)


def _used_evidence(target_file: Path) -> dict:
    """The evidence share behind every ranked candidate of a shortlist for ``target_file`` (no Monte Carlo)."""
    from db.query import load_table
    from ranking.shortlist import evidence_share, shortlist
    from ranking.target import target_from_options

    t = target_from_options(target_file=target_file)
    with state.store().reading() as conn:
        table = load_table(conn)
    result = shortlist(table, t, draws=0)
    return evidence_share(result["ranked"])
