"""ingest/writer.py on a real DuckDB file: what a checked load writes, and what ``replace``
replaces. Inputs are staged tables as the checks leave them (``_bw_*``), built from frames here.

Expected rows follow the module's documented semantics: without ``replace`` nothing stored is
overwritten (identical votes are skipped, missing titles are filled in); with ``replace`` every
ballot that has votes in the load is replaced whole.
"""

from datetime import date

import pandas as pd
import pytest

from blocwatch.pipeline.ingest.writer import write_load
from blocwatch.pipeline.store.database import Store

NO_SPELLS = pd.DataFrame(columns=["body", "member_id", "group_name", "valid_from", "valid_to"])


@pytest.fixture
def store(tmp_path):
    with Store(tmp_path / "s.duckdb") as s:
        yield s


def _load(store, ballots, votes, *, replace=False, stored=(), spells=NO_SPELLS,
          spell_members=None, members=None):
    """Stage the load's ballots (``stored`` ids marked as already in the store) and votes,
    then write them in one transaction as ingest does."""
    frame = pd.DataFrame(ballots, columns=["body", "ballot_id", "held_on", "title", "item"])
    frame["stored_on"] = [date(2020, 1, 1) if b in stored else None for b in frame["ballot_id"]]
    frame["topic"] = None  # the staged ballots table carries each ballot's topic (none here)
    store.stage_frame("_bw_tb", frame)
    store.stage_frame("_bw_tv", pd.DataFrame(votes, columns=["body", "ballot_id", "member_id",
                                                             "raw", "choice"]))
    if members is not None:
        store.stage_frame("_bw_tm", pd.DataFrame(members, columns=["body", "member_id", "name"]))
    spell_members = spell_members if spell_members is not None else \
        pd.DataFrame(columns=["body", "member_id"])
    sha = f"sha-{store.scalar('SELECT count(*) FROM ingests')}"  # each load its own file
    with store.transaction():
        return write_load(store, votes="_bw_tv", ballots="_bw_tb",
                          members="_bw_tm" if members is not None else None, spells=spells,
                          spell_members=spell_members,
                          ingests=[(sha, "Toy", "f.csv", len(votes))],
                          bodies=["Toy"], replace=replace)


def _votes(store):
    return store.rows("SELECT ballot_id, member_id, choice FROM votes ORDER BY ALL")


def test_a_fresh_load_writes_body_ballots_votes_and_its_log(store):
    n = _load(store, [("Toy", "v1", date(2020, 3, 2), "Budget", None)],
              [("Toy", "v1", "A1", "Y", "yes"), ("Toy", "v1", "B1", "N", "no")])
    assert n == 2
    assert store.rows("SELECT body FROM bodies") == [("Toy",)]
    assert store.rows("SELECT ballot_id, title FROM ballots") == [("v1", "Budget")]
    assert _votes(store) == [("v1", "A1", "yes"), ("v1", "B1", "no")]
    assert store.rows("SELECT file, rows FROM ingests") == [("f.csv", 2)]


def test_without_replace_stored_votes_stay_and_only_new_rows_count(store):
    _load(store, [("Toy", "v1", date(2020, 3, 2), None, None)], [("Toy", "v1", "A1", "Y", "yes")])
    n = _load(store, [("Toy", "v1", date(2020, 3, 2), "Budget", "item 4")],
              [("Toy", "v1", "A1", "Y", "yes"), ("Toy", "v1", "B1", "N", "no")], stored={"v1"})
    assert n == 1  # the identical A1 row is skipped
    assert _votes(store) == [("v1", "A1", "yes"), ("v1", "B1", "no")]
    # a stored ballot without a title or item gets the load's; nothing stored is overwritten
    assert store.rows("SELECT title, item FROM ballots") == [("Budget", "item 4")]


def test_replace_swaps_each_loaded_ballot_whole(store):
    _load(store, [("Toy", "v1", date(2020, 3, 2), "Old", None),
                  ("Toy", "v2", date(2020, 3, 9), None, None)],
          [("Toy", "v1", "A1", "Y", "yes"), ("Toy", "v1", "B1", "N", "no"),
           ("Toy", "v2", "A1", "N", "no")])
    _load(store, [("Toy", "v1", date(2020, 3, 3), "New", None)],
          [("Toy", "v1", "A1", "N", "no")], replace=True, stored={"v1"})
    # v1: B1's stored vote is gone with the ballot's old version; v2 is untouched
    assert _votes(store) == [("v1", "A1", "no"), ("v2", "A1", "no")]
    assert store.rows("SELECT held_on, title FROM ballots WHERE ballot_id = 'v1'") == \
        [(date(2020, 3, 3), "New")]


def test_spells_replace_the_memberships_of_the_members_they_describe(store):
    first = pd.DataFrame([("Toy", "A1", "A", "2000-01-01", "2099-12-31"),
                          ("Toy", "B1", "B", "2000-01-01", "2099-12-31")],
                         columns=NO_SPELLS.columns)
    _load(store, [("Toy", "v1", date(2020, 3, 2), None, None)], [("Toy", "v1", "A1", "Y", "yes")],
          spells=first, spell_members=first[["body", "member_id"]],
          members=[("Toy", "A1", "Ann"), ("Toy", "B1", None)])
    moved = pd.DataFrame([("Toy", "A1", "B", "2000-01-01", "2099-12-31")],
                         columns=NO_SPELLS.columns)
    _load(store, [("Toy", "v1", date(2020, 3, 2), None, None)], [("Toy", "v1", "A1", "Y", "yes")],
          stored={"v1"}, spells=moved, spell_members=moved[["body", "member_id"]],
          members=[("Toy", "A1", None)])
    assert store.rows("SELECT member_id, group_name FROM memberships ORDER BY ALL") == \
        [("A1", "B"), ("B1", "B")]
    # a name given once is kept when a later load gives none
    assert store.rows("SELECT member_id, name FROM members ORDER BY ALL") == \
        [("A1", "Ann"), ("B1", None)]
