"""What a report is drawn from: the stored results of the chosen bodies and periods (through the
export tables of :mod:`blocwatch.pipeline.report.export`), the periods worth a network picture,
the metric list and provenance, as keyword arguments for ``ReportTables``. The dashboards never
open the store; this module is the only way results reach them.
"""

from __future__ import annotations

import hashlib
import json

import pandas as pd

from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.options import BuildOptions
from blocwatch.pipeline.report.export import export_frame, network_edges
from blocwatch.pipeline.report.metric_list import metric_list
from blocwatch.pipeline.store.bodies import require_body, require_periods, require_results
from blocwatch.pipeline.store.database import Store
from blocwatch.pipeline.store.runs import tool_version


def last_build_options(store: Store) -> tuple[BuildOptions, dict]:
    """The options of the newest finished build (to redraw its graphs) and its run row."""
    from blocwatch.pipeline.options import AgreementOptions

    rows = store.df("SELECT * FROM runs WHERE status = 'ok' AND command IN ('build', 'rebuild', "
                    "'demo') ORDER BY run_id DESC LIMIT 1")
    if rows.empty:
        raise UsageError("report", "the store holds no finished build",
                         "run 'blocwatch build' first")
    run = rows.iloc[0].to_dict()
    params = json.loads(run["params"])
    params.pop("body", None)
    agreement = AgreementOptions(**params.pop("agreement", {}))
    known = set(BuildOptions.__dataclass_fields__)
    opts = BuildOptions(agreement=agreement, **{k: v for k, v in params.items() if k in known})
    return opts, run


def change_periods(trends, body: str, metric: str = "group_modularity") -> list[str]:
    row = trends[(trends["body"] == body) & (trends["metric"] == metric)]
    if row.empty or not row.iloc[0]["change_points"]:
        return []
    return list(json.loads(row.iloc[0]["change_points"]))


def network_periods(metrics, trends, body: str) -> list[str]:
    """Default periods for network pictures: the first, the last and each change point."""
    ordered = (metrics[metrics["body"] == body].sort_values("period_start")["period"]
               .drop_duplicates().tolist())
    if not ordered:
        return []
    chosen = [ordered[0], *change_periods(trends, body), ordered[-1]]
    return list(dict.fromkeys(p for p in chosen if p in ordered))


def report_frames(store: Store, *, body: str | None = None,
                  periods: list[str] | None = None) -> dict:
    """Every frame and the provenance a report needs, as keyword arguments for ReportTables."""
    targets = require_body(store, body)
    require_results(store, targets)
    if periods:
        require_periods(store, targets, periods)
    opts, run = last_build_options(store)
    metrics = export_frame(store, "metrics", body=body)
    members = export_frame(store, "members", body=body)
    groups = export_frame(store, "groups", body=body)
    trends = export_frame(store, "trends", body=body)
    edges = [network_edges(store, b, periods or network_periods(metrics, trends, b),
                           options=opts) for b in targets]
    fingerprints = store.rows("SELECT body, period, fingerprint FROM periods ORDER BY ALL")
    data_fp = hashlib.sha256(json.dumps(fingerprints, default=str).encode()).hexdigest()[:16]
    provenance = {"data_fingerprint": data_fp, "tool_version": tool_version(),
                  "run_id": int(run["run_id"]), "run_time": str(run["finished"]),
                  "parameters": opts.params()}
    return {"metrics": metrics, "members": members, "group_agreement": groups,
            "trends": trends, "edges": pd.concat(edges, ignore_index=True),
            "measures": metric_list(), "provenance": provenance}
