"""Groups over time: quartiles per group and period, and moves between groups counted.

Expected values are pandas' own quantiles of the hand-built frame (the library is the
reference); the move count is read off the frame's construction."""

import pandas as pd

from blocwatch.dashboards.charts.trajectories import moves, spread_chart, spread_frame

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
    assert mv.drop(columns="switched_on").to_dict("records") == [
        {"period": "2003", "from_group": "Right", "to_group": "Left", "n": 1}]
    assert mv["switched_on"].isna().all()  # the frame carries no switch dates


def _periods(m):
    return m[["body", "period"]].drop_duplicates().assign(
        period_start=lambda d: pd.to_datetime(d["period"] + "-01-01"),
        period_end=lambda d: pd.to_datetime(d["period"] + "-12-31"))


def _with_switch_date(m):
    # As the members export gives it: R0's 2003 rows carry the date it joined Left.
    m = m.copy()
    m["switched_on"] = pd.NaT
    m.loc[(m.member_id == "R0") & (m.period == "2003"), "switched_on"] = \
        pd.Timestamp("2002-11-20")
    return m


def test_moves_are_marked_at_their_switch_date():
    m = _with_switch_date(_members())
    chart = spread_chart(m, _periods(m), {"Left": "#0072B2", "Right": "#D55E00"})
    markers = [tr for tr in chart.fig.data if tr.marker.symbol == "triangle-up-open"]
    assert len(markers) == 1 and list(markers[0].x) == ["2002-11-20"]
    # On the joined group's line: its 2003 median (pandas), not at the period midpoint.
    left_2003 = m[(m.group_name == "Left") & (m.period == "2003")]["value"].median()
    assert list(markers[0].y) == [left_2003]
    moves_csv = chart.extra["moves"]
    assert moves_csv["switched_on"].tolist() == [pd.Timestamp("2002-11-20")]
    assert "member_id" not in moves_csv.columns and "name" not in moves_csv.columns


def test_bridging_spread_is_drawn_from_bridging_rows():
    m = _members()
    b = m.assign(metric="bridging", value=m["value"] / 2)
    both = pd.concat([m, b], ignore_index=True)
    chart = spread_chart(both, _periods(m), {}, metric="bridging")
    assert chart.name == "groups-bridging-over-time" and not chart.empty
    right = b[(b.group_name == "Right") & (b.period == "2001")]["value"]
    row = chart.data.set_index(["group_name", "period"]).loc[("Right", "2001")]
    assert row["median"] == right.median()  # [pandas]
    assert "not people" in chart.note
    missing = spread_chart(m, _periods(m), {}, metric="bridging")
    assert missing.empty and "no member bridging score" in missing.note


def test_the_chart_names_nobody():
    m = _with_switch_date(_members())
    chart = spread_chart(m, _periods(m), {"Left": "#0072B2", "Right": "#D55E00"})
    spec = chart.fig.to_json()
    assert not chart.empty
    assert "R0" not in spec and "Other 0" not in spec and "Name" not in spec
    assert "name" not in chart.data.columns and "member_id" not in chart.data.columns
    assert "1 move between groups" in chart.alt
