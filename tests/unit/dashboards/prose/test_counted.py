"""The "Who is counted" section: the left-out rule with the build's value, counts per period as
stored, and the rule that places a member who switched group."""

import pandas as pd

from blocwatch.dashboards.prose.counted import counted_html, counted_table, rule_text
from blocwatch.dashboards.tables import ReportTables
from blocwatch.pipeline.options import BuildOptions

BODY = "Harbour Board of Veldmark"


def _metrics(dropped):
    periods = [str(2001 + i) for i in range(len(dropped))]
    return ReportTables(metrics=pd.DataFrame({
        "body": BODY, "period": periods, "metric": "group_modularity", "value": 0.2,
        "period_start": [f"{p}-01-01" for p in periods],
        "period_end": [f"{p}-12-31" for p in periods], "n_members": 40,
        "n_dropped": dropped})).metrics


def test_the_rule_names_the_value_the_build_used_and_its_flag():
    params = BuildOptions().params()  # the defaults a build stores with its run
    share = params["agreement"]["min_share_cast"]
    text = rule_text({"parameters": params})
    assert f"{round(share * 100)} %" in text and "--min-share-cast" in text
    assert "--min-share-cast" in rule_text({})  # unknown value: the flag, never a made-up one


def test_counts_per_period_as_stored_with_plurals():
    m = _metrics([0, 1, 3])
    assert counted_table(m)["n_dropped"].tolist() == [0, 1, 3]
    html = counted_html(m, ReportTables().members, {})
    assert "4 members left out over 2 periods" in html
    assert "group in force on the dates of most of the ballots" in html  # the switcher rule
    one = counted_html(_metrics([0, 1]), ReportTables().members, {})
    assert "1 member left out over 1 period " in one
    none = counted_html(_metrics([0, 0]), ReportTables().members, {})
    assert "No member was left out in any of the 2 periods" in none


def test_named_rows_for_left_out_members_and_switchers():
    rows = pd.DataFrame({
        "body": BODY, "period": ["2001", "2001"], "member_id": ["hb-11", "hb-00"],
        "name": ["Oren Pask", "Ines Varo"], "group_name": [None, "Tideward"],
        "metric": ["left_out", "placement"], "value": [5.0, 0.625],
        "note": ["left out of this period: cast 5 of its 40 ballots",
                 "placed in Tideward: Tideward for 25 cast ballots, Quayside for 15"]})
    html = counted_html(_metrics([1]), ReportTables(members=rows).members, {})
    left = html.split("Members left out, by period (1)", 1)[1].split("</details>", 1)[0]
    assert "Oren Pask" in left and "cast 5 of its 40 ballots" in left and ">5<" in left
    moved = html.split("Members who changed group", 1)[1].split("</details>", 1)[0]
    assert "Ines Varo" in moved and "0.62" in moved and "Quayside for 15" in moved
