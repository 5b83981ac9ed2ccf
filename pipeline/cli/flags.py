"""Flags from ``blocwatch.toml``: turn the config's command sections into click's ``default_map``.

A section is named after a command and its keys after that command's long flags (``--min-shared``
is ``min_shared``). The ``[build]`` section also feeds every command that takes the build flags
(``rebuild``, ``status``), for the keys they share. Top-level ``output`` is the default ``--out``
of ``report`` and ``rebuild``. The allowed keys are read off the commands themselves, and each
value is converted by the flag's own type, so the file accepts exactly what the command line
does; a flag given on the command line wins because click only uses ``default_map`` for flags
that were not given.
"""

from __future__ import annotations

import click

from blocwatch.pipeline.config import (
    UNCONFIGURED,
    Config,
    default_output,
    key_error,
    read_config,
)
from blocwatch.pipeline.errors import BlocwatchError

BUILD_SECTION = "build"
OUTPUT_COMMANDS = ("report", "rebuild")  # their --out comes from top-level ``output``
_NOT_CONFIGURABLE = ("store_path", "help", "config_path")
# Flags that say what to do this time rather than how: never taken from the file.
# export's and report's --period picks stored results; their default is [build] period.
ACTIONS = {"rebuild": ("full",), "schedule": ("cron", "systemd_dir"), "ingest": ("check",),
           "export": ("period",), "report": ("period",),
           "remove-body": ("yes",)}


def flag_key(param: click.Parameter) -> str:
    """The config key of a flag: its first long name without dashes (``--min-shared`` →
    ``min_shared``)."""
    longs = [o for o in param.opts if o.startswith("--")]
    return (longs[0][2:] if longs else param.name).replace("-", "_")


def flag_sections(group: click.Group) -> dict[str, dict[str, click.Parameter]]:
    """For each configurable command, its config keys and the flags they set."""
    out: dict[str, dict[str, click.Parameter]] = {}
    for name, cmd in sorted(group.commands.items()):
        if name in UNCONFIGURED:
            continue
        keys = {}
        for param in cmd.params:
            if not isinstance(param, click.Option) or param.name in _NOT_CONFIGURABLE \
                    or param.name in ACTIONS.get(name, ()):
                continue
            if param.name == "out" and name in OUTPUT_COMMANDS:
                continue
            keys[flag_key(param)] = param
        out[name] = keys
    return out


def _build_keys(sections: dict) -> set[str]:
    return set(sections.get(BUILD_SECTION, {})) - {"body"}


def _takes_build_flags(params: dict) -> bool:
    return "period" in params and "rule" in params


def _convert(cfg: Config, section: str, key: str, param: click.Parameter, value):
    where = f"{section}.{key}"
    if isinstance(param, click.Option) and param.is_flag and not isinstance(value, bool):
        raise key_error(where, f"is {value!r}", "true or false", cfg.path)
    if param.multiple:
        if not isinstance(value, list):
            raise key_error(where, f"is {value!r}", "a list, e.g. [\"a\", \"b\"]", cfg.path)
        return tuple(_convert_one(cfg, where, key, param, v) for v in value)
    if isinstance(value, (dict, list)):
        raise key_error(where, f"is {value!r}", "a single value", cfg.path)
    return _convert_one(cfg, where, key, param, value)


def _convert_one(cfg: Config, where: str, key: str, param: click.Parameter, value):
    if isinstance(param.type, (click.types.StringParamType, click.Path)) \
            and not isinstance(value, str):
        raise key_error(where, f"is {value!r}", "text in quotes", cfg.path)
    try:
        converted = param.type.convert(value, param, None)
    except click.BadParameter as exc:
        raise key_error(where, f"is {value!r}", _allowed(param.type, exc), cfg.path) from None
    if isinstance(param.type, click.Path) and isinstance(converted, str):
        converted = str(cfg.resolve(converted))
    if key == "period" and isinstance(converted, str) and converted.startswith("terms:"):
        converted = "terms:" + str(cfg.resolve(converted.partition(":")[2]))
    _check_spec(cfg, where, key, converted)
    return converted


def _allowed(kind: click.ParamType, exc: click.BadParameter) -> str:
    if isinstance(kind, click.Choice):
        return ", ".join(map(str, kind.choices))
    number = {click.INT: "an integer", click.FLOAT: "a number"}
    if isinstance(kind, (click.IntRange, click.FloatRange)):
        what = "an integer" if isinstance(kind, click.IntRange) else "a number"
        return f"{what} with {kind._describe_range()}"
    return number.get(kind, exc.message)


def _check_spec(cfg: Config, where: str, key: str, value) -> None:
    """Period and rule specs are checked now, so the message names the config key."""
    from blocwatch.pipeline.ops.schedule import parse_at
    from blocwatch.pipeline.options import parse_period_spec, parse_rule

    check = {"period": parse_period_spec, "rule": parse_rule, "at": parse_at}.get(key)
    if check is None:
        return
    try:
        check(value)
    except BlocwatchError as exc:
        raise key_error(where, f"is {value!r} ({exc.why})", exc.fix, cfg.path) from None


def _single_body(cfg: Config, params: dict) -> dict[str, tuple[str, object]]:
    """With exactly one configured body, ``ingest`` defaults to it and its file settings."""
    if len(cfg.bodies) != 1:
        return {}
    name, body = next(iter(cfg.bodies.items()))
    where = f"bodies.{name}"
    out: dict[str, tuple[str, object]] = {"body": (where, name)}
    for key in ("members", "ballots", "layout", "codes", "scale"):
        if key in body and key in params and isinstance(body[key], str):
            out[key] = (where, body[key])
    if isinstance(body.get("columns"), dict) and "column" in params:
        out["column"] = (where, [f"{k}={v}" for k, v in body["columns"].items()])
    return {k: v for k, v in out.items() if k in params}


def ingest_settings(ctx: click.Context, cfg: Config, body: str | None, flags: dict) -> dict:
    """``ingest_files`` keyword arguments: the ingest ``flags``, with the ``[bodies."body"]``
    settings for those given nowhere else, and ``--column`` pairs parsed."""
    from blocwatch.pipeline.ingest.readers import parse_column_options

    out = {**flags, **body_table_defaults(ctx, cfg, body)}
    out["columns"] = parse_column_options(out.get("columns"))
    return out


def body_table_defaults(ctx: click.Context, cfg: Config, body: str | None) -> dict:
    """The ``[bodies."body"]`` settings for the ingest flags that were given nowhere else.

    The default map can only carry what a flag accepts, so an inline ``codes = { Ja = "yes" }``
    table, and the tables of a body named with ``--body`` when several are configured, are
    filled in here. Returns ``{parameter name: value}`` (paths resolved against the config).
    """
    from click.core import ParameterSource

    from blocwatch.pipeline.config import body_ingest_options

    if body is None or body not in cfg.bodies:
        return {}
    out = {}
    for key, value in body_ingest_options(body, cfg).items():
        if ctx.get_parameter_source(key) != ParameterSource.DEFAULT:
            continue  # given as a flag, in [ingest], or already from the single body's table
        if key == "columns":
            value = tuple(f"{k}={v}" for k, v in value.items())
        elif not isinstance(value, (dict, str)):
            value = str(value)  # a resolved path
        out[key] = value
    return out


def default_map(cfg: Config, group: click.Group) -> dict[str, dict]:
    """click's ``default_map`` for ``group`` from ``cfg`` (every key checked and converted)."""
    sections = flag_sections(group)
    build_keys = _build_keys(sections)
    for name, section in cfg.data.items():
        if name in sections and isinstance(section, dict):
            for key in section:
                if key not in sections[name]:
                    raise key_error(f"{name}.{key}", f"is not a setting of '{name}'",
                                     ", ".join(sorted(sections[name])) or "(none)", cfg.path)
        elif name in sections:
            raise key_error(name, f"is {section!r}", f"a table [{name}]", cfg.path)
    out: dict[str, dict] = {}
    for name, params in sections.items():
        values: dict[str, tuple[str, object]] = {}
        if name != BUILD_SECTION and _takes_build_flags(params):
            for key, value in cfg.section(BUILD_SECTION).items():
                if key in build_keys and key in params:
                    values[key] = (BUILD_SECTION, value)
        if name == "ingest":
            values.update(_single_body(cfg, params))
        for key, value in cfg.section(name).items():
            values[key] = (name, value)
        converted = {params[key].name: _convert(cfg, section, key, params[key], value)
                     for key, (section, value) in values.items()}
        if name in OUTPUT_COMMANDS and "output" in cfg.data:
            converted["out"] = str(default_output(cfg))
        if converted:
            out[name] = converted
    return out


def apply_config(ctx: click.Context, path: str | None) -> Config:
    """Read the config in force, give the group its ``default_map`` and return the config."""
    if ctx.invoked_subcommand in UNCONFIGURED:
        return read_config(empty=True)
    group = ctx.command
    sections = flag_sections(group) if isinstance(group, click.Group) else {}
    cfg = read_config(path, sections=sections)
    ctx.default_map = default_map(cfg, group)
    return cfg
