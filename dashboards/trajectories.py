"""Groups over time: the spread of their members' loyalty per period, and where members moved.

Descriptive only. Each group's line is the median of its members' loyalty in a period with a
band from the lower to the upper quartile (the middle half of the members), so a group whose
band widens is voting less as one. A member who sits in one group in a period and in another
in the next is counted as a move at the later period, on the group joined; moves are shown as
counts, never with names — one member's score says little on its own (few ballots, an agenda
that happened to touch their constituency), and the page does not single people out.
"""

from __future__ import annotations

import pandas as pd
import plotly.graph_objects as go

from blocwatch.dashboards import numbers, palette
from blocwatch.dashboards.chart import Chart, plain
from blocwatch.dashboards.periods import is_dated, period_table
from blocwatch.dashboards.safe import esc

SPREAD_METRIC = "loyalty"
SPREAD_COLUMNS = {"group_name": "Group", "period": "Period", "median": "Median",
                  "q25": "Lower quartile", "q75": "Upper quartile", "n": "Members",
                  "joined": "Members who joined from another group"}


def moves(members: pd.DataFrame, order: list[str]) -> pd.DataFrame:
    """``period, from_group, to_group, n``: members whose group differs from their previous
    period's (``order``: the periods in time order)."""
    g = members.dropna(subset=["group_name"]).drop_duplicates(["member_id", "period"])
    g = g[g["period"].isin(order)][["member_id", "period", "group_name"]].copy()
    g["pos"] = g["period"].map({p: i for i, p in enumerate(order)})
    g = g.sort_values(["member_id", "pos"])
    g["before"] = g.groupby("member_id")["group_name"].shift()
    g["before_pos"] = g.groupby("member_id")["pos"].shift()
    moved = g[g["before"].notna() & (g["before"] != g["group_name"])]
    out = (moved.groupby(["period", "before", "group_name"]).size()
           .reset_index(name="n").rename(columns={"before": "from_group",
                                                  "group_name": "to_group"}))
    return out


def spread_frame(members: pd.DataFrame, order: list[str],
                 metric: str = SPREAD_METRIC) -> pd.DataFrame:
    """Per group and period: median, quartiles and count of the members' ``metric``, and how
    many members joined the group from another one at that period."""
    rows = members[(members["metric"] == metric)].dropna(subset=["value", "group_name"])
    if rows.empty:
        return pd.DataFrame(columns=list(SPREAD_COLUMNS))
    agg = (rows.groupby(["group_name", "period"])["value"]
           .agg(median="median", q25=lambda s: s.quantile(0.25),
                q75=lambda s: s.quantile(0.75), n="count").reset_index())
    joined = moves(members, order).groupby(["period", "to_group"])["n"].sum()
    agg["joined"] = [int(joined.get((p, g), 0)) for g, p in zip(agg["group_name"],
                                                                  agg["period"])]
    agg["pos"] = agg["period"].map({p: i for i, p in enumerate(order)})
    return agg.sort_values(["group_name", "pos"]).drop(columns="pos").reset_index(drop=True)


def spread_chart(members: pd.DataFrame, metrics: pd.DataFrame,
                 colours: dict[str, str]) -> Chart:
    """The groups' loyalty spread over time, with moves between groups marked."""
    periods = period_table(metrics)
    order = periods["period"].tolist()
    data = spread_frame(members, order)
    x_of = dict(zip(periods["period"], periods["x"]))
    fig = go.Figure()
    for group, g in data.groupby("group_name", sort=True):
        colour = colours.get(group, palette.NO_GROUP)
        x = [x_of.get(p, p) for p in g["period"]]
        fig.add_scatter(x=x, y=plain(g["q75"]), mode="lines", line=dict(width=0),
                        showlegend=False, hoverinfo="skip", legendgroup=esc(group))
        fig.add_scatter(x=x, y=plain(g["q25"]), mode="lines", line=dict(width=0),
                        fill="tonexty", fillcolor=palette.with_alpha(colour, 0.18),
                        showlegend=False, hoverinfo="skip", legendgroup=esc(group))
        fig.add_scatter(x=x, y=plain(g["median"]), mode="lines+markers", name=esc(group),
                        legendgroup=esc(group), line=dict(color=colour, width=2.2),
                        customdata=[[esc(p), int(n)] for p, n in zip(g["period"], g["n"])],
                        hovertemplate=(f"<b>{esc(group)}</b> · %{{customdata[0]}}<br>median "
                                       "loyalty %{y:.2f}, %{customdata[1]} members"
                                       "<extra></extra>"))
        j = g[g["joined"] > 0]
        if len(j):
            fig.add_scatter(x=[x_of.get(p, p) for p in j["period"]], y=plain(j["median"]),
                            mode="markers", showlegend=False, legendgroup=esc(group),
                            marker=dict(symbol="triangle-up-open", size=13, color=colour,
                                        line=dict(width=2)),
                            customdata=[[esc(p), int(n)] for p, n in zip(j["period"],
                                                                          j["joined"])],
                            hovertemplate=(f"%{{customdata[0]}}: %{{customdata[1]}} member(s) "
                                           f"joined {esc(group)} from another group"
                                           "<extra></extra>"))
    empty = data.empty
    fig.update_layout(template=palette.template(), height=400,
                      title=dict(text="Groups over time: how closely members vote with their "
                                      "group"),
                      xaxis=dict(type="date" if is_dated(periods) else "category",
                                 title=dict(text="Period")),
                      yaxis=dict(title=dict(text="Loyalty (median, middle half shaded)")))
    n_moves = int(data["joined"].sum()) if not empty else 0
    alt = (f"Line chart of each group's median member loyalty per period with the middle half "
           f"of its members shaded; {numbers.plural(n_moves, 'move')} between groups marked "
           "with triangles at the period of the move.")
    note = ("Descriptive: a member's loyalty depends on how many ballots they cast and on what "
            "the agenda held; moves are counted, not named, and say nothing about why.")
    return Chart(name="groups-over-time", title="Groups over time", fig=fig, alt=alt,
                 data=data, note="Not computed: no member loyalty in the results." if empty
                 else note, empty=empty)
