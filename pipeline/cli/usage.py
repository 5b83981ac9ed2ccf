"""Click's own usage errors in blocwatch's one-line form: ``error: what: why — fix``, exit 2.

Click prints a usage block and ``Error: …`` for an unknown option or command, a value a flag
does not accept or a missing required flag. :class:`BlocwatchGroup` catches those before click
prints them and writes one line that names the command and flag, what was wrong and what to
type instead (the allowed values, a close match, or the command's ``--help``).
"""

from __future__ import annotations

import difflib
import sys

import click

from blocwatch.pipeline.errors import EXIT_USAGE


def _command_path(ctx: click.Context | None) -> str:
    return ctx.command_path if ctx is not None else "blocwatch"


def _help_hint(ctx: click.Context | None) -> str:
    return f"'{_command_path(ctx)} --help' lists what it accepts"


def _close(word: str, options) -> str | None:
    match = difflib.get_close_matches(word, list(options), n=1, cutoff=0.6)
    return match[0] if match else None


def _flag(param: click.Parameter | None, hint: str | None) -> str:
    if param is not None and isinstance(param, click.Option):
        longs = [o for o in param.opts if o.startswith("--")]
        return longs[0] if longs else param.opts[0]
    if param is not None:
        return param.human_readable_name
    return (hint or "").strip("'\"") or "a value"


def _bad_value(exc: click.BadParameter, args: list[str]) -> str:
    """The value typed after the flag (click's exception does not keep it)."""
    param = exc.param
    if param is None:
        return ""
    for i, arg in enumerate(args):
        for opt in getattr(param, "opts", ()):
            if arg == opt and i + 1 < len(args):
                return args[i + 1]
            if arg.startswith(opt + "="):
                return arg.split("=", 1)[1]
    return ""


def _path_from(args: list[str], root: click.Group | None) -> str:
    """``blocwatch CMD`` from the command line when click gives no context."""
    names = root.commands if root is not None else {}
    command = next((a for a in args if a in names), None)
    return f"blocwatch {command}" if command else "blocwatch"


def usage_line(exc: click.UsageError, args: list[str] = (),
               root: click.Group | None = None) -> str:
    """``what: why — fix`` for one of click's usage errors."""
    ctx = exc.ctx
    where = _command_path(ctx)
    if isinstance(exc, click.NoSuchOption):
        known = [o for p in (ctx.command.params if ctx else ()) for o in p.opts
                 if o.startswith("--")]
        near = _close(exc.option_name, known)
        fix = f"did you mean {near}? " if near else ""
        return f"{where}: has no option {exc.option_name} — {fix}{_help_hint(ctx)}"
    if isinstance(exc, click.MissingParameter):
        flag = _flag(exc.param, exc.param_hint)
        kind = getattr(exc.param, "type", None)
        value = (f"one of {', '.join(map(str, kind.choices))}"
                 if isinstance(kind, click.Choice) else "a value")
        return f"{where} {flag}: is required — add {flag} with {value}"
    if isinstance(exc, click.BadParameter):
        flag = _flag(exc.param, exc.param_hint)
        kind = getattr(exc.param, "type", None)
        why = " ".join(exc.message.split()).rstrip(".")
        if isinstance(kind, click.Choice):
            choices = [str(c) for c in kind.choices]
            typed = _bad_value(exc, list(args))
            near = _close(typed, choices) if typed else None
            fix = (f"did you mean {near}? " if near else "") + f"use one of: {', '.join(choices)}"
            what = f"{typed!r} is not a choice" if typed else why
            return f"{where} {flag}: {what} — {fix}"
        return f"{where} {flag}: {why} — {_help_hint(ctx)}"
    message = exc.format_message().strip().rstrip(".")
    if isinstance(exc, click.BadOptionUsage) and "requires an argument" in message:
        where = _command_path(ctx) if ctx is not None else _path_from(args, root)
        return (f"{where} {exc.option_name}: needs a value — put the value after it, e.g. "
                f"{exc.option_name} VALUE ('{where} --help' says what it accepts)")
    if message.startswith("No such command"):
        typed = message.split("'")[1] if "'" in message else ""
        commands = ctx.command.list_commands(ctx) if ctx and isinstance(
            ctx.command, click.Group) else []
        near = _close(typed, commands)
        fix = f"did you mean '{where} {near}'? " if near else ""
        return f"{where}: has no command {typed!r} — {fix}'{where} --help' lists the commands"
    message = " ".join(message.split())
    return f"{where}: {message} — {_help_hint(ctx)}"


class BlocwatchGroup(click.Group):
    """The root command: click's usage errors become one ``error:`` line and exit 2."""

    def main(self, args=None, prog_name=None, complete_var=None, standalone_mode=True,
             **extra):
        if not standalone_mode:
            return super().main(args, prog_name, complete_var, standalone_mode=False, **extra)
        argv = list(args) if args is not None else sys.argv[1:]
        try:
            result = super().main(argv, prog_name, complete_var, standalone_mode=False, **extra)
        except click.UsageError as exc:
            click.echo(f"error: {usage_line(exc, argv, self)}", err=True)
            sys.exit(EXIT_USAGE)
        except click.ClickException as exc:
            message = " ".join(exc.format_message().split())
            click.echo(f"error: {message}", err=True)
            sys.exit(exc.exit_code)
        except click.Abort:
            click.echo("error: stopped: interrupted — run the command again", err=True)
            sys.exit(1)
        sys.exit(result if isinstance(result, int) else 0)
