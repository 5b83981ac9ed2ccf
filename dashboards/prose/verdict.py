"""The verdict: one quotable sentence that opens a briefing, chosen by a fixed rule.

The rule reads only stored numbers of the page's lead measure (``headline.lead_metric``) and
says one of four things: a clear rise in voting along group lines, a clear fall, no clear
change, or too little data to tell. In order:

1. **Too little data** when the lead measure has a value in fewer than two periods; or the
   typical period (median over periods with a value) has fewer than ``MIN_MEMBERS`` members or
   fewer than ``MIN_BALLOTS`` counted ballots; or the first or last period has no interval
   that can be read (none computed, no spread across resamples, or an estimate outside its
   own interval). The two sizes are this project's rule of thumb, not a published threshold:
   below them resampling ballots cannot show how uncertain a figure is (a body of 9 members
   can look perfectly split by chance).
2. **A clear rise or fall** when the 95 % intervals of the first and last period do not
   overlap, and the stored Mann–Kendall trend test (when there is one) is not significant
   (p < 0.05) in the opposite direction. "Rise" and "fall" are in voting along group lines:
   for a measure where lower means more division (the registry's ``direction``), a falling
   value is a rise in division.
3. **No clear change** otherwise (intervals overlap, or the two pieces of evidence disagree).

Non-overlapping intervals is a conservative check (two estimates can differ at the 5 % level
while their 95 % intervals touch), which suits a sentence meant to be quoted.
"""

from __future__ import annotations

from dataclasses import dataclass

import pandas as pd

from blocwatch.dashboards.prose import labels, numbers
from blocwatch.dashboards.prose.headline import lead_metric, series

MIN_MEMBERS = 15
MIN_BALLOTS = 20
TREND_ALPHA = 0.05
KINDS = ("clear rise", "clear fall", "no clear change", "too little data")


@dataclass(frozen=True)
class Verdict:
    """``kind`` is one of ``KINDS``; ``sentence`` is the quotable text; ``why`` the rule's step."""

    kind: str
    sentence: str
    why: str


def _trend(trends: pd.DataFrame | None, body: str, metric: str) -> tuple[float, float] | None:
    """(tau, p) of the stored Mann–Kendall test, or None."""
    if trends is None or trends.empty:
        return None
    rows = trends[(trends["body"] == body) & (trends["metric"] == metric)]
    if rows.empty or pd.isna(rows["mk_p"].iloc[0]) or pd.isna(rows["tau"].iloc[0]):
        return None
    return float(rows["tau"].iloc[0]), float(rows["mk_p"].iloc[0])


def _little(body: str, why: str) -> Verdict:
    return Verdict("too little data", f"There is too little data to tell whether {body} votes "
                   f"more or less along group lines: {why}.", why)


def verdict(metrics: pd.DataFrame, body: str, metric: str | None, *,
            trends: pd.DataFrame | None = None,
            known: dict[str, labels.MetricInfo] | None = None) -> Verdict:
    """The opening verdict for ``body`` from its lead measure ``metric`` (see module notes)."""
    if metric is None:
        return _little(body, "no measure has been computed for it")
    info = labels.info(metric, known)
    s = series(metrics, body, metric)
    s = s[s["value"].notna()].reset_index(drop=True)
    if len(s) < 2:
        return _little(body, f"{labels.in_sentence(info.label)} has a value in "
                             f"{numbers.plural(len(s), 'period')}, and a change needs two")
    members, ballots = s["n_members"].median(), s["n_ballots"].median()
    small = []
    if pd.notna(members) and members < MIN_MEMBERS:
        small.append(f"{numbers.plural(round(members), 'member')} (fewer than {MIN_MEMBERS})")
    if pd.notna(ballots) and ballots < MIN_BALLOTS:
        small.append(f"{numbers.plural(round(ballots), 'counted ballot')} (fewer than "
                     f"{MIN_BALLOTS})")
    if small:
        return _little(body, "a typical period has " + " and ".join(small)
                       + ", too few for resampling to show how uncertain the figures are")
    first, last = s.iloc[0], s.iloc[-1]
    states = [numbers.interval_state(r.value, r.low, r.high, integer=info.integer)
              for r in (first, last)]
    if any(st != "ok" for st in states):
        why = {"none": "no interval was computed (build with --bootstrap above 0)",
               "degenerate": "resampling showed no spread, so the uncertainty cannot be seen",
               "outside": "an estimate lies outside its own interval"}
        bad = next(st for st in states if st != "ok")
        label = labels.in_sentence(info.label)
        return _little(body, f"for {label} in {first.period} or {last.period}, {why[bad]}")
    span = (f"{labels.in_sentence(info.label)} went from "
            f"{numbers.fmt_estimate(first.value, first.low, first.high, first=True)} in "
            f"{first.period} to {numbers.fmt_estimate(last.value, last.low, last.high)} in "
            f"{last.period}")
    up, down = first.high < last.low, last.high < first.low
    trend = _trend(trends, body, metric)
    against = trend is not None and trend[1] < TREND_ALPHA and (
        (up and trend[0] < 0) or (down and trend[0] > 0))
    if (up or down) and not against:
        more = up == (info.direction != "lower")
        kind = "clear rise" if more else "clear fall"
        word = "more" if more else "less"
        return Verdict(kind, f"{body} voted clearly {word} along group lines in {last.period} "
                       f"than in {first.period}: {span}, and the two intervals do not "
                       "overlap.", "the first and last intervals do not overlap")
    why = ("the first and last intervals do not overlap, but the trend test points the other "
           "way" if against else "the first and last intervals overlap")
    return Verdict("no clear change", f"The records show no clear change in how far {body} "
                   f"votes along group lines between {first.period} and {last.period}: {span}, "
                   f"and {why}.", why)


def opening(metrics: pd.DataFrame, body: str, *, trends: pd.DataFrame | None = None,
            known: dict[str, labels.MetricInfo] | None = None) -> Verdict:
    """The verdict on ``body``'s lead measure (``headline.lead_metric``)."""
    return verdict(metrics, body, lead_metric(metrics, body), trends=trends, known=known)


def headline(metrics: pd.DataFrame, body: str, *, trends: pd.DataFrame | None = None) -> str:
    """The page's opening sentence for ``body``: the verdict's text."""
    return opening(metrics, body, trends=trends).sentence
