"""Project configuration (``blocwatch.toml``): the store, the bodies and their source files, and
the default of every command-line flag.

The file is found as ``--config PATH`` (or ``$BLOCWATCH_CONFIG``), else ``./blocwatch.toml``.
Relative paths in it are relative to the file's folder, so a scheduler can run blocwatch from
anywhere. A flag given on the command line always wins over the file.

Layout (``blocwatch init`` writes a commented example)::

    store = "blocwatch.duckdb"        # top level: the store and the output folder
    output = "blocwatch-report"
    [build]                           # flags of build; shared with rebuild and status
    [report] / [export] / [schedule]  # flags of that command, named as the long flag
    [colours]                         # group name -> CSS colour
    [bodies."Name"]                   # sources (globs), members, layout, codes, columns, ...

Every key is checked against the allowed set (derived from the commands' own flags, so the two
cannot drift apart); a bad key or value raises one :class:`UsageError` naming the key and what
is allowed.
"""

from __future__ import annotations

import os
import re
import tomllib
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.options import DEFAULT_OUTPUT, DEFAULT_STORE, LAYOUTS

CONFIG_NAME = "blocwatch.toml"
CONFIG_ENV = "BLOCWATCH_CONFIG"

TOP_KEYS = ("store", "output", "build", "colours", "bodies")
BODY_KEYS = {  # key -> (accepted TOML types, description for the message)
    "sources": ((list, str), "a glob or a list of globs, e.g. [\"data/votes-*.csv\"]"),
    "members": ((str,), "a roster file path"),
    "layout": ((str,), "\"long\" or \"wide\""),
    "codes": ((str, dict), "a mapping file path, or a table like { Aye = \"yes\" }"),
    "columns": ((dict,), "a table like { member_id = \"MP\", vote = \"Vote\" }"),
    "ballots": ((str,), "a ballots file path (wide layout)"),
    "replace": ((bool,), "true or false"),
    "scale": ((str,), "a scale spec like \"ordinal:1..5\" (as ingest --scale)"),
    "date_format": ((str,), "the form of the dates as strptime writes it, e.g. \"%d.%m.%Y\""),
    "sheet": ((str, int), "a sheet name, a number from 1, or \"all\""),
}
BODY_PATH_KEYS = ("members", "ballots")
# Commands that take no flags from the file (init writes it; demo makes its own project).
UNCONFIGURED = ("init", "demo")
_CSS_COLOUR = re.compile(
    r"^(#[0-9a-fA-F]{3,8}|[a-zA-Z]{3,30}|(rgb|rgba|hsl|hsla)\([0-9.,%\s]+\))$")


@dataclass
class Config:
    """A loaded, checked config: ``data`` as parsed, ``base`` the folder paths are relative to."""

    path: Path | None
    data: dict = field(default_factory=dict)

    @property
    def base(self) -> Path:
        return self.path.parent if self.path else Path.cwd()

    def resolve(self, value: str | Path) -> Path:
        p = Path(value).expanduser()
        return p if p.is_absolute() else self.base / p

    def section(self, name: str) -> dict:
        return self.data.get(name, {})

    @property
    def bodies(self) -> dict[str, dict]:
        return self.data.get("bodies", {})


def key_error(key: str, why: str, allowed: str, cfg: Path | None) -> UsageError:
    where = f"config {cfg}" if cfg else "config"
    return UsageError(f"{where}: key {key!r}", why, f"allowed: {allowed}")


def find_config(path: str | Path | None = None) -> Path | None:
    """The config file in force: ``path``, else ``$BLOCWATCH_CONFIG``, else ``./blocwatch.toml``."""
    given = path or os.environ.get(CONFIG_ENV) or None
    if given:
        file = Path(given).expanduser()
        if file.is_dir():
            file = file / CONFIG_NAME
        if not file.exists():
            raise UsageError(f"config {file}", "does not exist",
                             "check the path, or write one with 'blocwatch init'")
        return file.resolve()
    file = Path.cwd() / CONFIG_NAME
    return file.resolve() if file.exists() else None


def load_config(path: str | Path | None = None) -> dict:
    """The parsed config file (see :func:`find_config`), or ``{}`` if there is none."""
    file = find_config(path)
    if file is None:
        return {}
    try:
        return tomllib.loads(file.read_text(encoding="utf-8"))
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise UsageError(f"config {file}", f"is not valid TOML ({exc})",
                         "fix the syntax at the position named") from exc


def check_config(data: dict, path: Path | None = None, *, sections: dict | None = None) -> dict:
    """Check every key and value outside the command sections; return ``data``.

    ``sections`` maps each allowed command section to its allowed keys (see
    :func:`flag_sections`); without it command sections are not checked here.
    """
    allowed_top = list(TOP_KEYS) + sorted(sections or {})
    for key, value in data.items():
        if key not in allowed_top and not (sections is None and isinstance(value, dict)):
            raise key_error(key, "is not a blocwatch setting", ", ".join(allowed_top), path)
    for key in ("store", "output"):
        if key in data and (not isinstance(data[key], str) or not data[key].strip()):
            raise key_error(key, f"is {data[key]!r}", "a path in quotes, e.g. "
                             f"{key} = \"{DEFAULT_STORE if key == 'store' else DEFAULT_OUTPUT}\"",
                             path)
    colours = data.get("colours", {})
    if not isinstance(colours, dict):
        raise key_error("colours", f"is {colours!r}", "a table of group = \"#rrggbb\"", path)
    for group, colour in colours.items():
        if not isinstance(colour, str) or not _CSS_COLOUR.match(colour.strip()):
            raise key_error(f"colours.{group}", f"is {colour!r}",
                             "a CSS colour like \"#1f6f8b\", \"teal\" or \"rgb(31,111,139)\"",
                             path)
    bodies = data.get("bodies", {})
    if not isinstance(bodies, dict):
        raise key_error("bodies", f"is {bodies!r}", "tables like [bodies.\"Name\"]", path)
    for name, body in bodies.items():
        _check_body(name, body, path)
    return data


def _check_body(name: str, body: Any, path: Path | None) -> None:
    prefix = f"bodies.{name}"
    if not isinstance(body, dict):
        raise key_error(prefix, f"is {body!r}", f"a table [bodies.\"{name}\"]", path)
    for key, value in body.items():
        if key not in BODY_KEYS:
            raise key_error(f"{prefix}.{key}", "is not a body setting",
                             ", ".join(BODY_KEYS), path)
        types, what = BODY_KEYS[key]
        if not isinstance(value, types):
            raise key_error(f"{prefix}.{key}", f"is {value!r}", what, path)
    sources = body.get("sources", [])
    sources = [sources] if isinstance(sources, str) else sources
    if not sources or not all(isinstance(s, str) and s.strip() for s in sources):
        raise key_error(f"{prefix}.sources", f"is {body.get('sources')!r}",
                         BODY_KEYS["sources"][1], path)
    if body.get("layout", "long") not in LAYOUTS:
        raise key_error(f"{prefix}.layout", f"is {body['layout']!r}", " or ".join(LAYOUTS), path)
    for key in ("codes", "columns"):
        table = body.get(key)
        if isinstance(table, dict) and not all(isinstance(v, str) for v in table.values()):
            raise key_error(f"{prefix}.{key}", "has a value that is not text",
                             BODY_KEYS[key][1], path)


def read_config(path: str | Path | None = None, *, sections: dict | None = None,
                empty: bool = False) -> Config:
    """The config in force (see :func:`find_config`), loaded and checked.

    Nothing is kept between calls: the CLI reads it once per invocation and passes it on.
    ``empty``: use no file at all (the demo builds its own project and ignores the user's).
    """
    if empty:
        return Config(None, {})
    file = find_config(path)
    data = load_config(file) if file else {}
    return Config(file, check_config(data, file, sections=sections))


def default_store_path(cfg: Config) -> Path:
    """The store ``cfg`` names (``store = "…"``, relative to its folder), else
    ``./blocwatch.duckdb``."""
    store = cfg.data.get("store")
    return cfg.resolve(store) if store else Path(DEFAULT_STORE)


def default_output(cfg: Config) -> Path:
    out = cfg.data.get("output")
    return cfg.resolve(out) if out else Path(DEFAULT_OUTPUT)


def group_colours(cfg: Config) -> dict[str, str]:
    """The ``[colours]`` table: group name -> colour overrides for the report."""
    return {str(k): str(v).strip() for k, v in cfg.section("colours").items()}


def body_ingest_options(name: str, cfg: Config) -> dict:
    """Keyword arguments for ``ingest_files`` from ``[bodies."name"]`` (paths resolved)."""
    body = cfg.bodies.get(name, {})
    out: dict[str, Any] = {}
    for key in ("members", "ballots", "layout", "columns", "codes", "scale", "date_format",
                "sheet"):
        if key in body:
            value = str(body[key]) if key == "sheet" else body[key]
            if key in BODY_PATH_KEYS or (key == "codes" and isinstance(value, str)):
                value = cfg.resolve(value)
            out[key] = value
    return out


def body_sources(name: str, cfg: Config) -> list[Path]:
    """The files the body's ``sources`` globs match now, sorted and without repeats."""
    globs = cfg.bodies.get(name, {}).get("sources", [])
    globs = [globs] if isinstance(globs, str) else globs
    found: dict[Path, None] = {}
    for pattern in globs:
        pattern = str(Path(pattern).expanduser())
        root = Path(pattern).anchor if Path(pattern).is_absolute() else cfg.base
        rel = str(Path(pattern).relative_to(root)) if Path(pattern).is_absolute() else pattern
        for match in sorted(Path(root).glob(rel)):
            if match.is_file():
                found[match.resolve()] = None
    return sorted(found)
