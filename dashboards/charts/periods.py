"""Where periods sit on a shared time axis, and how to warn when their lengths differ.

A point is placed at its period's midpoint when every period has start and end dates, so bodies
with yearly periods and bodies with two-year terms line up in time on one chart. Without dates
the axis falls back to period names in the order first seen. Placement is layout, not a metric.
"""

from __future__ import annotations

import pandas as pd


def period_table(frame: pd.DataFrame) -> pd.DataFrame:
    """One row per body × period: ``body, period, period_start, period_end, x``, in time order.

    ``x`` is the midpoint date (``YYYY-MM-DD``) when every period is dated, else the period name.
    """
    cols = ["body", "period", "period_start", "period_end"]
    if frame.empty:
        return pd.DataFrame(columns=cols + ["x"])
    p = frame[cols].drop_duplicates(["body", "period"]).copy()
    p["_seen"] = range(len(p))
    dated = p["period_start"].notna().all() and p["period_end"].notna().all()
    if dated:
        mid = p["period_start"] + (p["period_end"] - p["period_start"]) / 2
        p["x"] = mid.dt.strftime("%Y-%m-%d")
        p = p.sort_values(["period_start", "_seen"])
    else:
        p["x"] = p["period"]
    return p.drop(columns="_seen").reset_index(drop=True)


def is_dated(periods: pd.DataFrame) -> bool:
    return not periods.empty and periods["period_start"].notna().all()


def length_note(periods: pd.DataFrame) -> str:
    """Plain-text note when periods differ in length between or within bodies, or overlap.

    Returns "" when every period has (about) the same length and none overlap, or when periods
    carry no dates (then nothing can be said).
    """
    if not is_dated(periods) or periods["period_end"].isna().any():
        return ""
    p = periods.copy()
    p["months"] = (p["period_end"] - p["period_start"]).dt.days / 30.44
    notes = []
    typical = p.groupby("body", sort=False)["months"].median().round()
    spread = p.groupby("body", sort=False)["months"].agg(lambda s: s.max() - s.min())
    if typical.nunique() > 1:
        parts = [f"{body}: about {m:.0f} months" for body, m in typical.items()]
        notes.append("Period lengths differ between bodies (" + "; ".join(parts) + ").")
    uneven = [body for body, s in spread.items() if s > 1.5]
    if uneven:
        notes.append("Periods vary in length within " + ", ".join(uneven) + ".")
    overlapping = []
    for body, g in p.sort_values("period_start").groupby("body", sort=False):
        if (g["period_start"].iloc[1:].to_numpy() < g["period_end"].iloc[:-1].to_numpy()).any():
            overlapping.append(body)
    if overlapping:
        notes.append("Periods overlap (rolling windows) in " + ", ".join(overlapping)
                     + ": neighbouring points share ballots.")
    if notes:
        notes.append("Each point sits at the middle of its period.")
    return " ".join(notes)

