"""``blocwatch schedule``: a crontab line, or a systemd service + timer pair, for ``rebuild``.

Both run ``blocwatch --quiet --config <project>/blocwatch.toml rebuild`` from the project folder,
with absolute paths so the scheduler's own working directory and ``PATH`` do not matter. A run
that finds the lock held exits 75; the service counts that as success (the run holding the lock
is doing the work). The timer has ``Persistent=true``: a run missed while the machine was off
happens at the next boot. cron has no such catch-up.
"""

from __future__ import annotations

import re
import shlex
import shutil
import sys
from pathlib import Path

from blocwatch.pipeline.config import CONFIG_NAME
from blocwatch.pipeline.errors import EXIT_LOCKED, UsageError

WHEN = ("hourly", "daily", "weekly", "monthly", "yearly")
DEFAULT_WHEN = "daily"
DEFAULT_AT = "03:17"  # off the hour, away from the crowd of jobs at 03:00
DEFAULT_UNIT = "blocwatch-rebuild"
LOG_NAME = "blocwatch-rebuild.log"
_UNIT_NAME = re.compile(r"^[A-Za-z0-9_.:-]{1,200}$")


def parse_at(at: str) -> tuple[int, int]:
    """``HH:MM`` (24-hour) as (hour, minute)."""
    m = re.fullmatch(r"(\d{1,2}):(\d{2})", at.strip())
    if not m or int(m.group(1)) > 23 or int(m.group(2)) > 59:
        raise UsageError(f"time {at!r}", "is not a time of day HH:MM (00:00 to 23:59)",
                         "e.g. --at 03:17")
    return int(m.group(1)), int(m.group(2))


def _check_when(when: str) -> str:
    if when not in WHEN:
        raise UsageError(f"schedule {when!r}", "is not a known interval",
                         f"use one of: {', '.join(WHEN)}")
    return when


def cron_schedule(when: str, at: str) -> str:
    """The five cron time fields (minute hour day-of-month month day-of-week).

    >>> cron_schedule("weekly", "03:17")
    '17 3 * * 1'
    """
    hour, minute = parse_at(at)
    return {"hourly": f"{minute} * * * *", "daily": f"{minute} {hour} * * *",
            "weekly": f"{minute} {hour} * * 1", "monthly": f"{minute} {hour} 1 * *",
            "yearly": f"{minute} {hour} 1 1 *"}[_check_when(when)]


def on_calendar(when: str, at: str) -> str:
    """systemd ``OnCalendar=`` for the same times (weekly: Mondays).

    >>> on_calendar("monthly", "4:05")
    '*-*-01 04:05:00'
    """
    hour, minute = parse_at(at)
    hm = f"{hour:02d}:{minute:02d}:00"
    return {"hourly": f"*-*-* *:{minute:02d}:00", "daily": f"*-*-* {hm}",
            "weekly": f"Mon *-*-* {hm}", "monthly": f"*-*-01 {hm}",
            "yearly": f"*-01-01 {hm}"}[_check_when(when)]


def blocwatch_executable() -> Path:
    """The absolute path of the ``blocwatch`` script this process runs as (or finds on PATH)."""
    beside = Path(sys.executable).parent / "blocwatch"
    for candidate in (Path(sys.argv[0]) if sys.argv and sys.argv[0] else None, beside):
        if candidate is not None and candidate.name == "blocwatch" and candidate.exists():
            return candidate.resolve()
    found = shutil.which("blocwatch")
    if found:
        return Path(found).resolve()
    raise UsageError("schedule", "cannot find the 'blocwatch' program",
                     "install blocwatch (pip install .) so the 'blocwatch' command exists")


def project_paths(project: str | Path, config: str | Path | None = None) -> tuple[Path, Path]:
    """(project folder, config file), absolute; the config must exist."""
    folder = Path(project).expanduser().resolve()
    cfg = Path(config).expanduser().resolve() if config else folder / CONFIG_NAME
    if not cfg.exists():
        raise UsageError(f"config {cfg}", "does not exist",
                         f"write one with 'blocwatch init {folder}', or pass --config")
    return folder, cfg


def rebuild_argv(exe: Path, config: Path, extra: list[str] | None = None) -> list[str]:
    return [str(exe), "--quiet", "--config", str(config), "rebuild", *(extra or [])]


def cron_line(project: str | Path, *, when: str = DEFAULT_WHEN, at: str = DEFAULT_AT,
              config: str | Path | None = None, exe: str | Path | None = None,
              log: str | Path | None = None) -> str:
    """One crontab line that rebuilds the project and appends its output to a log file."""
    folder, cfg = project_paths(project, config)
    exe = Path(exe) if exe else blocwatch_executable()
    log = Path(log) if log else folder / LOG_NAME
    command = (f"cd {shlex.quote(str(folder))} && "
               f"{shlex.join(rebuild_argv(exe, cfg))} >> {shlex.quote(str(log))} 2>&1")
    # cron turns an unescaped % into a newline.
    return f"{cron_schedule(when, at)} {command.replace('%', chr(92) + '%')}"


def _systemd_quote(arg: str) -> str:
    """One ExecStart= word: specifiers (%) doubled, quoted when it holds spaces or quotes."""
    arg = arg.replace("%", "%%")
    if re.search(r'[\s"\'\\;]', arg):
        return '"' + arg.replace("\\", "\\\\").replace('"', '\\"') + '"'
    return arg


def systemd_units(project: str | Path, *, when: str = DEFAULT_WHEN, at: str = DEFAULT_AT,
                  config: str | Path | None = None, exe: str | Path | None = None,
                  name: str = DEFAULT_UNIT, user: str | None = None) -> dict[str, str]:
    """``{name.service: text, name.timer: text}`` for a oneshot rebuild on a calendar timer."""
    if not _UNIT_NAME.match(name):
        raise UsageError(f"unit name {name!r}", "is not a valid systemd unit name",
                         "use letters, digits and - _ . : only")
    folder, cfg = project_paths(project, config)
    exe = Path(exe) if exe else blocwatch_executable()
    exec_start = " ".join(_systemd_quote(a) for a in rebuild_argv(exe, cfg))
    service = [
        "[Unit]",
        f"Description=blocwatch rebuild of {str(folder).replace('%', '%%')}",
        "",
        "[Service]",
        "Type=oneshot",
        f"WorkingDirectory={str(folder).replace('%', '%%')}",
        f"ExecStart={exec_start}",
        f"# {EXIT_LOCKED}: another run held the store's lock and is doing the work.",
        f"SuccessExitStatus={EXIT_LOCKED}",
        "Nice=10",
        "IOSchedulingClass=idle",
    ]
    if user:
        service.insert(service.index("Type=oneshot") + 1, f"User={user}")
    timer = [
        "[Unit]",
        f"Description={when.capitalize()} blocwatch rebuild of {str(folder).replace('%', '%%')}",
        "",
        "[Timer]",
        f"OnCalendar={on_calendar(when, at)}",
        "# Run at the next boot when the machine was off at the planned time.",
        "Persistent=true",
        f"Unit={name}.service",
        "",
        "[Install]",
        "WantedBy=timers.target",
    ]
    return {f"{name}.service": "\n".join(service) + "\n", f"{name}.timer": "\n".join(timer) + "\n"}


def write_systemd(directory: str | Path, project: str | Path, **options) -> list[Path]:
    """Write the service and timer into ``directory``; return their paths."""
    out = Path(directory).expanduser()
    out.mkdir(parents=True, exist_ok=True)
    paths = []
    for filename, text in systemd_units(project, **options).items():
        path = out / filename
        path.write_text(text, encoding="utf-8")
        paths.append(path)
    return paths
