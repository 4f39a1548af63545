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

    def __init__(self, *args, **kwargs):
        super().__init__(*args, **kwargs)
        _name_values(self)

    def parse_args(self, ctx, args):
        # --wide applies to every table of any command, so it is taken from anywhere on the line (before "--")
        end = args.index("--") if "--" in args else len(args)
        if "--wide" in args[:end]:
            from cli.output import set_wide

            set_wide(True)
            args = [a for i, a in enumerate(args) if not (a == "--wide" and i < end)]
        return super().parse_args(ctx, args)

    def main(self, args=None, prog_name=None, complete_var=None, standalone_mode=True, **extra):
        import sys

        from typer._click.exceptions import ClickException, UsageError
        from typer.exceptions import Abort

        from cli.output import width

        # help as wide as the terminal (or $COLUMNS, else 100), decided when the command runs
        extra.setdefault("max_content_width", width())
        extra.setdefault("terminal_width", width())
        try:
            rv = super().main(args, prog_name, complete_var, standalone_mode=False, **extra)
        except UsageError as exc:
            # one line, not a framed usage box: what is wrong, and where the help is
            where = exc.ctx.command_path if exc.ctx is not None else "holdoff"
            typer.echo(f"holdoff: error: {' '.join(exc.format_message().split())} (see '{where} --help')", err=True)
            sys.exit(exc.exit_code)
        except ClickException as exc:
            typer.echo(f"holdoff: error: {' '.join(exc.format_message().split())}", err=True)
            sys.exit(exc.exit_code)
        except Abort:
            typer.echo("holdoff: aborted", err=True)
            sys.exit(1)
        if not standalone_mode:
            return rv
        sys.exit(rv if isinstance(rv, int) else 0)

    def invoke(self, ctx):
        from cli import output

        try:
            return super().invoke(ctx)
        except Exception as exc:
            from typer._click.exceptions import ClickException
            from typer.exceptions import Abort, Exit

            if isinstance(exc, (Exit, ClickException, Abort)):
                raise
            status = _exit_status(exc)
            if status is None:
                raise
            code, msg = status
            typer.echo(f"holdoff: error: {' '.join(msg.split())}", err=True)
            raise typer.Exit(code) from None
        finally:
            state.reset()
            output.reset()


# What the help shows after an option or for an argument, where the option names no metavariable itself.
_METAVARS = {"temp": "T", "tmin": "T", "tmax": "T", "voltage": "V", "energy": "W", "energy_density": "U",
             "failure_prob": "P", "margin": "M", "area": "A", "segment_area": "A", "thickness": "D", "frequency": "F",
             "keys": "KEY", "key": "KEY", "files": "FILE", "file": "FILE", "material": "KEY", "family": "FAMILY",
             "top": "N", "points": "N", "seed": "N", "draws": "N", "out": "FILE", "to": "FILE", "target": "FILE",
             "export": "FILE", "from_file": "FILE", "max_loss": "TAN_D", "confidence": "C", "method": "METHOD"}


def _no_type(ctx):
    return None


def _name_values(group) -> None:
    """Give every option and argument of ``group`` and its subcommands a plain metavariable (``T``, ``KEY``,
    ``FILE``) in place of a Python type such as ``<list[str]>``."""
    for cmd in group.commands.values():
        for p in cmd.params:
            if getattr(p, "metavar", None) is None and not getattr(p, "is_flag", False) and p.name != "help":
                p.metavar = _METAVARS.get(p.name, (p.name or "value").upper())
                if p.param_type_name == "argument":
                    p.display_type_rich = _no_type
        if hasattr(cmd, "commands"):
            _name_values(cmd)


def _exit_status(exc: Exception) -> tuple[int, str] | None:
    """(exit code, message) for an error a user can act on, None for a bug."""
    from db.engine import failure_text, unreachable

    url = state.url()
    cause = unreachable(exc, url)
    if cause is not None:
        return STORE_UNREACHABLE, str(exc) if isinstance(exc, HoldoffError) else failure_text(cause, url)
    if isinstance(exc, HoldoffError):
        return exc.exit_code, str(exc) + _did_you_mean(str(exc))
    return None


def _did_you_mean(msg: str) -> str:
    """For an unknown material key, the nearest keys in the store (difflib), as a hint after the message."""
    import difflib
    import re

    m = re.search(r"no material '([^']+)'", msg)
    if not m:
        return ""
    try:
        with state.store().reading() as conn:
            keys = [r[0] for r in conn.exec_driver_sql("SELECT key FROM material").fetchall()]
    except Exception:  # noqa: BLE001 - a hint must never replace the error it adds to
        return ""
    near = difflib.get_close_matches(m.group(1), keys, n=3, cutoff=0.6)
    return f"; did you mean {' or '.join(repr(k) for k in near)}?" if near else ""


def _version(value: bool) -> None:
    if value:
        from ranking.report.document import version

        typer.echo(f"holdoff {version()}")
        raise typer.Exit()


app = typer.Typer(
    cls=_Group, no_args_is_help=True, add_completion=False, pretty_exceptions_enable=False,
    rich_markup_mode=None,
    help="Choose capacitor dielectrics from a cited property store: energy-density ceilings at real conditions, "
         "Weibull breakdown, sizing, shortlists and reports. Every value carries its source and conditions.")


@app.callback()
def _root(db: Annotated[Optional[str], typer.Option(
        "--db", metavar="URL", help="Store URL (sqlite:///file, postgresql+psycopg://…) or a SQLite file path. "
        "Default: $HOLDOFF_DB, else a SQLite file in your data folder, built from the catalog on first use.")]
          = None,
          version: Annotated[bool, typer.Option("--version", callback=_version, is_eager=True,
                                                help="Print the version and exit.")] = False,
          wide: Annotated[bool, typer.Option("--wide", help="Every table row on one line, whatever the width "
                                             "(may be given anywhere on the line).")] = False):
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
