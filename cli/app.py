"""The ``holdoff`` command: global options, command registration, and the one place errors become exit codes."""


from typing import Annotated, Optional

import typer
from typer.core import TyperGroup

from cli import state
from materials.errors import HoldoffError


class _Group(TyperGroup):
    """Maps holdoff's domain errors to one line on stderr and exit code 2; anything else stays a traceback."""

    def invoke(self, ctx):
        try:
            return super().invoke(ctx)
        except HoldoffError as exc:
            msg = " ".join(str(exc).split())
            typer.echo(f"holdoff: error: {msg}", err=True)
            raise typer.Exit(exc.exit_code) from None
        finally:
            state.reset()


app = typer.Typer(
    cls=_Group, no_args_is_help=True, add_completion=False, pretty_exceptions_enable=False,
    rich_markup_mode=None,
    help="Choose capacitor dielectrics from a cited property store: energy-density ceilings at real conditions, "
         "Weibull breakdown, sizing, shortlists and reports. Every value carries its source and conditions.")


@app.callback()
def _root(db: Annotated[Optional[str], typer.Option(
        "--db", metavar="URL", help="Store URL (sqlite:///file, postgresql+psycopg://…) or a SQLite file path. "
        "Default: $HOLDOFF_DB, else a SQLite file in your data folder, built from the catalog on first use.")]
          = None):
    """Global options."""
    state.set_url(db)


def _register() -> None:
    from cli import catalog_cmds, db_cmds, lab_cmds, physics_cmds, report_cmds, shortlist_cmds

    app.add_typer(db_cmds.db_app, name="db")
    app.command("catalog")(catalog_cmds.catalog)
    app.command("show")(catalog_cmds.show)
    app.command("sources")(catalog_cmds.sources)
    for module in (physics_cmds, lab_cmds, shortlist_cmds, report_cmds):
        module.register(app)


_register()


def main() -> None:
    app()


if __name__ == "__main__":
    main()
