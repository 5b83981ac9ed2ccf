"""Network pictures and group heat maps, checked by structure."""

import json

import numpy as np
import pandas as pd

from blocwatch.dashboards.charts.groups import heatmap_chart
from blocwatch.dashboards.charts.network import member_scores, network_chart
from blocwatch.dashboards.charts.palette import group_colours
from blocwatch.dashboards.prose import numbers
from blocwatch.dashboards.prose.bridges import top_bridges
from tests.dash_synthetic import EVIL_GROUP, EVIL_MEMBER, HARBOUR, make_tables


def _chart(t, period="2001", **kw):
    colours = group_colours(t.groups(), t.colours)
    return network_chart(t.members, t.edges, HARBOUR, period, colours=colours, **kw)


def test_nodes_per_group_edges_and_positions_from_stored_map():
    t = make_tables(evil=True)
    chart = _chart(t)
    traces = chart.fig.to_dict()["data"]
    nodes = [tr for tr in traces if tr["mode"] == "markers"]
    scores = member_scores(t.members, HARBOUR, "2001")
    # One node trace per group, one marker per member.
    assert len(nodes) == scores["group_name"].nunique()
    assert sum(len(tr["x"]) for tr in nodes) == len(scores)
    # Positions are the stored mds_1/mds_2, not a layout.
    xs = sorted(x for tr in nodes for x in tr["x"])
    assert np.allclose(xs, sorted(scores["mds_1"]))
    # Every tie of the period drawn once: 3 coordinates (a, b, gap) per edge.
    ties = t.edges[(t.edges.body == HARBOUR) & (t.edges.period == "2001")]
    drawn = sum(len(tr["x"]) for tr in traces if tr["mode"] == "lines") // 3
    assert drawn == len(ties)
    assert len(chart.extra["edges"]) == len(ties)


def test_spring_layout_when_no_positions_is_seeded():
    t = make_tables()
    t.members = t.members[~t.members.metric.isin(["mds_1", "mds_2"])]
    a, b = _chart(t, seed=3), _chart(t, seed=3)
    c = _chart(t, seed=4)
    xa = [tr["x"] for tr in a.fig.to_dict()["data"] if tr["mode"] == "markers"]
    xb = [tr["x"] for tr in b.fig.to_dict()["data"] if tr["mode"] == "markers"]
    xc = [tr["x"] for tr in c.fig.to_dict()["data"] if tr["mode"] == "markers"]
    assert xa == xb and xa != xc
    assert "force-directed layout (seed 3)" in a.note


def test_max_edges_keeps_the_strongest():
    t = make_tables()
    chart = _chart(t, max_edges=5)
    kept = chart.extra["edges"]["agreement"]
    ties = t.edges[(t.edges.body == HARBOUR) & (t.edges.period == "2001")]["agreement"]
    assert np.allclose(sorted(kept), sorted(ties.nlargest(5)))
    # 12 members: 12*11/2 = 66 pairs; the synthetic tables name no graph rule.
    assert "Ties drawn: the 5 strongest of 66 stored ties" in chart.note


def test_caption_says_which_ties_the_rule_kept():
    t = make_tables()
    ties = t.edges[(t.edges.body == HARBOUR) & (t.edges.period == "2001")]
    weakest = numbers.fmt(ties["agreement"].min())
    weighted = _chart(t, rule="weighted").note
    assert f"Ties drawn: {len(ties)}, those above the equal-likelihood level" in weighted
    assert "tie-count measures" in weighted and f"the weakest drawn agree on {weakest}" in weighted
    backbone = _chart(t, rule="backbone:0.2", max_edges=5, budget=len(ties)).note
    assert "disparity backbone at significance 0.2" in backbone
    assert f"at most {len(ties)} ties a period" in backbone
    assert "Only the 5 strongest are drawn." in backbone
    none = t.edges.iloc[:0]
    empty = network_chart(t.members, none, HARBOUR, "2001", rule="threshold:0.9",
                          colours=group_colours(t.groups(), t.colours)).note
    assert "Ties drawn: none — the graph rule kept no pair" in empty and "at least 0.9" in empty


def test_hover_and_legend_escape_user_strings():
    t = make_tables(evil=True)
    chart = _chart(t)
    spec = chart.fig.to_json()
    assert EVIL_MEMBER not in spec and EVIL_GROUP not in spec
    traces = chart.fig.to_dict()["data"]
    names = [tr["name"] for tr in traces if tr["mode"] == "markers"]
    assert "&lt;/script&gt;&lt;script&gt;window.__pwned=1&lt;/script&gt;" in names
    hover = json.dumps([tr.get("hovertext") for tr in traces])
    assert "&lt;img src=x onerror=alert(1)&gt;" in hover


def test_empty_period_is_not_computed():
    t = make_tables()
    chart = _chart(t, period="1999")
    assert chart.empty and chart.note.startswith("Not computed")


def test_heatmap_is_symmetric_and_matches_table():
    t = make_tables()
    chart = heatmap_chart(t.group_agreement, HARBOUR, ["2001", "2010"])
    traces = chart.fig.to_dict()["data"]
    assert [tr["type"] for tr in traces] == ["heatmap", "heatmap"]
    ga = t.group_agreement[(t.group_agreement.body == HARBOUR)
                           & (t.group_agreement.period == "2010")]
    z = np.array(traces[1]["z"], dtype=float)
    assert np.allclose(z, z.T)
    groups = sorted(set(ga.group_a) | set(ga.group_b))
    for r in ga.itertuples():
        assert z[groups.index(r.group_a), groups.index(r.group_b)] == r.agreement
    assert chart.fig.layout.coloraxis.cmin == 0 and chart.fig.layout.coloraxis.cmax == 1


def test_heatmap_without_table_is_not_computed():
    t = make_tables()
    assert heatmap_chart(t.group_agreement.iloc[0:0], HARBOUR, ["2001"]).empty


def test_top_bridges_sorted_per_period():
    t = make_tables()
    table, metric, _ = top_bridges(t.members, HARBOUR, ["2001", "2002"], n=3)
    assert metric == "participation"
    for period, g in table.groupby("period"):
        assert g["score"].is_monotonic_decreasing and g["rank"].is_monotonic_increasing
        m = t.members[(t.members.body == HARBOUR) & (t.members.period == period)
                      & (t.members.metric == metric)]
        assert g["score"].iloc[0] == m["value"].max() and (g["score"] > 0).all()


def test_top_bridges_with_no_member_scores():
    table, metric, _ = top_bridges(pd.DataFrame(columns=["body", "period", "member_id", "name",
                                                         "group_name", "metric", "value"]),
                                   HARBOUR, ["2001"])
    assert table.empty and metric is None
