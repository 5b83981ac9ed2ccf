"""`blocwatch ingest` end to end: every format and layout, reloads, conflicts, --replace, --check.

Expected votes: the toy roll call of tests/toy_rollcall.py, which the files of fixtures/ingest
hold. Most tests run the click command in-process (``inproc``: same code, real DuckDB file, no
interpreter start-up); those marked "installed command" go through the console script
(``run_cli``).
"""

import os
import re
import shutil
import subprocess
from pathlib import Path

import pytest
from click.testing import CliRunner

from blocwatch.pipeline.cli.main import cli
from blocwatch.pipeline.store.database import Store
from tests import toy_rollcall as toy

FIXTURES = Path(__file__).resolve().parents[2] / "fixtures" / "ingest"
TOY = toy.TABLE  # ballot -> votes of A1 A2 A3 B1 B2 B3
MEMBERS = toy.MEMBERS
EXPECTED = {(b, m): ("yes" if v == "Y" else "no") for b, row in TOY.items()
            for m, v in zip(MEMBERS, row)}
DATES = toy.DATES

LOADS = {  # fixtures/ingest/README.md, "how to load"
    "long csv": ["toy_long.csv"],
    "long parquet": ["toy_long.parquet"],
    "long jsonl": ["toy_long.jsonl"],
    "renamed columns": ["toy_long_renamed.csv", "--column", "ballot=Division", "--column",
                        "date=Sitting", "--column", "member=MP", "--column", "vote=Position",
                        "--column", "group=Party"],
    "roster": ["toy_votes_nogroup.csv", "--members", "toy_roster.csv"],
    "wide csv": ["toy_wide.csv", "--layout", "wide"],
    "wide xlsx": ["toy_wide.xlsx", "--layout", "wide"],
    "wide with ballots file": ["toy_wide_nodates.csv", "--layout", "wide", "--ballots",
                               "toy_ballots.csv"],
}


@pytest.fixture
def files(tmp_path):
    for f in FIXTURES.iterdir():
        if f.suffix != ".py":
            shutil.copy(f, tmp_path / f.name)
    return tmp_path


@pytest.fixture
def inproc(files):
    """Run ``blocwatch ARGS`` in-process in the fixtures' folder; a CompletedProcess-alike."""

    def run(*args, check: bool = False):
        runner = CliRunner(env={"BLOCWATCH_CONFIG": None})
        old = os.getcwd()
        os.chdir(files)
        try:
            result = runner.invoke(cli, [str(a) for a in args], catch_exceptions=False)
        finally:
            os.chdir(old)
        proc = subprocess.CompletedProcess(args, result.exit_code, result.stdout, result.stderr)
        if check and proc.returncode:
            raise AssertionError(f"exit {proc.returncode}: {proc.stdout}{proc.stderr}")
        return proc

    return run


def _votes(store_path):
    with Store(store_path, read_only=True) as s:
        return {(b, m): c for b, m, c in s.rows("SELECT ballot_id, member_id, choice FROM votes "
                                                "WHERE body = 'Toy'")}


def _hash(store_path):
    with Store(store_path, read_only=True) as s:
        return s.content_hash()


@pytest.mark.parametrize("args", LOADS.values(), ids=LOADS.keys())
def test_every_format_and_layout_loads_the_toy_roll_call(inproc, files, args):
    proc = inproc("ingest", *args, "--body", "Toy", "--store", "s.duckdb", check=True)
    assert _votes(files / "s.duckdb") == EXPECTED
    with Store(files / "s.duckdb", read_only=True) as s:
        ballots = dict(s.rows("SELECT ballot_id, CAST(held_on AS VARCHAR) FROM ballots"))
        groups = dict(s.rows("SELECT member_id, group_name FROM memberships"))
        assert s.scalar("SELECT scale FROM bodies WHERE body = 'Toy'") == "binary"
    assert ballots == DATES
    assert groups == {m: m[0] for m in MEMBERS}
    summary = proc.stdout.splitlines()[0]
    unit = "cells" if "wide" in args else "rows"  # a wide sheet holds one vote per cell
    assert summary.startswith(f"loaded {args[0]}: 24 {unit}, 4 ballots, 6 members (body Toy)")


def test_mapping_file_blank_cells_and_abstentions(inproc, files):
    inproc("ingest", "toy_long_de.csv", "--codes", "toy_codes_de.csv", "--body", "Toy",
            "--store", "s.duckdb", check=True)
    votes = _votes(files / "s.duckdb")
    # README: B3 abstains on v2 and is absent (blank cell, stored with raw NULL) on v4
    assert votes == {**EXPECTED, ("v2", "B3"): "abstain", ("v4", "B3"): "absent"}
    with Store(files / "s.duckdb", read_only=True) as s:
        assert s.rows("SELECT raw FROM votes WHERE ballot_id = 'v4' AND member_id = 'B3'") == \
            [(None,)]
        assert s.scalar("SELECT raw FROM votes WHERE ballot_id = 'v2' AND member_id = 'B3'") \
            == "Enthaltung"


def test_group_switch_from_the_roster(inproc, files):
    inproc("ingest", "toy_votes_nogroup.csv", "--members", "toy_roster_switch.csv", "--body",
            "Toy", "--store", "s.duckdb", check=True)
    with Store(files / "s.duckdb", read_only=True) as s:
        spells = s.rows("SELECT group_name, CAST(valid_from AS VARCHAR), CAST(valid_to AS "
                        "VARCHAR) FROM memberships WHERE member_id = 'A3' ORDER BY valid_from")
        names = dict(s.rows("SELECT member_id, name FROM members"))
    assert spells == [("A", "2019-01-01", "2020-03-12"), ("B", "2020-03-13", "9999-12-31")]
    assert names["A3"] == "Cy Penn"


def test_same_file_again_is_a_no_op(run_cli, files):
    """Installed command."""
    run_cli("ingest", "toy_long.csv", "--body", "Toy", "--store", "s.duckdb", check=True)
    before = _hash(files / "s.duckdb")
    proc = run_cli("ingest", "toy_long.csv", "--body", "Toy", "--store", "s.duckdb", check=True)
    assert proc.stdout.startswith("unchanged toy_long.csv: already loaded (sha256 ")
    assert "nothing written" in proc.stdout
    assert _hash(files / "s.duckdb") == before


def test_the_same_votes_in_another_format_are_accepted(inproc, files):
    """Overlapping files that agree are fine: nothing new, nothing refused."""
    inproc("ingest", "toy_long.csv", "--body", "Toy", "--store", "s.duckdb", check=True)
    inproc("ingest", "toy_wide.csv", "--layout", "wide", "--body", "Toy", "--store",
            "s.duckdb", check=True)
    assert _votes(files / "s.duckdb") == EXPECTED


def _flipped(files):
    text = (files / "toy_long.csv").read_text().replace("v1,2020-03-02,A1,Aye",
                                                         "v1,2020-03-02,A1,Nay")
    (files / "flipped.csv").write_text(text)
    return "flipped.csv"


def test_conflicting_reload_is_refused_and_changes_nothing(run_cli, files):
    """Installed command."""
    run_cli("ingest", "toy_long.csv", "--body", "Toy", "--store", "s.duckdb", check=True)
    before = _hash(files / "s.duckdb")
    proc = run_cli("ingest", _flipped(files), "--body", "Toy", "--store", "s.duckdb")
    assert proc.returncode == 65
    assert proc.stderr.startswith("error: flipped.csv:2, column 'vote': member 'A1' votes 'Nay'"
                                  " (no) on ballot 'v1' here, but the store holds yes")
    assert "pass --replace" in proc.stderr and len(proc.stderr.strip().splitlines()) == 1
    assert _hash(files / "s.duckdb") == before


def test_replace_overwrites_the_ballots_in_the_file(inproc, files):
    inproc("ingest", "toy_long.csv", "--body", "Toy", "--store", "s.duckdb", check=True)
    one_ballot = [line for line in (files / _flipped(files)).read_text().splitlines()
                  if line.startswith(("ballot_id", "v1,"))]
    (files / "v1_only.csv").write_text("\n".join(one_ballot[:-1]) + "\n")  # B3 left out
    inproc("ingest", "v1_only.csv", "--replace", "--body", "Toy", "--store", "s.duckdb",
            check=True)
    votes = _votes(files / "s.duckdb")
    expected = {**EXPECTED, ("v1", "A1"): "no"}
    del expected[("v1", "B3")]  # the ballot is replaced whole: B3's stored vote goes too
    assert votes == expected


def test_unknown_code_lists_all_and_changes_nothing(inproc, files):
    inproc("ingest", "toy_long.csv", "--body", "Toy", "--store", "s.duckdb", check=True)
    before = _hash(files / "s.duckdb")
    text = re.sub(r"^v", "w", (files / "toy_long.csv").read_text(), flags=re.M)  # new ballots
    text = text.replace("w2,2020-03-09,A1,Aye", "w2,2020-03-09,A1,oui").replace(
        "w3,2020-03-16,A1,Aye", "w3,2020-03-16,A1,oui").replace("w4,2020-03-23,B2,1",
                                                                 "w4,2020-03-23,B2,?")
    (files / "more.csv").write_text(text)
    proc = inproc("ingest", "more.csv", "--body", "Toy", "--store", "s.duckdb")
    assert proc.returncode == 65
    # lines: header 1, then 6 rows per ballot: w2/A1 on line 8, w4/B2 on line 24 [D]
    assert "2 unknown vote codes: 'oui' ×2 (first at more.csv:8), '?' ×1 (first at " \
           "more.csv:24)" in proc.stderr
    assert _hash(files / "s.duckdb") == before


def test_two_files_one_bad_writes_neither(inproc, files):
    (files / "bad.csv").write_text("ballot_id,date,member_id,vote\nw1,2020-04-01,A1,yes\n"
                                   "w1,2020-04-01,A2\n")
    proc = inproc("ingest", "toy_long.csv", "bad.csv", "--body", "Toy", "--store", "s.duckdb")
    assert proc.returncode == 65 and "bad.csv:3" in proc.stderr
    # A failed first load leaves no store and no lock file behind (issue 13, finding 11).
    assert not (files / "s.duckdb").exists() and not (files / "s.duckdb.lock").exists()


def test_check_mode_writes_nothing_and_lists_problems(inproc, files):
    proc = inproc("ingest", "toy_long.csv", "--body", "Toy", "--store", "s.duckdb", "--check")
    assert proc.returncode == 0 and "no problems found" in proc.stdout
    assert not (files / "s.duckdb").exists()  # a check never creates a store
    (files / "bad.csv").write_text("ballot_id,date,member_id,vote,group\n"
                                   "w1,2020-02-31,A1,yes,A\nw1,2020-02-31,A2,maybe,A\n"
                                   "w2,2020-04-01,,no,A\nw2,2020-04-01,A3,nope,A\n")
    proc = inproc("ingest", "bad.csv", "--body", "Toy", "--store", "s.duckdb", "--check")
    assert proc.returncode == 65
    out = proc.stdout
    assert "bad.csv: 4 rows read; 3 kinds of problem" in out
    assert "missing values: 1 row" in out and "bad.csv:4, column 'member_id'" in out
    assert "dates that cannot be used: 2 rows" in out
    assert "vote codes without a mapping: 2 codes in 2 rows" in out
    assert out.count("what to do:") == 3
    assert not (files / "s.duckdb").exists()


def test_body_column_instead_of_body_option(inproc, files):
    (files / "two.csv").write_text("body,ballot_id,date,member_id,vote,group\n"
                                   "North,n1,2021-01-04,P1,yes,X\nSouth,s1,2021-01-05,P1,no,Y\n")
    proc = inproc("ingest", "two.csv", "--store", "s.duckdb", check=True)
    assert "(body North, South)" in proc.stdout
    with Store(files / "s.duckdb", read_only=True) as s:
        assert s.rows("SELECT body, scale FROM bodies ORDER BY body") == [("North", "binary"),
                                                                          ("South", "binary")]
        assert s.scalar("SELECT count(*) FROM ingests") == 2  # one log row per body
    proc = inproc("ingest", "toy_long.csv", "--store", "s.duckdb")
    assert proc.returncode == 65 and "pass --body NAME" in proc.stderr


def test_identical_repeated_rows_load_once(inproc, files):
    (files / "twice.csv").write_text("ballot_id,date,member_id,vote,group\n"
                                     "w1,2020-04-01,A1,yes,A\nw1,2020-04-01,B1,no,B\n"
                                     "w1,2020-04-01,A1,Aye,A\n")
    proc = inproc("ingest", "twice.csv", "--body", "Toy", "--store", "s.duckdb", check=True)
    assert "3 rows, 1 ballot, 2 members" in proc.stdout
    with Store(files / "s.duckdb", read_only=True) as s:
        assert s.rows("SELECT member_id, raw, choice FROM votes ORDER BY member_id") == [
            ("A1", "yes", "yes"), ("B1", "no", "no")]  # the first of the two A1 rows is kept


def test_roster_and_ballots_alone_then_votes(inproc, files):
    """A roster or a ballots file can come first; later votes use what is stored."""
    inproc("ingest", "--members", "toy_roster.csv", "--body", "Toy", "--store", "s.duckdb",
           check=True)
    inproc("ingest", "--ballots", "toy_ballots.csv", "--body", "Toy", "--store", "s.duckdb",
           check=True)
    (files / "nodates.csv").write_text("\n".join(
        ",".join(cell for i, cell in enumerate(line.split(",")) if i != 1)
        for line in (files / "toy_votes_nogroup.csv").read_text().splitlines()) + "\n")
    inproc("ingest", "nodates.csv", "--body", "Toy", "--store", "s.duckdb", check=True)
    assert _votes(files / "s.duckdb") == EXPECTED
    with Store(files / "s.duckdb", read_only=True) as s:
        assert dict(s.rows("SELECT ballot_id, title FROM ballots"))["v1"] == "Harbour levy"
    (files / "stranger.csv").write_text("ballot_id,member_id,vote\nv1,Z9,yes\n")
    proc = inproc("ingest", "stranger.csv", "--body", "Toy", "--store", "s.duckdb")
    assert proc.returncode == 65 and "member 'Z9' is not in the roster" in proc.stderr


def test_two_files_that_disagree(inproc, files):
    _flipped(files)
    proc = inproc("ingest", "toy_long.csv", "flipped.csv", "--body", "Toy", "--store",
                  "s.duckdb")
    assert proc.returncode == 65
    assert "flipped.csv:2, column 'vote': member 'A1' votes 'Nay' (no) on ballot 'v1' here, " \
           "but differently in toy_long.csv" in proc.stderr
    inproc("ingest", "toy_long.csv", "flipped.csv", "--replace", "--body", "Toy", "--store",
           "s.duckdb", check=True)
    assert _votes(files / "s.duckdb") == {**EXPECTED, ("v1", "A1"): "no"}  # the later file wins
