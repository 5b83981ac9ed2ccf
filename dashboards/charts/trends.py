"""Trend figures: one metric over periods, one line per body.

Each body gets a line with markers, a shaded band where the table has an interval (low/high), a
dotted line for the null mean where present (the value expected with shuffled groups), and open
diamonds at the change points the trends table names. Empty values stay gaps: nothing is
interpolated.
"""

from __future__ import annotations

import json

import pandas as pd
import plotly.graph_objects as go

from blocwatch.dashboards.charts import palette
from blocwatch.dashboards.charts.chart import Chart, plain
from blocwatch.dashboards.charts.periods import is_dated, period_table
from blocwatch.dashboards.pages.safe import esc
from blocwatch.dashboards.prose import labels, numbers


def change_points(trends: pd.DataFrame | None, body: str, metric: str) -> list[str]:
    """Period names listed as change points for ``body`` × ``metric`` (empty when none)."""
    if trends is None or trends.empty:
        return []
    rows = trends[(trends["body"] == body) & (trends["metric"] == metric)]
    out: list[str] = []
    for raw in rows["change_points"].dropna():
        try:
            value = json.loads(raw)
        except (TypeError, ValueError):
            value = [p.strip() for p in str(raw).split(",") if p.strip()]
        out.extend(str(v) for v in (value if isinstance(value, list) else [value]))
    return out


def _series(metrics: pd.DataFrame, metric: str, trends, known=None) -> pd.DataFrame:
    rows = metrics[metrics["metric"] == metric]
    periods = period_table(metrics)
    data = periods.merge(rows.drop(columns=["period_start", "period_end"]),
                         on=["body", "period"], how="inner")
    data["change_point"] = False
    for body in data["body"].unique():
        cps = set(change_points(trends, body, metric))
        data.loc[(data["body"] == body) & data["period"].isin(cps), "change_point"] = True
    keep = ["body", "period", "period_start", "period_end", "x", "value", "low", "high",
            "null_mean", "null_p", "n_members", "n_ballots", "change_point", "note"]
    return _honest(data[keep].reset_index(drop=True), labels.info(metric, known).integer)


def _honest(data: pd.DataFrame, integer: bool) -> pd.DataFrame:
    """Never draw or list an interval that leaves out its estimate; say when one has no spread.

    Such an interval is blanked (band and table) and the row's note says why, so the page can
    never show "x (a to b)" with x outside a to b.
    """
    data = data.copy()
    for i, r in data.iterrows():
        state = numbers.interval_state(r.value, r.low, r.high, integer=integer)
        if state not in numbers.INTERVAL_WORDS or (state == "degenerate" and integer):
            continue
        if state == "outside":
            data.loc[i, ["low", "high"]] = float("nan")
        said = numbers.INTERVAL_WORDS[state]
        note = r.note if isinstance(r.note, str) and r.note else ""
        data.loc[i, "note"] = f"{note}; {said}" if note else said[:1].upper() + said[1:]
    return data


def _hover(label: str) -> str:
    return ("<b>%{customdata[0]}</b> · %{customdata[1]}<br>" + esc(label)
            + ": %{customdata[2]}<br>members %{customdata[3]}, ballots %{customdata[4]}"
            "%{customdata[5]}<extra></extra>")


def _customdata(g: pd.DataFrame, integer: bool) -> list[list[str]]:
    rows = []
    for r in g.itertuples():
        interval = numbers.fmt_estimate(r.value, r.low, r.high, integer=integer)
        note = f"<br>{esc(r.note)}" if isinstance(r.note, str) and r.note else ""
        rows.append([esc(r.body), esc(r.period), esc(interval),
                     numbers.fmt(r.n_members, integer=True),
                     numbers.fmt(r.n_ballots, integer=True), note])
    return rows


def trend_chart(metrics: pd.DataFrame, metric: str, *, trends: pd.DataFrame | None = None,
                name_prefix: str = "trend",
                known: dict[str, labels.MetricInfo] | None = None) -> Chart:
    """Figure of ``metric`` over periods for every body in ``metrics``.

    Parameters
    ----------
    metrics : DataFrame
        The ``ReportTables.metrics`` frame (any number of bodies).
    metric : str
        Metric name; unknown names are drawn with a generic label.
    trends : DataFrame, optional
        ``ReportTables.trends``; its ``change_points`` become markers.
    name_prefix : str
        File stem prefix of the chart (``trend`` gives ``trend-<metric>``).
    known : dict, optional
        ``labels.catalogue(...)`` of the stored metric list (labels and count flags).
    """
    info = labels.info(metric, known)
    data = _series(metrics, metric, trends, known)
    fig = go.Figure()
    bodies = list(dict.fromkeys(data["body"]))
    for i, body in enumerate(bodies):
        g = data[data["body"] == body]
        colour = palette.series_colour(i)
        group = f"body{i}"
        if g["low"].notna().any() and g["high"].notna().any():
            fig.add_scatter(x=plain(g["x"]), y=plain(g["high"]), mode="lines", line=dict(width=0),
                            name=esc(f"{body}: interval"), legendgroup=group,
                            showlegend=False, hoverinfo="skip")
            fig.add_scatter(x=plain(g["x"]), y=plain(g["low"]), mode="lines", line=dict(width=0),
                            fill="tonexty", fillcolor=palette.with_alpha(colour, 0.18),
                            name=esc(f"{body}: interval"), legendgroup=group, hoverinfo="skip",
                            showlegend=False)
        if g["null_mean"].notna().any():
            fig.add_scatter(x=plain(g["x"]), y=plain(g["null_mean"]), mode="lines",
                            line=dict(color=colour, width=1.2, dash="dot"),
                            name=esc(f"{body}: shuffled-group mean"), legendgroup=group,
                            hoverinfo="skip", showlegend=False)
        fig.add_scatter(x=plain(g["x"]), y=plain(g["value"]), mode="lines+markers", name=esc(body),
                        legendgroup=group, line=dict(color=colour, width=2.4),
                        marker=dict(size=6, color=colour), connectgaps=False,
                        customdata=_customdata(g, info.integer), hovertemplate=_hover(info.label))
        cp = g[g["change_point"]]
        if len(cp):
            fig.add_scatter(x=plain(cp["x"]), y=plain(cp["value"]), mode="markers",
                            name=esc(f"{body}: change point"), legendgroup=group,
                            showlegend=False,
                            marker=dict(symbol="diamond-open", size=15, color=colour,
                                        line=dict(width=2.4)),
                            customdata=_customdata(cp, info.integer),
                            hovertemplate="change point · " + _hover(info.label))
    _add_key(fig, data)
    dated = is_dated(period_table(metrics))
    empty = data["value"].notna().sum() == 0
    fig.update_layout(
        template=palette.template(), title=dict(text=esc(info.label)),
        xaxis=dict(title=dict(text="Period (midpoint)" if dated else "Period"),
                   type="date" if dated else "category"),
        yaxis=dict(title=dict(text=esc(info.label)), dtick=1 if info.integer else None),
        showlegend=True, height=400,
        legend=dict(traceorder="normal"))
    return Chart(name=f"{name_prefix}-{metric}", title=info.label, fig=fig,
                 alt=_alt(data, info), data=data,
                 note=_empty_note(metrics, metric) if empty else "", empty=empty)


KEY_GREY = "#6E6E6E"


def _add_key(fig: go.Figure, data: pd.DataFrame) -> None:
    """Legend entries explaining band, dotted line and diamonds once, in grey, for all bodies.

    The per-body helper traces stay out of the legend, which keeps it short with many bodies.
    """
    keys = []
    if data["low"].notna().any():
        keys.append(("interval (band)", dict(mode="lines", line=dict(
            color=palette.with_alpha(KEY_GREY, 0.3), width=10))))
    if data["null_mean"].notna().any():
        keys.append(("shuffled-group mean (dotted)", dict(mode="lines", line=dict(
            color=KEY_GREY, width=1.2, dash="dot"))))
    if data["change_point"].any():
        keys.append(("change point (diamond)", dict(mode="markers", marker=dict(
            symbol="diamond-open", size=12, color=KEY_GREY, line=dict(width=2)))))
    for name, style in keys:
        fig.add_scatter(x=[None], y=[None], name=name, legendgroup="key", hoverinfo="skip",
                        **style)


def _empty_note(metrics: pd.DataFrame, metric: str) -> str:
    notes = metrics.loc[metrics["metric"] == metric, "note"].dropna().unique()
    why = "; ".join(notes[:3]) if len(notes) else "no value in the results"
    return f"Not computed: {why}."


def _alt(data: pd.DataFrame, info: labels.MetricInfo) -> str:
    label = info.label
    bodies = list(dict.fromkeys(data["body"]))
    have = data[data["value"].notna()]
    if have.empty:
        return f"{label}: not computed for any period."
    first, last = data["period"].iloc[0], data["period"].iloc[-1]
    if len(bodies) == 1:
        who = f"{bodies[0]} over {numbers.plural(data['period'].nunique(), 'period')}"
    else:
        who = f"{len(bodies)} bodies ({', '.join(bodies)})"
    text = (f"Line chart of {label} for {who} from {first} to {last}; values range from "
            f"{numbers.fmt_range(have['value'].min(), have['value'].max(), integer=info.integer)}"
            ".")
    if data["low"].notna().any():
        text += " A shaded band shows each period's interval."
    cps = data.loc[data["change_point"], "period"].tolist()
    if cps:
        text += f" Change points are marked at {', '.join(dict.fromkeys(cps))}."
    return text
