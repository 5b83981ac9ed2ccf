"""Headline sentences are written from the numbers: every figure is read back from the frame."""

import re

import numpy as np
import pandas as pd

from blocwatch.dashboards.headline import headline, lead_metric, summary, trend_sentence
from blocwatch.dashboards.tables import ReportTables
from tests.dash_synthetic import HARBOUR, TARN, make_tables


def _frame(values, low=None, high=None, metric="group_modularity", periods=None):
    periods = periods or [str(2001 + i) for i in range(len(values))]
    return ReportTables(metrics=pd.DataFrame({
        "body": "Harbour Board of Veldmark", "period": periods, "metric": metric,
        "period_start": [f"{p}-01-01" for p in periods],
        "period_end": [f"{p}-12-31" for p in periods], "value": values,
        "low": low if low is not None else np.nan, "high": high if high is not None else np.nan,
    })).metrics


def test_headline_numbers_match_the_frame():
    t = make_tables()
    rows = t.metrics[(t.metrics.body == HARBOUR) & (t.metrics.metric == "group_modularity")]
    first, last = rows.iloc[0], rows.iloc[-1]
    steps = rows["value"].diff().abs()
    biggest = rows["period"].iloc[int(np.nanargmax(steps.to_numpy()))]
    text = headline(t.metrics, HARBOUR, trends=t.trends)
    # Expected pieces built here from the frame with plain formatting (not the package's helper).
    assert text.startswith("Group modularity rose from ")
    assert f"{first.value:.2f} [{first.low:.2f}–{first.high:.2f}] in {first.period}" in text
    assert f"to {last.value:.2f} [{last.low:.2f}–{last.high:.2f}] in {last.period}" in text
    assert f"the largest change came in {biggest}" in text
    cp = t.trends.loc[t.trends.body == HARBOUR, "change_points"].iloc[0]
    assert f"change-point detection marks {cp.strip('[]').strip(chr(34))}" in text
    numbers = [float(x) for x in re.findall(r"\d+\.\d+", text)]
    assert numbers[:3] == [round(first.value, 2), round(first.low, 2), round(first.high, 2)]


def test_hand_made_series_rose_with_intervals():
    m = _frame([0.05, 0.08, 0.20, 0.21], low=[0.03, 0.06, 0.18, 0.18],
               high=[0.07, 0.10, 0.22, 0.24])
    # Hand-derived: steps +0.03, +0.12, +0.01 -> largest in 2003, from 2002.
    assert summary(m, HARBOUR, "group_modularity") == (
        "Group modularity rose from 0.05 [0.03–0.07] in 2001 to 0.21 [0.18–0.24] in 2004; "
        "the largest change came in 2003 (+0.12 from 2002).")


def test_fell_and_overlapping_intervals_are_said():
    m = _frame([0.30, 0.28], low=[0.20, 0.18], high=[0.40, 0.38])
    text = summary(m, HARBOUR, "group_modularity")
    assert text.startswith("Group modularity fell from 0.30 [0.20–0.40] in 2001 to 0.28")
    assert "(the two intervals overlap)" in text
    assert "largest change" not in text  # two points: the only step is the whole change


def test_single_period_and_not_computed():
    assert summary(_frame([0.4]), HARBOUR, "group_modularity") == (
        "Group modularity was 0.40 in 2001 (the only period with a value).")
    m = _frame([np.nan, np.nan], metric="silhouette")
    assert summary(m, HARBOUR, "silhouette") == "Silhouette was not computed for " + HARBOUR + "."
    assert headline(m, HARBOUR) == f"No metric has been computed for {HARBOUR} yet."


def test_unchanged_value():
    text = summary(_frame([0.201, 0.199, 0.2]), HARBOUR, "group_modularity")
    assert text.startswith("Group modularity was 0.20 in 2003, as in 2001 (0.20)")


def test_lead_metric_prefers_group_modularity_then_falls_back():
    t = make_tables()
    assert lead_metric(t.metrics, TARN) == "group_modularity"
    m = _frame([0.1, 0.2], metric="novel_index")
    assert lead_metric(m, HARBOUR) == "novel_index"


def test_trend_sentence_quotes_the_trends_table():
    t = make_tables()
    r = t.trends[t.trends.body == HARBOUR].iloc[0]
    text = trend_sentence(t.trends, HARBOUR, "group_modularity")
    assert f"over {int(r.n_periods)} periods" in text
    assert f"τ = {r.tau:.2f}" in text and "p < 0.001" in text
    assert f"{r.slope:+.3f} per period [{r.slope_low:.3f} to {r.slope_high:.3f}]" in text
    assert trend_sentence(t.trends, HARBOUR, "silhouette") == ""
