"""``blocwatch rebuild``: load what is new, recompute what changed, redraw the outputs.

A rebuild, under the store's lock (:mod:`blocwatch.pipeline.ops.lock`):

1. hashes every file the config's ``sources`` globs match (sha256) and loads the ones whose
   content the store has not seen for that body — a file seen before under the same path with
   other content is *changed* and replaces its votes;
2. asks the period planner (:mod:`blocwatch.pipeline.build.planner`) for the stale body ×
   period pairs: new, changed (fingerprint differs), removed, and trends older than periods;
3. if anything is stale, runs :func:`~blocwatch.pipeline.build.builder.build` with ``only_changed``
   (every period is swapped in within one transaction);
4. if the output folder does not show the store's newest results, writes the outputs into a
   staging folder beside it and swaps that in (a marker file in the folder records the run
   whose results it shows).

With nothing new it writes nothing at all — no run row either — and says so. ``full`` forces
every period to be recomputed and the outputs rewritten. Every step is safe to kill: a load is
one transaction, a period is one transaction, the output folder is swapped whole, and whatever
a killed run left undone is stale for the next one.
"""

from __future__ import annotations

import json
import os
import shutil
from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

from blocwatch.pipeline.build.builder import BuildReport, build
from blocwatch.pipeline.build.planner import Stale, stale_periods
from blocwatch.pipeline.config import Config, read_config
from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.ops.lock import store_lock
from blocwatch.pipeline.ops.scan_load import load_scan
from blocwatch.pipeline.ops.sources import SourceFile, config_bodies, scan_sources
from blocwatch.pipeline.options import BuildOptions
from blocwatch.pipeline.store.ballots import has_ballots
from blocwatch.pipeline.store.bodies import close_matches
from blocwatch.pipeline.store.database import Store
from blocwatch.pipeline.store.results import newest_results_run

MARKER = ".blocwatch-outputs.json"  # in the output folder: the run whose results it shows


@dataclass
class RebuildReport:
    sources: list[SourceFile] = field(default_factory=list)
    ingested: list[SourceFile] = field(default_factory=list)
    stale: list[Stale] = field(default_factory=list)
    build: BuildReport | None = None
    outputs: list[Path] = field(default_factory=list)
    notes: list[str] = field(default_factory=list)
    code_lines: dict[str, str] = field(default_factory=dict)  # path -> what its codes became

    @property
    def nothing_to_do(self) -> bool:
        return self.build is None and not self.ingested and not self.outputs

    def load_lines(self) -> list[str]:
        """A line per file loaded, each votes file's followed by what its raw codes became."""
        out = []
        for src in self.ingested:
            out.append(f"loaded: {src.path} ({src.state})")
            if str(src.path) in self.code_lines:
                out.append(self.code_lines[str(src.path)])
        return out

    def summary(self) -> str:
        files = f"{len(self.sources)} source file(s), {len(self.ingested)} loaded"
        if self.nothing_to_do:
            return f"nothing to do: {files}; every period and the outputs are up to date"
        if self.build is None:
            return f"{files}; no period changed, nothing recomputed" + (
                "; outputs rewritten from the stored results" if self.outputs else "")
        return (f"run {self.build.run_id}: {files}; {len(self.build.periods)} period(s) "
                f"recomputed, {len(self.build.skipped)} unchanged")


def outputs_current(out: str | Path, run_id: int | None) -> bool:
    """Whether the folder ``out`` was written from the results of run ``run_id``."""
    try:
        return json.loads((Path(out) / MARKER).read_text(encoding="utf-8"))["run"] == run_id
    except (OSError, ValueError, KeyError, TypeError):
        return False


def swap_outputs(out: str | Path, write: Callable[[Path], list[Path]],
                 run_id: int | None) -> list[Path]:
    """Write the outputs into a staging folder beside ``out``, then swap it in.

    A run killed while writing leaves ``out`` as it was (or, killed between the two renames,
    missing), never half old and half new; leftovers of killed runs are removed first.
    """
    out = Path(out)
    out.parent.mkdir(parents=True, exist_ok=True)
    for leftover in out.parent.glob(f".{out.name}.*-*"):
        shutil.rmtree(leftover, ignore_errors=True)
    staging = out.parent / f".{out.name}.staging-{os.getpid()}"
    old = out.parent / f".{out.name}.old-{os.getpid()}"
    paths = write(staging)
    (staging / MARKER).write_text(json.dumps({"run": run_id}) + "\n", encoding="utf-8")
    if out.exists():
        out.rename(old)
    staging.rename(out)
    shutil.rmtree(old, ignore_errors=True)
    return [out / Path(p).relative_to(staging) for p in paths]


def rebuild(store_path: str | Path, *, options: BuildOptions | None = None,
            config: Config | None = None, body: str | None = None, full: bool = False,
            out: str | Path | None = None,
            write_outputs: Callable[[Path], list[Path]] | None = None,
            progress: Callable[[str], None] | None = None) -> RebuildReport:
    """Bring the store (and the outputs in ``out``) up to date; see the module docstring.

    ``write_outputs(folder)`` writes the outputs into ``folder`` and returns their paths; it
    is called after the store is closed (still under the lock) when ``out`` does not show the
    store's newest results, or with ``full``.
    """
    opts = options or BuildOptions()
    cfg = config or read_config()
    if body is not None and cfg.bodies and body not in cfg.bodies:
        near = close_matches(body, list(cfg.bodies))
        hint = f"did you mean {near[0]!r}? " if near else ""
        raise UsageError(f"body {body!r}", "is not configured",
                         f"{hint}use one of: {', '.join(cfg.bodies)} (the [bodies] tables)")
    report = RebuildReport()
    with store_lock(store_path, "rebuild"):
        with Store(store_path) as store:
            report.sources = scan_sources(store, cfg, body)
            pending = [s for s in report.sources if s.state != "loaded"]
            if pending:
                report.ingested, report.code_lines = load_scan(store, cfg, pending)
            empty = [n for n in config_bodies(cfg, body)
                     if not any(s.body == n and s.kind == "votes" for s in report.sources)]
            report.notes = [f"bodies.{n}.sources matches no file yet" for n in empty]
            if not has_ballots(store):
                where = (f"the sources of {', '.join(empty)} match no file" if empty else
                         "no bodies are configured")
                raise UsageError("rebuild", f"the store is empty and {where}",
                                 "put the ballot files where the [bodies] sources globs point "
                                 "(paths relative to blocwatch.toml; see 'blocwatch init')")
            report.stale = stale_periods(store, opts, body)
            if full or report.stale:
                inputs = {"files": {str(s.path): s.sha256 for s in report.ingested},
                          "stale": [[s.body, s.period, s.reason] for s in report.stale]}
                only = None if full else {(s.body, s.period) for s in report.stale}
                report.build = build(store, body=body, options=opts, only_changed=not full,
                                     progress=progress, command="rebuild", inputs=inputs,
                                     only=only)
            newest = newest_results_run(store, opts.period)  # the spec the report shows
        if write_outputs is not None and out is not None and newest is not None and (
                full or not outputs_current(out, newest)):
            report.outputs = swap_outputs(out, write_outputs, newest)
    return report


def rebuild_with_report(store_path: str | Path, out: str | Path | None = None, *,
                        options: BuildOptions | None = None, config: Config | None = None,
                        body: str | None = None, full: bool = False, images: bool = False,
                        single_file: bool = False,
                        progress: Callable[[str], None] | None = None) -> RebuildReport:
    """:func:`rebuild`, then the report into ``out`` (default: the config's ``output``, else
    ``./blocwatch-report``) when the folder does not show the store's newest results.

    The report is drawn with the config's ``[colours]``; ``images`` adds PNG and SVG;
    ``single_file`` puts the chart library inside every page. This is
    what ``blocwatch rebuild`` runs (``--no-report`` calls :func:`rebuild` alone).
    """
    from blocwatch.pipeline.config import default_output, group_colours
    from blocwatch.pipeline.report.write import report_writer

    cfg = config or read_config()
    folder = Path(out) if out is not None else default_output(cfg)
    write = report_writer(store_path, body=body, images=images, colours=group_colours(cfg),
                          single_file=single_file, spec=(options or BuildOptions()).period)
    return rebuild(store_path, options=options, config=cfg, body=body, full=full, out=folder,
                   write_outputs=write, progress=progress)
