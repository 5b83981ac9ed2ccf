"""``blocwatch build``: every body × period computed and written, one period per transaction."""

from __future__ import annotations

import contextlib
import json
from collections.abc import Callable, Collection, Iterable, Iterator
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from blocwatch.metrics.trends import trend_summary
from blocwatch.pipeline.build.compute import PeriodResult, fingerprint
from blocwatch.pipeline.options import BuildOptions
from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.build.executors import Executor, ExecutorSpec, PeriodJob, make_executor
from blocwatch.pipeline.build.matrices import ballot_date_range, load_votes
from blocwatch.pipeline.build.periods import make_periods
from blocwatch.pipeline.options import Period
from blocwatch.pipeline.store.runs import finish_run, start_run, tool_version
from blocwatch.pipeline.store.database import Store

RESULT_TABLES = ("period_metrics", "member_metrics", "group_agreement")


@dataclass
class BuildReport:
    run_id: int
    periods: list[tuple[str, str]] = field(default_factory=list)  # (body, period) computed
    skipped: list[tuple[str, str]] = field(default_factory=list)  # unchanged, not recomputed
    seconds: dict[tuple[str, str], float] = field(default_factory=dict)


@contextlib.contextmanager
def recorded_run(store: Store, command: str, params: dict, executor=None,
                 inputs: dict | None = None) -> Iterator[tuple[BuildReport, Executor]]:
    """A ``runs`` row and an executor for one build: the run is marked ``ok`` or ``failed``
    when the block ends, and an executor made here (not one passed in open) is closed."""
    pool = executor if isinstance(executor, Executor) else make_executor(executor)
    report = BuildReport(start_run(store, command, params, inputs))
    try:
        yield report, pool
    except BaseException:
        finish_run(store, report.run_id, "failed", report.periods)
        raise
    else:
        finish_run(store, report.run_id, "ok", report.periods)
    finally:
        if pool is not executor:
            pool.close()


def store_result(store: Store, report: BuildReport, res: PeriodResult, seconds: float,
                 progress: Callable[[str], None] | None) -> None:
    """Write one computed period and note it in the report (the single writer's step)."""
    write_period(store, report.run_id, res)
    report.periods.append((res.body, res.period_name))
    report.seconds[(res.body, res.period_name)] = seconds
    if progress:
        progress(f"{res.body} {res.period_name}")


def bodies(store: Store, body: str | None = None) -> list[str]:
    """The named body (checked) or every body in the store."""
    known = [r[0] for r in store.rows("SELECT body FROM bodies ORDER BY body")]
    if body is None:
        if not known:
            raise UsageError("build", "the store holds no ballots",
                             "load some with 'blocwatch ingest' first")
        return known
    if body not in known:
        raise UsageError(f"body {body!r}", "is not in the store",
                         f"use one of: {', '.join(known) or '(none loaded)'}")
    return [body]


def body_periods(store: Store, body: str, spec: str) -> list[Period]:
    span = ballot_date_range(store, body)
    return [] if span is None else make_periods(spec, span[0], span[1])


def write_period(store: Store, run_id: int, res: PeriodResult) -> None:
    """Swap one period's results in: old rows out, new rows in, in one transaction."""
    key = [res.body, res.period_name]
    with store.transaction():
        for table in RESULT_TABLES:
            store.execute(f"DELETE FROM {table} WHERE body = ? AND period = ?", key)
        store.execute("DELETE FROM periods WHERE body = ? AND period = ?", key)
        store.execute("INSERT INTO periods VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)",
                      [res.body, res.period_name, res.period_start, res.period_end,
                       res.fingerprint, run_id, res.n_members, res.n_ballots, res.n_dropped])
        for table, frame in (("period_metrics", res.metrics), ("member_metrics", res.members),
                             ("group_agreement", res.groups)):
            if frame.empty:
                continue
            frame = frame.assign(run_id=run_id, body=res.body, period=res.period_name)
            store.insert_frame(table, frame)


def drop_stale_periods(store: Store, body: str, keep: Iterable[str]) -> None:
    """Remove results of periods the current spec no longer produces."""
    keep = list(keep)
    store.register("_bw_keep", pd.DataFrame({"period": pd.Series(keep, dtype=object)}))
    try:
        with store.transaction():
            for table in (*RESULT_TABLES, "periods"):
                store.execute(f"DELETE FROM {table} WHERE body = ? AND period NOT IN "
                              "(SELECT period FROM _bw_keep)", [body])
    finally:
        store.unregister("_bw_keep")


def write_trends(store: Store, run_id: int, body: str) -> None:
    """Mann–Kendall, Theil–Sen and change points for each metric series of a body."""
    frame = store.df(
        """SELECT pm.metric, p.period, p.period_start, pm.value FROM period_metrics pm
           JOIN periods p USING (body, period) WHERE pm.body = ? ORDER BY p.period_start""",
        [body])
    rows = []
    for metric, series in frame.groupby("metric", sort=False):
        series = series.dropna(subset=["value"])
        y = series["value"].to_numpy(dtype=float)
        x = np.arange(len(y), dtype=float)
        summary = trend_summary(y, x)
        # change_index: positions in the NaN-free series (change_points are x values)
        cps = [str(series["period"].iloc[int(i)]) for i in summary.get("change_index", [])
               if 0 <= int(i) < len(series)]
        rows.append({"run_id": run_id, "body": body, "metric": metric,
                     **{k: summary.get(k) for k in ("n_periods", "mk_s", "mk_z", "mk_p", "tau",
                                                    "slope", "slope_low", "slope_high")},
                     "change_points": json.dumps(cps), "note": summary.get("note") or None})
    with store.transaction():
        store.execute("DELETE FROM trends WHERE body = ?", [body])
        store.insert_frame("trends", pd.DataFrame(rows))


def _period_matrices(store: Store, body: str, periods: list[Period], opts: BuildOptions,
                     version: str, stored: dict | None, report: BuildReport) -> Iterator:
    """Each period's vote matrix, read when asked for; empty and (with ``stored``) unchanged
    periods are passed over, the unchanged ones noted in ``report.skipped``."""
    for period in periods:
        vm = load_votes(store, body, period)
        if vm.votes.size == 0:
            continue
        if stored is not None and stored.get(period.name) == fingerprint(vm, opts, version):
            report.skipped.append((body, period.name))
            continue
        yield vm


def build(store: Store, *, body: str | None = None, options: BuildOptions | None = None,
          only_changed: bool = False, progress: Callable[[str], None] | None = None,
          command: str = "build", executor: ExecutorSpec | Executor | None = None,
          inputs: dict | None = None, only: Collection[tuple[str, str]] | None = None
          ) -> BuildReport:
    """Compute every period of every (or one) body and store the results.

    With ``only_changed`` a period whose fingerprint equals the stored one is skipped.
    ``executor`` says where periods are computed (:mod:`blocwatch.pipeline.build.executors`;
    default: serially in this process); an open :class:`Executor` is used and left open.
    ``inputs`` (e.g. the files a rebuild loaded, with their sha256) goes into ``runs.inputs``.
    ``only`` limits the work to these (body, period) pairs (a rebuild's stale list, so the
    other periods' votes are not read again); the rest are kept and counted as skipped.
    """
    opts = options or BuildOptions()
    version = tool_version()
    targets = bodies(store, body)
    with recorded_run(store, command, {"body": body, **opts.params()}, executor,
                      inputs) as (report, pool):
        for b in targets:
            periods = body_periods(store, b, opts.period)
            stored = dict(store.rows("SELECT period, fingerprint FROM periods WHERE body = ?",
                                     [b]))
            # Matrices are read one at a time as the executor asks for them (streamed);
            # results come back in period order and are written here, the single writer.
            todo = periods if only is None else [p for p in periods if (b, p.name) in only]
            report.skipped += [(b, p.name) for p in periods if p not in todo and p.name in stored]
            jobs = _period_matrices(store, b, todo, opts, version,
                                    stored if only_changed else None, report)
            for res, seconds in pool.map(PeriodJob(opts, version), jobs):
                store_result(store, report, res, seconds, progress)
            drop_stale_periods(store, b, [p.name for p in periods])
            write_trends(store, report.run_id, b)
    return report
