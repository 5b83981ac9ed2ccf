"""Group-versus-group agreement heat maps."""

from __future__ import annotations

import numpy as np
import pandas as pd
from plotly.subplots import make_subplots

from blocwatch.dashboards.charts import palette
from blocwatch.dashboards.charts.chart import Chart, plain
from blocwatch.dashboards.pages.safe import esc


def _matrix(rows: pd.DataFrame, groups: list[str]) -> tuple[np.ndarray, np.ndarray]:
    """Square agreement and pair-count matrices; a pair given once fills both halves."""
    k = len(groups)
    z, n = np.full((k, k), np.nan), np.full((k, k), np.nan)
    at = {g: i for i, g in enumerate(groups)}
    ia = rows["group_a"].map(at).to_numpy(int)
    ib = rows["group_b"].map(at).to_numpy(int)
    for src, dst in ((ia, ib), (ib, ia)):
        free = np.isnan(z[src, dst])
        z[src[free], dst[free]] = rows["agreement"].to_numpy(float)[free]
        n[src[free], dst[free]] = rows["n_pairs"].to_numpy(float)[free]
    return z, n


def short(name: str, limit: int = 16) -> str:
    """Tick-label form of a group name (full names stay in hover text and tables)."""
    return name if len(name) <= limit else name[:limit - 1].rstrip() + "…"


def heatmap_chart(group_agreement: pd.DataFrame, body: str, periods: list[str]) -> Chart:
    """One heat map per chosen period, side by side, on one shared 0–1 colour scale."""
    ga = group_agreement[(group_agreement["body"] == body)
                         & group_agreement["period"].isin(periods)
                         & group_agreement["agreement"].notna()]
    shown = [p for p in periods if (ga["period"] == p).any()]
    if not shown:
        return Chart("groups-heatmap", "Agreement between groups", make_subplots(),
                     "No group agreement table.", ga, empty=True,
                     note="Not computed: no group-versus-group agreement in the results.")
    groups = sorted(set(ga["group_a"]) | set(ga["group_b"]))
    fig = make_subplots(rows=1, cols=len(shown), horizontal_spacing=0.06,
                        subplot_titles=[esc(p) for p in shown])
    ticks = [esc(short(g)) for g in groups]
    full = np.array([esc(g) for g in groups], dtype=object)
    for j, period in enumerate(shown, start=1):
        z, n = _matrix(ga[ga["period"] == period], groups)
        pairs = np.where(np.isnan(n), "–", np.nan_to_num(n).astype(int).astype(str))
        custom = np.dstack([np.full(z.shape, esc(period), dtype=object),
                            pairs.astype(object), np.broadcast_to(full[:, None], z.shape),
                            np.broadcast_to(full[None, :], z.shape)])
        fig.add_heatmap(z=[plain(row) for row in z], x=ticks, y=ticks, coloraxis="coloraxis",
                        row=1, col=j,
                        texttemplate="%{z:.2f}", customdata=custom.tolist(), name=esc(period),
                        hovertemplate="%{customdata[0]}<br>%{customdata[2]} × %{customdata[3]}"
                                      "<br>agreement %{z:.3f}<br>pairs %{customdata[1]}"
                                      "<extra></extra>")
        fig.update_yaxes(autorange="reversed", showticklabels=(j == 1), row=1, col=j)
        fig.update_xaxes(tickangle=-40, row=1, col=j)
    fig.update_layout(template=palette.template(),
                      title=dict(text="Agreement between groups"), height=400,
                      coloraxis=dict(colorscale=palette.SEQUENTIAL, cmin=0, cmax=1,
                                     colorbar=dict(title=dict(text="agreement"))))
    alt = (f"Heat map of average agreement between {len(groups)} groups of {body} in "
           f"{', '.join(shown)}; darker cells mean members of the two groups vote alike more "
           "often, the diagonal is agreement within a group.")
    data = ga[["period", "group_a", "group_b", "agreement", "n_pairs"]].reset_index(drop=True)
    return Chart("groups-heatmap", "Agreement between groups", fig, alt, data)

