"""The comparison page: every body on one chart per metric, on a shared period axis."""

from __future__ import annotations

from blocwatch.dashboards.charts.chart import Chart, slug
from blocwatch.dashboards.charts.periods import length_note, period_table
from blocwatch.dashboards.charts.trends import trend_chart
from blocwatch.dashboards.pages.briefing import TREND_COLUMNS
from blocwatch.dashboards.pages.html import chart_block, page
from blocwatch.dashboards.pages.safe import esc
from blocwatch.dashboards.prose import labels, text
from blocwatch.dashboards.prose.verdict import opening
from blocwatch.dashboards.tables import ReportTables

COMPARE_COLUMNS = {"body": "Body", **TREND_COLUMNS}


def build_comparison(tables: ReportTables, *, briefing_links: dict[str, str] | None = None,
                     plotly_src: str | None = None) -> tuple[str, list[Chart]]:
    """HTML of the comparison page and its charts.

    ``briefing_links`` maps body → relative URL of its briefing page (linked from the list);
    ``plotly_src`` is the relative URL of plotly.js beside the page (None: inline).
    """
    m = tables.metrics
    known = labels.catalogue(tables.measures)
    bodies = tables.bodies()
    charts: list[Chart] = []
    parts = ["<header><p class='bw-kicker'>blocwatch · comparison</p>"
             "<h1>Trends across bodies</h1></header><section id='summary'>"]
    if len(bodies) < 2:
        parts.append("<p class='bw-note'>These results hold "
                     f"{'one body' if bodies else 'no body'}; load more bodies to compare "
                     "them on one chart.</p>")
    note = length_note(period_table(m))
    if note:
        parts.append(f"<p class='bw-caution'>{esc(note)}</p>")
    items = []
    for body in bodies:
        line = opening(m, body, trends=tables.trends, known=known).sentence
        link = (briefing_links or {}).get(body)
        name = f"<a href='{esc(link)}'>{esc(body)}</a>" if link else esc(body)
        items.append(f"<li><strong>{name}</strong>: {esc(line)}</li>")
    if items:
        parts.append("<ul>" + "".join(items) + "</ul>")
    parts.append("</section><section id='trends'><h2>Measures over time</h2>")
    names = labels.ordered(m["metric"].dropna().unique())
    if not names:
        parts.append("<p class='bw-muted'>Not computed: the results hold no metric.</p>")
    for name in names:
        c = trend_chart(m, name, trends=tables.trends, name_prefix="compare", known=known)
        charts.append(c)
        parts.append(chart_block(c, f"bw-compare-{slug(name)}", COMPARE_COLUMNS, metric=name))
    parts.append("</section>")
    parts.append(text.reading_html())
    parts.append(text.methods_html(names, [], known))
    parts.append(text.provenance_html(tables.provenance, sorted(m["run_id"].dropna().unique())))
    html = page("Trends across bodies — blocwatch", "\n".join(parts),
                charts=any(not c.empty for c in charts), plotly_src=plotly_src)
    return html, charts
