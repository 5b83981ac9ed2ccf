"""README, ``--help`` and code in step: commands, defaults, and the CI test command."""

import re
from pathlib import Path

import click

from blocwatch.pipeline.cli.main import cli

ROOT = Path(__file__).resolve().parents[2]
README = (ROOT / "README.md").read_text(encoding="utf-8")


def _commands_block() -> str:
    section = README.split("## Commands", 1)[1]
    return section.split("```", 2)[1]


def test_readme_lists_every_command_and_no_other():
    named = set(re.findall(r"^blocwatch ([\w-]+)", _commands_block(), flags=re.M))
    assert named == set(cli.commands), "README's Commands block and the CLI differ"


def test_every_command_has_help():
    for name, command in cli.commands.items():
        ctx = click.Context(command, info_name=name)
        assert command.get_help(ctx).strip(), name
        assert command.help, f"{name} has no docstring"


def _defaults_table() -> dict[tuple[str, str], str]:
    """(command or '', --flag) -> default text, from README's Defaults table."""
    rows = {}
    for line in README.split("## Defaults", 1)[1].split("\n## ", 1)[0].splitlines():
        m = re.match(r"\|\s*`(?:(\w+) )?(--[\w-]+)`\s*\|\s*([^|]+?)\s*\|", line)
        if m:
            rows[(m.group(1) or "", m.group(2))] = m.group(3)
    return rows


def _param(command: str, flag: str) -> click.Parameter:
    for p in cli.commands[command].params:
        if flag in p.opts:
            return p
    raise KeyError(f"{command} has no option {flag}")


def test_readme_defaults_match_the_code():
    table = _defaults_table()
    assert len(table) >= 10
    checked = 0
    for (command, flag), text in table.items():
        param = _param(command or "build", flag) if flag != "--store" else None
        if param is None:
            continue
        default = param.default
        if isinstance(param, click.Option) and param.is_flag and not param.secondary_opts:
            assert text.startswith("off") == (not default), (command, flag, text)
        elif default is None:
            assert text.startswith("none"), (command, flag, text)
        else:
            shown = re.match(r"`([^`]*)`", text)
            assert shown, (command, flag, text)
            assert shown.group(1) == str(default), (command, flag, text, default)
        checked += 1
    assert checked >= 10


def test_ci_runs_the_readme_test_command():
    quick = README.split("## Quick start", 1)[1].split("\n## ", 1)[0]
    blocks = re.findall(r"```\n(.*?)\n```", quick, flags=re.S)
    test_command = blocks[1].strip()
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    assert test_command in ci.splitlines()
