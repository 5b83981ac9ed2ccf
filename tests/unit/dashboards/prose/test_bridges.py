"""The bridges table's rules: lone members never ranked, zero never listed, ties equal, names
told apart. Scores are hand-made (invented members); each expectation is derived by hand beside
the frame."""

import pandas as pd

from blocwatch.dashboards.charts import palette
from blocwatch.dashboards.charts.network import member_scores
from blocwatch.dashboards.pages.briefing import build_briefing
from blocwatch.dashboards.prose.bridges import display_names, rank_period, top_bridges
from blocwatch.dashboards.tables import ReportTables

BODY = "Harbour Board of Veldmark"


def _members(rows, metric="participation", period="2001"):
    """rows: (member_id, name, group, score[, null_p])."""
    out = []
    for r in rows:
        out.append({"body": BODY, "period": period, "member_id": r[0], "name": r[1],
                    "group_name": r[2], "metric": metric, "value": r[3]})
        if len(r) > 4:
            out.append({"body": BODY, "period": period, "member_id": r[0], "name": r[1],
                        "group_name": r[2], "metric": f"{metric}_null_p", "value": r[4]})
    return ReportTables(members=pd.DataFrame(out)).members


def _table(rows, n=3, **kw):
    table, used, left = top_bridges(_members(rows, **kw), BODY, ["2001"], n=n)
    return table, left


def test_a_lone_member_is_never_ranked_even_with_the_top_score():
    table, left = _table([("m1", "Ines Varo", "Tideward", 0.50),
                          ("m2", "Oren Pask", "Tideward", 0.20),
                          ("m3", "Lio Brandt", "Lantern Group", 0.66)])  # alone in Lantern
    assert "Lio Brandt" not in set(table["name"])
    assert table["name"].tolist() == ["Ines Varo", "Oren Pask"] and left["lone"] == 1


def test_zero_scores_are_never_listed_and_nobody_is_named_when_nobody_bridges():
    table, left = _table([("m1", "Ines Varo", "Tideward", 0.0), ("m2", "Oren Pask",
                          "Tideward", 0.0), ("m3", "Ada Quill", "Quayside", 0.0),
                          ("m4", "Tam Rook", "Quayside", 0.0)])
    assert table.empty and left["zero"] == 4
    tables = ReportTables(members=_members([("m1", "Ines Varo", "Tideward", 0.0),
                                            ("m2", "Oren Pask", "Tideward", 0.0)]))
    html, _ = build_briefing(tables, BODY, colours=palette.group_colours(["Tideward"]))
    section = html.split("<section id='bridges'>", 1)[1].split("</section>", 1)[0]
    assert "Nobody stands out" in section and "Ines Varo" not in section


def test_ties_share_a_rank_and_all_tied_at_the_cut_are_shown():
    # Printed scores 0.40, 0.40, 0.40, 0.30: ranks 1, 1, 1, 4 (hand-derived); n = 2 still shows
    # the three members tied at rank 1 and none below.
    table, _ = _table([("m1", "Ines Varo", "Tideward", 0.401), ("m2", "Oren Pask", "Tideward",
                       0.399), ("m3", "Ada Quill", "Quayside", 0.4), ("m4", "Tam Rook",
                       "Quayside", 0.3)], n=2)
    assert table["rank"].tolist() == [1, 1, 1]
    scores = member_scores(_members([("a", "A", "G", 0.5), ("b", "B", "G", 0.5),
                                     ("c", "C", "G", 0.2)]), BODY, "2001")
    rows, _ = rank_period(scores, "participation", n=3)
    assert rows["rank"].tolist() == [1, 1, 3]  # "1, 1, 3": the next rank skips the tie


def test_scores_not_above_the_null_are_left_out():
    table, left = _table([("m1", "Ines Varo", "Tideward", 0.6, 0.01),
                          ("m2", "Oren Pask", "Tideward", 0.5, 0.40),
                          ("m3", "Ada Quill", "Quayside", 0.4, 0.03),
                          ("m4", "Tam Rook", "Quayside", 0.1, 0.02)])
    assert table["name"].tolist() == ["Ines Varo", "Ada Quill", "Tam Rook"]
    assert left["null"] == 1


def test_two_members_with_one_name_are_told_apart_by_id():
    m = _members([("hb-001", "Ines Varo", "Tideward", 0.6), ("hb-002", "Ines Varo",
                  "Quayside", 0.5), ("hb-003", "Oren Pask", "Tideward", 0.4),
                  ("hb-004", "Tam Rook", "Quayside", 0.3)])
    assert display_names(m)["hb-001"] == "Ines Varo (hb-001)"
    table, _, _ = top_bridges(m, BODY, ["2001"], n=3)
    assert table["name"].tolist() == ["Ines Varo (hb-001)", "Ines Varo (hb-002)", "Oren Pask"]


def test_the_page_defines_every_column_and_cautions_against_singling_out():
    tables = ReportTables(members=_members([("m1", "Ines Varo", "Tideward", 0.6),
                                            ("m2", "Oren Pask", "Tideward", 0.5),
                                            ("m3", "Ada Quill", "Quayside", 0.4),
                                            ("m4", "Lio Brandt", "Lantern", 0.9)]))
    html, _ = build_briefing(tables, BODY, colours=palette.group_colours(
        ["Lantern", "Quayside", "Tideward"]))
    section = html.split("<section id='bridges'>", 1)[1].split("</section>", 1)[0]
    assert "single out" in section
    for term in ("Rank", "Member", "Group", "Participation coefficient", "Who is never listed"):
        assert f"<dt>{term}</dt>" in section
    assert "2 members alone in their group" in section  # Lio Brandt and Ada Quill are alone
    assert "Lio Brandt" not in section.split("<table", 1)[1].split("</table>", 1)[0]
