"""What a build writes and a report reads: periods, their result rows, pairs and trends.

The build and the report go through these functions; the SQL stays in the store package.
Every result is keyed by its period spec (``spec``, schema 4): series cut differently
(``year``, ``rolling:12m:6m``) live side by side, and each read and write names one.
"""

from __future__ import annotations

import json
from collections.abc import Iterable

import pandas as pd

from blocwatch.pipeline.store.database import Store
from blocwatch.pipeline.store.schema import OPEN_FROM

# Result tables keyed by (body, period), swapped together with the period's row.
RESULT_TABLES = ("period_metrics", "member_metrics", "group_agreement", "subset_metrics",
                 "period_edges")
# The metric list (blocwatch.pipeline.report.metric_list.COLUMNS) as the build stored it.
MEASURE_FRAME = ["metric", "family", "label", "direction", "description", "formula",
                 "reference", "checks"]
BUILD_COMMANDS = ("build", "rebuild", "demo")  # runs that write results

# Column order of each export, a contract with users' scripts: add columns at the end, never
# rename (README, "Commands").
EXPORT_QUERIES = {
    # subset: 'all' (every ballot), 'topic:<name>' (one topic's ballots; n_ballots counts
    # them) or 'agenda-standardised' (blocwatch.pipeline.build.topics).
    "metrics": """
        SELECT pm.body, pm.period, p.period_start, p.period_end, pm.metric, pm.value, pm.low,
               pm.high, p.n_members, coalesce(pm.n_ballots, p.n_ballots) AS n_ballots, pm.note,
               pm.null_mean, pm.null_z,
               pm.null_p, p.n_dropped, pm.run_id, pm.subset, pm.spec AS period_spec
        FROM (SELECT run_id, body, spec, period, metric, value, low, high, null_mean, null_z,
                     null_p, note, 'all' AS subset, NULL AS n_ballots FROM period_metrics
              UNION ALL
              SELECT run_id, body, spec, period, metric, value, low, high, NULL, NULL, NULL,
                     note, subset, n_ballots FROM subset_metrics) pm
        JOIN periods p USING (body, spec, period)
        WHERE (? IS NULL OR pm.body = ?) AND pm.spec = ?
        ORDER BY pm.body, p.period_start, pm.subset <> 'all', pm.subset, pm.metric""",
    # Trajectory columns (after run_id): the member's previous period with a row for the
    # same metric, the change of value since then, the group then, and — when the group
    # differs — the date the member's spell in the present group began (the switch date).
    "members": f"""
        WITH t AS (
            SELECT mm.body, mm.period, p.period_start, p.period_end, mm.member_id,
                   coalesce(m.name, mm.member_id) AS name, mm.group_name, mm.metric, mm.value,
                   mm.note, mm.run_id,
                   lag(mm.period) OVER w AS previous_period,
                   mm.value - lag(mm.value) OVER w AS change,
                   lag(mm.group_name) OVER w AS group_before, mm.spec
            FROM member_metrics mm JOIN periods p USING (body, spec, period)
            LEFT JOIN members m ON m.body = mm.body AND m.member_id = mm.member_id
            WHERE (? IS NULL OR mm.body = ?) AND mm.spec = ?
            WINDOW w AS (PARTITION BY mm.body, mm.member_id, mm.metric
                         ORDER BY p.period_start, p.period_end, mm.period))
        SELECT t.* EXCLUDE (spec),
               CASE WHEN t.group_before <> t.group_name THEN
                   (SELECT max(s.valid_from) FROM memberships s
                    WHERE s.body = t.body AND s.member_id = t.member_id
                      AND s.group_name = t.group_name AND s.valid_from <= t.period_end
                      AND s.valid_from > DATE '{OPEN_FROM}')  -- an open start is no date
               END AS switched_on, t.spec AS period_spec
        FROM t ORDER BY t.body, t.period_start, t.member_id, t.metric""",
    "groups": """
        SELECT g.body, g.period, p.period_start, p.period_end, g.group_a, g.group_b,
               g.agreement, g.n_pairs, g.alpha, g.run_id, g.low, g.high,
               g.spec AS period_spec
        FROM group_agreement g JOIN periods p USING (body, spec, period)
        WHERE (? IS NULL OR g.body = ?) AND g.spec = ?
        ORDER BY g.body, p.period_start, g.group_a, g.group_b""",
    # subset as in metrics, plus 'pair:<A>|<B>' (metric pair_agreement) for pairs of groups.
    "trends": """
        SELECT body, metric, n_periods, mk_s, mk_z, mk_p, tau, slope, slope_low, slope_high,
               change_points, note, run_id, subset, spec AS period_spec
        FROM (SELECT *, 'all' AS subset FROM trends
              UNION ALL BY NAME SELECT * FROM subset_trends)
        WHERE (? IS NULL OR body = ?) AND spec = ?
        ORDER BY body, subset <> 'all', subset, metric""",
}


# -- reads ---------------------------------------------------------------------------------
def stored_fingerprints(store: Store, body: str, spec: str) -> dict[str, str]:
    """period -> fingerprint of the stored results of ``body`` under ``spec``."""
    return dict(store.rows("SELECT period, fingerprint FROM periods WHERE body = ? AND "
                           "spec = ?", [body, spec]))


def result_runs(store: Store, body: str, spec: str) -> tuple[int | None, int | None]:
    """(newest run among ``body``'s periods, oldest run among its trends) under ``spec``."""
    return tuple(store.rows("""SELECT (SELECT max(run_id) FROM periods WHERE body = ? AND
                                       spec = ?),
                                      (SELECT min(run_id) FROM trends WHERE body = ? AND
                                       spec = ?)""", [body, spec, body, spec])[0])


def newest_results_run(store: Store, spec: str) -> int | None:
    """The newest run whose results of ``spec`` the store holds (periods and trends)."""
    return store.scalar("SELECT max(run_id) FROM (SELECT run_id FROM periods WHERE spec = ? "
                        "UNION ALL SELECT run_id FROM trends WHERE spec = ?)", [spec, spec])


def stored_specs(store: Store, bodies: list[str] | None = None) -> dict[str, int]:
    """Each period spec with stored results (of ``bodies``, or of all) -> its period count."""
    return dict(store.rows("SELECT spec, count(*) FROM periods WHERE ? IS NULL OR "
                           "list_contains(?, body) GROUP BY spec ORDER BY min(run_id)",
                           [bodies, bodies]))


def stored_periods(store: Store, body: str, spec: str) -> list[str]:
    """The names of ``body``'s stored periods under ``spec``, in time order."""
    return [r[0] for r in store.rows("SELECT period FROM periods WHERE body = ? AND spec = ? "
                                     "ORDER BY period_start", [body, spec])]


def export_rows(store: Store, table: str, spec: str, body: str | None = None) -> pd.DataFrame:
    """One export table (a key of :data:`EXPORT_QUERIES`) of the ``spec`` results, all bodies
    unless ``body``."""
    return store.df(EXPORT_QUERIES[table], [body, body, spec])


def metric_series(store: Store, body: str, spec: str) -> pd.DataFrame:
    """Each metric's value per period of ``body`` under ``spec``, in period order (what
    trends are fitted to)."""
    return store.df(
        """SELECT pm.metric, p.period, p.period_start, pm.value FROM period_metrics pm
           JOIN periods p USING (body, spec, period) WHERE pm.body = ? AND pm.spec = ?
           ORDER BY p.period_start""", [body, spec])


def last_build_run(store: Store, spec: str | None = None) -> dict | None:
    """The runs row of the newest finished build, rebuild or demo (its params parsed) — with
    ``spec``, of the newest one that cut its periods that way."""
    marks = ", ".join("?" for _ in BUILD_COMMANDS)
    rows = store.df(f"SELECT * FROM runs WHERE status = 'ok' AND command IN ({marks}) AND "
                    "(? IS NULL OR json_extract_string(params, '$.period') = ?) "
                    "ORDER BY run_id DESC LIMIT 1", [*BUILD_COMMANDS, spec, spec])
    if rows.empty:
        return None
    run = rows.iloc[0].to_dict()
    run["params"] = json.loads(run["params"])
    return run


def group_pair_series(store: Store, body: str, spec: str) -> pd.DataFrame:
    """``group_a, group_b, period, value``: each pair of groups' mean agreement (A before B),
    in period order."""
    return store.df(
        """SELECT g.group_a, g.group_b, g.period, g.agreement AS value FROM group_agreement g
           JOIN periods p USING (body, spec, period)
           WHERE g.body = ? AND g.spec = ? AND g.group_a < g.group_b
           ORDER BY p.period_start""", [body, spec])


def subset_series(store: Store, body: str, spec: str) -> pd.DataFrame:
    """``subset, metric, period, value`` of every stored subset row, in period order."""
    return store.df(
        """SELECT s.subset, s.metric, s.period, s.value FROM subset_metrics s
           JOIN periods p USING (body, spec, period) WHERE s.body = ? AND s.spec = ?
           ORDER BY p.period_start""", [body, spec])


def period_fingerprints(store: Store, spec: str) -> list[tuple]:
    """(body, period, fingerprint) of every stored period of ``spec``, sorted."""
    return store.rows("SELECT body, period, fingerprint FROM periods WHERE spec = ? "
                      "ORDER BY ALL", [spec])


def read_measures(store: Store) -> pd.DataFrame:
    """The methods reference the last build stored, one row per metric in export order."""
    return store.df(f"SELECT {', '.join(MEASURE_FRAME)} FROM measures ORDER BY position")


def period_edges(store: Store, body: str | None = None, periods: Iterable[str] | None = None,
                 spec: str | None = None) -> pd.DataFrame:
    """The stored pairs of each period (strongest first) with the period's count of pairs that
    had a value (``n_pairs``), of period spec ``spec`` (None: any). A period built before
    pairs were stored (schema 3) has none until it is recomputed."""
    frame = store.df(
        """SELECT e.body, e.period, e.member_a, e.member_b, e.agreement, p.n_pairs
           FROM period_edges e JOIN periods p USING (body, spec, period)
           WHERE (? IS NULL OR e.body = ?) AND (? IS NULL OR e.spec = ?)
           ORDER BY e.body, p.period_start, e.agreement DESC, e.member_a, e.member_b""",
        [body, body, spec, spec])
    if periods is not None:
        frame = frame[frame["period"].isin(list(periods))].reset_index(drop=True)
    return frame


# -- writes --------------------------------------------------------------------------------
def write_period(store: Store, run_id: int, res, spec: str) -> None:
    """Swap one period's results in (a ``PeriodResult`` cut by ``spec``): old rows out, new
    rows in, in one transaction. Other specs' results are not touched."""
    key = [res.body, spec, res.period_name]
    with store.transaction():
        for table in RESULT_TABLES:
            store.execute(f"DELETE FROM {table} WHERE body = ? AND spec = ? AND period = ?", key)
        store.execute("DELETE FROM periods WHERE body = ? AND spec = ? AND period = ?", key)
        store.execute("INSERT INTO periods (body, spec, period, period_start, period_end, "
                      "fingerprint, run_id, n_members, n_ballots, n_dropped, n_pairs) "
                      "VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)",
                      [res.body, spec, res.period_name, res.period_start, res.period_end,
                       res.fingerprint, run_id, res.n_members, res.n_ballots, res.n_dropped,
                       res.n_pairs])
        for table, frame in (("period_metrics", res.metrics), ("member_metrics", res.members),
                             ("group_agreement", res.groups), ("subset_metrics", res.subsets),
                             ("period_edges", res.edges)):
            if frame.empty:
                continue
            frame = frame.assign(run_id=run_id, body=res.body, period=res.period_name,
                                 spec=spec)
            store.insert_frame(table, frame)


def drop_periods_except(store: Store, body: str, spec: str, keep: Iterable[str]) -> None:
    """Remove results of ``body``'s ``spec`` periods not in ``keep`` (the spec no longer
    makes them, e.g. a partial window that has grown whole); other specs are kept."""
    keep = list(keep)
    store.register("_bw_keep", pd.DataFrame({"period": pd.Series(keep, dtype=object)}))
    try:
        with store.transaction():
            for table in (*RESULT_TABLES, "periods"):
                store.execute(f"DELETE FROM {table} WHERE body = ? AND spec = ? AND period NOT "
                              "IN (SELECT period FROM _bw_keep)", [body, spec])
    finally:
        store.unregister("_bw_keep")


def replace_trends(store: Store, body: str, spec: str, rows: pd.DataFrame,
                   subset_rows: pd.DataFrame) -> None:
    """Swap ``body``'s ``spec`` trend rows for ``rows`` and its per-subset trend rows for
    ``subset_rows``, in one transaction."""
    with store.transaction():
        for table, frame in (("trends", rows), ("subset_trends", subset_rows)):
            store.execute(f"DELETE FROM {table} WHERE body = ? AND spec = ?", [body, spec])
            store.insert_frame(table, frame.assign(spec=spec) if not frame.empty else frame)


def write_measures(store: Store, run_id: int, measures: pd.DataFrame) -> None:
    """Replace the stored methods reference with ``measures`` (columns :data:`MEASURE_FRAME`,
    in export order)."""
    frame = measures[MEASURE_FRAME].assign(position=range(len(measures)), run_id=run_id)
    with store.transaction():
        store.execute("DELETE FROM measures")
        store.insert_frame("measures", frame)
