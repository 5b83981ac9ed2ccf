"""Problems, the one-message rule, the --check report, and the SQL checks on staged files."""

import pytest

from blocwatch.pipeline.errors import BadInputError
from blocwatch.pipeline.ingest.validate import (
    MAX_FIELD_CHARS,
    Problem,
    Problems,
    check_dates,
    check_values,
)
from blocwatch.pipeline.store.database import Store


class Staged:
    """A staged table in a real in-memory store, located like a CSV (line = row + 2)."""

    def __init__(self, store, rows, columns):
        values = ", ".join("(" + ", ".join("?" for _ in columns) + ")" for _ in rows)
        params = [v for row in rows for v in row]
        cols = ", ".join(columns)
        self.table = "_bw_s0"
        store.stage_rows(self.table, f"SELECT * FROM (VALUES {values}) AS t({cols})", params)
        self.name, self.layout = "votes.csv", "long"
        self.headers = {c: c.upper() for c in columns}
        self.nulls = {}

    def place(self, rid, column):
        return rid + 2, None, self.headers.get(column, column)


def test_problems_are_ordered_by_kind_and_the_first_one_is_raised():
    problems = Problems()
    problems.add(Problem("conflict", "b.csv", "clashes", "pass --replace", line=9))
    problems.add(Problem("date", "a.csv", "'x' is not a date", "write YYYY-MM-DD", line=3,
                         column="date", value="x"))
    err = problems.first_error()
    assert isinstance(err, BadInputError) and err.exit_code == 65
    assert err.line() == ("a.csv:3, column 'date': 'x' is not a date — write YYYY-MM-DD; also "
                          "1 other kind of problem — run 'blocwatch ingest --check' on the same "
                          "files to list them all")
    assert str(err) == err.line()


def test_the_first_error_counts_the_rest_of_its_kind_as_check_does():
    # 3 rows share the first bad date, 2 more dates (1 + 4 rows), 6 rows counted as the rest,
    # 2 undated ballots: 2 + 5 + 6 = 13 more rows and 2 ballots; conflicts are another kind.
    problems = Problems()
    problems.add(Problem("date", "a.csv", "'x' is not a date", "fix", line=3, count=3))
    problems.add(Problem("date", "a.csv", "'y' is not a date", "fix", line=4))
    problems.add(Problem("date", "a.csv", "6 more rows", "fix", count=6, rest=True))
    problems.add(Problem("date", "a.csv", "'z' is not a date", "fix", line=5, count=4))
    problems.add(Problem("date", "a.csv", "ballot 'b' has no date", "fix", count=2,
                         unit="ballot"))
    problems.add(Problem("conflict", "a.csv", "clashes", "fix", line=9, count=7))
    line = problems.first_error().line()
    assert line.startswith("a.csv:3: 'x' is not a date — fix; ")  # never the counted rest
    assert "; also 13 rows, 2 ballots more like this and 1 other kind of problem — " in line
    report = problems.report()
    assert "  dates that cannot be used: 14 rows, 2 ballots" in report  # 1 + 13, as above


def test_unknown_codes_become_one_message_with_counts_and_first_places():
    problems = Problems()
    problems.add(Problem("code", "a.csv", "", "", line=3, column="vote", value="yess", count=2))
    problems.add(Problem("code", "a.csv", "", "", line=6, column="vote", value="maybe"))
    problems.add(Problem("code", "b.csv", "", "", line=2, column="vote", value="yess", count=5))
    line = problems.first_error().line()
    assert line.startswith("a.csv, column 'vote'; b.csv, column 'vote': 2 unknown vote codes: ")
    assert "'yess' ×7 (first at a.csv:3), 'maybe' ×1 (first at a.csv:6)" in line
    assert "more problem" not in line  # all three are this one message
    assert "--codes FILE" in line


def test_report_groups_and_counts():
    problems = Problems()
    for line in (3, 4, 5):
        problems.add(Problem("empty", "v.csv", "the member id is empty", "fill it in", line=line,
                             column="member_id"))
    problems.add(Problem("long", "v.csv", "too long", "shorten it", line=8, count=4))
    problems.add(Problem("file", "w.csv", "is empty", "export again"))
    lines = problems.report({"v.csv": "9 rows"})
    # Kinds are never added together (issue 13: a row with two problems is not two rows).
    assert lines[0] == ("v.csv: 9 rows read; 2 kinds of problem (each counted on its own; a "
                        "row can have several)")
    assert "  missing values: 3 rows" in lines
    assert "  over-long values: 4 rows" in lines
    assert "    v.csv:8: too long (4 rows like this)" in lines
    assert "w.csv: 1 kind of problem (each counted on its own; a row can have several)" in lines
    assert Problems().report() == ["no problems found"]


def test_report_rest_adds_up_and_units_stay_apart():
    problems = Problems()
    for i in range(23):  # 20 listed one by one, 3 counted in the "and more" line
        problems.add(Problem("date", "v.csv", f"'x{i}' is not a date", "fix", line=i + 2,
                             count=2))
    problems.add(Problem("date", "v.csv", "4 more rows", "fix", count=4, rest=True))
    problems.add(Problem("date", "v.csv", "ballot 'b' has no date", "fix", unit="ballot"))
    lines = problems.report()
    assert "  dates that cannot be used: 50 rows, 1 ballot" in lines  # 23 x 2 + 4 rows
    assert "    … and more like these: 10 rows, 1 ballot" in lines  # 20 x 2 + 3 x 2 + 4 = 50


def test_location_forms():
    p = Problem("x", "f.csv", "", "", line=7, column="vote")
    assert p.location() == "f.csv:7, column 'vote'" and p.place() == "f.csv:7"
    assert Problem("x", "f.xlsx", "", "", where="sheet 'S', cell D7").location() == \
        "f.xlsx, sheet 'S', cell D7"
    assert Problem("x", "f.parquet", "", "").location() == "f.parquet"


@pytest.fixture
def store():
    s = Store(":memory:")
    yield s
    s.close()


def test_check_values_finds_empty_and_overlong_values(store):
    staged = Staged(store, [("A1", "v1"), (None, "v2"), ("x" * (MAX_FIELD_CHARS + 1), "v3"),
                            (None, "v4")], ["member_id", "ballot_id"])
    problems = Problems()
    check_values(store, staged, required=("member_id",), problems=problems)
    kinds = {p.kind: p for p in problems.items}
    assert kinds["empty"].line == 3 and kinds["empty"].count == 2
    assert kinds["empty"].column == "MEMBER_ID"
    assert kinds["long"].line == 4 and f"longer than {MAX_FIELD_CHARS}" in kinds["long"].why


def test_check_dates_parses_each_spelling_once_and_locates_the_first(store):
    staged = Staged(store, [("2020-01-05",), ("5/1/2020",), ("5/1/2020",), ("1799-12-31",),
                            ("2999-01-01",), ("2020-1-5",)], ["held_on"])
    problems = Problems()
    check_dates(store, staged, "held_on", problems)
    found = {p.value: (p.line, p.count) for p in problems.items}
    # [D] lines: header 1, then rows from line 2; '2020-1-5' is an ISO date DuckDB accepts
    assert found == {"5/1/2020": (3, 2), "1799-12-31": (5, 1), "2999-01-01": (6, 1)}
    problems = Problems()
    check_dates(store, staged, "held_on", problems, future_ok=True)
    assert "2999-01-01" not in {p.value for p in problems.items}
