"""Sentences written from the numbers: the page headline and the one-line summaries.

Every number in a sentence is read from the tables and formatted with ``labels.fmt``; nothing is
typed in. The "largest change" is the biggest step between consecutive computed periods of the
series as stored (a description of the drawn line, not a new measure); change points and trend
statistics are quoted from the trends table when it has them.
"""

from __future__ import annotations

import math

import pandas as pd

from blocwatch.dashboards import labels
from blocwatch.dashboards.periods import period_table
from blocwatch.dashboards.trends import change_points

LEAD_METRICS = ("group_modularity", "separability", "silhouette", "ei_index")


def _series(metrics: pd.DataFrame, body: str, metric: str) -> pd.DataFrame:
    rows = metrics[(metrics["body"] == body) & (metrics["metric"] == metric)]
    order = period_table(metrics[metrics["body"] == body])[["period"]]
    return order.merge(rows, on="period", how="inner")


def lead_metric(metrics: pd.DataFrame, body: str) -> str | None:
    """The metric the headline is about: the first of LEAD_METRICS with a value, else any."""
    have = metrics[(metrics["body"] == body) & metrics["value"].notna()]["metric"].unique()
    for m in LEAD_METRICS:
        if m in have:
            return m
    ordered = labels.ordered(have)
    return ordered[0] if ordered else None


def _join(items: list[str]) -> str:
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " and " + items[-1]


def _signed(v: float, metric: str) -> str:
    return ("+" if v > 0 else "−" if v < 0 else "±") + labels.fmt(abs(v), metric)


def summary(metrics: pd.DataFrame, body: str, metric: str, *,
            trends: pd.DataFrame | None = None) -> str:
    """One sentence on ``metric`` for ``body``: first and last value, direction, largest change.

    Example: "Group modularity rose from 0.05 [0.03–0.07] in 2001 to 0.21 [0.18–0.24] in 2024;
    the largest change came in 2012 (+0.08 from 2011)."
    """
    label = labels.info(metric).label
    s = _series(metrics, body, metric)
    have = s[s["value"].notna()]
    if have.empty:
        notes = [n for n in s["note"].dropna().unique()]
        why = f": {'; '.join(notes[:2])}" if notes else ""
        return f"{label} was not computed for {body}{why}."
    first, last = have.iloc[0], have.iloc[-1]
    f_txt = labels.fmt_interval(first.value, first.low, first.high, metric)
    if len(have) == 1:
        return f"{label} was {f_txt} in {first.period} (the only period with a value)."
    l_txt = labels.fmt_interval(last.value, last.low, last.high, metric)
    shown_first, shown_last = labels.fmt(first.value, metric), labels.fmt(last.value, metric)
    if shown_first == shown_last:
        text = f"{label} was {l_txt} in {last.period}, as in {first.period} ({f_txt})"
    else:
        verb = "rose" if last.value > first.value else "fell"
        text = f"{label} {verb} from {f_txt} in {first.period} to {l_txt} in {last.period}"
    if _overlap(first, last):
        text += " (the two intervals overlap)"
    steps = have["value"].diff().to_numpy()[1:]
    if len(have) > 2 and len(steps) and not all(math.isnan(x) for x in steps):
        i = int(pd.Series(steps).abs().idxmax()) + 1
        text += (f"; the largest change came in {have['period'].iloc[i]} "
                 f"({_signed(steps[i - 1], metric)} from {have['period'].iloc[i - 1]})")
    cps = change_points(trends, body, metric)
    if cps:
        text += f"; change-point detection marks {_join(cps)}"
    return text + "."


def _overlap(a, b) -> bool:
    vals = [a.low, a.high, b.low, b.high]
    if any(v is None or (isinstance(v, float) and math.isnan(v)) for v in vals):
        return False
    return a.low <= b.high and b.low <= a.high


def trend_sentence(trends: pd.DataFrame | None, body: str, metric: str) -> str:
    """Quote the stored Mann–Kendall and Theil–Sen results, or "" when there are none."""
    if trends is None or trends.empty:
        return ""
    rows = trends[(trends["body"] == body) & (trends["metric"] == metric)]
    if rows.empty or pd.isna(rows["mk_p"].iloc[0]):
        return ""
    r = rows.iloc[0]
    p = "p < 0.001" if r.mk_p < 0.001 else f"p = {r.mk_p:.3f}"
    text = f"Mann–Kendall trend test over {labels.fmt(r.n_periods, 'communities')} periods: "
    text += f"τ = {labels.fmt(r.tau)}, {p}"
    if not pd.isna(r.slope):
        # Slopes per period are small: three decimals keep them from rounding to zero.
        text += f"; Theil–Sen slope {r.slope:+.3f} per period"
        if not (pd.isna(r.slope_low) or pd.isna(r.slope_high)):
            text += f" [{r.slope_low:.3f} to {r.slope_high:.3f}]"
    return text + "."


def headline(metrics: pd.DataFrame, body: str, *, trends: pd.DataFrame | None = None) -> str:
    """The page's opening sentence for ``body`` (about its lead metric)."""
    metric = lead_metric(metrics, body)
    if metric is None:
        return f"No metric has been computed for {body} yet."
    return summary(metrics, body, metric, trends=trends)
