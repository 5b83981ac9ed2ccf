"""Trend rows of the subset series: per topic, agenda-standardised, and each pair of groups.

The same tests as the whole-body series (:func:`blocwatch.metrics.change.trends.trend_summary`:
Mann–Kendall, Theil–Sen, change points), one row per (subset, metric). Pairs of groups
(subset ``pair:<A>|<B>``, metric ``pair_agreement``, A before B alphabetically) are written
for bodies that have three or more groups in some period: with two groups the single pair is
already the cross-group series.
"""

from __future__ import annotations

import json

import numpy as np
import pandas as pd

from blocwatch.metrics.change.trends import trend_summary
from blocwatch.pipeline.store.database import Store
from blocwatch.pipeline.store.results import group_pair_series, subset_series

PAIR_METRIC = "pair_agreement"
TREND_FIELDS = ("n_periods", "mk_s", "mk_z", "mk_p", "tau", "slope", "slope_low", "slope_high")


def trend_row(series: pd.DataFrame) -> dict:
    """One trends row (without keys) for a series with columns ``period`` and ``value`` in
    period order; periods without a value are left out of the test."""
    series = series.dropna(subset=["value"])
    y = series["value"].to_numpy(dtype=float)
    summary = trend_summary(y, np.arange(len(y), dtype=float))
    cps = [str(series["period"].iloc[int(i)]) for i in summary.get("change_index", [])
           if 0 <= int(i) < len(series)]
    return {**{k: summary.get(k) for k in TREND_FIELDS}, "change_points": json.dumps(cps),
            "note": summary.get("note") or None}


def pair_series(store: Store, body: str, spec: str) -> pd.DataFrame:
    """``subset, period, value`` of each pair of groups, in period order (≥ 3 groups only)."""
    frame = group_pair_series(store, body, spec)
    groups = set(frame["group_a"]) | set(frame["group_b"])
    if len(groups) < 3:
        return pd.DataFrame(columns=["subset", "period", "value"])
    frame["subset"] = "pair:" + frame["group_a"] + "|" + frame["group_b"]
    return frame[["subset", "period", "value"]]


def subset_trend_rows(store: Store, run_id: int, body: str, spec: str) -> pd.DataFrame:
    """Every subset trends row of a body's ``spec`` series (empty frame without subsets)."""
    subsets = subset_series(store, body, spec)
    pairs = pair_series(store, body, spec).assign(metric=PAIR_METRIC)
    rows = []
    for (subset, metric), series in pd.concat([subsets, pairs]).groupby(["subset", "metric"],
                                                                        sort=True):
        rows.append({"run_id": run_id, "body": body, "subset": subset, "metric": metric,
                     **trend_row(series)})
    return pd.DataFrame(rows)
