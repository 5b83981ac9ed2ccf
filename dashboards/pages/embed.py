"""Embeddable pieces of one chart: a ``<div>`` snippet, its JSON spec and CSV of its series.

File names are ``<stem>.div.html``, ``<stem>.json``, ``<stem>.csv`` (and ``<stem>.<part>.csv``
for extra series such as a network's edges), where ``stem`` comes from the chart's name, so the
same chart keeps the same file name from run to run.

The snippet expects the host page to load plotly.js once; several snippets can share a page
because every element id carries the body and chart name.
"""

from __future__ import annotations

import json
from pathlib import Path

from blocwatch.dashboards.charts.chart import Chart
from blocwatch.dashboards.pages.html import chart_div, spec_json
from blocwatch.dashboards.pages.safe import esc, script_json

SNIPPET_JS = ("(function () {{ var id = {id}; var d = document.getElementById(id);"
              " var s = JSON.parse(document.getElementById(id + \"-spec\").textContent);"
              " Plotly.newPlot(d, s.data, s.layout, s.config); }})();")


def snippet(chart: Chart, dom_id: str) -> str:
    """HTML fragment drawing ``chart`` on a host page that has loaded plotly.js."""
    if chart.empty:
        return f"<p class='blocwatch-empty'>{esc(chart.note or 'Not computed.')}</p>\n"
    js = SNIPPET_JS.format(id=script_json(json.dumps(dom_id)))
    return (f"<!-- blocwatch chart; needs plotly.js loaded once on the host page -->\n"
            f"{chart_div(chart, dom_id)}\n<script>{js}</script>\n")


def write_pieces(chart: Chart, stem: Path, dom_id: str) -> list[Path]:
    """Write the snippet, JSON spec and CSV files of ``chart``; return their paths."""
    stem.parent.mkdir(parents=True, exist_ok=True)
    out = []
    div = stem.with_name(stem.name + ".div.html")
    div.write_text(snippet(chart, dom_id), encoding="utf-8")
    out.append(div)
    if not chart.empty:
        spec = stem.with_name(stem.name + ".json")
        spec.write_text(spec_json(chart), encoding="utf-8")
        out.append(spec)
    csv = stem.with_name(stem.name + ".csv")
    chart.data.to_csv(csv, index=False, date_format="%Y-%m-%d")
    out.append(csv)
    for part, frame in chart.extra.items():
        path = stem.with_name(f"{stem.name}.{part}.csv")
        frame.to_csv(path, index=False)
        out.append(path)
    return out
