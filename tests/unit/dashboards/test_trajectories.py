"""Groups over time: quartiles per group and period, and moves between groups counted.

Expected values are pandas' own quantiles of the hand-built frame (the library is the
reference); the move count is read off the frame's construction."""

import pandas as pd

from blocwatch.dashboards.trajectories import moves, spread_chart, spread_frame

ORDER = ["2001", "2002", "2003"]


def _members():
    rows = []
    for p, loyal in zip(ORDER, (0.9, 0.8, 0.7)):
        for i in range(5):
            rows.append({"body": "B", "period": p, "member_id": f"L{i}", "name": f"Name {i}",
                         "group_name": "Left", "metric": "loyalty", "value": loyal - 0.02 * i})
            # R0 sits in Right until 2002 and joins Left in 2003
            group = "Left" if (i == 0 and p == "2003") else "Right"
            rows.append({"body": "B", "period": p, "member_id": f"R{i}", "name": f"Other {i}",
                         "group_name": group, "metric": "loyalty", "value": 0.95})
    return pd.DataFrame(rows)


def test_quartiles_match_pandas_and_moves_are_counted():
    m = _members()
    data = spread_frame(m, ORDER)
    row = data[(data["group_name"] == "Left") & (data["period"] == "2001")].iloc[0]
    left = m[(m["group_name"] == "Left") & (m["period"] == "2001")]["value"]
    assert (row["median"], row["q25"], row["q75"]) == (left.median(), left.quantile(0.25),
                                                       left.quantile(0.75))  # [pandas]
    joined = data.set_index(["group_name", "period"])["joined"]
    assert joined[("Left", "2003")] == 1 and joined.drop(("Left", "2003")).sum() == 0
    mv = moves(m, ORDER)
    assert mv.to_dict("records") == [{"period": "2003", "from_group": "Right",
                                      "to_group": "Left", "n": 1}]


def test_the_chart_names_nobody():
    m = _members()
    periods = m[["body", "period"]].drop_duplicates().assign(
        period_start=lambda d: pd.to_datetime(d["period"] + "-01-01"),
        period_end=lambda d: pd.to_datetime(d["period"] + "-12-31"))
    chart = spread_chart(m, periods, {"Left": "#0072B2", "Right": "#D55E00"})
    spec = chart.fig.to_json()
    assert not chart.empty
    assert "R0" not in spec and "Other 0" not in spec and "Name" not in spec
    assert "name" not in chart.data.columns and "member_id" not in chart.data.columns
    assert "1 move between groups" in chart.alt
