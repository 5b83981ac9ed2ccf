"""Click's usage errors through the installed CLI: one ``error: what: why — fix`` line, exit 2.

Each case runs the real command in a subprocess on an empty folder; the suggested flag or
value must exist on the command that was run (checked against click's own command objects).
"""

import re

import pytest

from blocwatch.pipeline.cli.main import cli
from blocwatch.pipeline.errors import EXIT_USAGE

CASES = [
    # (argv, text the message must contain)
    (["export", "--table", "metric"], "did you mean metrics?"),
    (["export", "--table=metrcs"], "use one of: metrics, members, groups, trends"),
    (["export", "--tabel", "metrics"], "did you mean --table?"),
    (["exprt"], "did you mean 'blocwatch export'?"),
    (["export"], "add --table with one of metrics, members, groups, trends"),
    (["build", "--bootstrap", "x"], "'x' is not a valid integer"),
    (["status", "--body"], "blocwatch status --body: needs a value"),
    (["--bogus"], "has no option --bogus"),
]


@pytest.mark.parametrize("argv,says", CASES, ids=[" ".join(c[0]) for c in CASES])
def test_usage_error_is_one_line_exit_2(run_cli, tmp_path, argv, says):
    proc = run_cli(*argv)
    assert proc.returncode == EXIT_USAGE, proc.stderr
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1, proc.stderr
    line = lines[0]
    assert line.startswith("error: ") and " — " in line and "Usage:" not in line
    assert says in line
    assert list(tmp_path.iterdir()) == []  # nothing written, not even a store
    # every flag the line names exists on the command it names (or on the group)
    command = next((a for a in argv if a in cli.commands), None)
    known = {"--help"} | {o for p in cli.params for o in p.opts}
    if command:
        known |= {o for p in cli.commands[command].params for o in p.opts}
    for flag in re.findall(r"(?<![\w-])--[a-z][a-z-]+", line.split(" — ", 1)[1]):
        assert flag in known, (flag, line)


def test_help_still_exits_0(run_cli):
    proc = run_cli("export", "--help")
    assert proc.returncode == 0 and "--table" in proc.stdout
