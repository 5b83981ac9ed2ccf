"""``blocwatch build``: every body × period computed and written, one period per transaction."""

from __future__ import annotations

import contextlib
import json
from collections.abc import Callable, Collection, Iterator
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from blocwatch.metrics.change.trends import trend_summary
from blocwatch.pipeline.build.compute import PeriodResult
from blocwatch.pipeline.build.executors import Executor, ExecutorSpec, PeriodJob, make_executor
from blocwatch.pipeline.build.planner import BodyPlan, body_options, plan_body
from blocwatch.pipeline.build.subset_trends import subset_trend_rows
from blocwatch.pipeline.options import BuildOptions
from blocwatch.pipeline.report.metric_list import metric_list
from blocwatch.pipeline.store.bodies import require_body
from blocwatch.pipeline.store.database import Store
from blocwatch.pipeline.store.results import (
    drop_periods_except,
    metric_series,
    replace_trends,
    stored_specs,
    write_measures,
    write_period,
)
from blocwatch.pipeline.store.runs import finish_run, start_run, tool_version


@dataclass
class BuildReport:
    run_id: int
    periods: list[tuple[str, str]] = field(default_factory=list)  # (body, period) computed
    skipped: list[tuple[str, str]] = field(default_factory=list)  # unchanged, not recomputed
    seconds: dict[tuple[str, str], float] = field(default_factory=dict)
    # stored periods the period spec no longer produces, whose results this run dropped
    removed: list[tuple[str, str]] = field(default_factory=list)
    # the other period specs whose results the store keeps beside this run's (spec -> periods)
    other_specs: dict[str, int] = field(default_factory=dict)


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
        write_measures(store, report.run_id, metric_list())
        finish_run(store, report.run_id, "ok", report.periods)
    finally:
        if pool is not executor:
            pool.close()


def store_result(store: Store, report: BuildReport, res: PeriodResult, seconds: float,
                 progress: Callable[[str], None] | None, spec: str) -> None:
    """Write one computed period (cut by the period spec ``spec``) and note it in the report
    (the single writer's step)."""
    write_period(store, report.run_id, res, spec)
    report.periods.append((res.body, res.period_name))
    report.seconds[(res.body, res.period_name)] = seconds
    if progress:
        progress(f"{res.body} {res.period_name}")




def write_trends(store: Store, run_id: int, body: str, spec: str) -> None:
    """Mann–Kendall, Theil–Sen and change points for each metric series of a body, cut by
    the period spec ``spec``."""
    frame = metric_series(store, body, spec)
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
    replace_trends(store, body, spec, pd.DataFrame(rows),
                   subset_trend_rows(store, run_id, body, spec))


def _to_compute(store: Store, plan: BodyPlan, opts: BuildOptions, version: str,
                only_changed: bool, only: set[str] | None, report: BuildReport) -> Iterator:
    """The vote matrices to compute, read when the executor asks for them; with
    ``only_changed`` the current ones are passed over and noted in ``report.skipped``, and
    periods outside ``only`` are kept as stored (noted as skipped when they have results)."""
    if only is not None:
        report.skipped += [(plan.body, p.name) for p in plan.periods
                           if p.name not in only and p.name in plan.stored]
    for vm in plan.matrices(store, only):
        if only_changed and plan.state(vm, opts, version) is None:
            report.skipped.append((plan.body, vm.period.name))
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
    targets = require_body(store, body)
    with recorded_run(store, command, {"body": body, **opts.params()}, executor,
                      inputs) as (report, pool):
        for b in targets:
            plan = plan_body(store, b, opts.period)
            body_opts = body_options(store, b, opts)  # with the body's reference topic mix
            names = None if only is None else {p for bb, p in only if bb == b}
            # Matrices are read one at a time as the executor asks for them (streamed);
            # results come back in period order and are written here, the single writer.
            jobs = _to_compute(store, plan, body_opts, version, only_changed, names, report)
            for res, seconds in pool.map(PeriodJob(body_opts, version), jobs):
                store_result(store, report, res, seconds, progress, opts.period)
            report.removed += [(b, p) for p in plan.removed]  # said by the CLI, not silent
            drop_periods_except(store, b, opts.period, [p.name for p in plan.periods])
            write_trends(store, report.run_id, b, opts.period)
        report.other_specs = {s: n for s, n in stored_specs(store, targets).items()
                              if s != opts.period}  # kept beside this run's: said by the CLI
    return report
