"""``holdoff db``: build, check, migrate, dump and load the store."""


from pathlib import Path
from typing import Annotated

import typer

from cli import state
from cli.output import JsonOpt

db_app = typer.Typer(help="Build, check, migrate, dump and load the property store.", no_args_is_help=True)


@db_app.command("init")
def init(force: Annotated[bool, typer.Option("--force", help="Rebuild even if the store holds lab data.")] = False,
         json_out: JsonOpt = False):
    """(Re)build the store from the curated catalog (validated first; a bad catalog changes nothing)."""
    from db.engine import mask_url
    from db.store import build

    state.reset()
    url = state.url()
    changes = build(url, force=force)
    st = state.store()
    from db.query import counts_by_kind
    from sqlalchemy import func, select

    from db.models import Material, Source

    with st.session(read_only=True) as s:
        n_mat = s.execute(select(func.count(Material.id))).scalar()
        n_src = s.execute(select(func.count(Source.id))).scalar()
        kinds = counts_by_kind(s)
    info = {"url": mask_url(url), "materials": n_mat, "sources": n_src, "values": sum(kinds.values()),
            "values_by_kind": kinds, **({"merged": changes} if changes is not None else {})}
    if json_out:
        from cli.output import print_json

        print_json(info)
        return
    from cli.output import say

    if changes is not None:
        state.say_changes("merged the catalog; nothing discarded:", changes)
    say(f"{'merged into' if changes is not None else 'built'} {info['url']}: {n_mat} materials, {info['values']} "
        f"values, {n_src} sources")


@db_app.command("check")
def check(json_out: JsonOpt = False):
    """Run integrity and referential checks; exit code 1 if any error is found."""
    from db.check import check_store

    findings = check_store(state.store(create=False))
    errors = [f for f in findings if f.level == "error"]
    if json_out:
        from cli.output import print_json

        print_json({"ok": not errors, "findings": [f.__dict__ for f in findings]})
    else:
        from cli.output import say

        for f in findings:
            say(f"{f.level}: {f.message}")
        say("store OK" if not errors else f"{len(errors)} error(s)")
    if errors:
        raise typer.Exit(1)


@db_app.command("upgrade")
def upgrade():
    """Migrate the store's schema to the current revision (Alembic)."""
    from cli.output import say
    from db.migrate import upgrade_store

    rev = upgrade_store(state.url())
    say(f"store at revision {rev}")


@db_app.command("dump")
def dump(file: Annotated[Path, typer.Argument(help="Bundle file to write (JSON lines text).")],
         force: Annotated[bool, typer.Option("--force", help="Overwrite an existing file.")] = False):
    """Write everything in the store to a lossless, documented text bundle."""
    from cli.output import say
    from db.bundle import dump_store

    n = dump_store(state.store(create=False), file, force=force)
    say(f"wrote {file}: {n} records")


@db_app.command("load")
def load(file: Annotated[Path, typer.Argument(help="Bundle written by 'holdoff db dump'.")]):
    """Load a bundle into an empty store (one transaction)."""
    from cli.output import say
    from db.bundle import load_bundle

    n = load_bundle(state.url(), file)
    say(f"loaded {file}: {n} records")
