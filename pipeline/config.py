"""Project configuration (``blocwatch.toml``): where the store is and the defaults of every flag."""

from __future__ import annotations

import tomllib
from pathlib import Path

from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.store import DEFAULT_STORE

CONFIG_NAME = "blocwatch.toml"


def load_config(path: str | Path | None = None) -> dict:
    """The parsed config file (``./blocwatch.toml`` unless ``path``), or ``{}`` if there is none."""
    file = Path(path) if path else Path.cwd() / CONFIG_NAME
    if not file.exists():
        if path:
            raise UsageError(f"config {file}", "does not exist", "check the path")
        return {}
    try:
        return tomllib.loads(file.read_text(encoding="utf-8"))
    except (tomllib.TOMLDecodeError, UnicodeDecodeError) as exc:
        raise UsageError(f"config {file}", f"is not valid TOML ({exc})",
                         "fix the syntax at the position named") from exc


def default_store_path() -> Path:
    """The store that ``blocwatch.toml`` names (``store = "…"``), else ``./blocwatch.duckdb``."""
    cfg = load_config()
    store = cfg.get("store", DEFAULT_STORE)
    if not isinstance(store, str) or not store:
        raise UsageError(f"config {CONFIG_NAME}: key 'store'", f"is {store!r}",
                         "set it to a file path, e.g. store = \"blocwatch.duckdb\"")
    return Path(store)


def group_colours() -> dict[str, str]:
    """Group → colour overrides from ``[colours]`` in ``blocwatch.toml`` (empty if none)."""
    colours = load_config().get("colours", {})
    if not isinstance(colours, dict) or not all(isinstance(v, str) for v in colours.values()):
        raise UsageError(f"config {CONFIG_NAME}: table [colours]", f"is {colours!r}",
                         'write one line per group, e.g. "Group name" = "#1f6f8b"')
    return dict(colours)
