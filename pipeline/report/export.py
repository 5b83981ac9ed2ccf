"""The export tables of ``blocwatch export``: fixed columns read from the store, written as CSV,
Parquet or JSON lines with text cells made safe for spreadsheets.

What a report is drawn from (several tables, the pictured periods, provenance) is assembled in
:mod:`blocwatch.pipeline.report.frames`, which reads the store through these tables.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pandas as pd

from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.options import EXPORT_FORMATS, EXPORT_TABLES
from blocwatch.pipeline.safety import neutralise_frame
from blocwatch.pipeline.store.bodies import require_body, require_results
from blocwatch.pipeline.store.database import OPEN_FROM, Store

# Column order of each export, a contract with users' scripts: add columns at the end, never
# rename (README, "Commands").
EXPORT_QUERIES = {
    # subset: 'all' (every ballot), 'topic:<name>' (one topic's ballots; n_ballots counts
    # them) or 'agenda-standardised' (blocwatch.pipeline.build.topics).
    "metrics": """
        SELECT pm.body, pm.period, p.period_start, p.period_end, pm.metric, pm.value, pm.low,
               pm.high, p.n_members, coalesce(pm.n_ballots, p.n_ballots) AS n_ballots, pm.note,
               pm.null_mean, pm.null_z,
               pm.null_p, p.n_dropped, pm.run_id, pm.subset
        FROM (SELECT run_id, body, period, metric, value, low, high, null_mean, null_z, null_p,
                     note, 'all' AS subset, NULL AS n_ballots FROM period_metrics
              UNION ALL
              SELECT run_id, body, period, metric, value, low, high, NULL, NULL, NULL, note,
                     subset, n_ballots FROM subset_metrics) pm
        JOIN periods p USING (body, period)
        WHERE (? IS NULL OR pm.body = ?)
        ORDER BY pm.body, p.period_start, pm.subset <> 'all', pm.subset, pm.metric""",
    # Trajectory columns (the last four): the member's previous period with a row for the
    # same metric, the change of value since then, the group then, and — when the group
    # differs — the date the member's spell in the present group began (the switch date).
    "members": f"""
        WITH t AS (
            SELECT mm.body, mm.period, p.period_start, p.period_end, mm.member_id,
                   coalesce(m.name, mm.member_id) AS name, mm.group_name, mm.metric, mm.value,
                   mm.note, mm.run_id,
                   lag(mm.period) OVER w AS previous_period,
                   mm.value - lag(mm.value) OVER w AS change,
                   lag(mm.group_name) OVER w AS group_before
            FROM member_metrics mm JOIN periods p USING (body, period)
            LEFT JOIN members m ON m.body = mm.body AND m.member_id = mm.member_id
            WHERE (? IS NULL OR mm.body = ?)
            WINDOW w AS (PARTITION BY mm.body, mm.member_id, mm.metric
                         ORDER BY p.period_start, p.period_end, mm.period))
        SELECT t.*,
               CASE WHEN t.group_before <> t.group_name THEN
                   (SELECT max(s.valid_from) FROM memberships s
                    WHERE s.body = t.body AND s.member_id = t.member_id
                      AND s.group_name = t.group_name AND s.valid_from <= t.period_end
                      AND s.valid_from > DATE '{OPEN_FROM}')  -- an open start is no date
               END AS switched_on
        FROM t ORDER BY t.body, t.period_start, t.member_id, t.metric""",
    "groups": """
        SELECT g.body, g.period, p.period_start, p.period_end, g.group_a, g.group_b,
               g.agreement, g.n_pairs, g.alpha, g.run_id, g.low, g.high
        FROM group_agreement g JOIN periods p USING (body, period)
        WHERE (? IS NULL OR g.body = ?)
        ORDER BY g.body, p.period_start, g.group_a, g.group_b""",
    # subset as in metrics, plus 'pair:<A>|<B>' (metric pair_agreement) for pairs of groups.
    "trends": """
        SELECT body, metric, n_periods, mk_s, mk_z, mk_p, tau, slope, slope_low, slope_high,
               change_points, note, run_id, subset
        FROM (SELECT *, 'all' AS subset FROM trends
              UNION ALL BY NAME SELECT * FROM subset_trends)
        WHERE (? IS NULL OR body = ?) ORDER BY body, subset <> 'all', subset, metric""",
}


def export_frame(store: Store, table: str, *, body: str | None = None) -> pd.DataFrame:
    """One export table as a data frame (all bodies unless ``body``)."""
    if table not in EXPORT_QUERIES:
        raise UsageError(f"table {table!r}", "is not exportable",
                         f"use one of: {', '.join(EXPORT_TABLES)}")
    require_results(store, require_body(store, body))  # never an empty table without a word
    return store.df(EXPORT_QUERIES[table], [body, body])


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


def network_edges(store: Store, body: str, periods: list[str], *, options) -> pd.DataFrame:
    """Agreement of every member pair with a value in the named periods (for network pictures)."""
    from blocwatch.pipeline.build.compute import period_input
    from blocwatch.pipeline.build.filters import filter_period
    from blocwatch.pipeline.build.matrices import load_votes
    from blocwatch.pipeline.options import Period

    rows = store.rows("SELECT period, period_start, period_end FROM periods WHERE body = ?",
                      [body])
    known = {r[0]: Period(r[1], r[2], r[0]) for r in rows}
    frames = []
    for name in periods:
        if name not in known:
            continue
        vm = filter_period(load_votes(store, body, known[name]), options.agreement)
        if vm.votes.shape[0] < 2:
            continue
        inp = period_input(vm.votes, vm.labels, options, options.seed, scales=vm.scales)
        i, j = np.triu_indices(inp.n, k=1)
        a = inp.agreement[i, j]
        ok = ~np.isnan(a)
        frames.append(pd.DataFrame({"body": body, "period": name,
                                    "member_a": vm.member_ids[i[ok]],
                                    "member_b": vm.member_ids[j[ok]], "agreement": a[ok]}))
    if not frames:
        return pd.DataFrame(columns=["body", "period", "member_a", "member_b", "agreement"])
    return pd.concat(frames, ignore_index=True)
