"""What moved a body's figures: the agenda's mix, the topics, and which pair of groups.

Charts reuse the trend figure with one line per series instead of one per body: raw against
agenda-standardised, one line per topic, one line per pair of groups. The sentences are written
from the stored numbers only (nothing is recomputed); the split of a change into "agenda mix"
and "remainder" is the difference between the raw and the standardised change, which is exact
for a measure linear in pair agreement and only approximate for the others (modularity,
shares of graph ties) — the sentence says so.
"""

from __future__ import annotations

import pandas as pd

from blocwatch.dashboards.charts.chart import Chart
from blocwatch.dashboards.charts.periods import period_table
from blocwatch.dashboards.charts.trends import trend_chart
from blocwatch.dashboards.prose import labels, numbers

RAW = "All ballots (raw)"
STANDARDISED = "Agenda held fixed (standardised)"
SUBSET_LABELS = {"all": RAW, "agenda-standardised": STANDARDISED}
LINE_COLUMNS = ("period_start", "period_end", "low", "high", "null_mean", "null_p",
                "n_members", "n_ballots", "note", "change_points")


def subset_label(subset: str) -> str:
    """Legend name of a subset: 'topic:budget' → 'Topic: budget', 'pair:A|B' → 'A – B'."""
    if subset in SUBSET_LABELS:
        return SUBSET_LABELS[subset]
    kind, _, name = subset.partition(":")
    return f"Topic: {name}" if kind == "topic" else name.replace("|", " – ")


def _as_lines(frame: pd.DataFrame) -> pd.DataFrame:
    """Rows of one body with ``body`` replaced by the subset's label (one line per subset)."""
    out = frame.copy()
    out["body"] = out["subset"].fillna("all").map(subset_label)
    for col in LINE_COLUMNS:  # the trend figure reads these; pair rows, e.g., have no interval
        if col not in out:
            out[col] = pd.NA
    return out


def _chart(frame: pd.DataFrame, metric: str, name: str, title: str, alt: str,
           trends: pd.DataFrame | None = None, note: str = "") -> Chart:
    lines = _as_lines(frame)
    tr = _as_lines(trends) if trends is not None and not trends.empty else None
    base = trend_chart(lines, metric, trends=tr, name_prefix=name)
    base.fig.update_layout(title=dict(text=title))
    return Chart(name=base.name, title=title, fig=base.fig, alt=alt, data=base.data,
                 note=note or base.note, empty=base.empty)


def standardised_chart(metrics: pd.DataFrame, subsets: pd.DataFrame, trends: pd.DataFrame,
                       subset_trends: pd.DataFrame, metric: str) -> Chart:
    """Raw and agenda-standardised series of one metric for one body, with their intervals."""
    both = pd.concat([metrics.assign(subset="all"),
                      subsets[subsets["subset"] == "agenda-standardised"]], ignore_index=True)
    both = both[both["metric"] == metric]
    label = labels.info(metric).label
    alt = (f"Line chart of {label} per period: computed on all ballots, and with the agenda "
           "held at the reference topic mix (direct standardisation); bands are intervals.")
    tr = pd.concat([trends.assign(subset="all"), subset_trends], ignore_index=True)
    return _chart(both, metric, "agenda", f"{label}: raw and with the agenda held fixed", alt,
                  tr[tr["subset"].isin(["all", "agenda-standardised"])])


def topic_chart(subsets: pd.DataFrame, metric: str) -> Chart:
    """One line per topic (that topic's ballots alone); periods below the minimum are gaps."""
    rows = subsets[subsets["subset"].str.startswith("topic:") & (subsets["metric"] == metric)]
    label = labels.info(metric).label
    n = rows["subset"].nunique()
    alt = (f"Line chart of {label} computed on each topic's ballots alone, {n} topics; a gap "
           "is a period with too few ballots on that topic.")
    return _chart(rows, metric, "topics", f"{label} by topic", alt)


def pair_frame(groups: pd.DataFrame) -> pd.DataFrame:
    """Each pair of groups' agreement per period as metric rows (3+ groups, else empty)."""
    g = groups[groups["group_a"] < groups["group_b"]]
    if len(set(g["group_a"]) | set(g["group_b"])) < 3:
        return pd.DataFrame(columns=["body", "period", "subset", "metric", "value"])
    out = pd.DataFrame({"body": g["body"], "period": g["period"],
                        "subset": "pair:" + g["group_a"] + "|" + g["group_b"],
                        "metric": "pair_agreement", "value": g["agreement"]})
    for col in ("low", "high"):  # the bootstrap interval, where the build stored one
        out[col] = g[col] if col in g else pd.NA
    return out


def pair_chart(groups: pd.DataFrame, periods: pd.DataFrame, subset_trends: pd.DataFrame
               ) -> Chart:
    """One line per pair of groups: the mean agreement of their members' pairs."""
    rows = pair_frame(groups).merge(periods[["period", "period_start", "period_end"]],
                                    on="period", how="left")
    alt = (f"Line chart of the mean agreement between the members of each pair of groups, "
           f"{rows['subset'].nunique()} pairs.")
    banded = rows["low"].notna().any() if "low" in rows else False
    return _chart(rows, "pair_agreement", "pairs", "Agreement between pairs of groups", alt,
                  subset_trends[subset_trends["metric"] == "pair_agreement"],
                  note="" if banded else "No band: the build stored no interval (bootstrap 0).")


def split_sentence(metrics: pd.DataFrame, subsets: pd.DataFrame, metric: str) -> str | None:
    """How much of the change between the first and last period the agenda's mix accounts for.

    Example: "From 2001 to 2024 group modularity rose by 0.15; with the agenda held at the
    reference mix it rose by 0.02, so the changing mix of topics accounts for about 0.13 and
    0.02 remains. ..."
    """
    std = subsets[(subsets["subset"] == "agenda-standardised") & (subsets["metric"] == metric)]
    raw = metrics[metrics["metric"] == metric]
    both = (period_table(metrics).merge(raw[["period", "value"]], on="period")
            .merge(std[["period", "value"]], on="period", suffixes=("_raw", "_std"))
            .dropna(subset=["value_raw", "value_std"]).reset_index(drop=True))
    if len(both) < 2:
        return None
    text = _split(both.iloc[0], both.iloc[-1], metric)
    # The step between neighbouring periods where the agenda's mix moved the figure most
    # (a shift in some years can cancel out between the first and the last period).
    gap = (both["value_raw"] - both["value_std"]).diff().abs()
    k = int(gap.idxmax()) if gap.notna().any() else 0
    if len(both) > 2 and k > 0 and numbers.fmt(gap.iloc[k]) != "0.00":
        text += " The agenda's mix moved the figure most " + _split(
            both.iloc[k - 1], both.iloc[k], metric, step=True)
    return text


def _split(first, last, metric: str, *, step: bool = False) -> str:
    """One sentence: the raw change between two periods, the standardised one, the rest."""
    d_raw = last["value_raw"] - first["value_raw"]
    d_std = last["value_std"] - first["value_std"]
    label = labels.info(metric).label
    word = "rose" if d_raw > 0 else "fell" if d_raw < 0 else "changed"

    def amount(v: float) -> str:
        return numbers.fmt(abs(v))

    if numbers.fmt_change(d_std) is None:  # rounds to zero: no direction to claim
        d_std = 0.0
    std_word = "rose" if d_std > 0 else "fell" if d_std < 0 else "did not move"
    name = labels.in_sentence(label)
    if step:
        return (f"between {first['period']} and {last['period']}: {name} {word} by "
                f"{amount(d_raw)} while with the agenda held fixed it {std_word}"
                f"{'' if d_std == 0 else ' by ' + amount(d_std)}; the mix of topics accounts "
                f"for about {numbers.fmt(d_raw - d_std)} of that step.")
    return (f"From {first['period']} to {last['period']} {name} {word} by {amount(d_raw)}; "
            f"with the agenda held at the reference topic mix it {std_word}"
            f"{'' if d_std == 0 else ' by ' + amount(d_std)}, so the changing mix of topics "
            f"accounts for about {numbers.fmt(d_raw - d_std)} of the change and "
            f"{numbers.fmt(d_std)} remains. This split is approximate: {name} is not a linear "
            "function of pair agreement, and topics missing from a period are only partly "
            "held fixed.")


def pair_sentence(groups: pd.DataFrame, periods: pd.DataFrame,
                  subset_trends: pd.DataFrame) -> str | None:
    """The pair of groups whose agreement moved most between the first and last period."""
    rows = pair_frame(groups).merge(periods[["period", "x"]], on="period").sort_values("x")
    rows = rows.dropna(subset=["value"])
    if rows.empty:
        return None
    moves = {}
    for subset, g in rows.groupby("subset"):
        if len(g) >= 2:
            moves[subset] = (g.iloc[-1]["value"] - g.iloc[0]["value"], g.iloc[0], g.iloc[-1])
    if not moves:
        return None
    pair = max(moves, key=lambda s: abs(moves[s][0]))
    delta, first, last = moves[pair]
    a, b = pair.removeprefix("pair:").split("|", 1)
    word = "fell" if delta < 0 else "rose"
    text = (f"Of {len(moves)} pairs of groups, {a} and {b} moved most: the mean agreement "
            f"between their members {word} from {numbers.fmt(first['value'])} "
            f"in {first['period']} to {numbers.fmt(last['value'])} in "
            f"{last['period']}")
    trend = subset_trends[(subset_trends["subset"] == pair)
                          & (subset_trends["metric"] == "pair_agreement")]
    if not trend.empty and pd.notna(trend.iloc[0]["mk_p"]):
        p = numbers.fmt_p(trend.iloc[0]["mk_p"])
        text += f" (Mann–Kendall p {p if p.startswith('<') else '= ' + p})"
    return text + "."


AGENDA_COLUMNS = {"body": "Series", "period": "Period", "value": "Value", "low": "Low",
                  "high": "High", "n_ballots": "Ballots", "note": "Note"}


def agenda_section(t, key: str, metric: str | None) -> tuple[str, list[Chart]]:
    """The "What moved it" section of a briefing (``t``: one body's ReportTables), or
    ``("", [])`` when the body has neither topics nor three groups."""
    from blocwatch.dashboards.pages.html import chart_block
    from blocwatch.dashboards.pages.safe import esc

    subsets, strends = t.subset_metrics, t.subset_trends
    periods = period_table(t.metrics)
    has_std = metric is not None and (
        (subsets["subset"] == "agenda-standardised") & (subsets["metric"] == metric)).any()
    pairs = pair_frame(t.group_agreement)
    if not has_std and pairs.empty:
        return "", []
    parts = ["<section id='agenda'><h2>What moved it</h2>"]
    charts: list[Chart] = []
    if has_std:
        sentence = split_sentence(t.metrics, subsets, metric)
        if sentence:
            parts.append(f"<p class='bw-headline'>{esc(sentence)}</p>")
        parts.append("<p>A rise can come from members voting more along group lines on the "
                     "same kinds of question, or from the agenda turning to the questions that "
                     "always divided them. The standardised line holds the mix of topics fixed "
                     "(each topic weighted by its share of all the body's ballots, unless the "
                     "build named one period as reference): where it stays flat while the raw "
                     "line moves, the agenda moved the figure, not the members.</p>")
        for c in (standardised_chart(t.metrics, subsets, t.trends, strends, metric),
                  topic_chart(subsets, metric)):
            charts.append(c)
            parts.append(chart_block(c, f"bw-{key}-{c.name}", AGENDA_COLUMNS, metric=metric))
    if not pairs.empty:
        sentence = pair_sentence(t.group_agreement, periods, strends)
        if sentence:
            parts.append(f"<p class='bw-headline'>{esc(sentence)}</p>")
        c = pair_chart(t.group_agreement, periods, strends)
        charts.append(c)
        parts.append(chart_block(c, f"bw-{key}-{c.name}", AGENDA_COLUMNS,
                                 metric="pair_agreement"))
    parts.append("</section>")
    return "\n".join(parts), charts
