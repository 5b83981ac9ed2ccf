"""Commands that compute: ``build``, ``rebuild`` and ``status`` (what is stale)."""

from __future__ import annotations

from pathlib import Path

import click

from blocwatch.pipeline import options
from blocwatch.pipeline.cli.common import (
    build_flags,
    current_config,
    handle_errors,
    progress,
    resolve_store,
    single_file_option,
    source,
    store_option,
    wait_option,
)


@click.command()
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
                                      progress=progress(ctx, "build"))
        else:
            report = run_build(store, body=body, options=opts,
                               progress=progress(ctx, "build"), executor=where)
    click.echo(f"run {report.run_id}: {len(report.periods)} period(s) computed")
    say_removed(report, opts.period)
    say_kept(report, opts.period)


@click.command()
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
@single_file_option
@build_flags
@click.pass_context
@handle_errors
def rebuild(ctx, store_path, body, full, out, with_report, images, single_file, **flags):
    """Load new or changed source files, recompute the stale periods, rewrite the report.

    Files come from the [bodies] tables of blocwatch.toml. With nothing new it writes nothing
    and says so. Exits 75 when another run holds the store's lock.
    """
    from blocwatch.pipeline.config import default_output
    from blocwatch.pipeline.ops.rebuild import rebuild as run_rebuild
    from blocwatch.pipeline.ops.rebuild import rebuild_with_report

    opts = options.build_options(**flags)
    cfg = current_config()
    store = resolve_store(store_path)
    out_dir = Path(out) if out else default_output(cfg)
    if with_report:
        result = rebuild_with_report(store, out_dir, options=opts, config=cfg, body=body,
                                     full=full, images=images, single_file=single_file,
                                     progress=progress(ctx, "rebuild"))
    else:
        result = run_rebuild(store, options=opts, config=cfg, body=body, full=full,
                             progress=progress(ctx, "rebuild"))
    for line in result.load_lines():
        click.echo(line)
    for note in result.notes:
        click.echo(f"note: {note}", err=True)
    if result.build is not None:
        say_removed(result.build, opts.period)
        say_kept(result.build, opts.period)
    click.echo(result.summary())
    if result.outputs:
        click.echo(f"wrote {len(result.outputs)} file(s) to {out_dir}")


@click.command()
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
                          config=current_config(),
                          sources={name: source(ctx, name) for name in flags})
    click.echo(result.to_json() if as_json else "\n".join(result.lines()))


def say_removed(report, period: str) -> None:
    """Stored results of this spec a build dropped because the spec no longer produces them
    (a window that was partial and has grown whole, ballots removed)."""
    if report.removed:
        names = ", ".join(f"{b} {p}" for b, p in report.removed[:6])
        more = f" and {len(report.removed) - 6} more" if len(report.removed) > 6 else ""
        click.echo(f"note: removed the stored results of {len(report.removed)} period(s) of "
                   f"period spec {period!r} that it no longer produces ({names}{more})",
                   err=True)


def say_kept(report, period: str) -> None:
    """Other period specs' results stay beside this run's: say so, and how to see them."""
    if report.other_specs:
        kept = ", ".join(f"{s!r} ({n} period{'s' if n != 1 else ''})"
                         for s, n in report.other_specs.items())
        click.echo(f"note: period spec {period!r} is stored beside {kept}, which this run kept "
                   "as they were; 'blocwatch report' and 'export' show one, chosen with "
                   "--period SPEC", err=True)


COMMANDS = (build, rebuild, status)
