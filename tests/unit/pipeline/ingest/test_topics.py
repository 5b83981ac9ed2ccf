"""Ballot topics: read from every layout, one per ballot, stored with the ballot, and a changed
topic makes the ballot's period stale (its fingerprint moves).

The expected values are the ones written into the small files below (hand-built input)."""

from datetime import date

import duckdb
import pytest

from blocwatch.pipeline.build.fingerprint import fingerprint
from blocwatch.pipeline.build.matrices import load_votes
from blocwatch.pipeline.build.periods import Period
from blocwatch.pipeline.errors import BadInputError
from blocwatch.pipeline.ingest.load import ingest_files
from blocwatch.pipeline.options import BuildOptions
from blocwatch.pipeline.store import schema
from blocwatch.pipeline.store.database import Store
from blocwatch.pipeline.store.schema import SCHEMA_VERSION

LONG = """ballot_id,date,member_id,vote,group,{topic}
B1,2021-01-10,M1,yes,Left,{t1}
B1,2021-01-10,M2,no,Right,{t1}
B2,2021-02-10,M1,no,Left,{t2}
B2,2021-02-10,M2,no,Right,{t2}
"""
YEAR = Period(date(2021, 1, 1), date(2021, 12, 31), "2021")


def _topics(store: Store) -> dict:
    return dict(store.rows("SELECT ballot_id, topic FROM ballots ORDER BY ballot_id"))


def _write(tmp_path, name: str, text: str):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def test_long_file_topic_column_is_stored(tmp_path):
    path = _write(tmp_path, "v.csv", LONG.format(topic="topic", t1="Budget", t2="Health"))
    with Store(tmp_path / "s.duckdb") as store:
        ingest_files(store, [path], body="Council")
        assert _topics(store) == {"B1": "Budget", "B2": "Health"}
        vm = load_votes(store, "Council", YEAR)
        assert list(vm.topics) == ["Budget", "Health"]


def test_topic_column_mapped_by_name(tmp_path):
    path = _write(tmp_path, "v.csv", LONG.format(topic="Policy", t1="Budget", t2="Health"))
    with Store(tmp_path / "s.duckdb") as store:
        ingest_files(store, [path], body="Council", columns={"topic": "Policy"})
        assert _topics(store) == {"B1": "Budget", "B2": "Health"}


def test_without_topics_the_matrix_has_none(tmp_path):
    path = _write(tmp_path, "v.csv", LONG.format(topic="title", t1="x", t2="y"))
    with Store(tmp_path / "s.duckdb") as store:
        ingest_files(store, [path], body="Council")
        assert _topics(store) == {"B1": None, "B2": None}
        assert load_votes(store, "Council", YEAR).topics is None


def test_wide_sheet_topic_row(tmp_path):
    path = _write(tmp_path, "w.csv", "member_id,group,B1,B2\n"
                                     "date,,2021-01-10,2021-02-10\n"
                                     "topic,,Budget,Health\n"
                                     "M1,Left,yes,no\nM2,Right,no,no\n")
    with Store(tmp_path / "s.duckdb") as store:
        ingest_files(store, [path], body="Council", layout="wide")
        assert _topics(store) == {"B1": "Budget", "B2": "Health"}


def test_ballots_file_adds_topics_and_moves_the_fingerprint(tmp_path):
    votes = _write(tmp_path, "v.csv", LONG.format(topic="item", t1="", t2=""))
    ballots = _write(tmp_path, "b.csv", "ballot_id,held_on,topic\nB1,2021-01-10,Budget\n"
                                        "B2,2021-02-10,Health\n")
    opts = BuildOptions()
    with Store(tmp_path / "s.duckdb") as store:
        ingest_files(store, [votes], body="Council")
        before = fingerprint(load_votes(store, "Council", YEAR), opts, "v")
        ingest_files(store, [], body="Council", ballots=ballots)
        assert _topics(store) == {"B1": "Budget", "B2": "Health"}
        after = fingerprint(load_votes(store, "Council", YEAR), opts, "v")
        assert before != after  # the period is stale: rebuild recomputes it


def test_two_topics_for_one_ballot_are_refused(tmp_path):
    text = LONG.format(topic="topic", t1="Budget", t2="Health").replace(
        "B1,2021-01-10,M2,no,Right,Budget", "B1,2021-01-10,M2,no,Right,Health")
    path = _write(tmp_path, "v.csv", text)
    with Store(tmp_path / "s.duckdb") as store:
        with pytest.raises(BadInputError, match="two topics"):
            ingest_files(store, [path], body="Council")
        assert store.scalar("SELECT count(*) FROM ballots") == 0  # nothing written


def test_changed_topic_needs_replace(tmp_path):
    first = _write(tmp_path, "a.csv", LONG.format(topic="topic", t1="Budget", t2="Health"))
    second = _write(tmp_path, "b.csv", LONG.format(topic="topic", t1="Budget", t2="Transport"))
    with Store(tmp_path / "s.duckdb") as store:
        ingest_files(store, [first], body="Council")
        fp = fingerprint(load_votes(store, "Council", YEAR), BuildOptions(), "v")
        with pytest.raises(BadInputError, match="topic 'Transport' here but 'Health'"):
            ingest_files(store, [second], body="Council")
        assert _topics(store)["B2"] == "Health"  # untouched
        ingest_files(store, [second], body="Council", replace=True)
        assert _topics(store)["B2"] == "Transport"
        assert fingerprint(load_votes(store, "Council", YEAR), BuildOptions(), "v") != fp


def test_version_one_store_gains_the_topic_column(tmp_path):
    """A store written before topics existed (schema 1) is migrated on open."""
    path = tmp_path / "old.duckdb"
    con = duckdb.connect(str(path))  # a version-1 file, as version 1 created it
    con.execute(schema._SCHEMA_V1)
    con.execute("INSERT INTO meta VALUES ('schema_version', '1')")
    con.close()
    with Store(path) as store:
        assert store.scalar("SELECT value FROM meta WHERE key = 'schema_version'") == \
            str(SCHEMA_VERSION)
        cols = [r[0] for r in store.rows("SELECT column_name FROM (DESCRIBE ballots)")]
        assert "topic" in cols
        cols = [r[0] for r in store.rows("SELECT column_name FROM (DESCRIBE group_agreement)")]
        assert {"low", "high"} <= set(cols)
        assert store.scalar("SELECT count(*) FROM subset_metrics") == 0
