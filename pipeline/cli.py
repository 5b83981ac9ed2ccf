"""The ``blocwatch`` command line: the composition root.

Each command parses its options, calls one library function per stage and turns a
:class:`~blocwatch.pipeline.errors.BlocwatchError` into one line on stderr with its exit code.
No SQL, no arithmetic and no figure code live here.
"""

from __future__ import annotations

import functools
import sys
import traceback
from pathlib import Path

import click

from .errors import EXIT_FAILURE, EXIT_USAGE, BlocwatchError

STORE_HELP = "DuckDB store file (default: ./blocwatch.duckdb, or the one blocwatch.toml names)."


def _fail(message: str, code: int) -> None:
    click.echo(f"error: {message}", err=True)
    sys.exit(code)


def handle_errors(func):
    """Turn library errors into the one-line ``error: what: why — fix`` form and an exit code."""

    @functools.wraps(func)
    def wrapper(*args, **kwargs):
        ctx = click.get_current_context()
        debug = bool(ctx.find_root().params.get("debug"))
        try:
            return func(*args, **kwargs)
        except BlocwatchError as exc:
            if debug:
                traceback.print_exc()
            _fail(exc.line(), exc.exit_code)
        except (click.exceptions.Exit, click.ClickException, click.Abort):
            raise
        except Exception as exc:  # an unexpected failure: one line, traceback on --debug
            if debug:
                traceback.print_exc()
            _fail(f"{type(exc).__name__}: {exc} — rerun with --debug and report this",
                  EXIT_FAILURE)

    return wrapper


def store_option(func):
    return click.option("--store", "store_path", type=click.Path(dir_okay=False),
                        default=None, help=STORE_HELP)(func)


@click.group(context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="blocwatch")
@click.option("--debug", is_flag=True, help="Show a traceback on errors.")
@click.option("--quiet", "-q", is_flag=True, help="No progress output.")
@click.pass_context
def cli(ctx: click.Context, debug: bool, quiet: bool) -> None:
    """Track polarisation in co-voting and agreement networks."""
    ctx.ensure_object(dict)
    ctx.obj["quiet"] = quiet


def main(argv: list[str] | None = None) -> None:
    """Console-script entry point; usage errors exit 2 as click does."""
    try:
        cli.main(args=argv, prog_name="blocwatch", standalone_mode=True)
    except SystemExit as exc:
        if exc.code not in (None, 0) and not isinstance(exc.code, int):
            sys.exit(EXIT_USAGE)
        raise


def resolve_store(store_path: str | None) -> Path:
    from .config import default_store_path

    return Path(store_path) if store_path else default_store_path()
