"""Issue 13, loading half: --check counts, dates in other forms, workbooks with several sheets.

The installed command (``run_cli``, a subprocess) on files written into a temporary folder;
expected counts are counted by hand from how each file is built (invented members and bodies).
"""

import re

from openpyxl import Workbook

from blocwatch.pipeline.store.database import Store


def _write(path, rows):
    path.write_text("\n".join(rows) + "\n")


def _kind_line(out: str, label: str) -> str:
    return next(line for line in out.splitlines() if line.startswith(f"  {label}: "))


def test_check_counts_rows_of_members_outside_their_spell(run_cli, tmp_path):
    # 7 ballots on 7 dates; A1's only spell ends before all of them: 7 rows (was "5 rows").
    _write(tmp_path / "v.csv", ["ballot_id,date,member_id,vote"] + [
        f"b{d},2020-02-0{d},{m},yes" for d in range(1, 8) for m in ("A1", "A2")])
    _write(tmp_path / "roster.csv", ["member_id,name,group,valid_from,valid_to",
                                     "A1,Ann Ash,Left,2019-01-01,2020-01-31",
                                     "A2,Bo Birch,Right,,"])
    proc = run_cli("ingest", "v.csv", "--members", "roster.csv", "--body", "Fen Board", "--check")
    assert proc.returncode == 65
    assert _kind_line(proc.stdout, "members without one clear group") == \
        "  members without one clear group: 7 rows"
    assert "v.csv: 14 rows read; 1 kind of problem" in proc.stdout
    assert "… and more like these: 2 rows" in proc.stdout  # 5 examples + 2 = 7
    assert not (tmp_path / "blocwatch.duckdb").exists()


def test_check_counts_undated_ballots_and_their_cells(run_cli, tmp_path):
    # Wide sheet: 8 members x 12 ballots, no date anywhere = 12 ballots, 96 cells.
    _write(tmp_path / "w.csv", ["member_id,group," + ",".join(f"w{i}" for i in range(12))] + [
        f"M{m},G," + ",".join("yes" if (m + i) % 2 else "no" for i in range(12))
        for m in range(8)])
    proc = run_cli("ingest", "w.csv", "--layout", "wide", "--body", "Fen Board", "--check")
    assert proc.returncode == 65
    out = proc.stdout
    assert "w.csv: 96 cells read" in out
    assert _kind_line(out, "dates that cannot be used") == "  dates that cannot be used: 12 ballots"
    assert "(12 ballots without a date hold 96 cells)" in out
    assert "… and more like these: 7 ballots" in out  # 5 shown + 7 = 12
    assert "  codes in w.csv: 'no' → no ×48, 'yes' → yes ×48" in out


def test_a_row_with_two_problems_is_not_counted_twice(run_cli, tmp_path):
    # 10 rows, each with an impossible date (month 13) and an unknown code.
    _write(tmp_path / "d.csv", ["ballot_id,date,member_id,vote,group"] + [
        f"b{i},2020-13-0{i % 9 + 1},M{i},maybe,G" for i in range(10)])
    proc = run_cli("ingest", "d.csv", "--body", "Fen Board", "--check")
    out = proc.stdout
    assert proc.returncode == 65
    assert "d.csv: 10 rows read; 2 kinds of problem" in out
    assert "20 rows" not in out
    assert _kind_line(out, "dates that cannot be used") == "  dates that cannot be used: 10 rows"
    assert _kind_line(out, "vote codes without a mapping") == \
        "  vote codes without a mapping: 1 code in 10 rows"
    assert "'2020-13-01' is no such day: there is no month 13 (2 rows like this)" in out


def test_and_n_more_adds_up(run_cli, tmp_path):
    # 25 rows, each with its own unreadable date: 20 shown, "and 1 more" stands for 5 rows.
    _write(tmp_path / "m.csv", ["ballot_id,date,member_id,vote,group"] + [
        f"b{i},x{i},M{i},yes,G" for i in range(25)])
    proc = run_cli("ingest", "m.csv", "--body", "Fen Board", "--check")
    out = proc.stdout
    assert _kind_line(out, "dates that cannot be used") == "  dates that cannot be used: 25 rows"
    shown = len(re.findall(r"^    m\.csv:\d+, column 'date'", out, flags=re.M))
    rest = int(re.search(r"… and more like these: (\d+) rows", out).group(1))
    assert shown == 20 and shown + rest == 25


def test_day_first_dates_detected_given_or_refused(run_cli, tmp_path):
    head = "ballot_id,date,member_id,vote,group"
    _write(tmp_path / "settled.csv", [head, "x1,05.02.2023,A1,yes,L", "x1,05.02.2023,A2,no,R",
                                      "x2,25.02.2023,A1,no,L", "x2,25.02.2023,A2,no,R"])
    proc = run_cli("ingest", "settled.csv", "--body", "Fen Board", check=True)
    assert "read day-first (%d.%m.%Y), because '25.02.2023' can only be read that way" \
        in proc.stderr + proc.stdout
    with Store(tmp_path / "blocwatch.duckdb", read_only=True) as s:
        days = dict(s.rows("SELECT ballot_id, CAST(held_on AS VARCHAR) FROM ballots"))
    assert days == {"x1": "2023-02-05", "x2": "2023-02-25"}

    _write(tmp_path / "open.csv", [head, "x3,03.04.2023,A1,yes,L", "x3,03.04.2023,A2,no,R"])
    proc = run_cli("ingest", "open.csv", "--body", "Fen Board")
    assert proc.returncode == 65
    assert "open.csv:2, column 'date': '03.04.2023' could be read day-first or month-first" \
        in proc.stderr and "--date-format" in proc.stderr
    proc = run_cli("ingest", "open.csv", "--body", "Fen Board", "--date-format", "%m.%d.%Y",
                   check=True)
    assert "read as %m.%d.%Y (--date-format)" in proc.stdout
    with Store(tmp_path / "blocwatch.duckdb", read_only=True) as s:
        assert s.scalar("SELECT CAST(held_on AS VARCHAR) FROM ballots WHERE ballot_id = 'x3'") \
            == "2023-03-04"

    _write(tmp_path / "leap.csv", [head, "x4,2024-02-30,A1,yes,L"])
    before = {p.name for p in tmp_path.iterdir()}
    with Store(tmp_path / "blocwatch.duckdb", read_only=True) as s:
        stored = s.content_hash()
    proc = run_cli("ingest", "leap.csv", "--body", "Fen Board")
    assert proc.returncode == 65
    assert "'2024-02-30' is no such day: 2024-02 has 29 days" in proc.stderr
    assert {p.name for p in tmp_path.iterdir()} == before
    with Store(tmp_path / "blocwatch.duckdb", read_only=True) as s:
        assert s.content_hash() == stored


def _book(path, sheets: dict[str, list[list]]):
    book = Workbook()
    book.remove(book.active)
    for title, rows in sheets.items():
        sheet = book.create_sheet(title)
        for row in rows:
            sheet.append(row)
    book.save(path)


WIDE = [["member_id", "group", "p1", "p2"], ["date", None, "2021-03-01", "2021-03-08"],
        ["A1", "Left", "yes", "no"], ["A2", "Right", "no", "no"]]


def test_sheets_by_name_number_all_and_header_below_notes(run_cli, tmp_path):
    later = [["member_id", "group", "q1", "q2"], ["date", None, "2022-03-07", "2022-03-14"],
             *WIDE[2:]]
    _book(tmp_path / "board.xlsx", {
        "Read me": [["Invented roll calls of the Fen Board"], ["One sheet per year."]],
        "2021": [["Recorded by the clerk"], [None], *WIDE],
        "2022": later})
    proc = run_cli("ingest", "board.xlsx", "--layout", "wide", "--body", "Fen Board", "--check")
    assert proc.returncode == 65
    assert "sheet 'Read me', row 1" in proc.stdout
    assert "pass --sheet with the sheet that holds the votes (this workbook's sheets: " \
        "1: 'Read me', 2: '2021', 3: '2022'), or --sheet all" in proc.stdout
    assert "delimiter" not in proc.stdout + proc.stderr  # no CSV advice for a workbook

    proc = run_cli("ingest", "board.xlsx", "--layout", "wide", "--body", "Fen Board", "--sheet",
                   "2", "--check", check=True)
    assert "header found on row 3; the 1 non-empty row above it was read as notes" in proc.stdout
    assert "checked board.xlsx: 4 cells, 2 ballots, 2 members" in proc.stdout

    proc = run_cli("ingest", "board.xlsx", "--layout", "wide", "--body", "Fen Board", "--sheet",
                   "all", check=True)
    assert "sheet 'Read me' skipped" in proc.stdout
    with Store(tmp_path / "blocwatch.duckdb", read_only=True) as s:
        ballots = sorted(r[0] for r in s.rows("SELECT ballot_id FROM ballots"))
    assert ballots == ["p1", "p2", "q1", "q2"]

    proc = run_cli("ingest", "board.xlsx", "--layout", "wide", "--body", "Fen Board", "--sheet",
                   "2030")
    assert proc.returncode == 65
    assert "has no sheet '2030'; its sheets are 1: 'Read me', 2: '2021', 3: '2022'" in proc.stderr
