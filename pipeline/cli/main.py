"""The ``blocwatch`` command line: the composition root.

Each command parses its options, calls one library function per stage and turns a
:class:`~blocwatch.pipeline.errors.BlocwatchError` into one line on stderr with its exit code.
No SQL, no arithmetic and no figure code live here. The group and its entry point are here;
the commands live by concern in ``cmd_project`` (init, ingest, schedule), ``cmd_compute``
(build, rebuild, status), ``cmd_output`` (export, metrics, report, demo) and
``body_commands`` (remove-body), and import their library functions when run, so ``--help``
loads none of the computing stack.
"""

from __future__ import annotations

import sys

import click

from blocwatch.pipeline.cli import body_commands, cmd_compute, cmd_output, cmd_project
from blocwatch.pipeline.cli.common import handle_errors
from blocwatch.pipeline.cli.usage import BlocwatchGroup
from blocwatch.pipeline.errors import EXIT_USAGE


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
    """Defaults of every flag from the project config (bad keys: one line, exit 2); the
    config read is kept on the context for this invocation only."""
    from blocwatch.pipeline.cli.flags import apply_config

    ctx.obj["config"] = apply_config(ctx, config_path)


def main(argv: list[str] | None = None) -> None:
    """Console-script entry point; usage errors exit 2 as click does."""
    try:
        cli.main(args=argv, prog_name="blocwatch", standalone_mode=True)
    except SystemExit as exc:
        if exc.code not in (None, 0) and not isinstance(exc.code, int):
            sys.exit(EXIT_USAGE)
        raise


for _module in (cmd_project, cmd_compute, cmd_output, body_commands):
    for _command in _module.COMMANDS:
        cli.add_command(_command)
