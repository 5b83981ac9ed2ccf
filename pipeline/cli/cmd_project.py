"""Commands that set a project up: ``init``, ``ingest`` and ``schedule``."""

from __future__ import annotations

import sys

import click

from blocwatch.pipeline import options
from blocwatch.pipeline.cli.common import (
    current_config,
    handle_errors,
    resolve_store,
    store_option,
)


@click.command()
@click.argument("directory", default=".", type=click.Path(file_okay=False))
@click.option("--body", default=None,
              help="Name of the first body (its [bodies] table is written active).")
@click.option("--force", is_flag=True, default=False, help="Overwrite an existing blocwatch.toml.")
@handle_errors
def init(directory, body, force):
    """Write a commented blocwatch.toml (and a data/ folder) into DIRECTORY."""
    from blocwatch.pipeline.cli.init_template import init_project

    path = init_project(directory, click.get_current_context().find_root().command, body=body,
                        force=force)
    click.echo(f"wrote {path}")
    click.echo(f"next: put the ballot files in {path.parent / 'data'}, edit the [bodies] "
               f"table, then run 'blocwatch --config {path} rebuild'")


@click.command()
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

    # the flags, then the body's [bodies."…"] table for those given nowhere else
    settings = ingest_settings(ctx, current_config(), body, flags)
    with ingest_store(resolve_store(store_path), check_only=check) as store:
        for line in new_body_warnings(store, body):
            click.echo(f"warning: {line}", err=True)
        report = ingest_files(store, files, body=body, check_only=check, **settings)
    click.echo("\n".join(report.lines()))
    if check and report.problems:
        sys.exit(EXIT_BAD_INPUT)


@click.command()
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
    from blocwatch.pipeline.errors import UsageError
    from blocwatch.pipeline.ops.schedule import cron_line, write_systemd

    if cron == (systemd_dir is not None):
        raise UsageError("schedule", "needs exactly one of --cron or --systemd DIR",
                         "e.g. 'blocwatch schedule --cron' or "
                         "'blocwatch schedule --systemd ~/.config/systemd/user'")
    cfg = current_config().path
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


COMMANDS = (init, ingest, schedule)
