"""Readers: header sniffing, column matching, line numbers, and staging of every format."""

from pathlib import Path

import pytest

from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.ingest import sniff
from blocwatch.pipeline.ingest.readers import (
    parse_column_options,
    parse_columns,
    resolve_columns,
    stage_file,
)
from blocwatch.pipeline.ingest.validate import Problems
from blocwatch.pipeline.store.database import Store

FIXTURES = Path(__file__).resolve().parents[4] / "fixtures" / "ingest"


@pytest.mark.parametrize("head,delim,names", [
    (b"a,b,c\n1,2,3\n", ",", ["a", "b", "c"]),
    (b"a;b;c\r\n", ";", ["a", "b", "c"]),
    (b"a\tb\tc\n", "\t", ["a", "b", "c"]),
    (b"a|b\n", "|", ["a", "b"]),
    (b'"x,y";b\n', ";", ["x,y", "b"]),  # the comma is quoted: two fields split by ';'
    (b"\xef\xbb\xbfmember , vote\n", ",", ["member", "vote"]),  # BOM dropped, names trimmed
    (b"only\n", ",", ["only"]),
])
def test_text_header(head, delim, names):
    header = sniff.text_header(head)
    assert (header.delimiter, header.names, header.problem) == (delim, names, None)


def test_text_header_problems():
    assert "not UTF-8" in sniff.text_header(b"a,\xff\n").problem
    assert "longer than" in sniff.text_header(b"a" * sniff.HEAD).problem
    assert sniff.bom_encoding(b"\xff\xfea\x00") == "UTF-16"
    assert sniff.bom_encoding(b"\xff\xfe\x00\x00") == "UTF-32"
    assert sniff.bom_encoding(b"\xef\xbb\xbfa") is None


def test_scan_hashes_and_finds_nul_quotes_and_blank_lines(tmp_path):
    import hashlib

    path = tmp_path / "f.csv"
    data = b'a,b\n1,"x"\n\n2,\x003\n'
    path.write_bytes(data)
    info = sniff.scan(path)
    assert info.sha256 == hashlib.sha256(data).hexdigest()  # [S: hashlib on the same bytes]
    assert (info.size, info.nul_count, info.has_quote, info.has_blank_line) == (len(data), 1,
                                                                               True, True)
    assert info.line_at(path, info.first_nul) == 4  # header, "1,x", blank, then the NUL


def test_record_lines_follow_quotes_blank_lines_and_rejects(tmp_path):
    path = tmp_path / "f.csv"
    # line: 1 header, 2 r0, 3-4 r1 (quoted line break), 5 blank, 6 rejected, 7 r2
    path.write_bytes(b'a,b\n1,x\n2,"y\nz"\n\nbad\n3,w\n')
    info = sniff.scan(path)
    assert sniff.record_lines(path, [0, 1, 2], scan_info=info, rejected_lines=[6]) == {
        0: 2, 1: 3, 2: 7}
    plain = tmp_path / "p.csv"
    plain.write_bytes(b"a,b\n1,x\n2,y\n")
    assert sniff.record_lines(plain, [1], scan_info=sniff.scan(plain)) == {1: 3}


def test_json_lines_skip_blank_lines(tmp_path):
    path = tmp_path / "f.jsonl"
    path.write_text('{"a": 1}\n\n  \n{"a": 2}\n')
    assert sniff.json_lines(path, [0, 1]) == {0: 1, 1: 4}


def test_parse_columns_accepts_field_and_store_names():
    assert parse_columns({"member": "MP", "ballot_id": "Div"}) == {"member": "MP",
                                                                    "ballot": "Div"}
    assert parse_column_options(["member=MP_ID", "vote= Position "]) == {"member": "MP_ID",
                                                                          "vote": "Position"}
    for bad in (["member"], ["colour=X"], ["member="]):
        with pytest.raises(UsageError):
            parse_column_options(bad)


def test_resolve_columns_matches_aliases_case_insensitively_and_obeys_overrides():
    problems = Problems()
    names = ["Ballot_ID", "DATE", "MP", "Vote", "Party"]
    cols = resolve_columns(names, "votes", {"member": "mp"}, file="f.csv", problems=problems)
    assert cols == {"ballot": 0, "member": 2, "vote": 3, "date": 1, "group": 4}
    assert not problems


def test_resolve_columns_reports_missing_ambiguous_and_wrong_override():
    problems = Problems()
    assert resolve_columns(["ballot", "member"], "votes", {}, file="f.csv",
                           problems=problems) is None
    assert "has no vote column" in problems.items[0].why
    problems = Problems()
    assert resolve_columns(["ballot", "member", "vote", "choice"], "votes", {}, file="f.csv",
                           problems=problems) is None
    assert "could each be the vote column" in problems.items[0].why
    problems = Problems()
    assert resolve_columns(["ballot", "member", "vote"], "votes", {"member": "MP"}, file="f.csv",
                           problems=problems) is None
    assert "has no column 'MP'" in problems.items[0].why
    problems = Problems()  # a roster ignores an override it does not have
    assert resolve_columns(["id", "group"], "roster", {"member": "MP"}, file="r.csv",
                           problems=problems, strict=False) == {"member": 0, "group": 1}


@pytest.fixture
def store():
    s = Store(":memory:")
    yield s
    s.close()


@pytest.mark.parametrize("name,layout,where", [
    ("toy_long.csv", "long", (2, None)),
    ("toy_long.parquet", "long", (None, "row 1")),
    ("toy_long.jsonl", "long", (1, None)),
    ("toy_wide.csv", "wide", (4, None)),  # header, date row, title row, then A1 on line 4
    ("toy_wide.xlsx", "wide", (None, "sheet 'Roll calls', cell D3")),
])
def test_every_format_stages_the_toy_roll_call(store, name, layout, where):
    problems = Problems()
    staged = stage_file(store, FIXTURES / name, kind="votes", table="_bw_s0", body="Toy",
                        overrides={}, problems=problems, layout=layout)
    assert not problems, problems.items
    assert staged.rows == 24  # 6 members × 4 ballots (fixtures/ingest/README.md)
    first = store.rows("SELECT ballot_id, member_id, raw, held_on FROM _bw_s0 WHERE rid = 0")
    assert first == [("v1", "A1", "Aye", "2020-03-02")]
    assert staged.place(0, "raw")[:2] == where


def test_rows_keep_file_order_and_trim_blanks(store, tmp_path):
    path = tmp_path / "v.csv"
    path.write_text("ballot_id,member_id,vote\n b1 ,A1,  \nb1,A2,yes\n", encoding="utf-8")
    staged = stage_file(store, path, kind="votes", table="_bw_s0", body="C", overrides={},
                        problems=Problems())
    assert store.rows("SELECT rid, ballot_id, member_id, raw FROM _bw_s0 ORDER BY rid") == [
        (0, "b1", "A1", None), (1, "b1", "A2", "yes")]
    assert staged.headers == {"ballot_id": "ballot_id", "member_id": "member_id",
                              "raw": "vote"}


def test_a_quoted_line_break_moves_later_lines(store, tmp_path):
    path = tmp_path / "v.csv"
    path.write_text('ballot_id,member_id,vote,title\nb1,A1,yes,"two\nlines"\nb1,A2,no,x\n',
                    encoding="utf-8")
    staged = stage_file(store, path, kind="votes", table="_bw_s0", body="C", overrides={},
                        problems=Problems())
    assert staged.place(1, "raw") == (4, None, "vote")


def test_wide_ballot_headers_that_are_dates_date_their_ballots(store, tmp_path):
    path = tmp_path / "w.csv"
    path.write_text("member_id,group,2020-05-04,2020-05-04 #2,x9\nA1,L,y,n,y\n",
                    encoding="utf-8")
    stage_file(store, path, kind="votes", table="_bw_s0", body="C", overrides={},
               problems=Problems(), layout="wide")
    assert store.rows("SELECT ballot_id, held_on FROM _bw_s0 ORDER BY rid") == [
        ("2020-05-04", "2020-05-04"), ("2020-05-04 #2", "2020-05-04"), ("x9", None)]


def test_a_json_array_file_is_named_as_such(store, tmp_path):
    path = tmp_path / "v.json"
    path.write_text('[{"ballot_id": "b1"},\n{"ballot_id": "b2"}]\n', encoding="utf-8")
    problems = Problems()
    assert stage_file(store, path, kind="votes", table="_bw_s0", body="C", overrides={},
                      problems=problems) is None
    assert "holds one JSON array" in problems.items[0].why and problems.items[0].line == 1
