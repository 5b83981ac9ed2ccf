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

from blocwatch.dashboards.errors import DashboardError
from blocwatch.pipeline import options
from blocwatch.pipeline.cli.usage import BlocwatchGroup
from blocwatch.pipeline.errors import EXIT_FAILURE, EXIT_USAGE, BlocwatchError

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


def wait_option(func):
    """``--wait SECONDS`` of the commands that only read the store."""
    from blocwatch.pipeline.ops.readers import DEFAULT_WAIT

    return click.option("--wait", type=click.FloatRange(min=0), default=DEFAULT_WAIT,
                        show_default=True, metavar="SECONDS",
                        help="Wait this long for a running rebuild or build to finish before "
                             "giving up (exit 75).")(func)


@click.group(cls=BlocwatchGroup, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="blocwatch")
@click.option("--debug", is_flag=True, default=False, help="Show a traceback on errors.")
@click.option("--quiet", "-q", is_flag=True, default=False, help="No progress output.")
@click.option("--config", "config_path", type=click.Path(), envvar="BLOCWATCH_CONFIG",
              default=None, help="Project config file (default: ./blocwatch.toml if present; "
                                 "env BLOCWATCH_CONFIG). Flags win over its values.")
@click.pass_context
def cli(ctx: click.Context, debug: bool, quiet: bool, config_path: str | None) -> None:
    """Track polarisation in co-voting and agreement networks."""
    ctx.ensure_object(dict)
    ctx.obj["quiet"] = quiet
    if ctx.invoked_subcommand != "init":  # init writes the config; it must not need one
        _apply_config(ctx, config_path)


@handle_errors
def _apply_config(ctx: click.Context, config_path: str | None) -> None:
    """Defaults of every flag from the project config (bad keys: one line, exit 2)."""
    from blocwatch.pipeline.cli.flags import apply_config

    apply_config(ctx, config_path)


def main(argv: list[str] | None = None) -> None:
    """Console-script entry point; usage errors exit 2 as click does."""
    try:
        cli.main(args=argv, prog_name="blocwatch", standalone_mode=True)
    except SystemExit as exc:
        if exc.code not in (None, 0) and not isinstance(exc.code, int):
            sys.exit(EXIT_USAGE)
        raise


def _source(ctx: click.Context, name: str) -> str:
    """Where a flag's value came from, in words (for messages about settings)."""
    from blocwatch.pipeline.config import active_config

    where = ctx.get_parameter_source(name)
    if where == click.core.ParameterSource.COMMANDLINE:
        return "from the command line"
    if where == click.core.ParameterSource.DEFAULT_MAP:
        return f"from {active_config().path or 'blocwatch.toml'}"
    return "the default"


def resolve_store(store_path: str | None) -> Path:
    from blocwatch.pipeline.config import default_store_path

    return Path(store_path) if store_path else default_store_path()


def _progress(ctx: click.Context, label: str):
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


@cli.command()
@store_option
@click.option("--body", default=None, help="Only this body (default: every body in the store).")
@build_flags
@click.option("--jobs", type=click.IntRange(min=1), default=1, show_default=True,
              help="Periods computed at once: 1 runs in this process, N > 1 uses N local "
                   "worker processes (with --executor dask: workers of the local cluster).")
@click.option("--executor", type=click.Choice(options.EXECUTORS), default="local",
              show_default=True, help="Where periods are computed (dask needs blocwatch[dask]).")
@click.option("--scheduler", default=None, metavar="ADDRESS",
              help="Dask scheduler, e.g. tcp://10.0.0.5:8786 (default with --executor dask: a "
                   "local cluster of --jobs workers).")
@click.option("--partitions", type=click.Path(file_okay=False), default=None, metavar="DIR",
              help="Read each period from DIR/body=…/period=…/votes.parquet (workers read it "
                   "directly; results go to DIR/_results) instead of the store's ballots.")
@click.pass_context
@handle_errors
def build(ctx, store_path, body, jobs, executor, scheduler, partitions, **flags):
    """Compute every period's agreement graph and metrics and store them."""
    from blocwatch.pipeline.build.builder import build as run_build
    from blocwatch.pipeline.build.executors import ExecutorSpec
    from blocwatch.pipeline.build.partitions import build_partitions
    from blocwatch.pipeline.ops.lock import locked_store

    opts = options.build_options(**flags)
    where = ExecutorSpec(executor, jobs=jobs, scheduler=scheduler)
    with locked_store(resolve_store(store_path), "build") as store:
        if partitions:
            report = build_partitions(store, partitions, Path(partitions) / "_results",
                                      body=body, options=opts, executor=where,
                                      progress=_progress(ctx, "build"))
        else:
            report = run_build(store, body=body, options=opts,
                               progress=_progress(ctx, "build"), executor=where)
    click.echo(f"run {report.run_id}: {len(report.periods)} period(s) computed")
    _say_removed(report, opts.period)


def _say_removed(report, period: str) -> None:
    """Stored results a build dropped because its period spec no longer produces them."""
    if report.removed:
        names = ", ".join(f"{b} {p}" for b, p in report.removed[:6])
        more = f" and {len(report.removed) - 6} more" if len(report.removed) > 6 else ""
        click.echo(f"note: removed the stored results of {len(report.removed)} period(s) that "
                   f"--period {period} does not produce ({names}{more}); the store keeps one "
                   f"period spec's results", err=True)


@cli.command()
@store_option
@click.option("--table", type=click.Choice(options.EXPORT_TABLES),
              required=True, help="Which results to export.")
@click.option("--format", "fmt", type=click.Choice(options.EXPORT_FORMATS), default="csv",
              show_default=True, help="File format (json: one record per line).")
@click.option("--body", default=None, help="Only this body.")
@click.option("--out", type=click.Path(dir_okay=False), default=None,
              help="Output file (default: standard output; parquet needs a file).")
@wait_option
@handle_errors
def export(store_path, table, fmt, body, out, wait):
    """Export a results table (text cells safe to open in a spreadsheet)."""
    from blocwatch.pipeline.ops.readers import reading_store
    from blocwatch.pipeline.report.export import export_frame, write_frame
    from blocwatch.pipeline.store.bodies import period_specs, require_body

    with reading_store(resolve_store(store_path), wait) as store:
        frame = export_frame(store, table, body=body)
        specs = period_specs(store, require_body(store, body))
    path = write_frame(frame, fmt, out)
    if path is not None:
        click.echo(f"wrote {len(frame)} rows to {path}", err=True)
    click.echo("periods: " + "; ".join(f"{b}: period spec {s!r}" for b, s in specs.items()),
               err=True)


@cli.command()
@click.option("--format", "fmt", type=click.Choice(options.METRIC_LIST_FORMATS), default="text",
              show_default=True, help="text: name, label, direction and reference in columns; "
                                      "csv and json add family, description, formula and checks.")
@handle_errors
def metrics(fmt):
    """List the measures with their labels, formulas and published references."""
    from blocwatch.pipeline.report.metric_list import format_metric_list, metric_list

    click.echo(format_metric_list(metric_list(), fmt), nl=False)


def _write_report(store_path: Path, body: str | None, out: Path, periods: list[str] | None,
                  images: bool, wait: float | None = None) -> list[Path]:
    """Stage: result frames from the store, then pages and pieces from the dashboards.

    ``wait``: seconds to wait for a run holding the store; None when this process holds the
    lock itself (rebuild, demo) and opens the store directly."""
    from blocwatch.dashboards import ReportTables, write_report
    from blocwatch.pipeline.config import group_colours
    from blocwatch.pipeline.ops.readers import reading_store
    from blocwatch.pipeline.report.frames import report_frames
    from blocwatch.pipeline.store.database import Store

    opened = Store(store_path, read_only=True) if wait is None else \
        reading_store(store_path, wait)
    with opened as store:
        frames = report_frames(store, body=body, periods=periods)
    tables = ReportTables(**frames, colours=group_colours())
    return write_report(out, tables, periods=periods, images=images)


@cli.command()
@store_option
@click.option("--body", default=None, help="Only this body (default: every body).")
@click.option("--out", type=click.Path(file_okay=False), default="blocwatch-report",
              show_default=True, help="Folder for the pages, snippets, images and CSV.")
@click.option("--periods", default=None,
              help="Comma-separated periods for network pictures (default: first, last and "
                   "each change point).")
@click.option("--images/--no-images", default=False, show_default=True,
              help="Also write PNG and SVG (needs Chromium or Chrome).")
@wait_option
@handle_errors
def report(store_path, body, out, periods, images, wait):
    """Write the briefing pages, comparison page and embeddable pieces."""
    paths = _write_report(resolve_store(store_path), body, Path(out),
                          periods.split(",") if periods else None, images, wait)
    for path in paths:
        if path.suffix == ".html" and path.parent == Path(out):
            click.echo(f"page: {path}")
    click.echo(f"wrote {len(paths)} file(s) to {out}")


@cli.command()
@click.option("--out", type=click.Path(file_okay=False), default="blocwatch-demo",
              show_default=True, help="Folder for the demo's data, store and report.")
@click.option("--seed", type=int, default=7, show_default=True,
              help="Seed of the invented scenario.")
@click.option("--bootstrap", type=click.IntRange(min=0), default=None,
              help="Bootstrap replicates (default: as blocwatch build).")
@click.option("--jobs", type=click.IntRange(min=1), default=2, show_default=True,
              help="Periods computed at once in local worker processes.")
@click.pass_context
@handle_errors
def demo(ctx, out, seed, bootstrap, jobs):
    """Generate an invented assembly and review panel, load them, build and report."""
    from blocwatch.pipeline.build.builder import build as run_build
    from blocwatch.pipeline.build.executors import ExecutorSpec
    from blocwatch.pipeline.demo import assembly as demo_assembly
    from blocwatch.pipeline.demo import panel as demo_panel
    from blocwatch.pipeline.ingest.load import ingest_files
    from blocwatch.pipeline.report.export import export_frame, write_frame
    from blocwatch.pipeline.store.database import Store

    out_dir = Path(out)
    store_path = out_dir / "blocwatch.duckdb"
    if store_path.exists():
        store_path.unlink()  # the demo always starts from a fresh store
    assembly = demo_assembly.generate(out_dir / "data", seed=seed)
    panel = demo_panel.generate(out_dir / "data", seed=seed + 4)
    opts = options.BuildOptions(**({} if bootstrap is None else {"bootstrap": bootstrap}))
    with Store(store_path) as store:
        ingest_files(store, [assembly.votes], body=demo_assembly.BODY, members=assembly.roster)
        ingest_files(store, [panel.votes], body=panel.body, members=panel.roster)
        run_build(store, options=opts, progress=_progress(ctx, "build"), command="demo",
                  executor=ExecutorSpec("local", jobs=jobs))
        frame = export_frame(store, "metrics")
    csv_path = write_frame(frame, "csv", out_dir / "metrics.csv")
    paths = _write_report(store_path, None, out_dir / "report", None, False)
    pages = [p for p in paths if p.suffix == ".html" and p.parent == out_dir / "report"]
    click.echo(f"store:   {store_path}")
    for page in pages:
        click.echo(f"page:    {page}")
    click.echo(f"metrics: {csv_path}")


@cli.command()
@click.argument("directory", default=".", type=click.Path(file_okay=False))
@click.option("--body", default=None,
              help="Name of the first body (its [bodies] table is written active).")
@click.option("--force", is_flag=True, default=False, help="Overwrite an existing blocwatch.toml.")
@handle_errors
def init(directory, body, force):
    """Write a commented blocwatch.toml (and a data/ folder) into DIRECTORY."""
    from blocwatch.pipeline.cli.init_template import init_project

    path = init_project(directory, cli, body=body, force=force)
    click.echo(f"wrote {path}")
    click.echo(f"next: put the ballot files in {path.parent / 'data'}, edit the [bodies] "
               f"table, then run 'blocwatch --config {path} rebuild'")


@cli.command()
@store_option
@click.option("--body", default=None, help="Only this configured body (default: all).")
@click.option("--full", is_flag=True, default=False,
              help="Recompute every period and rewrite the report.")
@click.option("--out", type=click.Path(file_okay=False), default=None,
              help="Report folder (default: the config's output, else ./blocwatch-report).")
@click.option("--report/--no-report", "with_report", default=True, show_default=True,
              help="Rewrite the report after recomputing.")
@click.option("--images/--no-images", default=False, show_default=True,
              help="Also write PNG and SVG with the report (needs Chromium or Chrome).")
@build_flags
@click.pass_context
@handle_errors
def rebuild(ctx, store_path, body, full, out, with_report, images, **flags):
    """Load new or changed source files, recompute the stale periods, rewrite the report.

    Files come from the [bodies] tables of blocwatch.toml. With nothing new it writes nothing
    and says so. Exits 75 when another run holds the store's lock.
    """
    from blocwatch.pipeline.config import default_output
    from blocwatch.pipeline.ops.rebuild import rebuild as run_rebuild

    opts = options.build_options(**flags)
    store = resolve_store(store_path)
    out_dir = Path(out) if out else default_output()
    write = (lambda folder: _write_report(store, body, folder, None, images)) \
        if with_report else None
    result = run_rebuild(store, options=opts, body=body, full=full,
                         out=out_dir if with_report else None, write_outputs=write,
                         progress=_progress(ctx, "rebuild"))
    for line in result.load_lines():
        click.echo(line)
    for note in result.notes:
        click.echo(f"note: {note}", err=True)
    if result.build is not None:
        _say_removed(result.build, opts.period)
    click.echo(result.summary())
    if result.outputs:
        click.echo(f"wrote {len(result.outputs)} file(s) to {out_dir}")


@cli.command()
@store_option
@click.option("--body", default=None, help="Only this body.")
@click.option("--json", "as_json", is_flag=True, default=False, help="Print the status as JSON.")
@build_flags
@wait_option
@click.pass_context
@handle_errors
def status(ctx, store_path, body, as_json, wait, **flags):
    """Bodies, periods, last ingest per body, stale periods, and the last run's outcome.

    Stale is judged against the build flags (from blocwatch.toml unless given); settings that
    differ from the last build's are named with both values.
    """
    from blocwatch.pipeline.ops.status import status as store_status

    opts = options.build_options(**flags)
    result = store_status(resolve_store(store_path), options=opts, body=body, wait=wait,
                          sources={name: _source(ctx, name) for name in flags})
    click.echo(result.to_json() if as_json else "\n".join(result.lines()))


@cli.command()
@click.option("--cron", is_flag=True, default=False, help="Print a crontab line.")
@click.option("--systemd", "systemd_dir", type=click.Path(file_okay=False), default=None,
              help="Write NAME.service and NAME.timer into this folder.")
@click.option("--project", type=click.Path(file_okay=False), default=None,
              help="Project folder holding blocwatch.toml (default: the config's folder, else "
                   "the current one).")
@click.option("--when", type=click.Choice(options.SCHEDULE_EVERY),
              default="daily", show_default=True, help="How often to rebuild.")
@click.option("--at", default="03:17", show_default=True, help="Time of day, HH:MM.")
@click.option("--name", default="blocwatch-rebuild", show_default=True,
              help="systemd unit name.")
@click.option("--user", default=None, help="User= line for a system-wide service.")
@handle_errors
def schedule(cron, systemd_dir, project, when, at, name, user):
    """Schedule 'blocwatch rebuild': a crontab line, or a systemd service + timer."""
    from blocwatch.pipeline.config import active_config
    from blocwatch.pipeline.errors import UsageError
    from blocwatch.pipeline.ops.schedule import cron_line, write_systemd

    if cron == (systemd_dir is not None):
        raise UsageError("schedule", "needs exactly one of --cron or --systemd DIR",
                         "e.g. 'blocwatch schedule --cron' or "
                         "'blocwatch schedule --systemd ~/.config/systemd/user'")
    cfg = active_config().path
    folder = project or (cfg.parent if cfg else ".")
    if cron:
        click.echo(cron_line(folder, when=when, at=at, config=cfg if not project else None))
        return
    paths = write_systemd(systemd_dir, folder, when=when, at=at,
                          config=cfg if not project else None, name=name, user=user)
    for path in paths:
        click.echo(f"wrote {path}")
    click.echo(f"enable: systemctl --user daemon-reload && systemctl --user enable --now "
               f"{name}.timer (or copy to /etc/systemd/system and drop --user)")


@cli.command()
@click.argument("files", nargs=-1, type=click.Path(dir_okay=False))
@store_option
@click.option("--body", default=None,
              help="Body of every row (required unless the files have a body column).")
@click.option("--members", type=click.Path(dir_okay=False), default=None,
              help="Roster file: member_id, name, group[, valid_from, valid_to].")
@click.option("--layout", type=click.Choice(options.LAYOUTS), default="long",
              show_default=True,
              help="long: one row per member per ballot; wide: one row per member, one column "
                   "per ballot (CSV or .xlsx).")
@click.option("--codes", type=click.Path(dir_okay=False), default=None,
              help="Extra vote codes: CSV with columns raw,choice (choice: yes/no/abstain/absent).")
@click.option("--ballots", type=click.Path(dir_okay=False), default=None,
              help="Ballot dates and titles: ballot_id, held_on[, title, item, topic].")
@click.option("--column", "columns", multiple=True, metavar="FIELD=HEADER",
              help="Read FIELD from the column HEADER, e.g. --column member=MP_ID (repeatable; "
                   "fields: body ballot date member vote group name title item topic "
                   "valid_from valid_to).")
@click.option("--replace", is_flag=True, default=False,
              help="Let the files overwrite stored ballots, votes and memberships they "
                   "contradict (default: a conflict is an error).")
@click.option("--check", is_flag=True, default=False,
              help="Only check: list every problem, grouped and counted; write nothing.")
@click.option("--scale", default=None, metavar="SPEC",
              help="Scale of ballots that declare none: binary (default), categorical:A|B|C, "
                   "ordinal:LOW..HIGH, continuous[:LOW..HIGH]; kept as the body's default.")
@click.option("--date-format", default=None, metavar="FORM", help="strptime form, e.g. %d.%m.%Y.")
@click.option("--sheet", default=None, metavar="NAME|N|all", help="Workbook sheet (or all).")
@click.pass_context
@handle_errors
def ingest(ctx, files, store_path, body, check, **flags):
    """Load ballot files into the store, all or nothing (a file already loaded is skipped)."""
    from blocwatch.pipeline.cli.flags import ingest_settings
    from blocwatch.pipeline.errors import EXIT_BAD_INPUT
    from blocwatch.pipeline.ingest.load import ingest_files, ingest_store
    from blocwatch.pipeline.store.bodies import new_body_warnings

    settings = ingest_settings(ctx, body, flags)  # flags, then the body's [bodies."…"] table
    with ingest_store(resolve_store(store_path), check_only=check) as store:
        for line in new_body_warnings(store, body):
            click.echo(f"warning: {line}", err=True)
        report = ingest_files(store, files, body=body, check_only=check, **settings)
    click.echo("\n".join(report.lines()))
    if check and report.problems:
        sys.exit(EXIT_BAD_INPUT)


def _register_more_commands() -> None:
    from blocwatch.pipeline.cli.body_commands import remove_body

    cli.add_command(remove_body)


_register_more_commands()
