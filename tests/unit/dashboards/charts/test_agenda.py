"""The "What moved it" section: split sentence, pair sentence, charts, and the page section.

Frames are hand-built; every expected number is derived from them in the test (the sentences
must quote the tables, never compute a measure of their own)."""

import re

import pandas as pd

from blocwatch.dashboards.charts.agenda import pair_sentence, split_sentence, subset_label
from blocwatch.dashboards.charts.periods import period_table
from blocwatch.dashboards.pages.briefing import build_briefing
from blocwatch.dashboards.tables import ReportTables

PERIODS = ["2001", "2002", "2003"]


def _metrics(raw, std):
    rows = []
    for p, r, s in zip(PERIODS, raw, std):
        base = {"body": "B", "period": p, "period_start": f"{p}-01-01",
                "period_end": f"{p}-12-31", "metric": "group_modularity"}
        rows.append({**base, "value": r, "low": r - 0.02, "high": r + 0.02, "subset": "all"})
        rows.append({**base, "value": s, "low": s - 0.02, "high": s + 0.02,
                     "subset": "agenda-standardised"})
        rows.append({**base, "value": s + 0.1, "subset": "topic:levies"})
    return pd.DataFrame(rows)


def _groups(ac_values):
    rows = []
    for p, ac in zip(PERIODS, ac_values):
        for a, b, v in (("A", "B", 0.8), ("A", "C", ac), ("B", "C", 0.7)):
            rows.append({"body": "B", "period": p, "group_a": a, "group_b": b, "agreement": v})
            rows.append({"body": "B", "period": p, "group_a": b, "group_b": a, "agreement": v})
    return pd.DataFrame(rows)


def test_split_adds_up_to_the_raw_change():
    t = ReportTables(metrics=_metrics([0.10, 0.20, 0.30], [0.10, 0.12, 0.14]))
    text = split_sentence(t.metrics, t.subset_metrics, "group_modularity")
    assert text.startswith("From 2001 to 2003 group modularity rose by 0.20")
    found = re.findall(r"about ([−\d.]+) of the change and ([−\d.]+)", text)[0]
    numbers = [float(x.replace("−", "-")) for x in found]
    assert abs(sum(numbers) - 0.20) < 0.011  # agenda share + remainder = raw change
    assert numbers == [0.16, 0.04]
    assert "approximate" in text and "not a linear function" in text


def test_the_step_where_the_agenda_mattered_most_is_named():
    # raw and standardised agree except for a bump in 2002 that only the raw series has
    t = ReportTables(metrics=_metrics([0.10, 0.30, 0.12], [0.10, 0.11, 0.12]))
    text = split_sentence(t.metrics, t.subset_metrics, "group_modularity")
    assert "about 0.00 of the change" in text  # first to last: no agenda effect
    assert "most between 2001 and 2002" in text and "about 0.19 of that step" in text


def test_no_standardised_series_no_sentence():
    m = _metrics([0.1, 0.2, 0.3], [0.1, 0.1, 0.1])
    t = ReportTables(metrics=m[m["subset"] == "all"])
    assert split_sentence(t.metrics, t.subset_metrics, "group_modularity") is None


def test_pair_sentence_names_the_pair_that_moved_most():
    groups = _groups([0.75, 0.6, 0.4])
    periods = period_table(ReportTables(metrics=_metrics([0.1] * 3, [0.1] * 3)).metrics)
    text = pair_sentence(groups, periods, pd.DataFrame(columns=["subset", "metric", "mk_p"]))
    assert "A and C moved most" in text and "fell from 0.75 in 2001 to 0.40 in 2003" in text


def test_two_groups_have_no_pair_view():
    groups = _groups([0.75, 0.6, 0.4])
    two = groups[(groups["group_a"] != "C") & (groups["group_b"] != "C")]
    periods = period_table(ReportTables(metrics=_metrics([0.1] * 3, [0.1] * 3)).metrics)
    assert pair_sentence(two, periods, pd.DataFrame(columns=["subset", "metric", "mk_p"])) \
        is None


def test_briefing_shows_the_section_only_with_subsets():
    t = ReportTables(metrics=_metrics([0.10, 0.20, 0.30], [0.10, 0.12, 0.14]),
                     group_agreement=_groups([0.75, 0.6, 0.4]))
    html, charts = build_briefing(t, "B", colours={})
    assert "id='agenda'" in html and "href='#agenda'" in html
    assert {"agenda-group_modularity", "topics-group_modularity",
            "pairs-pair_agreement"} <= {c.name for c in charts}
    plain = ReportTables(metrics=t.metrics)
    html, charts = build_briefing(plain, "B", colours={})
    assert "id='agenda'" not in html and "#agenda" not in html


def test_subset_labels():
    assert subset_label("topic:Harbour levies") == "Topic: Harbour levies"
    assert subset_label("pair:A|B") == "A – B"
    assert subset_label("all") != subset_label("agenda-standardised")
