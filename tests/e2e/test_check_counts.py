"""Issue 13, finding 6 audited kind by kind: ``--check`` counts every problem, in its unit.

The installed command (``run_cli``, a subprocess) on files written into a temporary folder.
Each file is built so the expected count can be read off the loop that writes it (invented
members and bodies); a kind with more problems than examples must show the rest in
"… and more like these", so the kind's line and the examples plus the rest agree. Checking
runs write nothing: no store appears, or the stored tables keep their hash.
"""

import re

from blocwatch.pipeline.store.database import Store

HEAD = "ballot_id,date,member_id,vote"


def _write(path, rows):
    path.write_text("\n".join(rows) + "\n")


def _hash(store):
    with Store(store, read_only=True) as s:
        return s.content_hash()


def _kind(out: str, label: str, file: str | None = None) -> list[str]:
    """The kind's count line and its example lines (of ``file``'s section, if given)."""
    lines = out.splitlines()
    if file is not None:
        start = next(i for i, line in enumerate(lines) if line.startswith(f"{file}: "))
        lines = lines[start + 1:]
        end = next((i for i, line in enumerate(lines) if not line.startswith("  ")), len(lines))
        lines = lines[:end]
    at = next(i for i, line in enumerate(lines) if line.startswith(f"  {label}: "))
    block = [lines[at]]
    for line in lines[at + 1:]:
        if not line.startswith("    "):
            break
        block.append(line)
    return block


def _adds_up(block: list[str], unit: str) -> int:
    """Examples (one each, or their '(N units like this)') plus the rest = the kind's count."""
    total = int(re.search(rf": ([\d,]+) {unit}s?$", block[0]).group(1).replace(",", ""))
    shown = 0
    for line in block[1:]:
        if line.startswith("    what to do:"):
            continue
        rest = re.match(rf"    … and more like these: ([\d,]+) {unit}s?$", line)
        like = re.search(rf"\(([\d,]+) {unit}s like this\)$", line)
        shown += int((rest or like).group(1).replace(",", "")) if rest or like else 1
    assert shown == total, block
    return total


def test_ballots_with_two_dates_count_every_ballot(run_cli, tmp_path):
    # 8 ballots, each given two dates (M1's row and M2's row): 8 ballots (was "5 rows").
    _write(tmp_path / "v.csv", [HEAD] + [row for b in range(8) for row in (
        f"b{b},2020-03-0{b + 1},M1,yes", f"b{b},2020-04-0{b + 1},M2,no")])
    proc = run_cli("ingest", "v.csv", "--body", "Fen Board", "--check")
    assert proc.returncode == 65
    block = _kind(proc.stdout, "ballots described two ways")
    assert block[0] == "  ballots described two ways: 8 ballots"
    assert "    … and more like these: 3 ballots" in block
    assert _adds_up(block, "ballot") == 8
    assert sorted(p.name for p in tmp_path.iterdir()) == ["v.csv"]


def test_votes_that_differ_between_two_files_are_counted_in_full(run_cli, tmp_path):
    # 8 ballots x 3 members; c.csv gives M0 'no' where a.csv says 'yes': 8 rows of c.csv.
    _write(tmp_path / "a.csv", [HEAD] + [f"b{b},2020-03-0{b + 1},M{m},yes"
                                         for b in range(8) for m in range(3)])
    _write(tmp_path / "c.csv", [HEAD] + [f"b{b},2020-03-0{b + 1},M{m},{'no' if m == 0 else 'yes'}"
                                         for b in range(8) for m in range(3)])
    proc = run_cli("ingest", "a.csv", "c.csv", "--body", "Fen Board", "--check")
    assert proc.returncode == 65
    block = _kind(proc.stdout, "conflicts with the store or another file", "c.csv")
    assert block[0] == "  conflicts with the store or another file: 8 rows"
    assert _adds_up(block, "row") == 8
    # the load's one-line error counts the same way: 1 shown + 7 more
    proc = run_cli("ingest", "a.csv", "c.csv", "--body", "Fen Board")
    assert proc.returncode == 65 and proc.stderr.count("\n") == 1
    assert "; also 7 rows more like this — run 'blocwatch ingest --check'" in proc.stderr
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.csv", "c.csv"]


def test_conflicts_with_the_store_are_counted_in_the_file_they_are_in(run_cli, tmp_path):
    # Stored: 9 members say yes on b1. c1.csv flips M0..M3 (4 rows), c2.csv flips M4..M8
    # (5 rows). Five examples are shown in all (c1's 4, then 1 of c2): c2's other 4 are
    # counted under c2, not under the file of the last example.
    _write(tmp_path / "a.csv", [HEAD] + [f"b1,2020-03-01,M{m},yes" for m in range(9)])
    run_cli("ingest", "a.csv", "--body", "Fen Board", check=True)
    store = tmp_path / "blocwatch.duckdb"
    before = _hash(store)
    _write(tmp_path / "c1.csv", [HEAD] + [f"b1,2020-03-01,M{m},no" for m in range(4)])
    _write(tmp_path / "c2.csv", [HEAD] + [f"b1,2020-03-01,M{m},no" for m in range(4, 9)])
    proc = run_cli("ingest", "c1.csv", "c2.csv", "--body", "Fen Board", "--check")
    assert proc.returncode == 65
    label = "conflicts with the store or another file"
    one, two = _kind(proc.stdout, label, "c1.csv"), _kind(proc.stdout, label, "c2.csv")
    assert one[0].endswith(": 4 rows") and _adds_up(one, "row") == 4
    assert two[0].endswith(": 5 rows") and _adds_up(two, "row") == 5
    assert "    … and more like these: 4 rows" in two
    assert _hash(store) == before


def test_a_vote_given_twice_counts_member_ballot_pairs(run_cli, tmp_path):
    # 7 ballots; M1 votes yes and no on each (7 pairs given twice), M2 once.
    _write(tmp_path / "v.csv", [HEAD] + [row for b in range(7) for row in (
        f"b{b},2020-03-0{b + 1},M1,yes", f"b{b},2020-03-0{b + 1},M1,no",
        f"b{b},2020-03-0{b + 1},M2,no")])
    proc = run_cli("ingest", "v.csv", "--body", "Fen Board", "--check")
    assert proc.returncode == 65
    block = _kind(proc.stdout, "the same vote given twice, differently")
    assert block[0] == "  the same vote given twice, differently: 7 member-ballot pairs"
    assert _adds_up(block, "member-ballot pair") == 7


def test_malformed_rows_beyond_the_examples_are_a_counted_rest(run_cli, tmp_path):
    # 50 rows, every even one with an extra field: 25 refused rows of 50 read. The 20 examples
    # each stand for one row (the rest was folded into the last one before).
    _write(tmp_path / "v.csv", [HEAD] + [f"b{i},2020-03-01,M{i},yes" + (",x" if i % 2 == 0
                                                                        else "")
                                         for i in range(50)])
    proc = run_cli("ingest", "v.csv", "--body", "Fen Board", "--check")
    assert proc.returncode == 65
    assert "v.csv: 50 rows read; 1 kind of problem" in proc.stdout
    block = _kind(proc.stdout, "rows that do not fit the header")
    assert block[0] == "  rows that do not fit the header: 25 rows"
    assert "    … and more like these: 5 rows" in block
    assert not any("like this)" in line for line in block)
    assert _adds_up(block, "row") == 25


def test_two_groups_on_one_date_count_member_dates(run_cli, tmp_path):
    # 7 members, each 'Left' on b1 and 'Right' on b2, both on 2020-03-01: 7 member-dates.
    _write(tmp_path / "v.csv", [HEAD + ",group"] + [row for m in range(7) for row in (
        f"b1,2020-03-01,M{m},yes,Left", f"b2,2020-03-01,M{m},yes,Right")])
    proc = run_cli("ingest", "v.csv", "--body", "Fen Board", "--check")
    assert proc.returncode == 65
    block = _kind(proc.stdout, "members without one clear group")
    assert block[0] == "  members without one clear group: 7 member-dates"
    assert "on the same date 2020-03-01" in block[1]
    assert _adds_up(block, "member-date") == 7


def test_roster_rows_beyond_twenty_are_counted(run_cli, tmp_path):
    # 23 roster rows whose valid_to lies before valid_from: 20 listed, 3 counted.
    _write(tmp_path / "roster.csv", ["member_id,name,group,valid_from,valid_to"] + [
        f"M{m},Member {m},Left,2021-01-01,2020-01-01" for m in range(23)])
    _write(tmp_path / "v.csv", [HEAD] + [f"b1,2020-03-01,M{m},yes" for m in range(23)])
    proc = run_cli("ingest", "v.csv", "--members", "roster.csv", "--body", "Fen Board",
                   "--check")
    assert proc.returncode == 65
    block = _kind(proc.stdout, "roster problems")
    assert block[0] == "  roster problems: 23 rows"
    assert "    … and more like these: 3 rows" in block
    assert _adds_up(block, "row") == 23
