"""ingest/conflicts.py through a real load into a DuckDB file: the rules for repeated keys,
ballots given two dates, clashes between files of one load and with the store.

Expected outcomes are the module's documented rules: a key repeated with the same vote is kept
once (its first row); repeated with another vote, it is refused; a ballot with two dates is
refused; two files of one load that disagree are refused unless ``replace`` lets the later win;
a file that contradicts the store is refused without ``replace`` and replaces the ballot with it.
Every refusal leaves the store as it was. Input: the toy roll call (tests/toy_rollcall.py).
"""

import pytest

from blocwatch.pipeline.errors import BadInputError
from blocwatch.pipeline.ingest.load import ingest_files
from blocwatch.pipeline.store.database import Store
from tests import toy_rollcall as toy

HEADER = "ballot_id,date,member_id,vote,group\n"


@pytest.fixture
def store(tmp_path):
    with Store(tmp_path / "s.duckdb") as s:
        yield s


def _file(path, *rows):
    path.write_text(HEADER + "".join(r + "\n" for r in rows), encoding="utf-8")
    return path


def _votes(store):
    return store.rows("SELECT ballot_id, member_id, choice FROM votes ORDER BY ALL")


def test_a_key_repeated_with_the_same_vote_is_kept_once(store, tmp_path):
    f = _file(tmp_path / "a.csv", "v1,2020-03-02,A1,Y,A", "v1,2020-03-02,A1,Y,A",
              "v1,2020-03-02,B1,N,B")
    ingest_files(store, [f], body="Toy")
    assert _votes(store) == [("v1", "A1", "yes"), ("v1", "B1", "no")]


def test_a_key_repeated_with_another_vote_is_refused_and_nothing_written(store, tmp_path):
    f = _file(tmp_path / "a.csv", "v1,2020-03-02,A1,Y,A", "v1,2020-03-02,B1,N,B",
              "v1,2020-03-02,A1,N,A")
    with pytest.raises(BadInputError, match=r"votes 'N' on ballot 'v1' here and 'Y' at line 2"):
        ingest_files(store, [f], body="Toy")
    assert _votes(store) == []


def test_a_ballot_with_two_dates_is_refused(store, tmp_path):
    f = _file(tmp_path / "a.csv", "v1,2020-03-02,A1,Y,A", "v1,2020-03-03,B1,N,B")
    with pytest.raises(BadInputError, match="ballot 'v1' has two dates"):
        ingest_files(store, [f], body="Toy")
    assert store.rows("SELECT count(*) FROM ballots") == [(0,)]


def test_two_files_of_one_load_that_disagree(store, tmp_path):
    a = _file(tmp_path / "a.csv", "v1,2020-03-02,A1,Y,A", "v1,2020-03-02,B1,N,B")
    b = _file(tmp_path / "b.csv", "v1,2020-03-02,A1,N,A")
    with pytest.raises(BadInputError, match=r"b\.csv:2.*votes .N. \(no\) on ballot .v1. here, "
                       r"but differently in .*a\.csv"):
        ingest_files(store, [a, b], body="Toy")
    assert _votes(store) == []
    ingest_files(store, [a, b], body="Toy", replace=True)  # the later file wins
    assert ("v1", "A1", "no") in _votes(store)


def test_a_file_that_contradicts_the_store(store, tmp_path):
    ingest_files(store, [toy.write_csv(tmp_path / "toy.csv")], body="Toy")
    before = _votes(store)
    fix = _file(tmp_path / "fix.csv", "v4,2020-03-23,B3,Y,B")
    with pytest.raises(BadInputError):
        ingest_files(store, [fix], body="Toy")
    assert _votes(store) == before
    ingest_files(store, [fix], body="Toy", replace=True)
    # the ballot is replaced whole: v4 now holds only the corrected file's vote
    assert [r for r in _votes(store) if r[0] == "v4"] == [("v4", "B3", "yes")]


def test_an_identical_reload_changes_nothing(store, tmp_path):
    path = toy.write_csv(tmp_path / "toy.csv")
    ingest_files(store, [path], body="Toy")
    before = _votes(store)
    copy = tmp_path / "copy.csv"
    copy.write_bytes(path.read_bytes() + b"")
    ingest_files(store, [copy], body="Toy")
    assert _votes(store) == before and len(before) == 24
