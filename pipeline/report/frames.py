"""What a report is drawn from: the stored results of the chosen bodies (through the export
tables of :mod:`blocwatch.pipeline.report.export`), the network pairs and the metric list the
build stored, and provenance, as keyword arguments for ``ReportTables``. The dashboards never
open the store, and nothing here recomputes a number: a picture shows what the build computed.
"""

from __future__ import annotations

import hashlib
import json

from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.options import DEFAULT_PERIOD, EDGE_BUDGET, BuildOptions
from blocwatch.pipeline.report.export import export_frame
from blocwatch.pipeline.store.bodies import require_body, require_periods, require_results
from blocwatch.pipeline.store.database import Store
from blocwatch.pipeline.store.results import (
    last_build_run,
    period_edges,
    period_fingerprints,
    read_measures,
)
from blocwatch.pipeline.store.runs import tool_version
from blocwatch.pipeline.store.specs import choose_spec


def last_build_options(store: Store, spec: str | None = None) -> tuple[BuildOptions, dict]:
    """The options of the newest finished build (of period spec ``spec``, if given) for the
    report's provenance, and its run row."""
    run = last_build_run(store, spec)
    if run is None:
        raise UsageError("report", "the store holds no finished build",
                         "run 'blocwatch build' first")
    return BuildOptions.from_params(run["params"]), run


def report_frames(store: Store, *, body: str | None = None,
                  periods: list[str] | None = None, spec: str | None = None) -> dict:
    """Every frame and the provenance a report needs, as keyword arguments for ReportTables:
    the results of the period spec ``spec`` (other specs' results are not drawn; without
    it, the default spec if stored, else the only one).

    ``measures`` is the methods reference of the metrics the build computed, as it stored it.
    ``edges`` holds the pairs the build stored for each period (the graph rule's edge set,
    strongest first, at most ``EDGE_BUDGET``, which the provenance carries for the caption;
    the period's count of pairs with a value in ``n_pairs``); which periods are drawn is the
    dashboards' choice (``periods``, else first, last and change points).
    """
    targets = require_body(store, body)
    require_results(store, targets)
    if spec is None:
        spec = choose_spec(store, targets, wanted=None, default=DEFAULT_PERIOD,
                           default_why="the default period spec").spec
    if periods:
        require_periods(store, targets, periods, spec)
    opts, run = last_build_options(store, spec)
    metrics = export_frame(store, "metrics", spec=spec, body=body)
    members = export_frame(store, "members", spec=spec, body=body)
    groups = export_frame(store, "groups", spec=spec, body=body)
    trends = export_frame(store, "trends", spec=spec, body=body)
    edges = period_edges(store, body, periods, spec=spec)
    measures = read_measures(store)
    data_fp = hashlib.sha256(json.dumps(period_fingerprints(store, spec), default=str).encode()
                             ).hexdigest()[:16]
    provenance = {"data_fingerprint": data_fp, "tool_version": tool_version(),
                  "run_id": int(run["run_id"]), "run_time": str(run["finished"]),
                  "parameters": opts.params(), "edge_budget": EDGE_BUDGET}
    return {"metrics": metrics, "members": members, "group_agreement": groups,
            "trends": trends, "edges": edges, "measures": measures, "provenance": provenance}
