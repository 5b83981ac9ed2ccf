"""Membership spells: overlaps, coalescing, spells derived from a group column, merging."""

from datetime import date

import pandas as pd
import pytest

from blocwatch.pipeline.ingest import roster
from blocwatch.pipeline.ingest.validate import Problems
from blocwatch.pipeline.store.database import Store

D = date.fromisoformat


class FileStub:
    """Stands in for a staged file: a name and row -> line (line = row + 2, as in a CSV)."""

    name = "roster.csv"
    layout = "long"
    headers = {"group_name": "group"}

    def place(self, rid, column):
        return rid + 2, None, self.headers.get(column, column)


def spells(*rows, k=None):
    frame = pd.DataFrame(rows, columns=roster.SPELL_COLUMNS)
    for col in ("valid_from", "valid_to"):
        frame[col] = frame[col].map(D)
    if k is not None:
        frame["k"], frame["rid"] = k, range(len(frame))
    return frame


def test_overlap_in_other_group_is_found_and_touching_is_not():
    frame = spells(("C", "m1", "A", "2020-01-01", "2020-06-30"),
                   ("C", "m1", "B", "2020-06-30", "2020-12-31"),  # shares 2020-06-30
                   ("C", "m2", "A", "2020-01-01", "2020-06-30"),
                   ("C", "m2", "B", "2020-07-01", "2020-12-31"),  # touches, no overlap
                   ("C", "m3", "A", "2020-01-01", "2020-12-31"),
                   ("C", "m3", "A", "2020-03-01", "2020-04-01"))  # same group: not a conflict
    assert roster.find_overlaps(frame) == [(0, 1)]


def test_overlap_hidden_behind_a_longer_spell_is_found():
    frame = spells(("C", "m", "A", "2020-01-01", "2020-12-31"),
                   ("C", "m", "A", "2020-02-01", "2020-02-28"),
                   ("C", "m", "B", "2020-03-01", "2020-03-31"))
    assert roster.find_overlaps(frame) == [(0, 2)]


def test_coalesce_joins_overlapping_and_adjacent_spells_of_one_group():
    frame = spells(("C", "m", "A", "2020-01-01", "2020-03-31"),
                   ("C", "m", "A", "2020-04-01", "2020-06-30"),  # adjacent: joined
                   ("C", "m", "A", "2020-05-01", "2020-07-31"),  # overlapping: joined
                   ("C", "m", "A", "2020-09-01", "2020-09-30"),  # after a gap: kept apart
                   ("C", "n", "A", "2020-01-01", "9999-12-31"))
    out = roster.coalesce(frame)
    assert list(zip(out.member_id, out.valid_from, out.valid_to)) == [
        ("m", D("2020-01-01"), D("2020-07-31")), ("m", D("2020-09-01"), D("2020-09-30")),
        ("n", D("2020-01-01"), D("9999-12-31"))]


def test_derived_spells_follow_runs_of_the_same_group():
    """Hand-derived: X on 1 and 8 Mar, Y on 15 Mar, X on 22 Mar -> X 1–14, Y 15–21, X 22–22."""
    store = Store(":memory:")
    store.stage_frame("_bw_obs", pd.DataFrame({
        "body": "C", "member_id": "m", "group_name": ["X", "X", "Y", "X"],
        "held_on": pd.to_datetime(["2020-03-01", "2020-03-08", "2020-03-15", "2020-03-22"]),
        "rid": [0, 1, 2, 3], "k": 0}))
    out = roster.derived_spells(store, "_bw_obs")
    assert list(zip(out.group_name, out.valid_from, out.valid_to)) == [
        ("X", D("2020-03-01"), D("2020-03-14")), ("Y", D("2020-03-15"), D("2020-03-21")),
        ("X", D("2020-03-22"), D("2020-03-22"))]


STORED = spells(("C", "m", "A", "2020-01-01", "2020-12-31"), ("C", "other", "A", "2020-01-01",
                                                             "2020-12-31"))


def test_merge_refuses_a_stored_overlap_in_another_group():
    new = spells(("C", "m", "B", "2020-05-01", "2020-06-30"), k=0)
    problems = Problems()
    roster.merge(STORED, new, replace=None, staged_by_k={0: FileStub()}, problems=problems)
    (p,) = problems.items
    assert p.kind == "conflict" and p.line == 2 and p.column == "group"
    assert "the store has them in 'A' from 2020-01-01 to 2020-12-31" in p.why


def test_merge_replace_all_drops_the_members_stored_spells():
    new = spells(("C", "m", "B", "2020-05-01", "2020-06-30"), k=0)
    problems = Problems()
    out = roster.merge(STORED, new, replace="all", staged_by_k={0: FileStub()}, problems=problems)
    assert not problems
    assert list(zip(out.member_id, out.group_name)) == [("m", "B")]  # 'other' is not touched


def test_merge_replace_clip_cuts_the_stored_spell_around_the_new_one():
    new = spells(("C", "m", "B", "2020-05-01", "2020-06-30"), k=0)
    out = roster.merge(STORED, new, replace="clip", staged_by_k={0: FileStub()},
                       problems=Problems())
    assert list(zip(out.group_name, out.valid_from, out.valid_to)) == [
        ("A", D("2020-01-01"), D("2020-04-30")), ("B", D("2020-05-01"), D("2020-06-30")),
        ("A", D("2020-07-01"), D("2020-12-31"))]


def test_merge_same_group_extends_the_stored_spell():
    new = spells(("C", "m", "A", "2020-12-01", "2021-03-31"), k=0)
    problems = Problems()
    out = roster.merge(STORED, new, replace=None, staged_by_k={0: FileStub()}, problems=problems)
    assert not problems
    assert list(zip(out.valid_from, out.valid_to)) == [(D("2020-01-01"), D("2021-03-31"))]


@pytest.mark.parametrize("replace", [None, "all", "clip"])
def test_merge_of_nothing_is_empty(replace):
    out = roster.merge(STORED, spells().assign(k=0, rid=0).iloc[0:0], replace=replace,
                       staged_by_k={}, problems=Problems())
    assert out.empty
