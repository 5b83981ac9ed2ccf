"""``blocwatch status``: what the store holds, what is stale, and how the last run ended.

Reads only (the store is opened read-only). While another run holds the lock the store cannot
be opened (DuckDB allows one writing process and no readers beside it): the CLI waits up to
``--wait`` seconds (:mod:`blocwatch.pipeline.ops.readers`) and then exits 75 naming the run;
library callers that pass no ``wait`` get the holder in :attr:`StatusReport.lock` instead. A
run row still marked ``running`` while the lock is free belongs to a run that was killed: it is
shown as ``interrupted``.
"""

from __future__ import annotations

import json
from dataclasses import asdict, dataclass, field
from pathlib import Path

from blocwatch.pipeline.build.planner import stale_periods
from blocwatch.pipeline.config import Config, read_config
from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.ops.lock import describe, lock_holder
from blocwatch.pipeline.ops.readers import reading_store, wait_for_store
from blocwatch.pipeline.ops.settings import settings_changes
from blocwatch.pipeline.ops.sources import scan_sources
from blocwatch.pipeline.options import BuildOptions
from blocwatch.pipeline.store.bodies import body_counts, close_matches, last_load, stored_bodies
from blocwatch.pipeline.store.database import Store
from blocwatch.pipeline.store.results import BUILD_COMMANDS, stored_periods, stored_specs
from blocwatch.pipeline.store.runs import runs_frame


@dataclass
class BodyStatus:
    body: str
    members: int = 0
    ballots: int = 0
    first_ballot: str | None = None
    last_ballot: str | None = None
    periods: list[str] = field(default_factory=list)  # of the period spec judged
    other_specs: dict[str, int] = field(default_factory=dict)  # spec -> periods, not judged
    last_ingest: dict | None = None
    stale: list[list] = field(default_factory=list)  # [period, reason]
    pending_files: list[list] = field(default_factory=list)  # [path, state]


@dataclass
class StatusReport:
    store: str
    exists: bool
    spec: str = ""  # the period spec whose results are listed and judged
    lock: dict | None = None  # the holder's record, when a run holds the lock
    bodies: list[BodyStatus] = field(default_factory=list)
    last_run: dict | None = None
    interrupted_runs: list[int] = field(default_factory=list)
    # the last finished build's run id and command, and each setting that differs now
    settings: dict | None = None

    def to_json(self) -> str:
        return json.dumps(asdict(self), indent=2, default=str)

    def lines(self) -> list[str]:
        out = [f"store: {self.store}" + ("" if self.exists else " (not created yet)")]
        if self.lock is not None:
            out.append(f"lock: held by a run in progress ({describe(self.lock)}); the store "
                       "is busy until it finishes")
            return out
        out.append("lock: free")
        for b in self.bodies:
            out.append(f"body: {b.body}")
            if b.ballots:
                out.append(f"  {b.ballots} ballots from {b.first_ballot} to {b.last_ballot}, "
                           f"{b.members} members")
            span = f" ({b.periods[0]} .. {b.periods[-1]})" if b.periods else ""
            out.append(f"  periods built (period spec {self.spec!r}): {len(b.periods)}{span}")
            if b.other_specs:
                out.append("  also stored, not judged here: " + ", ".join(
                    f"period spec {s!r} ({n} period{'s' if n != 1 else ''})"
                    for s, n in b.other_specs.items()) + " — pass --period SPEC to judge one")
            if b.last_ingest:
                li = b.last_ingest
                files = li["files"] if len(li["files"]) <= 3 else \
                    [*li["files"][:2], f"{len(li['files']) - 2} more"]
                out.append(f"  last ingest: {li['loaded_at']}, {li['rows']} rows from "
                           f"{', '.join(files)}")
            else:
                out.append("  last ingest: none")
            if b.pending_files:
                out.append("  files to load: " + ", ".join(f"{p} ({s})"
                                                          for p, s in b.pending_files))
            if b.stale:
                out.append("  stale: " + ", ".join(f"{p or 'trends'} ({r})" for p, r in b.stale))
            elif b.periods and not b.pending_files:
                out.append("  stale: none (up to date)")
        if self.settings and self.settings["changes"]:
            st = self.settings
            out.append(f"settings: differ from run {st['run_id']} ({st['command']}), which "
                       "computed the stored results — " + "; ".join(
                           c["text"] for c in st["changes"]))
            out.append("  stale periods above are judged with the settings now; give the old "
                       "values (flags, or [build] in blocwatch.toml) to compare with the store")
        if self.last_run:
            r = self.last_run
            out.append(f"last run: {r['run_id']} {r['command']} started {r['started']}, "
                       f"{_outcome(r)}, {len(r['recomputed'])} period(s) recomputed")
        else:
            out.append("last run: none")
        if self.interrupted_runs:
            out.append("interrupted runs: " + ", ".join(map(str, self.interrupted_runs))
                       + " (killed before they finished; their finished periods are kept)")
        return out


def _outcome(run: dict) -> str:
    if run["finished"] is None:
        return run["status"]
    return f"finished {run['finished']}, {run['status']}"


def status(store_path: str | Path, *, options: BuildOptions | None = None,
           config: Config | None = None, body: str | None = None,
           wait: float | None = None, sources: dict[str, str] | None = None) -> StatusReport:
    """Gather the status of ``store_path`` under the given build options and config.

    ``wait``: seconds to wait for a run holding the store, then raise
    :class:`~blocwatch.pipeline.errors.LockHeldError` (the CLI's ``--wait``); None: do not
    wait, and report the holder in :attr:`StatusReport.lock` instead. ``sources``: where
    each build option's value came from (click parameter name -> text), for
    :attr:`StatusReport.settings`.
    """
    opts = options or BuildOptions()
    cfg = config or read_config()
    report = StatusReport(str(store_path), Path(store_path).exists(), opts.period)
    if wait is not None and report.exists:
        wait_for_store(store_path, wait)
    report.lock = lock_holder(store_path)
    if report.lock is not None:
        return report
    if not report.exists:
        report.bodies = _bodies(None, cfg, opts, body)
        return report
    with reading_store(store_path, wait or 0.0) as store:
        report.bodies = _bodies(store, cfg, opts, body)
        rows = runs_frame(store)
    report.settings = _settings(rows, opts, sources, body)
    if not rows.empty:
        runs = rows.to_dict("records")
        # The lock is free, so no run is in progress: a 'running' row is one that was killed.
        for r in runs:
            if r["status"] == "running":
                r["status"] = "interrupted"
        report.interrupted_runs = [int(r["run_id"]) for r in runs if r["status"] == "interrupted"]
        last = runs[-1]
        # NULL until a run finishes: a killed run recomputed nothing it recorded
        done = last["recomputed"]
        last["recomputed"] = json.loads(done) if isinstance(done, str) and done else []
        report.last_run = {k: (None if _missing(v) else v) for k, v in last.items()}
    return report


def _settings(runs, opts: BuildOptions, sources: dict | None, body: str | None) -> dict | None:
    """The newest finished build (of ``body``, or of every body) with the period spec judged
    (else the newest of any spec), and how its settings differ from ``opts``."""
    done = runs[(runs["status"] == "ok") & runs["command"].isin(BUILD_COMMANDS)] \
        if not runs.empty else runs
    builds = [(run, json.loads(run["params"])) for _, run in done.iloc[::-1].iterrows()]
    builds = [(run, p) for run, p in builds if body is None or p.get("body") in (None, body)]
    same = [(run, p) for run, p in builds if p.get("period") == opts.period]
    for run, params in (same or builds)[:1]:
        changes = settings_changes(params, opts, sources)
        return {"run_id": int(run["run_id"]), "command": run["command"],
                "changes": [{**asdict(c), "text": c.text()} for c in changes]}
    return None


def _missing(value) -> bool:
    try:
        return value != value or value is None  # NaN / NaT / None
    except (TypeError, ValueError):
        return False


def _bodies(store: Store | None, cfg: Config, opts: BuildOptions,
            body: str | None) -> list[BodyStatus]:
    names = list(cfg.bodies)
    if store is not None:
        names += stored_bodies(store)
    names = list(dict.fromkeys(names))
    if body is not None and body not in names:
        near = close_matches(body, names)
        hint = f"did you mean {near[0]!r}? " if near else ""
        raise UsageError(f"body {body!r}", "is neither in the store nor in blocwatch.toml",
                         f"{hint}known bodies: {', '.join(map(repr, names)) or 'none yet'}")
    names = [n for n in names if body is None or n == body]
    out = {n: BodyStatus(n) for n in names}
    for src in scan_sources(store, cfg, body):
        if src.state != "loaded" and src.body in out:
            out[src.body].pending_files.append([str(src.path), src.state])
    if store is None:
        return list(out.values())
    for name, bs in out.items():
        bs.members, n, first, last = body_counts(store, name)
        bs.ballots, bs.first_ballot, bs.last_ballot = n, first and str(first), \
            last and str(last)
        bs.periods = stored_periods(store, name, opts.period)
        bs.other_specs = {s: n for s, n in stored_specs(store, [name]).items()
                          if s != opts.period}
        ingest = last_load(store, name)
        if not ingest.empty:
            bs.last_ingest = {"files": ingest["file"].tolist(),
                              "rows": int(ingest["rows"].sum()),
                              "loaded_at": str(ingest["loaded_at"].iloc[0])}
    for s in stale_periods(store, opts, body):
        if s.body in out:
            out[s.body].stale.append([s.period, s.reason])
    return list(out.values())
