"""The ``holdoff`` command: global options, command registration, and the one place errors become exit codes."""


from typing import Annotated, Optional

import typer
from typer.core import TyperGroup

from cli import state
from materials.errors import STORE_UNREACHABLE, HoldoffError


class _Group(TyperGroup):
    """The one place errors become exit codes: a store that cannot be opened or reached exits 3, any other domain
    error (bad input or usage) exits with its code, 2; each with one line on stderr and never a password. Anything
    else is a bug and keeps its traceback."""

    def invoke(self, ctx):
        try:
            return super().invoke(ctx)
        except Exception as exc:
            status = _exit_status(exc)
            if status is None:
                raise
            code, msg = status
            typer.echo(f"holdoff: error: {' '.join(msg.split())}", err=True)
            raise typer.Exit(code) from None
        finally:
            state.reset()


def _exit_status(exc: Exception) -> tuple[int, str] | None:
    """(exit code, message) for an error a user can act on, None for a bug."""
    from db.engine import failure_text, unreachable

    url = state.url()
    cause = unreachable(exc, url)
    if cause is not None:
        return STORE_UNREACHABLE, str(exc) if isinstance(exc, HoldoffError) else failure_text(cause, url)
    if isinstance(exc, HoldoffError):
        return exc.exit_code, str(exc)
    return None


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
