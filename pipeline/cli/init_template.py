"""``blocwatch init``: write a commented ``blocwatch.toml`` whose values are the current defaults.

The ``[build]``, ``[report]`` and ``[schedule]`` sections are generated from the commands' own
flags (default and help text), so the file written always matches ``--help``.
"""

from __future__ import annotations

import json
import textwrap
from pathlib import Path

import click

from blocwatch.pipeline.cli.flags import BUILD_SECTION, flag_sections
from blocwatch.pipeline.config import CONFIG_NAME
from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.options import DEFAULT_OUTPUT, DEFAULT_STORE
from blocwatch.pipeline.safety import check_name

# Sections written out in full (other commands' flags are mentioned, not listed).
WRITTEN_SECTIONS = (BUILD_SECTION, "report", "schedule")
_INTRO = {
    BUILD_SECTION: "How each period's numbers are computed (the flags of 'build'; 'rebuild' and "
                   "'status' read them too). Changing any value makes every period stale, so "
                   "the next rebuild recomputes them all.",
    "report": "The pages 'report' and 'rebuild' write (their folder is 'output' above).",
    "schedule": "What 'blocwatch schedule' puts in the crontab line or systemd timer.",
}


def toml_value(value) -> str:
    """A Python value as a TOML literal (strings in JSON form, which TOML accepts).

    >>> toml_value(True), toml_value(0.25), toml_value(["data/*.csv"])
    ('true', '0.25', '["data/*.csv"]')
    """
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, (int, float)):
        return repr(value)
    if isinstance(value, (list, tuple)):
        return "[" + ", ".join(toml_value(v) for v in value) + "]"
    return json.dumps(str(value), ensure_ascii=False)


def _comment(text: str) -> list[str]:
    return ["# " + line for line in textwrap.wrap(" ".join(text.split()), 96)]


def _section(name: str, params: dict[str, click.Parameter]) -> list[str]:
    lines = ["", *_comment(_INTRO.get(name, "")), f"[{name}]"]
    for key, param in params.items():
        if key == "body":
            continue
        lines += _comment(param.help or "")
        default = param.default
        if not isinstance(default, (bool, int, float, str)):  # None, unset, computed
            lines.append(f"# {key} = ...")
        else:
            lines.append(f"{key} = {toml_value(default)}")
    return lines


def _body(name: str | None) -> list[str]:
    lines = ["", *_comment(
        "One table per body: where its files are and how to read them. 'blocwatch rebuild' "
        "loads each file the globs match whose content (sha256) it has not loaded yet; a file "
        "whose content changed since it was loaded replaces that file's votes. Keys: sources "
        "(globs), members (roster file), layout (long or wide), codes (mapping file, or a table "
        "of spelling = choice), columns (a table of field = your column, fields ballot, date, "
        "member, vote, group, name, title, item, topic), ballots (ballots file for the wide "
        "layout), replace (true: a new file may also overwrite stored votes it contradicts), scale "
        "(of ballots that declare none, as ingest --scale)."
    )]
    body = [
        f"[bodies.{json.dumps(name or 'Example Assembly', ensure_ascii=False)}]",
        'sources = ["data/votes*.csv"]',
        'members = "data/roster.csv"',
        'layout = "long"',
        '# codes = { Aye = "yes", Nay = "no", Abs = "abstain" }',
        '# columns = { ballot = "Division", date = "Date", member = "MP", vote = "Vote" }',
    ]
    if name is None:
        body = ["# " + line if not line.startswith("# ") else line for line in body]
    return lines + body


def config_template(group: click.Group, *, body: str | None = None) -> str:
    """The text of a commented config with every default written out."""
    sections = flag_sections(group)
    lines = [
        *_comment("blocwatch project configuration (written by 'blocwatch init')."),
        *_comment("Relative paths are relative to this file's folder. A flag on the command "
                  "line wins over a value here; delete a line to use the built-in default. "
                  "Any command's flags can be set in a table named after it, keyed by the long "
                  "flag with '_' for '-', e.g. [export] format = \"parquet\"."),
        "",
        "# The DuckDB file holding the ballots and the results.",
        f"store = {toml_value(DEFAULT_STORE)}",
        "# Folder the report pages are written to (report --out, rebuild --out).",
        f"output = {toml_value(DEFAULT_OUTPUT)}",
    ]
    for name in WRITTEN_SECTIONS:
        if name in sections:
            lines += _section(name, sections[name])
    lines += ["", *_comment("Colours of groups in the report (CSS colours); groups not named "
                            "here get the default colour-blind-safe palette."),
              "[colours]", '# "Example Group" = "#0072B2"']
    lines += _body(body)
    return "\n".join(lines) + "\n"


def init_project(directory: str | Path, group: click.Group, *, body: str | None = None,
                 force: bool = False) -> Path:
    """Write ``DIR/blocwatch.toml`` (and ``DIR/data/``); refuse to overwrite unless ``force``."""
    if body is not None:
        check_name(body)
    folder = Path(directory)
    path = folder / CONFIG_NAME
    if path.exists() and not force:
        raise UsageError(f"config {path}", "already exists",
                         "edit it, or pass --force to write a fresh one over it")
    (folder / "data").mkdir(parents=True, exist_ok=True)
    path.write_text(config_template(group, body=body), encoding="utf-8")
    return path
