"""The network picture of one body in one period.

Members are nodes coloured by group and sized by a bridge score. The ties drawn are the ones the
build stored: the graph rule's edge set, strongest first (``weighted``: the pairs above the
equal-likelihood level, which the tie-count measures count), not every pair; the caption says
which. They are drawn in a few opacity steps so strong agreement reads darker. Nodes sit at
their stored map positions (``mds_1``, ``mds_2``) when every member has them, otherwise at a
seeded networkx spring layout: placement is layout, not a measure, and the same seed gives the
same picture.
"""

from __future__ import annotations

import networkx as nx
import numpy as np
import pandas as pd
import plotly.graph_objects as go

from blocwatch.dashboards.charts import palette
from blocwatch.dashboards.charts.chart import Chart, plain
from blocwatch.dashboards.pages.safe import esc
from blocwatch.dashboards.prose import labels, numbers

# Bridging (agreement with other groups over agreement within the own group) first: it does not
# saturate and gives a small group no bonus; then the participation coefficient, which does not
# saturate either (Guimerà & Amaral 2005), before the thresholded tie share (many at 1.00).
BRIDGE_METRICS = ("bridging", "participation", "cross_tie_share", "delta_q", "cross_partners")
# Member rows that are not scores: who was left out of a period and how a switcher was placed
# (shown under "Who is counted", never drawn as nodes or used as a score).
ROSTER_METRICS = ("left_out", "placement")
EDGE_STEPS = (0.06, 0.14, 0.26, 0.45)  # opacity per agreement quartile of the drawn range
# Which ties each graph rule keeps, for the caption ({level}: the rule's number).
RULE_TIES = {
    "weighted": "those above the equal-likelihood level (Andris et al. 2015), the ties the "
                "tie-count measures count; group modularity weighs every pair",
    "equal-likelihood": "those above the equal-likelihood level (Andris et al. 2015), the graph "
                        "the measures use",
    "threshold": "those agreeing on at least {level} of their shared ballots (rule "
                 "threshold:{level})",
    "backbone": "those of the disparity backbone at significance {level} (Serrano, Boguñá & "
                "Vespignani 2009): each member's partners that stand out among its own",
}


def ties_note(rule: str | None, n_stored: int, n_drawn: int, n_pairs: int | None,
              weakest: float | None, budget: int | None = None) -> str:
    """Caption sentence saying which ties the picture draws.

    >>> ties_note("backbone:0.2", 12, 10, 45, 0.71)[:60]
    'Ties drawn: 12 of the 45 pairs with an agreement value, thos'
    >>> ties_note("backbone:0.2", 12, 10, 45, 0.71)[-32:]
    'Only the 10 strongest are drawn.'
    """
    kind, _, level = (rule or "").partition(":")
    total = f" of the {n_pairs} pairs with an agreement value" if n_pairs else ""
    if kind not in RULE_TIES:  # results that do not say which rule made them
        had = f" ({n_pairs} pairs had an agreement value)" if n_pairs else ""
        return f"Ties drawn: the {n_drawn} strongest of {n_stored} stored ties{had}."
    which = RULE_TIES[kind].format(level=level)
    if n_stored == 0:
        return f"Ties drawn: none — the graph rule kept no pair{total} ({which})."
    out = f"Ties drawn: {n_stored}{total}, {which}"
    out += f"; the weakest drawn agree on {numbers.fmt(weakest)}." if weakest is not None \
        else "."
    if budget and n_stored >= budget:
        out += f" The build stores at most {budget} ties a period, the strongest."
    if n_drawn < n_stored:
        out += f" Only the {n_drawn} strongest are drawn."
    return out


def member_scores(members: pd.DataFrame, body: str, period: str) -> pd.DataFrame:
    """One period's members, wide: ``member_id, name, group_name`` + one column per score."""
    rows = members[(members["body"] == body) & (members["period"] == period)
                   & ~members["metric"].isin(ROSTER_METRICS)]
    if rows.empty:
        return pd.DataFrame(columns=["member_id", "name", "group_name"])
    who = rows.groupby("member_id", sort=False)[["name", "group_name"]].first()
    scores = rows.pivot_table(index="member_id", columns="metric", values="value",
                              aggfunc="first")
    out = who.join(scores).reset_index()
    out.columns.name = None
    return out


def bridge_metric(scores: pd.DataFrame, preferred: str | None = None) -> str | None:
    """The member score used for node size and the bridges table (first one with values)."""
    for m in ((preferred,) if preferred else ()) + BRIDGE_METRICS:
        if m in scores.columns and scores[m].notna().any():
            return m
    return None


def _positions(nodes: pd.DataFrame, edges: pd.DataFrame, seed: int) -> tuple[np.ndarray, str]:
    if {"mds_1", "mds_2"} <= set(nodes.columns) and nodes[["mds_1", "mds_2"]].notna().all().all():
        return nodes[["mds_1", "mds_2"]].to_numpy(float), "stored map positions (mds_1, mds_2)"
    g = nx.Graph()
    g.add_nodes_from(nodes["member_id"])
    g.add_weighted_edges_from(edges[["member_a", "member_b", "agreement"]].itertuples(
        index=False, name=None), weight="agreement")
    pos = nx.spring_layout(g, weight="agreement", seed=seed)
    return (np.array([pos[m] for m in nodes["member_id"]], dtype=float),
            f"a force-directed layout (seed {seed}); distances have no scale")


def network_chart(members: pd.DataFrame, edges: pd.DataFrame, body: str, period: str, *,
                  colours: dict[str, str], bridge: str | None = None, seed: int = 0,
                  max_edges: int = 3000, rule: str | None = None,
                  budget: int | None = None) -> Chart:
    """Network figure of ``body`` in ``period`` (see module docstring).

    ``colours`` maps group → colour (``palette.group_colours``); ``max_edges`` keeps only the
    strongest ties so large bodies stay light; ``rule`` is the graph rule the stored ties come
    from and ``budget`` the most ties a build stores per period (both for the caption).
    """
    name = f"network-{period}"
    scores = member_scores(members, body, period)
    e = edges[(edges["body"] == body) & (edges["period"] == period)
              & edges["agreement"].notna()]
    ids = pd.unique(pd.concat([scores["member_id"], e["member_a"], e["member_b"]]))
    if len(ids) == 0:
        return Chart(name, f"Network in {period}", go.Figure(), f"No network for {period}.",
                     pd.DataFrame(), note=f"Not computed: no members or ties for {period}.",
                     empty=True)
    nodes = pd.DataFrame({"member_id": ids}).merge(scores, on="member_id", how="left")
    nodes["name"] = nodes["name"].fillna(nodes["member_id"])
    xy, layout_note = _positions(nodes, e, seed)
    nodes["x"], nodes["y"] = xy[:, 0], xy[:, 1]
    bridge = bridge_metric(nodes, bridge)
    fig = go.Figure()
    kept = e.sort_values("agreement", ascending=False).head(max_edges)
    _add_edges(fig, kept, nodes)
    _add_nodes(fig, nodes, bridge, colours)
    fig.update_layout(
        template=palette.template(), title=dict(text=esc(f"Who votes with whom, {period}")),
        xaxis=dict(visible=False), yaxis=dict(visible=False, scaleanchor="x"),
        margin=dict(l=8, r=8, t=48, b=8), hovermode="closest", height=560)
    note = f"Position: {layout_note}."
    if bridge:
        note += f" Node size: {labels.member_label(bridge)}."
    # n_pairs: every pair of the period with an agreement value, drawn or not.
    total = int(e["n_pairs"].max()) if "n_pairs" in e and e["n_pairs"].notna().any() else None
    note += " " + ties_note(rule, len(e), len(kept), total,
                            float(kept["agreement"].min()) if len(kept) else None, budget)
    groups = nodes["group_name"].fillna("no group").value_counts()
    alt = (f"Network of {len(nodes)} members of {body} in {period}, coloured by group ("
           + ", ".join(f"{g}: {n}" for g, n in groups.items())
           + f"); {len(kept)} ties drawn, darker lines for more agreement.")
    edges_out = kept[["member_a", "member_b", "agreement"]].reset_index(drop=True)
    return Chart(name, f"Network in {period}", fig, alt, nodes, note=note,
                 extra={"edges": edges_out})


def _add_edges(fig: go.Figure, kept: pd.DataFrame, nodes: pd.DataFrame) -> None:
    if kept.empty:
        return
    where = pd.Series(np.arange(len(nodes)), index=nodes["member_id"])
    a = where.reindex(kept["member_a"]).to_numpy()
    b = where.reindex(kept["member_b"]).to_numpy()
    w = kept["agreement"].to_numpy(float)
    lo, hi = float(w.min()), float(w.max())
    step = np.zeros(len(w), int) if hi == lo else np.minimum(
        ((w - lo) / (hi - lo) * len(EDGE_STEPS)).astype(int), len(EDGE_STEPS) - 1)
    x, y = nodes["x"].to_numpy(), nodes["y"].to_numpy()
    for k, alpha in enumerate(EDGE_STEPS):
        sel = step == k
        if not sel.any():
            continue
        # Segments a→b separated by NaN, built as one array per opacity step (no pair loop).
        xs = np.column_stack([x[a[sel]], x[b[sel]], np.full(sel.sum(), np.nan)]).ravel()
        ys = np.column_stack([y[a[sel]], y[b[sel]], np.full(sel.sum(), np.nan)]).ravel()
        band = "agreement " + numbers.fmt_range(lo + (hi - lo) * k / 4,
                                                lo + (hi - lo) * (k + 1) / 4)
        fig.add_scatter(x=plain(xs), y=plain(ys), mode="lines", hoverinfo="skip", name=band,
                        line=dict(color=palette.with_alpha(palette.INK, alpha), width=1),
                        showlegend=False, legendgroup="ties")


def _add_nodes(fig: go.Figure, nodes: pd.DataFrame, bridge: str | None,
               colours: dict[str, str]) -> None:
    size = np.full(len(nodes), 9.0)
    if bridge:
        v = nodes[bridge].to_numpy(float)
        lo, hi = np.nanmin(v), np.nanmax(v)
        if hi > lo:
            size = np.where(np.isnan(v), 7.0, 7.0 + 17.0 * (v - lo) / (hi - lo))
    score_cols = [c for c in nodes.columns
                  if c not in ("member_id", "name", "group_name", "x", "y", "mds_1", "mds_2")]
    hover = []
    for r in nodes.to_dict("records"):
        lines = [f"<b>{esc(r['name'])}</b>", esc(r["group_name"] or "no group")]
        lines += [f"{esc(labels.member_label(c))}: "
                  f"{numbers.fmt(r[c], integer=c in labels.INTEGER_MEMBER_METRICS)}"
                  for c in score_cols]
        hover.append("<br>".join(lines))
    nodes = nodes.assign(_size=size, _hover=hover)
    for group, g in nodes.groupby(nodes["group_name"].fillna(""), sort=True):
        colour = colours.get(group, palette.NO_GROUP) if group else palette.NO_GROUP
        fig.add_scatter(x=plain(g["x"]), y=plain(g["y"]), mode="markers",
                        name=esc(group or "no group"),
                        marker=dict(size=plain(g["_size"]), color=colour,
                                    line=dict(color="white", width=1)),
                        hovertext=plain(g["_hover"]), hovertemplate="%{hovertext}<extra></extra>")
