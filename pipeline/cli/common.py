"""What every command shares: the error boundary, the store and config in force, progress
lines, where a flag's value came from, and the build flags. Light on purpose (click and the
options module only)."""

from __future__ import annotations

import functools
import sys
import traceback
from pathlib import Path

import click

from blocwatch.dashboards.errors import DashboardError
from blocwatch.pipeline.errors import EXIT_FAILURE, BlocwatchError

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
        except (BlocwatchError, DashboardError) as exc:
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


def single_file_option(func):
    """``--single-file``: every report page carries plotly.js instead of sharing one file."""
    return click.option(
        "--single-file", is_flag=True, default=False,
        help="Put the charting library inside every page (several MB each) so one page "
             "stands alone, e.g. to send by mail; default: one plotly.min.js in the report "
             "folder, loaded by every page.")(func)


def wait_option(func):
    """``--wait SECONDS`` of the commands that only read the store."""
    from blocwatch.pipeline.ops.readers import DEFAULT_WAIT

    return click.option("--wait", type=click.FloatRange(min=0), default=DEFAULT_WAIT,
                        show_default=True, metavar="SECONDS",
                        help="Wait this long for a running rebuild or build to finish before "
                             "giving up (exit 75).")(func)



def current_config():
    """The project config the group read for this invocation (kept on the click context, not
    in a module), or an empty one where none was read (``init``)."""
    from blocwatch.pipeline.config import Config

    ctx = click.get_current_context(silent=True)
    root = ctx.find_root() if ctx is not None else None
    found = root.obj.get("config") if root is not None and root.obj else None
    return found if found is not None else Config(None, {})


def source(ctx: click.Context, name: str) -> str:
    """Where a flag's value came from, in words (for messages about settings)."""
    where = ctx.get_parameter_source(name)
    if where == click.core.ParameterSource.COMMANDLINE:
        return "from the command line"
    if where == click.core.ParameterSource.DEFAULT_MAP:
        return f"from {current_config().path or 'blocwatch.toml'}"
    return "the default"


def resolve_store(store_path: str | None) -> Path:
    from blocwatch.pipeline.config import default_store_path

    return Path(store_path) if store_path else default_store_path(current_config())


def progress(ctx: click.Context, label: str):
    """A reporter for long work: a line per step on stderr when it is a terminal, else silent."""
    if ctx.find_root().obj.get("quiet") or not sys.stderr.isatty():
        return None
    return lambda step: click.echo(f"{label}: {step}", err=True)


def build_flags(func):
    """The options that decide a period's numbers (shared by build, rebuild and demo)."""
    from blocwatch.pipeline.options import (
        AGREEMENT_MEASURES,
        DEFAULT_AGREEMENT,
        DEFAULT_BOOTSTRAP,
        DEFAULT_EXPENSIVE_REPLICATES,
        DEFAULT_LOPSIDED,
        DEFAULT_MIN_SHARE_CAST,
        DEFAULT_MIN_SHARED,
        DEFAULT_MIN_TOPIC_BALLOTS,
        DEFAULT_PERIOD,
        DEFAULT_PERMUTATIONS,
        DEFAULT_RULE,
        DEFAULT_SEED,
        DEFAULT_TOPIC_REFERENCE,
    )

    flags = [
        click.option("--period", default=DEFAULT_PERIOD, show_default=True,
                     help="Period spec: year, year:MM, terms:FILE, rolling:LEN:STEP."),
        click.option("--rule", default=DEFAULT_RULE, show_default=True,
                     help="Graph rule: weighted, threshold:X, equal-likelihood, backbone:ALPHA."),
        click.option("--seed", type=int, default=DEFAULT_SEED, show_default=True,
                     help="Seed for every random step (Leiden, CV, bootstrap, nulls)."),
        click.option("--bootstrap", type=click.IntRange(min=0), default=DEFAULT_BOOTSTRAP,
                     show_default=True, help="Ballot-bootstrap replicates (0: no intervals)."),
        click.option("--permutations", type=click.IntRange(min=0),
                     default=DEFAULT_PERMUTATIONS, show_default=True,
                     help="Label permutations for the null (0: no null)."),
        click.option("--expensive-replicates", type=click.IntRange(min=0),
                     default=DEFAULT_EXPENSIVE_REPLICATES, show_default=True,
                     help="At most this many replicates and permutations for costly metrics "
                          "(Leiden communities, cross-validated fits, ideal points)."),
        click.option("--abstain-as-position", is_flag=True, default=False,
                     help="Count abstain as a third position (default: like an absence)."),
        click.option("--min-shared", type=click.IntRange(min=1), default=DEFAULT_MIN_SHARED,
                     show_default=True, help="Fewest shared ballots for a pair to have an edge."),
        click.option("--keep-unanimous", is_flag=True, default=False,
                     help="Keep unanimous ballots (default: left out)."),
        click.option("--lopsided", type=click.FloatRange(0, 0.5), default=DEFAULT_LOPSIDED,
                     show_default=True, help="Leave out ballots whose minority share is below."),
        click.option("--min-share-cast", type=click.FloatRange(0, 1),
                     default=DEFAULT_MIN_SHARE_CAST, show_default=True,
                     help="Members casting less than this share of a period's ballots are left "
                          "out of it."),
        click.option("--agreement", type=click.Choice(AGREEMENT_MEASURES),
                     default=DEFAULT_AGREEMENT, show_default=True,
                     help="Pair agreement: match (share alike; 1 - scaled distance on scores) "
                          "or chance-corrected kappa (graph weight max(kappa, 0); "
                          "kappa-quadratic: quadratic weights on ordinal ballots)."),
        click.option("--min-topic-ballots", type=click.IntRange(min=1),
                     default=DEFAULT_MIN_TOPIC_BALLOTS, show_default=True,
                     help="Fewest counted ballots for a topic to get its own figures in a "
                          "period (ballots with a topic only)."),
        click.option("--topic-reference", default=DEFAULT_TOPIC_REFERENCE, show_default=True,
                     metavar="pooled|PERIOD",
                     help="Topic mix the agenda-standardised series holds fixed: pooled (all "
                          "of a body's ballots) or one period's name, e.g. 2010."),
    ]
    for flag in reversed(flags):
        func = flag(func)
    return func
