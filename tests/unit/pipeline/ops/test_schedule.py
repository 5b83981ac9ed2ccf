"""Scheduling: the crontab line parses and runs the right command; the systemd units verify."""

import os
import re
import shlex
import shutil
import subprocess
import sys
from pathlib import Path

import pytest

from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.ops.schedule import (
    WHEN,
    blocwatch_executable,
    cron_line,
    on_calendar,
    parse_at,
    systemd_units,
    write_systemd,
)

# crontab(5): minute 0-59, hour 0-23, day of month 1-31, month 1-12, day of week 0-7 [from memory]
CRON_RANGES = [(0, 59), (0, 23), (1, 31), (1, 12), (0, 7)]


def parse_cron(line: str) -> tuple[list[set[int]], str]:
    """A small crontab(5) parser: five fields of *, N, N-M, lists and /step; then the command."""
    fields = line.split(None, 5)
    assert len(fields) == 6, f"expected 5 time fields and a command, got {line!r}"
    sets = []
    for text, (lo, hi) in zip(fields[:5], CRON_RANGES):
        values: set[int] = set()
        for part in text.split(","):
            m = re.fullmatch(r"(\*|(\d+)(?:-(\d+))?)(?:/(\d+))?", part)
            assert m, f"cron field {text!r} does not parse"
            start, end = (lo, hi) if m.group(1) == "*" else (
                int(m.group(2)), int(m.group(3) or m.group(2)))
            assert lo <= start <= end <= hi, f"cron field {text!r} out of range {lo}-{hi}"
            values.update(range(start, end + 1, int(m.group(4) or 1)))
        sets.append(values)
    return sets, fields[5]


@pytest.fixture
def project(tmp_path):
    folder = tmp_path / "my project"  # a space, to check quoting
    folder.mkdir()
    (folder / "blocwatch.toml").write_text('store = "blocwatch.duckdb"\n')
    return folder


def test_parser_rejects_bad_lines():
    """The checker itself can fail (so the tests below are not vacuous)."""
    for bad in ("61 3 * * * x", "0 24 * * * x", "* * * x", "0 3 0 * * x"):
        with pytest.raises(AssertionError):
            parse_cron(bad)


@pytest.mark.parametrize("when,expect", [
    ("hourly", [{17}, set(range(24)), set(range(1, 32)), set(range(1, 13)), set(range(8))]),
    ("daily", [{17}, {3}, set(range(1, 32)), set(range(1, 13)), set(range(8))]),
    ("weekly", [{17}, {3}, set(range(1, 32)), set(range(1, 13)), {1}]),
    ("monthly", [{17}, {3}, {1}, set(range(1, 13)), set(range(8))]),
    ("yearly", [{17}, {3}, {1}, {1}, set(range(8))]),
])
def test_cron_line_parses_and_runs_rebuild(project, when, expect):
    line = cron_line(project, when=when, at="03:17", exe="/opt/bw/bin/blocwatch")
    times, command = parse_cron(line)
    assert times == expect
    words = shlex.split(command)
    assert words[:3] == ["cd", str(project.resolve()), "&&"]
    assert words[3:8] == ["/opt/bw/bin/blocwatch", "--quiet", "--config",
                          str(project.resolve() / "blocwatch.toml"), "rebuild"]
    assert words[8:] == [">>", str(project.resolve() / "blocwatch-rebuild.log"), "2>&1"]


def test_cron_escapes_percent(tmp_path):
    folder = tmp_path / "100%"
    folder.mkdir()
    (folder / "blocwatch.toml").write_text("")
    line = cron_line(folder, exe="/usr/bin/blocwatch")
    assert "100\\%" in line and re.search(r"(?<!\\)%", line) is None  # crontab(5): % is newline


def test_bad_times_and_intervals(project):
    assert parse_at("7:05") == (7, 5)
    for bad in ("24:00", "3:7", "noon", "12:60"):
        with pytest.raises(UsageError, match="HH:MM"):
            parse_at(bad)
    with pytest.raises(UsageError, match="one of: hourly"):
        cron_line(project, when="fortnightly", exe="/x/blocwatch")
    with pytest.raises(UsageError, match="does not exist"):
        cron_line(project / "nowhere", exe="/x/blocwatch")


def test_units_have_persistent_timer_and_accept_lock_exit(project):
    units = systemd_units(project, exe="/opt/bw/bin/blocwatch", when="weekly", at="04:05")
    service, timer = units["blocwatch-rebuild.service"], units["blocwatch-rebuild.timer"]
    assert "Persistent=true" in timer.splitlines()
    assert "OnCalendar=Mon *-*-* 04:05:00" in timer.splitlines()
    assert "SuccessExitStatus=75" in service.splitlines()  # README "Commands": 75 = lock held
    assert "Type=oneshot" in service.splitlines()
    assert f'--config "{project.resolve()}/blocwatch.toml" rebuild' in service
    with pytest.raises(UsageError, match="unit name"):
        systemd_units(project, exe="/x/blocwatch", name="bad name/..")


SYSTEMD_ANALYZE = shutil.which("systemd-analyze")
needs_systemd = pytest.mark.skipif(SYSTEMD_ANALYZE is None,
                                   reason="systemd-analyze is not installed on this machine")


def _verify(folder: Path, name: str = "blocwatch-rebuild"):
    return subprocess.run([SYSTEMD_ANALYZE, "verify", f"{name}.timer", f"{name}.service"],
                          cwd=folder, capture_output=True, text=True)


@needs_systemd
@pytest.mark.parametrize("when", WHEN)
def test_generated_units_pass_systemd_analyze_verify(tmp_path, project, when):
    exe = blocwatch_executable()
    out = tmp_path / "units"
    write_systemd(out, project, when=when, at="03:17", exe=exe)
    result = _verify(out)
    assert result.returncode == 0, result.stderr
    assert "blocwatch-rebuild" not in result.stderr, result.stderr


@needs_systemd
def test_verify_catches_a_broken_unit(tmp_path, project):
    """Negative control: the same check fails on a timer with a bad calendar."""
    out = tmp_path / "units"
    write_systemd(out, project, exe=blocwatch_executable())
    timer = out / "blocwatch-rebuild.timer"
    timer.write_text(re.sub(r"OnCalendar=.*", "OnCalendar=someday", timer.read_text()))
    assert _verify(out).returncode != 0


@needs_systemd
@pytest.mark.parametrize("when", WHEN)
def test_on_calendar_is_what_systemd_normalises_it_to(when):
    """`systemd-analyze calendar` parses each expression and prints its normalised form."""
    expr = on_calendar(when, "03:17")
    result = subprocess.run([SYSTEMD_ANALYZE, "calendar", expr], capture_output=True, text=True)
    assert result.returncode == 0, result.stderr
    normal = re.search(r"Normalized form:\s*(.+)", result.stdout).group(1).strip()
    assert normal == expr  # already in systemd's own normal form
    # and it fires at 03:17 (hourly: at minute 17) [S: systemd.time(7)]
    nxt = re.search(r"Next elapse:\s*\w+ \S+ (\d\d):(\d\d):00", result.stdout)
    assert nxt.group(2) == "17" and (when == "hourly" or nxt.group(1) == "03")


def _cli(*args, cwd):
    """The real command line, in process (click's runner) to keep the suite fast."""
    from click.testing import CliRunner

    from blocwatch.pipeline.cli.main import cli

    old = os.getcwd()
    os.chdir(cwd)
    try:
        result = CliRunner().invoke(cli, list(args))
    finally:
        os.chdir(old)
    result.returncode = result.exit_code
    return result


def test_cli_cron_and_systemd(tmp_path, project):
    result = _cli("schedule", "--cron", "--when", "monthly", "--at", "01:02", cwd=project)
    assert result.returncode == 0, result.stderr
    times, _ = parse_cron(result.stdout.strip())
    assert times[:3] == [{2}, {1}, {1}]
    result = _cli("schedule", "--systemd", str(tmp_path / "u"), cwd=project)
    assert result.returncode == 0, result.stderr
    assert sorted(p.name for p in (tmp_path / "u").iterdir()) == [
        "blocwatch-rebuild.service", "blocwatch-rebuild.timer"]
    result = _cli("schedule", cwd=project)
    assert result.returncode == 2 and "exactly one of --cron or --systemd" in result.stderr


def test_schedule_reads_its_config_section_and_flags_win(project):
    (project / "blocwatch.toml").write_text('[schedule]\nwhen = "weekly"\nat = "04:30"\n')
    times, _ = parse_cron(_cli("schedule", "--cron", cwd=project).stdout.strip())
    assert times[0] == {30} and times[1] == {4} and times[4] == {1}
    times, _ = parse_cron(_cli("schedule", "--cron", "--at", "05:00", cwd=project).stdout.strip())
    assert times[0] == {0} and times[1] == {5} and times[4] == {1}


def test_executable_is_this_installation():
    exe = blocwatch_executable()
    assert exe.name == "blocwatch" and exe.is_absolute()
    assert exe.parent == Path(sys.executable).parent or shutil.which("blocwatch")
