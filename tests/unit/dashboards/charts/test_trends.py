"""Trend figures, checked by structure (fig.to_dict()), never by HTML bytes."""

import html
import json

import numpy as np
import pandas as pd

from blocwatch.dashboards.charts.trends import change_points, trend_chart
from blocwatch.dashboards.tables import ReportTables
from tests.dash_synthetic import HARBOUR, TARN, make_tables


def _traces(chart):
    return chart.fig.to_dict()["data"]


def test_one_line_per_body_with_axis_titles():
    t = make_tables()
    chart = trend_chart(t.metrics, "separability", trends=t.trends)
    d = chart.fig.to_dict()
    lines = [tr for tr in d["data"] if tr["mode"] == "lines+markers"]
    assert [tr["name"] for tr in lines] == [HARBOUR, TARN]
    assert d["layout"]["xaxis"]["title"]["text"] == "Period (midpoint)"
    assert d["layout"]["yaxis"]["title"]["text"] == "Separability"
    # Each line has one point per period of its body, values as in the frame.
    for tr in lines:
        rows = t.metrics[(t.metrics.body == tr["name"]) & (t.metrics.metric == "separability")]
        assert len(tr["y"]) == len(rows)
        assert np.allclose(sorted(tr["y"]), sorted(rows["value"]))


def test_interval_band_null_line_and_change_point_markers():
    t = make_tables()
    chart = trend_chart(t.metrics, "group_modularity", trends=t.trends)
    names = [tr["name"] for tr in _traces(chart)]
    # Harbour has intervals and a null mean, Tarn only a null mean; both have a change point.
    assert names.count(f"{HARBOUR}: interval") == 2
    assert f"{TARN}: interval" not in names
    band = [tr for tr in _traces(chart) if tr.get("fill") == "tonexty"]
    assert len(band) == 1
    rows = t.metrics[(t.metrics.body == HARBOUR) & (t.metrics.metric == "group_modularity")]
    assert np.allclose(band[0]["y"], rows["low"])
    cps = [tr for tr in _traces(chart) if tr["name"].endswith("change point")]
    assert len(cps) == 2
    expected = json.loads(t.trends.loc[t.trends.body == HARBOUR, "change_points"].iloc[0])
    harbour_cp = next(tr for tr in cps if tr["name"].startswith(HARBOUR))
    want = rows.set_index("period").loc[expected, "value"].to_numpy()
    assert np.allclose(harbour_cp["y"], want)
    assert chart.data["change_point"].sum() == 2
    assert "Change points are marked at" in chart.alt
    # Legend: one entry per body plus one grey key per kind of helper, not one per body each.
    shown = [tr["name"] for tr in _traces(chart) if tr.get("showlegend", True)]
    assert shown == [HARBOUR, TARN, "interval (band)", "shuffled-group mean (dotted)",
                     "change point (diamond)"]
    assert chart.fig.layout.meta["alt"] == html.escape(chart.alt)  # alt travels with the spec


def test_missing_value_is_a_gap_not_a_made_up_number():
    t = make_tables(two_bodies=False)
    chart = trend_chart(t.metrics, "community_group_ari")
    line = next(tr for tr in _traces(chart) if tr["mode"] == "lines+markers")
    assert line["connectgaps"] is False
    assert line["y"][0] is None or np.isnan(line["y"][0])


def test_unknown_metric_drawn_generically():
    t = make_tables(two_bodies=False)
    chart = trend_chart(t.metrics, "novel_index")
    assert chart.fig.layout.yaxis.title.text == "Novel index"
    assert chart.name == "trend-novel_index"
    assert not chart.empty


def test_all_empty_metric_says_not_computed():
    m = pd.DataFrame({"body": ["B"] * 2, "period": ["2001", "2002"], "metric": "silhouette",
                      "value": [np.nan, np.nan], "note": ["one group present", None]})
    chart = trend_chart(ReportTables(metrics=m).metrics, "silhouette")
    assert chart.empty
    assert chart.note == "Not computed: one group present."


def test_undated_periods_use_a_category_axis():
    m = pd.DataFrame({"body": "B", "period": ["spring", "autumn"], "metric": "ei_index",
                      "value": [-0.2, -0.4]})
    chart = trend_chart(ReportTables(metrics=m).metrics, "ei_index")
    assert chart.fig.layout.xaxis.type == "category"
    assert list(_traces(chart)[0]["x"]) == ["spring", "autumn"]


def test_user_strings_escaped_in_trace_names_and_hover():
    m = pd.DataFrame({"body": "<b>Board</b>", "period": ["2001", "2002"], "metric": "ei_index",
                      "value": [-0.2, -0.4], "note": ["<script>x</script>", None]})
    chart = trend_chart(ReportTables(metrics=m).metrics, "ei_index")
    tr = _traces(chart)[0]
    assert tr["name"] == "&lt;b&gt;Board&lt;/b&gt;"
    flat = json.dumps(tr["customdata"])
    assert "<script>" not in flat and "&lt;script&gt;" in flat
    assert chart.data["body"].iloc[0] == "<b>Board</b>"  # CSV keeps the raw name


def test_change_points_accept_json_or_comma_list():
    trends = pd.DataFrame({"body": ["A", "B"], "metric": ["m", "m"],
                           "change_points": ['["2004", "2010"]', "2004, 2010"]})
    assert change_points(trends, "A", "m") == ["2004", "2010"]
    assert change_points(trends, "B", "m") == ["2004", "2010"]
    assert change_points(trends, "C", "m") == []
