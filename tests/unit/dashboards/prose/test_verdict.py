"""The verdict rule on hand-made series: each of its four answers, and the evidence it needs."""

import numpy as np
import pandas as pd
import pytest

from blocwatch.dashboards.prose.verdict import KINDS, MIN_BALLOTS, MIN_MEMBERS, opening, verdict
from blocwatch.dashboards.tables import ReportTables

BODY = "Harbour Board of Veldmark"


def _tables(values, low, high, *, metric="group_modularity", members=45, ballots=60,
            trend=None):
    periods = [str(2001 + i) for i in range(len(values))]
    metrics = pd.DataFrame({
        "body": BODY, "period": periods, "metric": metric,
        "period_start": [f"{p}-01-01" for p in periods],
        "period_end": [f"{p}-12-31" for p in periods], "value": values, "low": low,
        "high": high, "n_members": members, "n_ballots": ballots})
    trends = None
    if trend is not None:
        trends = pd.DataFrame({"body": [BODY], "metric": [metric], "tau": [trend[0]],
                               "mk_p": [trend[1]], "n_periods": [len(values)]})
    return ReportTables(metrics=metrics, trends=trends)


def _kind(t, metric="group_modularity"):
    return verdict(t.metrics, BODY, metric, trends=t.trends)


def test_intervals_apart_give_a_clear_rise_with_the_numbers():
    t = _tables([0.05, 0.12, 0.21], [0.03, 0.09, 0.18], [0.07, 0.15, 0.24])
    v = _kind(t)
    assert v.kind == "clear rise"
    assert v.sentence == (
        f"{BODY} voted clearly more along group lines in 2003 than in 2001: group modularity "
        "went from 0.05 (95 % interval 0.03 to 0.07) in 2001 to 0.21 (0.18 to 0.24) in 2003, "
        "and the two intervals do not overlap.")


def test_a_falling_lower_is_more_division_measure_is_a_rise_in_division():
    # cross_group_share: lower means more division (fewer ties across groups).
    t = _tables([0.40, 0.10], [0.35, 0.05], [0.45, 0.15], metric="cross_group_share")
    assert _kind(t, "cross_group_share").kind == "clear rise"
    t = _tables([0.10, 0.40], [0.05, 0.35], [0.15, 0.45], metric="cross_group_share")
    assert _kind(t, "cross_group_share").kind == "clear fall"


def test_overlapping_intervals_give_no_clear_change():
    t = _tables([0.12, 0.14], [0.08, 0.10], [0.16, 0.19])
    v = _kind(t)
    assert v.kind == "no clear change" and "the first and last intervals overlap" in v.sentence


def test_a_trend_test_pointing_the_other_way_withholds_the_claim():
    t = _tables([0.05, 0.30, 0.21], [0.03, 0.28, 0.18], [0.07, 0.32, 0.24], trend=(-0.6, 0.01))
    assert _kind(t).kind == "no clear change"
    t = _tables([0.05, 0.30, 0.21], [0.03, 0.28, 0.18], [0.07, 0.32, 0.24], trend=(0.6, 0.01))
    assert _kind(t).kind == "clear rise"


@pytest.mark.parametrize("members,ballots", [(9, 12), (MIN_MEMBERS - 1, 200),
                                             (60, MIN_BALLOTS - 1)])
def test_small_bodies_get_too_little_data(members, ballots):
    t = _tables([0.05, 0.60], [0.03, 0.58], [0.07, 0.62], members=members, ballots=ballots)
    v = _kind(t)
    assert v.kind == "too little data"
    assert v.sentence.startswith(f"There is too little data to tell whether {BODY}")


def test_flat_missing_or_outside_intervals_give_too_little_data():
    flat = _tables([1.0, 1.0], [1.0, 1.0], [1.0, 1.0])
    assert "no spread" in _kind(flat).sentence and _kind(flat).kind == "too little data"
    none = _tables([0.05, 0.6], np.nan, np.nan)
    assert "--bootstrap" in _kind(none).sentence
    outside = _tables([0.05, 0.02], [0.03, 0.03], [0.07, 0.13])
    assert _kind(outside).kind == "too little data"


def test_one_period_or_no_measure():
    assert _kind(_tables([0.2], [0.1], [0.3])).sentence.endswith(
        "group modularity has a value in 1 period, and a change needs two.")
    assert verdict(pd.DataFrame(), BODY, None).kind == "too little data"


def test_opening_uses_the_lead_measure_and_every_kind_is_reachable():
    t = _tables([0.05, 0.21], [0.03, 0.18], [0.07, 0.24])
    assert opening(t.metrics, BODY).kind in KINDS
    assert opening(t.metrics, BODY).sentence == _kind(t).sentence
