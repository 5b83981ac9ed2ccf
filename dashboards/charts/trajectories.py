"""Groups over time: the spread of their members' loyalty or bridging score per period, and
where members moved.

Descriptive only. Each group's line is the median of its members' score in a period with a
band from the lower to the upper quartile (the middle half of the members), so a group whose
loyalty band widens is voting less as one, and a group whose bridging band rises has more
members agreeing with other groups nearly as much as with their own. A member who sits in one
group in a period and in another in the next is counted as a move on the group joined, at the
date of the switch when the results carry it (the members export's ``switched_on``), else at
the later period. Moves are shown as counts, never with names — one member's score says little
on its own (few ballots, an agenda that happened to touch their constituency), and the page
does not single people out.
"""

from __future__ import annotations

import pandas as pd
import plotly.graph_objects as go

from blocwatch.dashboards.charts import palette
from blocwatch.dashboards.charts.chart import Chart, plain
from blocwatch.dashboards.charts.periods import is_dated, period_table
from blocwatch.dashboards.pages.safe import esc
from blocwatch.dashboards.prose import numbers

SPREAD_METRIC = "loyalty"
SPREAD_COLUMNS = {"group_name": "Group", "period": "Period", "median": "Median",
                  "q25": "Lower quartile", "q75": "Upper quartile", "n": "Members",
                  "joined": "Members who joined from another group"}
# Per score drawn: chart name (a stable file stem), heading, title, y-axis, caption.
SPREAD_CHARTS = {
    "loyalty": (
        "groups-over-time", "Groups over time",
        "Groups over time: how closely members vote with their group",
        "Loyalty (median, middle half shaded)",
        "Descriptive: a member's loyalty depends on how many ballots they cast and on what the "
        "agenda held; moves are counted, not named, and say nothing about why."),
    "bridging": (
        "groups-bridging-over-time", "Bridging over time",
        "Groups over time: how far members agree across group lines",
        "Bridging score (median, middle half shaded)",
        "Descriptive: a bridging score of 1 means a member agrees with other groups as much as "
        "with their own; one member's score in one period rests on few ballots and on what the "
        "agenda held, so the chart shows groups, not people. Moves are counted, not named."),
}


def moves(members: pd.DataFrame, order: list[str]) -> pd.DataFrame:
    """``period, from_group, to_group, switched_on, n``: members whose group differs from their
    previous period's (``order``: the periods in time order). ``switched_on`` is the date the
    member joined the new group where the results carry it (else empty)."""
    cols = ["period", "from_group", "to_group", "switched_on", "n"]
    g = members.dropna(subset=["group_name"]).drop_duplicates(["member_id", "period"])
    g = g[g["period"].isin(order)].copy()
    if "switched_on" not in g.columns:
        g["switched_on"] = pd.NaT
    g["pos"] = g["period"].map({p: i for i, p in enumerate(order)})
    g = g.sort_values(["member_id", "pos"])
    g["before"] = g.groupby("member_id")["group_name"].shift()
    moved = g[g["before"].notna() & (g["before"] != g["group_name"])]
    if moved.empty:
        return pd.DataFrame(columns=cols)
    out = (moved.groupby(["period", "before", "group_name", "switched_on"], dropna=False)
           .size().reset_index(name="n")
           .rename(columns={"before": "from_group", "group_name": "to_group"}))
    out["pos"] = out["period"].map({p: i for i, p in enumerate(order)})
    return out.sort_values(["pos", "switched_on"]).drop(columns="pos")[cols].reset_index(
        drop=True)


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


def _move_markers(fig: go.Figure, group: str, colour: str, g: pd.DataFrame,
                  mv: pd.DataFrame, x_of: dict, dated: bool) -> None:
    """Triangles on ``group``'s line where members joined it: at the switch date when known
    (and the axis is dated), else at the period; the height is the group's median then."""
    mv = mv[mv["to_group"] == group]
    if mv.empty:
        return
    median = dict(zip(g["period"], g["median"]))
    mv = mv[mv["period"].isin(median)]
    when = [f"{d:%Y-%m-%d}" if dated and pd.notna(d) else x_of.get(p, p)
            for p, d in zip(mv["period"], mv["switched_on"])]
    said = [f"on {d:%Y-%m-%d}" if pd.notna(d) else f"by {esc(p)}"
            for p, d in zip(mv["period"], mv["switched_on"])]
    fig.add_scatter(x=when, y=plain([median[p] for p in mv["period"]]), mode="markers",
                    showlegend=False, legendgroup=esc(group),
                    marker=dict(symbol="triangle-up-open", size=13, color=colour,
                                line=dict(width=2)),
                    customdata=[[s, int(n), esc(f)] for s, n, f in zip(said, mv["n"],
                                                                      mv["from_group"])],
                    hovertemplate=(f"%{{customdata[1]}} member(s) joined {esc(group)} from "
                                   "%{customdata[2]} %{customdata[0]}<extra></extra>"))


def spread_chart(members: pd.DataFrame, metrics: pd.DataFrame, colours: dict[str, str],
                 *, metric: str = SPREAD_METRIC) -> Chart:
    """The groups' spread of ``metric`` (``loyalty`` or ``bridging``) over time, with moves
    between groups marked at their switch dates."""
    name, heading, title, y_title, note = SPREAD_CHARTS[metric]
    periods = period_table(metrics)
    order = periods["period"].tolist()
    data = spread_frame(members, order, metric)
    mv = moves(members, order)
    x_of = dict(zip(periods["period"], periods["x"]))
    dated = is_dated(periods)
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
                                       f"{metric} %{{y:.2f}}, %{{customdata[1]}} members"
                                       "<extra></extra>"))
        _move_markers(fig, group, colour, g, mv, x_of, dated)
    empty = data.empty
    fig.update_layout(template=palette.template(), height=400, title=dict(text=title),
                      xaxis=dict(type="date" if dated else "category",
                                 title=dict(text="Period")),
                      yaxis=dict(title=dict(text=y_title)))
    n_moves = int(data["joined"].sum()) if not empty else 0
    alt = (f"Line chart of each group's median member {metric} score per period with the "
           f"middle half of its members shaded; {numbers.plural(n_moves, 'move')} between "
           "groups marked with triangles at the date of the move.")
    return Chart(name=name, title=heading, fig=fig, alt=alt, data=data,
                 note=f"Not computed: no member {metric} score in the results." if empty
                 else note, empty=empty,
                 extra={} if mv.empty else {"moves": mv})
