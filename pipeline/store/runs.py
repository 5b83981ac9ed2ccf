"""The ``runs`` table: one row per build, rebuild or report, so every output is traceable."""

from __future__ import annotations

import json
from datetime import datetime, timezone
from importlib.metadata import PackageNotFoundError, version

from blocwatch.pipeline.store.database import Store


def tool_version() -> str:
    try:
        return version("blocwatch")
    except PackageNotFoundError:  # running from a source tree that is not installed
        return "0+unknown"


def _now() -> datetime:
    return datetime.now(timezone.utc).replace(tzinfo=None)


def start_run(store: Store, command: str, params: dict, inputs: dict | None = None) -> int:
    """Record a run as ``running`` and return its id (committed at once, outside any batch)."""
    with store.transaction():
        run_id = int(store.scalar("SELECT coalesce(max(run_id), 0) + 1 FROM runs"))
        store.execute("INSERT INTO runs VALUES (?, ?, NULL, ?, ?, ?, ?, NULL, 'running')",
                      [run_id, _now(), tool_version(), command,
                       json.dumps(params, sort_keys=True, default=str),
                       json.dumps(inputs or {}, sort_keys=True, default=str)])
    return run_id


def finish_run(store: Store, run_id: int, status: str, recomputed: list | None = None) -> None:
    store.execute("UPDATE runs SET finished = ?, status = ?, recomputed = ? WHERE run_id = ?",
                  [_now(), status, json.dumps(recomputed or [], default=str), run_id])


def last_run(store: Store) -> dict | None:
    frame = store.df("SELECT * FROM runs ORDER BY run_id DESC LIMIT 1")
    return None if frame.empty else frame.iloc[0].to_dict()


def runs_frame(store: Store):
    """Every row of ``runs``, oldest first (a pandas frame)."""
    return store.df("SELECT * FROM runs ORDER BY run_id")
