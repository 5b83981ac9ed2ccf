"""``blocwatch build``: every body × period computed and written, one period per transaction."""

from __future__ import annotations

import json
import time
from collections.abc import Callable, Iterable
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from blocwatch.metrics.trends import trend_summary
from blocwatch.pipeline.compute import BuildOptions, PeriodResult, compute_period, fingerprint
from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.matrices import ballot_date_range, load_votes
from blocwatch.pipeline.periods import Period, make_periods
from blocwatch.pipeline.runs import finish_run, start_run, tool_version
from blocwatch.pipeline.store import Store

RESULT_TABLES = ("period_metrics", "member_metrics", "group_agreement")


@dataclass
class BuildReport:
    run_id: int
    periods: list[tuple[str, str]] = field(default_factory=list)  # (body, period) computed
    skipped: list[tuple[str, str]] = field(default_factory=list)  # unchanged, not recomputed
    seconds: dict[tuple[str, str], float] = field(default_factory=dict)


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
        cps = [str(series["period"].iloc[i]) for i in summary.get("change_points", [])
               if 0 <= i < len(series)]
        rows.append({"run_id": run_id, "body": body, "metric": metric,
                     **{k: summary.get(k) for k in ("n_periods", "mk_s", "mk_z", "mk_p", "tau",
                                                    "slope", "slope_low", "slope_high")},
                     "change_points": json.dumps(cps), "note": summary.get("note") or None})
    with store.transaction():
        store.execute("DELETE FROM trends WHERE body = ?", [body])
        store.insert_frame("trends", pd.DataFrame(rows))


def build(store: Store, *, body: str | None = None, options: BuildOptions | None = None,
          only_changed: bool = False, progress: Callable[[str], None] | None = None,
          command: str = "build") -> BuildReport:
    """Compute every period of every (or one) body and store the results.

    With ``only_changed`` a period whose fingerprint equals the stored one is skipped.
    """
    opts = options or BuildOptions()
    version = tool_version()
    targets = bodies(store, body)
    run_id = start_run(store, command, {"body": body, **opts.params()})
    report = BuildReport(run_id)
    try:
        for b in targets:
            periods = body_periods(store, b, opts.period)
            stored = dict(store.rows("SELECT period, fingerprint FROM periods WHERE body = ?",
                                     [b]))
            for period in periods:
                t0 = time.perf_counter()
                vm = load_votes(store, b, period)
                if vm.votes.size == 0:
                    continue
                if only_changed and stored.get(period.name) == fingerprint(vm, opts, version):
                    report.skipped.append((b, period.name))
                    continue
                res = compute_period(vm, opts, version)
                write_period(store, run_id, res)
                report.periods.append((b, period.name))
                report.seconds[(b, period.name)] = time.perf_counter() - t0
                if progress:
                    progress(f"{b} {period.name}")
            drop_stale_periods(store, b, [p.name for p in periods])
            write_trends(store, run_id, b)
    except BaseException:
        finish_run(store, run_id, "failed", report.periods)
        raise
    finish_run(store, run_id, "ok", report.periods)
    return report
