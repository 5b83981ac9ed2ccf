"""Commands that write results out: ``export``, ``metrics`` (the measures), ``report`` and
the ``demo``."""

from __future__ import annotations

from pathlib import Path

import click

from blocwatch.pipeline import options
from blocwatch.pipeline.cli.common import (
    current_config,
    handle_errors,
    progress,
    resolve_store,
    single_file_option,
    store_option,
    wait_option,
)


def period_choice(f):
    return click.option("--period", default=None, metavar="SPEC",
                        help="Which stored period spec's results (default: [build] period of "
                             "blocwatch.toml, else year, when stored; else the only one "
                             "stored).")(f)


def chosen_spec(store, body: str | None, wanted: str | None):
    """The period spec to show (``--period``, else the one build uses by default, else the
    only one stored), with why (:func:`~blocwatch.pipeline.store.specs.choose_spec`)."""
    from blocwatch.pipeline.store.bodies import require_body
    from blocwatch.pipeline.store.specs import choose_spec

    configured = current_config().section("build").get("period")
    return choose_spec(store, require_body(store, body), wanted=wanted,
                       default=configured or options.DEFAULT_PERIOD,
                       default_why="the [build] period of blocwatch.toml" if configured else
                       "the default period spec")


@click.command()
@store_option
@click.option("--table", type=click.Choice(options.EXPORT_TABLES),
              required=True, help="Which results to export.")
@click.option("--format", "fmt", type=click.Choice(options.EXPORT_FORMATS), default="csv",
              show_default=True, help="File format (json: one record per line).")
@click.option("--body", default=None, help="Only this body.")
@click.option("--out", type=click.Path(dir_okay=False), default=None,
              help="Output file (default: standard output; parquet needs a file).")
@period_choice
@wait_option
@handle_errors
def export(store_path, table, fmt, body, out, period, wait):
    """Export a results table (text cells safe to open in a spreadsheet)."""
    from blocwatch.pipeline.ops.readers import reading_store
    from blocwatch.pipeline.report.export import export_frame, write_frame

    with reading_store(resolve_store(store_path), wait) as store:
        choice = chosen_spec(store, body, period)
        frame = export_frame(store, table, body=body, spec=choice.spec)
    path = write_frame(frame, fmt, out)
    if path is not None:
        click.echo(f"wrote {len(frame)} rows to {path}", err=True)
    click.echo(choice.line(), err=True)


@click.command()
@click.option("--format", "fmt", type=click.Choice(options.METRIC_LIST_FORMATS), default="text",
              show_default=True, help="text: name, label, direction and reference in columns; "
                                      "csv and json add family, description, formula and checks.")
@handle_errors
def metrics(fmt):
    """List the measures with their labels, formulas and published references."""
    from blocwatch.pipeline.report.metric_list import format_metric_list, metric_list

    click.echo(format_metric_list(metric_list(), fmt), nl=False)


@click.command()
@store_option
@click.option("--body", default=None, help="Only this body (default: every body).")
@click.option("--out", type=click.Path(file_okay=False), default="blocwatch-report",
              show_default=True, help="Folder for the pages, snippets, images and CSV.")
@click.option("--periods", default=None,
              help="Comma-separated periods for network pictures (default: first, last and "
                   "each change point).")
@click.option("--images/--no-images", default=False, show_default=True,
              help="Also write PNG and SVG (needs Chromium or Chrome).")
@single_file_option
@period_choice
@wait_option
@handle_errors
def report(store_path, body, out, periods, images, single_file, period, wait):
    """Write the briefing pages, comparison page and embeddable pieces."""
    from blocwatch.pipeline.config import group_colours
    from blocwatch.pipeline.ops.readers import reading_store
    from blocwatch.pipeline.report.write import write_report

    store_path = resolve_store(store_path)
    with reading_store(store_path, wait) as store:
        choice = chosen_spec(store, body, period)
    click.echo(choice.line())
    paths = write_report(store_path, Path(out), body=body,
                         periods=periods.split(",") if periods else None, images=images,
                         colours=group_colours(current_config()), wait=wait,
                         single_file=single_file, spec=choice.spec)
    for path in paths:
        if path.suffix == ".html" and path.parent == Path(out):
            click.echo(f"page: {path}")
    click.echo(f"wrote {len(paths)} file(s) to {out}")


@click.command()
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
    from blocwatch.pipeline.demo.run import run_demo

    result = run_demo(out, seed=seed, bootstrap=bootstrap, jobs=jobs,
                      progress=progress(ctx, "build"))
    click.echo(f"store:   {result.store}")
    for page in result.pages:
        click.echo(f"page:    {page}")
    click.echo(f"metrics: {result.metrics_csv}")


COMMANDS = (export, metrics, report, demo)
