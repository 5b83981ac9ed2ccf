"""The whole demo as one library call: invent two bodies, load them, build, export, report."""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

from blocwatch.pipeline.options import BuildOptions


@dataclass
class DemoResult:
    store: Path
    metrics_csv: Path
    report: Path
    pages: list[Path] = field(default_factory=list)  # the report's top-level HTML pages


def run_demo(out: str | Path, *, seed: int = 7, bootstrap: int | None = None, jobs: int = 2,
             progress: Callable[[str], None] | None = None) -> DemoResult:
    """Generate the invented assembly and review panel into ``out/data``, load them into a
    fresh ``out/blocwatch.duckdb``, build (``bootstrap`` replicates, default as
    :class:`BuildOptions`; ``jobs`` local worker processes), export ``out/metrics.csv`` and
    write the report into ``out/report``."""
    from blocwatch.pipeline.build.builder import build
    from blocwatch.pipeline.build.executors import ExecutorSpec
    from blocwatch.pipeline.demo import assembly, panel
    from blocwatch.pipeline.ingest.load import ingest_files
    from blocwatch.pipeline.report.export import export_frame, write_frame
    from blocwatch.pipeline.report.write import write_report
    from blocwatch.pipeline.store.database import Store

    out_dir = Path(out)
    store_path = out_dir / "blocwatch.duckdb"
    if store_path.exists():
        store_path.unlink()  # the demo always starts from a fresh store
    made = assembly.generate(out_dir / "data", seed=seed)
    review = panel.generate(out_dir / "data", seed=seed + 4)
    opts = BuildOptions(**({} if bootstrap is None else {"bootstrap": bootstrap}))
    with Store(store_path) as store:
        ingest_files(store, [made.votes], body=assembly.BODY, members=made.roster)
        ingest_files(store, [review.votes], body=review.body, members=review.roster)
        build(store, options=opts, progress=progress, command="demo",
              executor=ExecutorSpec("local", jobs=jobs))
        frame = export_frame(store, "metrics")
    csv_path = write_frame(frame, "csv", out_dir / "metrics.csv")
    report_dir = out_dir / "report"
    paths = write_report(store_path, report_dir)
    pages = [p for p in paths if p.suffix == ".html" and p.parent == report_dir]
    return DemoResult(store_path, csv_path, report_dir, pages)
