"""The export tables of ``blocwatch export``: fixed columns read from the store
(:func:`blocwatch.pipeline.store.results.export_rows`), written as CSV, Parquet or JSON lines
with text cells made safe for spreadsheets.

What a report is drawn from (several tables, the stored network pairs, provenance) is assembled
in :mod:`blocwatch.pipeline.report.frames`.
"""

from __future__ import annotations

from pathlib import Path

import pandas as pd

from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.options import DEFAULT_PERIOD, EXPORT_FORMATS, EXPORT_TABLES
from blocwatch.pipeline.safety import neutralise_frame
from blocwatch.pipeline.store.bodies import require_body, require_results
from blocwatch.pipeline.store.database import Store
from blocwatch.pipeline.store.results import export_rows
from blocwatch.pipeline.store.specs import choose_spec


def export_frame(store: Store, table: str, *, body: str | None = None,
                 spec: str | None = None) -> pd.DataFrame:
    """One export table of the period spec ``spec``'s results as a data frame (all bodies
    unless ``body``); its last column, ``period_spec``, says which spec. Without ``spec``:
    the default spec if stored, else the only one (:func:`~blocwatch.pipeline.store.specs.
    choose_spec`)."""
    if table not in EXPORT_TABLES:
        raise UsageError(f"table {table!r}", "is not exportable",
                         f"use one of: {', '.join(EXPORT_TABLES)}")
    targets = require_body(store, body)
    require_results(store, targets)  # never an empty table without a word
    if spec is None:
        spec = choose_spec(store, targets, wanted=None, default=DEFAULT_PERIOD,
                           default_why="the default period spec").spec
    return export_rows(store, table, spec, body)


def write_frame(frame: pd.DataFrame, fmt: str, out: str | Path | None) -> Path | None:
    """Write ``frame`` as csv/parquet/json to ``out`` (csv and json may go to stdout)."""
    if fmt not in EXPORT_FORMATS:
        raise UsageError(f"format {fmt!r}", "is not supported",
                         f"use one of: {', '.join(EXPORT_FORMATS)}")
    if fmt == "parquet" and out is None:
        raise UsageError("export --format parquet", "needs a file", "add --out FILE")
    if fmt == "csv":
        text = neutralise_frame(frame).to_csv(index=False, date_format="%Y-%m-%d")
    elif fmt == "json":
        text = frame.to_json(orient="records", lines=True, date_format="iso")
    if out is None:
        print(text, end="")
        return None
    path = Path(out)
    path.parent.mkdir(parents=True, exist_ok=True)
    if fmt == "parquet":
        frame.to_parquet(path, index=False)
    else:
        path.write_text(text, encoding="utf-8")
    return path
