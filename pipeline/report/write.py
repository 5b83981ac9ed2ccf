"""Writing a report from a store: the stored result frames handed to the dashboards.

Reads only what a build stored (:mod:`blocwatch.pipeline.report.frames`); nothing is
recomputed, so every picture matches the figures beside it.
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

from blocwatch.pipeline.ops.readers import reading_store
from blocwatch.pipeline.report.frames import report_frames
from blocwatch.pipeline.store.database import Store


def write_report(store_path: str | Path, out: str | Path, *, body: str | None = None,
                 periods: list[str] | None = None, images: bool = False,
                 colours: dict[str, str] | None = None,
                 wait: float | None = None, single_file: bool = False,
                 spec: str | None = None) -> list[Path]:
    """Write the pages, embeddable pieces (and with ``images`` PNG/SVG) of the store's results
    cut by the period spec ``spec`` (default: see :func:`~blocwatch.pipeline.report.frames.
    report_frames`) into ``out``; return the paths written.

    ``periods``: the periods drawn as networks (default: first, last and each change point);
    ``colours``: group name -> CSS colour overrides (the config's ``[colours]`` table);
    ``single_file``: every page carries plotly.js inline (default: one file in ``out``);
    ``wait``: seconds to wait for a run holding the store (the CLI's ``--wait``), or None when
    the caller holds the store's lock itself (rebuild, demo) and the store is opened directly.
    """
    from blocwatch.dashboards import ReportTables
    from blocwatch.dashboards import write_report as write_pages

    opened = Store(store_path, read_only=True) if wait is None else \
        reading_store(store_path, wait)
    with opened as store:
        frames = report_frames(store, body=body, periods=periods, spec=spec)
    tables = ReportTables(**frames, colours=dict(colours or {}))
    return write_pages(Path(out), tables, periods=periods, images=images,
                       single_file=single_file)


def report_writer(store_path: str | Path, *, body: str | None = None, images: bool = False,
                  colours: dict[str, str] | None = None,
                  single_file: bool = False, spec: str | None = None
                  ) -> Callable[[Path], list[Path]]:
    """:func:`write_report` for a folder named later (a rebuild writes into a staging folder)."""
    return lambda folder: write_report(store_path, folder, body=body, images=images,
                                       colours=colours, single_file=single_file, spec=spec)
