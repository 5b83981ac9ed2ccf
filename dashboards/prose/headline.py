"""Sentences and the summary table written from the numbers, under the page's verdict.

Every number is read from the tables and typeset by ``numbers``; nothing is typed in. The
briefing shows the verdict (``verdict``), then at most ``HEADLINE_LIMIT`` sentences on the
headline measures (the first of ``HEADLINE_METRICS`` the body has), then every measure in one
table (``summary_table``). The "largest step" is the biggest change between consecutive computed
periods of the series as stored (a description of the drawn line, not a new measure); change
points and trend statistics are quoted from the trends table when it has them.
"""

from __future__ import annotations

import math

import pandas as pd

from blocwatch.dashboards.charts.periods import period_table
from blocwatch.dashboards.charts.trends import change_points
from blocwatch.dashboards.prose import labels, numbers

LEAD_METRICS = ("group_modularity", "separability", "silhouette", "ei_index")
# Headline sentences, in this order: one measure per idea (graph, map, ties, ballots).
HEADLINE_METRICS = ("group_modularity", "separability", "cross_group_share", "group_line_share",
                    "krippendorff_alpha_within")
HEADLINE_LIMIT = 4


def series(metrics: pd.DataFrame, body: str, metric: str) -> pd.DataFrame:
    """The stored rows of ``metric`` for ``body`` in time order (values may be missing)."""
    rows = metrics[(metrics["body"] == body) & (metrics["metric"] == metric)]
    order = period_table(metrics[metrics["body"] == body])[["period"]]
    return order.merge(rows, on="period", how="inner")


def lead_metric(metrics: pd.DataFrame, body: str) -> str | None:
    """The metric the verdict is about: the first of LEAD_METRICS with a value, else any."""
    have = metrics[(metrics["body"] == body) & metrics["value"].notna()]["metric"].unique()
    for m in LEAD_METRICS:
        if m in have:
            return m
    ordered = labels.ordered(have)
    return ordered[0] if ordered else None


def headline_metrics(metrics: pd.DataFrame, body: str) -> list[str]:
    """The measures written out as sentences: the lead, then HEADLINE_METRICS, at most
    HEADLINE_LIMIT, only those with a value."""
    have = set(metrics[(metrics["body"] == body) & metrics["value"].notna()]["metric"])
    lead = lead_metric(metrics, body)
    names = [lead] if lead else []
    names += [m for m in HEADLINE_METRICS if m in have and m != lead]
    return names[:HEADLINE_LIMIT]


def _join(items: list[str]) -> str:
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " and " + items[-1]


def _estimate(row, info: labels.MetricInfo) -> str:
    return numbers.fmt_estimate(row.value, row.low, row.high, integer=info.integer)


def summary(metrics: pd.DataFrame, body: str, metric: str, *,
            trends: pd.DataFrame | None = None,
            known: dict[str, labels.MetricInfo] | None = None) -> str:
    """One sentence on ``metric`` for ``body``: first and last value, direction, largest step.

    Example: "Group modularity rose from 0.05 (0.03 to 0.07) in 2001 to 0.21 (0.18 to 0.24) in
    2024, and the two intervals do not overlap; the largest step came in 2012 (+0.08 from
    2011)."
    """
    info = labels.info(metric, known)
    s = series(metrics, body, metric)
    have = s[s["value"].notna()]
    if have.empty:
        notes = [n for n in s["note"].dropna().unique()]
        why = f" ({'; '.join(notes[:2])})" if notes else ""
        return f"{info.label}: not computed for {body}{why}."
    first, last = have.iloc[0], have.iloc[-1]
    if len(have) == 1:
        return f"{info.label}: {_estimate(first, info)} in {first.period} (the only period " \
               "with a value)."
    shown = [numbers.fmt(r.value, integer=info.integer) for r in (first, last)]
    if shown[0] == shown[1]:
        text = (f"{info.label}: {_estimate(last, info)} in {last.period}, as in {first.period}"
                f" ({_estimate(first, info)})")
    else:
        verb = "rose" if last.value > first.value else "fell"
        text = (f"{info.label} {verb} from {_estimate(first, info)} in {first.period} to "
                f"{_estimate(last, info)} in {last.period}")
    overlap = _overlap(first, last, info)
    if overlap is not None:
        text += (", and the two intervals overlap (no clear difference)" if overlap
                 else ", and the two intervals do not overlap")
    steps = have["value"].diff().to_numpy()[1:]
    if len(have) > 2 and not all(math.isnan(x) for x in steps):
        i = int(pd.Series(steps).abs().idxmax()) + 1
        change = numbers.fmt_change(steps[i - 1], integer=info.integer)
        if change is not None:  # no "largest step" of zero
            text += (f"; the largest step came in {have['period'].iloc[i]} ({change} from "
                     f"{have['period'].iloc[i - 1]})")
    cps = change_points(trends, body, metric)
    if cps:
        text += f"; change-point detection marks {_join(cps)}"
    return text + "."


def _overlap(a, b, info: labels.MetricInfo) -> bool | None:
    """Whether two readable intervals overlap; None when either cannot be read."""
    for r in (a, b):
        if numbers.interval_state(r.value, r.low, r.high, integer=info.integer) != "ok":
            return None
    return bool(a.low <= b.high and b.low <= a.high)


def trend_sentence(trends: pd.DataFrame | None, body: str, metric: str) -> str:
    """Quote the stored Mann–Kendall and Theil–Sen results, or "" when there are none."""
    if trends is None or trends.empty:
        return ""
    rows = trends[(trends["body"] == body) & (trends["metric"] == metric)]
    if rows.empty or pd.isna(rows["mk_p"].iloc[0]):
        return ""
    r = rows.iloc[0]
    p = numbers.fmt_p(r.mk_p)
    p = f"p {p}" if p.startswith("<") else f"p = {p}"
    text = (f"Mann–Kendall trend test over {numbers.plural(r.n_periods, 'period')}: "
            f"τ = {numbers.fmt(r.tau)}, {p}")
    if not pd.isna(r.slope):
        # Slopes per period are small: three decimals keep them from rounding to zero.
        slope = f"{r.slope:+.3f}".replace("-", numbers.MINUS)
        text += f"; Theil–Sen slope {slope} per period"
        if not (pd.isna(r.slope_low) or pd.isna(r.slope_high)):
            low, high = (f"{v:.3f}".replace("-", numbers.MINUS) for v in (r.slope_low,
                                                                         r.slope_high))
            text += f" ({low} to {high})"
    return text + "."


SUMMARY_COLUMNS = {"label": "Measure", "first": "First period", "last": "Last period",
                   "change": "Change", "intervals": "Intervals", "trend_p": "Trend p",
                   "direction": "More division when"}


def summary_table(metrics: pd.DataFrame, body: str, *, trends: pd.DataFrame | None = None,
                  known: dict[str, labels.MetricInfo] | None = None) -> pd.DataFrame:
    """Every measure of ``body`` in one row: first and last value as text, the change, whether
    the two intervals overlap, the trend test's p and which direction means more division."""
    rows = []
    for metric in labels.ordered(metrics.loc[metrics["body"] == body, "metric"].dropna()
                                 .unique()):
        info = labels.info(metric, known)
        s = series(metrics, body, metric)
        have = s[s["value"].notna()]
        row = {"metric": metric, "label": info.label,
               "direction": {"higher": "higher", "lower": "lower"}.get(info.direction, "")}
        if have.empty:
            row |= {"first": "not computed", "last": "", "change": "", "intervals": ""}
        else:
            first, last = have.iloc[0], have.iloc[-1]
            row["first"] = f"{_estimate(first, info)} in {first.period}"
            row["last"] = f"{_estimate(last, info)} in {last.period}" if len(have) > 1 else ""
            change = numbers.fmt_change(last.value - first.value, integer=info.integer)
            row["change"] = (change or "none") if len(have) > 1 else ""
            overlap = _overlap(first, last, info) if len(have) > 1 else None
            row["intervals"] = {True: "overlap", False: "apart", None: ""}[overlap]
        t = trends[(trends["body"] == body) & (trends["metric"] == metric)] \
            if trends is not None and not trends.empty else pd.DataFrame()
        row["trend_p"] = (numbers.fmt_p(t["mk_p"].iloc[0])
                          if len(t) and pd.notna(t["mk_p"].iloc[0]) else "")
        rows.append(row)
    return pd.DataFrame(rows, columns=["metric", *SUMMARY_COLUMNS])
