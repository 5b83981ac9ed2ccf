"""Headline sentences and the summary table are written from the numbers: every figure is read
back from the frame, and the wording never contradicts itself."""

import re

import numpy as np
import pandas as pd

from blocwatch.dashboards.prose.headline import (
    HEADLINE_LIMIT,
    headline_metrics,
    lead_metric,
    summary,
    summary_table,
    trend_sentence,
)
from blocwatch.dashboards.tables import ReportTables
from tests.dash_synthetic import HARBOUR, TARN, make_tables

MINUS = "\u2212"


def _frame(values, low=None, high=None, metric="group_modularity", periods=None):
    periods = periods or [str(2001 + i) for i in range(len(values))]
    return ReportTables(metrics=pd.DataFrame({
        "body": "Harbour Board of Veldmark", "period": periods, "metric": metric,
        "period_start": [f"{p}-01-01" for p in periods],
        "period_end": [f"{p}-12-31" for p in periods], "value": values,
        "low": low if low is not None else np.nan, "high": high if high is not None else np.nan,
    })).metrics


def _plain(v):
    """Expected typesetting built here, not with the package's helper."""
    return f"{v:.2f}".replace("-", MINUS)


def test_summary_numbers_match_the_frame():
    t = make_tables()
    rows = t.metrics[(t.metrics.body == HARBOUR) & (t.metrics.metric == "group_modularity")]
    first, last = rows.iloc[0], rows.iloc[-1]
    steps = rows["value"].diff().abs()
    biggest = rows["period"].iloc[int(np.nanargmax(steps.to_numpy()))]
    text = summary(t.metrics, HARBOUR, "group_modularity", trends=t.trends)
    assert text.startswith("Group modularity rose from ")
    assert (f"{_plain(first.value)} ({_plain(first.low)} to {_plain(first.high)}) "
            f"in {first.period}") in text
    assert f"to {_plain(last.value)} ({_plain(last.low)} to {_plain(last.high)})" in text
    assert f"the largest step came in {biggest}" in text
    cp = t.trends.loc[t.trends.body == HARBOUR, "change_points"].iloc[0]
    assert f"change-point detection marks {cp.strip('[]').strip(chr(34))}" in text
    numbers = [float(x) for x in re.findall(r"\d+\.\d+", text)]
    assert numbers[:3] == [round(first.value, 2), round(first.low, 2), round(first.high, 2)]


def test_hand_made_series_rose_with_intervals():
    m = _frame([0.05, 0.08, 0.20, 0.21], low=[0.03, 0.06, 0.18, 0.18],
               high=[0.07, 0.10, 0.22, 0.24])
    # Hand-derived: steps +0.03, +0.12, +0.01 -> largest in 2003, from 2002; 0.03–0.07 and
    # 0.18–0.24 do not overlap.
    assert summary(m, HARBOUR, "group_modularity") == (
        "Group modularity rose from 0.05 (0.03 to 0.07) in 2001 to 0.21 (0.18 to 0.24) in "
        "2004, and the two intervals do not overlap; the largest step came in 2003 (+0.12 "
        "from 2002).")


def test_fell_and_overlapping_intervals_are_said():
    m = _frame([0.30, 0.28], low=[0.20, 0.18], high=[0.40, 0.38])
    text = summary(m, HARBOUR, "group_modularity")
    assert text.startswith("Group modularity fell from 0.30 (0.20 to 0.40) in 2001 to 0.28")
    assert "the two intervals overlap (no clear difference)" in text
    assert "largest step" not in text  # two points: the only step is the whole change


def test_negative_values_carry_a_real_minus_sign():
    m = _frame([-0.58, -0.02], low=[-0.70, -0.10], high=[-0.40, 0.05], metric="ei_index")
    text = summary(m, HARBOUR, "ei_index")
    assert f"{MINUS}0.58 ({MINUS}0.70 to {MINUS}0.40)" in text
    assert "-" not in text.replace("E–I", "")  # no hyphen-minus anywhere in a number


def test_single_period_and_not_computed():
    assert summary(_frame([0.4]), HARBOUR, "group_modularity") == (
        "Group modularity: 0.40 in 2001 (the only period with a value).")
    m = _frame([np.nan, np.nan], metric="silhouette")
    assert summary(m, HARBOUR, "silhouette") == f"Silhouette: not computed for {HARBOUR}."


def test_unchanged_value_has_no_zero_change():
    text = summary(_frame([0.201, 0.199, 0.2]), HARBOUR, "group_modularity")
    assert text.startswith("Group modularity: 0.20 in 2003, as in 2001 (0.20)")
    assert "±" not in text and "+0.00" not in text
    flat = summary(_frame([0.2, 0.2, 0.2]), HARBOUR, "group_modularity")
    assert "largest step" not in flat  # nothing moved: no "±0" step


def test_counts_are_whole_numbers_without_a_flat_interval():
    m = _frame([2.0, 3.0], low=[2.0, 2.0], high=[2.0, 4.0], metric="communities")
    text = summary(m, HARBOUR, "communities")
    assert text.startswith("Communities rose from 2 in 2001 to 3 (2 to 4) in 2002")
    assert "[2" not in text and "2.00" not in text


def test_no_verb_that_disagrees_with_a_plural_label():
    # "Group-line ballots was" came from "<label> was": sentences use a colon instead.
    for values in ([0.3, 0.3], [0.3], [np.nan, np.nan]):
        text = summary(_frame(values, metric="group_line_share"), HARBOUR, "group_line_share")
        assert text.startswith("Group-line ballots: ") and " was " not in text


def test_estimate_outside_its_interval_is_not_printed_as_one():
    m = _frame([0.26, 0.02], low=[0.25, 0.03], high=[0.38, 0.13], metric="cross_group_share")
    text = summary(m, HARBOUR, "cross_group_share")
    assert "0.02 (0.03 to 0.13)" not in text
    assert "0.02 (interval withheld: it does not contain the estimate)" in text
    assert "overlap" not in text  # no comparison of an interval that was withheld


def test_degenerate_interval_is_said_not_printed():
    m = _frame([1.0, 1.0], low=[1.0, 0.999], high=[1.0, 1.0], metric="separability")
    text = summary(m, HARBOUR, "separability")
    assert "[1.00" not in text and "1.00 to 1.00" not in text
    assert "no spread across resamples" in text


def test_lead_metric_prefers_group_modularity_then_falls_back():
    t = make_tables()
    assert lead_metric(t.metrics, TARN) == "group_modularity"
    m = _frame([0.1, 0.2], metric="novel_index")
    assert lead_metric(m, HARBOUR) == "novel_index"


def test_at_most_a_handful_of_headline_measures_the_rest_in_the_table():
    t = make_tables()
    heads = headline_metrics(t.metrics, HARBOUR)
    assert 1 <= len(heads) <= HEADLINE_LIMIT and heads[0] == lead_metric(t.metrics, HARBOUR)
    table = summary_table(t.metrics, HARBOUR, trends=t.trends)
    shown = set(t.metrics.loc[t.metrics.body == HARBOUR, "metric"])
    assert set(table["metric"]) == shown  # every measure has a row
    assert not table["change"].str.contains("±").any()


def test_trend_sentence_quotes_the_trends_table():
    t = make_tables()
    r = t.trends[t.trends.body == HARBOUR].iloc[0]
    text = trend_sentence(t.trends, HARBOUR, "group_modularity")
    assert f"over {int(r.n_periods)} periods" in text
    assert f"τ = {_plain(r.tau)}" in text and "p < 0.001" in text
    slope = f"{r.slope:+.3f}".replace("-", MINUS)
    low, high = (f"{v:.3f}".replace("-", MINUS) for v in (r.slope_low, r.slope_high))
    assert f"{slope} per period ({low} to {high})" in text
    assert trend_sentence(t.trends, HARBOUR, "silhouette") == ""
