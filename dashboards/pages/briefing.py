"""The briefing page of one body: headline, trends, networks, groups, bridges, notes, methods."""

from __future__ import annotations

import pandas as pd

from blocwatch.dashboards.charts.agenda import agenda_section
from blocwatch.dashboards.charts.chart import Chart, slug
from blocwatch.dashboards.charts.groups import heatmap_chart
from blocwatch.dashboards.charts.network import network_chart
from blocwatch.dashboards.charts.periods import period_table
from blocwatch.dashboards.charts.trajectories import SPREAD_CHARTS, SPREAD_COLUMNS, spread_chart
from blocwatch.dashboards.charts.trends import change_points, trend_chart
from blocwatch.dashboards.pages.html import chart_block, numbers_table, page
from blocwatch.dashboards.pages.safe import esc
from blocwatch.dashboards.prose import labels, numbers, text
from blocwatch.dashboards.prose.bridges import left_out_note, top_bridges
from blocwatch.dashboards.prose.counted import counted_html
from blocwatch.dashboards.prose.headline import (
    SUMMARY_COLUMNS,
    headline_metrics,
    lead_metric,
    summary,
    summary_table,
    trend_sentence,
)
from blocwatch.dashboards.prose.verdict import MIN_BALLOTS, MIN_MEMBERS, opening
from blocwatch.dashboards.tables import ReportTables

TREND_COLUMNS = {"period": "Period", "value": "Value", "low": "Low", "high": "High",
                 "null_mean": "Shuffled-group mean", "null_p": "Permutation p (one-sided)",
                 "n_members": "Members",
                 "n_ballots": "Ballots", "change_point": "Change point", "note": "Note"}


def chosen_periods(tables: ReportTables, body: str, periods: list[str] | None = None) -> list[str]:
    """Periods for the network pictures: as given, else first, change point(s), last.

    Only periods with member or tie data are eligible by default; order follows time.
    """
    order = period_table(tables.metrics[tables.metrics["body"] == body])["period"].tolist()
    with_data = set(tables.edges.loc[tables.edges["body"] == body, "period"])
    with_data |= set(tables.members.loc[tables.members["body"] == body, "period"])
    order += sorted(with_data - set(order))
    if periods is not None:
        return [p for p in order if p in set(periods)] + [p for p in periods if p not in order]
    eligible = [p for p in order if p in with_data]
    if not eligible:
        return []
    lead = lead_metric(tables.metrics, body)
    cps = [p for p in change_points(tables.trends, body, lead) if p in eligible][:2] if lead else []
    pick = {eligible[0], eligible[-1], *cps}
    return [p for p in eligible if p in pick]


def build_briefing(tables: ReportTables, body: str, *, colours: dict[str, str],
                   periods: list[str] | None = None, seed: int = 0, n_bridges: int = 3,
                   max_edges: int = 3000, bridge: str | None = None,
                   plotly_src: str | None = None) -> tuple[str, list[Chart]]:
    """HTML of the briefing page for ``body`` and the charts on it (for embedding).

    ``plotly_src``: relative URL of plotly.js beside the page; None puts it inline."""
    t = tables.for_body(body)
    m = t.metrics
    key = slug(body)
    charts: list[Chart] = []
    parts = [f"<header><p class='bw-kicker'>blocwatch briefing · voting patterns</p>"
             f"<h1>{esc(body)}</h1>{_span(m)}</header>", "NAV"]
    known = labels.catalogue(tables.measures)
    parts.append(_summary(t, body, known))
    names = labels.ordered(m["metric"].dropna().unique())
    parts.append("<section id='trends'><h2>How the measures moved</h2>")
    if not names:
        parts.append("<p class='bw-muted'>Not computed: the results hold no metric for this "
                     "body.</p>")
    for name in names:
        c = trend_chart(m, name, trends=t.trends, known=known)
        charts.append(c)
        parts.append(chart_block(c, f"bw-{key}-{c.name}", TREND_COLUMNS, metric=name))
    parts.append("</section>")
    agenda_html, agenda_charts = agenda_section(t, key, lead_metric(m, body))
    charts += agenda_charts
    parts.append(agenda_html)
    chosen = chosen_periods(t, body, periods)
    parts.append("<section id='networks'><h2>Who votes with whom</h2>")
    if not chosen:
        parts.append("<p class='bw-muted'>Not computed: no member or tie data in the results."
                     "</p>")
    for period in chosen:
        c = network_chart(t.members, t.edges, body, period, colours=colours, bridge=bridge,
                          seed=seed, max_edges=max_edges,
                          rule=(tables.provenance.get("parameters") or {}).get("rule"),
                          budget=tables.provenance.get("edge_budget"))
        charts.append(c)
        cols = {"name": "Member", "group_name": "Group"}
        cols |= {k: labels.member_label(k) for k in c.data.columns
                 if k not in ("member_id", "name", "group_name", "x", "y")}
        parts.append(chart_block(c, f"bw-{key}-{c.name}", cols, tall=True))
    parts.append("</section><section id='groups'><h2>Agreement between groups</h2>")
    heat_periods = chosen or period_table(m)["period"].tolist()[-1:]
    c = heatmap_chart(t.group_agreement, body, heat_periods)
    charts.append(c)
    parts.append(chart_block(c, f"bw-{key}-{c.name}", {
        "period": "Period", "group_a": "Group", "group_b": "Group", "agreement": "Agreement",
        "n_pairs": "Pairs"}))
    for score in SPREAD_CHARTS:  # loyalty, then bridging: groups only, never names
        c = spread_chart(t.members, m, colours, metric=score)
        charts.append(c)
        parts.append(chart_block(c, f"bw-{key}-{c.name}", SPREAD_COLUMNS))
    parts.append(_bridges(t, body, n_bridges, bridge, chosen))
    parts.append(counted_html(m, t.members, tables.provenance))
    parts[parts.index("NAV")] = _nav(agenda=bool(agenda_html))
    parts.append(text.reading_html())
    parts.append(text.methods_html(names, sorted(t.members["metric"].dropna().unique()), known))
    parts.append(text.provenance_html(tables.provenance, sorted(m["run_id"].dropna().unique())))
    html = page(f"{body} — blocwatch briefing", "\n".join(parts),
                charts=any(not c.empty for c in charts), plotly_src=plotly_src)
    return html, charts


VERDICT_RULE = (
    "How the opening sentence is chosen: from the lead measure only. Too little data to tell "
    f"when it has a value in fewer than two periods, when a typical period has fewer than "
    f"{MIN_MEMBERS} members or {MIN_BALLOTS} counted ballots, or when the first or last period "
    "has no interval that can be read. A clear rise or fall when the 95 % intervals of the "
    "first and last period do not overlap and the trend test (where computed) does not point "
    "the other way with p < 0.05. No clear change otherwise.")


def _summary(t: ReportTables, body: str, known: dict) -> str:
    """Verdict first, then at most a handful of headline sentences, then every measure."""
    m = t.metrics
    v = opening(m, body, trends=t.trends, known=known)
    parts = [f"<section id='summary'><p class='bw-headline' data-verdict='{esc(v.kind)}'>"
             f"{esc(v.sentence)}</p>",
             f"<details class='bw-rule'><summary>How this sentence is chosen</summary>"
             f"<p>{esc(VERDICT_RULE)}</p></details>"]
    lead = lead_metric(m, body)
    if lead and (sentence := trend_sentence(t.trends, body, lead)):
        parts.append(f"<p>{esc(sentence)}</p>")
    heads = headline_metrics(m, body)
    if heads:
        parts.append("<ul class='bw-headlines'>" + "".join(
            f"<li>{esc(summary(m, body, n, trends=t.trends, known=known))}</li>"
            for n in heads) + "</ul>")
    if _flat_intervals(m, known):
        parts.append("<p class='bw-caution'>Some intervals on this page show no spread across "
                     "resamples. That is not certainty: with few members or few contested "
                     "ballots, resampling ballots cannot show how much the figure could "
                     "change. Such values are marked and no interval is printed for them.</p>")
    table = summary_table(m, body, trends=t.trends, known=known)
    if not table.empty:
        parts.append("<h2>Every measure</h2><p>First and last period with a value; "
                     "“Intervals” says whether the two 95 % intervals overlap (apart: a clear "
                     "difference); “Trend p” is the Mann–Kendall test over all periods.</p>"
                     + numbers_table(table, SUMMARY_COLUMNS))
    return "".join(parts) + "</section>"


def _flat_intervals(m: pd.DataFrame, known: dict) -> bool:
    """Whether any non-count value has an interval with no spread at the precision shown."""
    for r in m[m["value"].notna()].itertuples():
        integer = labels.info(r.metric, known).integer
        if not integer and numbers.interval_state(r.value, r.low, r.high) == "degenerate":
            return True
    return False


def _bridges(t: ReportTables, body: str, n: int, bridge: str | None,
             chosen: list[str]) -> str:
    order = period_table(t.metrics)["period"].tolist()
    order += sorted(set(t.members["period"].dropna()) - set(order))
    table, used, left = top_bridges(t.members, body, order, n=n, metric=bridge)
    head = ("<section id='bridges'><h2>Members who bridge groups</h2>"
            f"<p class='bw-caution'>{esc(BRIDGE_CAUTION)}</p>")
    if used is None:
        return (head + "<p class='bw-muted'>Not computed: no member scores in the results.</p>"
                "</section>")
    label = labels.member_label(used)
    note = left_out_note(left, len(order))
    note_html = f"<p class='bw-note'>{esc(note)}</p>" if note else ""
    if table.empty:
        return (head + f"<p>Nobody stands out: no member has a {esc(label.lower())} above "
                "zero that the rules below allow to be listed.</p>" + note_html
                + _bridge_terms(used) + "</section>")
    cols = {"period": "Period", "rank": "Rank", "name": "Member", "group": "Group",
            "score": label}
    short = table[table["period"].isin(chosen)] if chosen else table
    intro = (f"<p>Up to {n} members per period with the highest {esc(label.lower())}, in the "
             "periods pictured above (more where scores tie).</p>")
    every = (f"<details><summary>Every period ({table['period'].nunique()})</summary>"
             f"{numbers_table(table, cols, metric=used)}</details>")
    return (head + intro + numbers_table(short, cols, metric=used) + every + note_html
            + _bridge_terms(used) + "</section>")


BRIDGE_CAUTION = (
    "These scores describe recorded votes, not people: a member who often votes with another "
    "group may be a broker, a moderate, or simply absent on the divisive ballots. Do not use "
    "this list to single out, rank or target anyone.")


def _bridge_terms(metric: str) -> str:
    """Each column of the bridges table, defined on the page."""
    what = labels.MEMBER_WHAT.get(metric, "the member score stored with the results")
    terms = [
        ("Rank", "1 is the highest score in the period; members whose scores print the same "
                 "share a rank, and all members tied at the last rank shown are shown."),
        ("Member", "the name in the roster; the member id is added where two members share "
                   "a name."),
        ("Group", "the member's group in that period."),
        (labels.member_label(metric), f"{what[:1].upper()}{what[1:]}."),
        ("Who is never listed", "members alone in their group (their ties cross groups by "
                                "construction), members with a score of zero, and members "
                                "whose score is not above what shuffled groups give where "
                                "the results hold that test."),
    ]
    items = "".join(f"<dt>{esc(k)}</dt><dd>{esc(v)}</dd>" for k, v in terms)
    return f"<dl class='bw-terms'>{items}</dl>"


def _span(m: pd.DataFrame) -> str:
    p = period_table(m)
    if p.empty:
        return ""
    return (f"<p class='bw-kicker'>{numbers.plural(len(p), 'period')}, "
            f"{esc(p['period'].iloc[0])} to "
            f"{esc(p['period'].iloc[-1])}</p>")


def _nav(*, agenda: bool = False) -> str:
    links = [("summary", "Summary"), ("trends", "Trends"),
             *([("agenda", "What moved it")] if agenda else []), ("networks", "Networks"),
             ("groups", "Groups"), ("bridges", "Bridges"), ("counted", "Who is counted"),
             ("reading", "Reading these figures"),
             ("methods", "Methods"), ("provenance", "Provenance")]
    return ("<nav class='bw-nav' aria-label='Sections'>"
            + "".join(f"<a href='#{a}'>{t}</a>" for a, t in links) + "</nav>")
