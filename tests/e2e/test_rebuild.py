"""``blocwatch rebuild`` through the real CLI on a real store: incremental, idempotent, locked.

Data: the invented demo assembly split into one votes file per year (tests/rebuild_util.py),
three or four years, with a few bootstrap replicates and permutations so that the equality
checks also cover the seeded random steps, and each build still takes seconds.
"""

import json
import shutil

import pytest

from blocwatch.pipeline.demo.assembly import BODY, FIRST_YEAR
from blocwatch.pipeline.errors import EXIT_LOCKED
from blocwatch.pipeline.ops.lock import store_lock
from blocwatch.pipeline.store.database import Store
from tests.rebuild_util import (
    assert_same,
    cli,
    cli_here,
    contents,
    make_project,
    popen,
    runs,
    write_year,
)

# The demo's ballots carry topics: with the default pooled reference mix every new ballot moves
# the agenda-standardised series of every period (README, "Explaining a change"), so these
# incremental tests pin the reference to the first year, the documented way to keep a rebuild
# to the new period.
SETTINGS = {"bootstrap": 3, "permutations": 3, "topic_reference": '"2001"'}


def _ok(proc):
    assert proc.returncode == 0, f"exit {proc.returncode}\n{proc.stdout}\n{proc.stderr}"
    return proc


def _recomputed(store):
    return [json.loads(r) for r in runs(store)["recomputed"]]


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    """A project with three years, rebuilt once (the report off to keep it quick)."""
    project = make_project(tmp_path_factory.mktemp("proj"), 3, settings=SETTINGS)
    out = _ok(cli("rebuild", "--no-report", cwd=project))
    assert "3 period(s) recomputed" in out.stdout
    return project


def test_first_rebuild_loads_every_file_and_builds_every_period(built):
    store = built / "blocwatch.duckdb"
    table = runs(store)
    assert list(table["command"]) == ["rebuild"] and list(table["status"]) == ["ok"]
    assert _recomputed(store) == [[[BODY, str(FIRST_YEAR + k)] for k in range(3)]]
    inputs = json.loads(table["inputs"].iloc[0])
    assert sorted(p.rsplit("/", 1)[-1] for p in inputs["files"]) == [
        "roster.csv", *(f"votes-{FIRST_YEAR + k}.csv" for k in range(3))]


def test_second_rebuild_changes_nothing_and_says_so(built, tmp_path):
    store = built / "blocwatch.duckdb"
    with Store(store, read_only=True) as s:
        before = s.content_hash()  # every table, runs and ingests included
    out = _ok(cli_here("rebuild", "--no-report", project=built))
    assert out.stdout.startswith("nothing to do:")
    with Store(store, read_only=True) as s:
        assert s.content_hash() == before


def test_one_new_period_recomputes_exactly_that_period_and_equals_full(built, tmp_path):
    project = tmp_path / "p"
    shutil.copytree(built, project)
    store = project / "blocwatch.duckdb"
    new = write_year(project, FIRST_YEAR + 3)
    status = _ok(cli_here("status", project=project)).stdout
    assert f"{new} (new)" in status
    out = _ok(cli_here("rebuild", "--no-report", project=project))
    assert f"loaded: {new} (new)" in out.stdout
    assert _recomputed(store)[-1] == [[BODY, str(FIRST_YEAR + 3)]]
    incremental = contents(store)
    assert sorted(incremental["periods"]["period"]) == [str(FIRST_YEAR + k) for k in range(4)]
    # --full recomputes all four and gives the same tables (run ids aside)
    _ok(cli_here("rebuild", "--full", "--no-report", project=project))
    assert len(_recomputed(store)[-1]) == 4
    assert_same(incremental, contents(store))
    # and so does a fresh project loaded with all four years at once
    fresh = make_project(tmp_path / "fresh", 4, settings=SETTINGS)
    _ok(cli_here("rebuild", "--no-report", project=fresh))
    assert_same(incremental, contents(fresh / "blocwatch.duckdb"))


def test_changed_file_replaces_its_votes_and_recomputes_its_period(built, tmp_path):
    project = tmp_path / "p"
    shutil.copytree(built, project)
    store = project / "blocwatch.duckdb"
    path = project / "data" / f"votes-{FIRST_YEAR + 1}.csv"
    lines = path.read_text().splitlines()
    header, first = lines[0].split(","), lines[1].split(",")
    vote_col = header.index("vote")
    flipped = "Nay" if first[vote_col] in ("Aye", "Y", "for") else "Aye"
    first[vote_col] = flipped
    path.write_text("\n".join([lines[0], ",".join(first), *lines[2:]]) + "\n")
    out = _ok(cli_here("rebuild", "--no-report", project=project))
    assert f"loaded: {path} (changed)" in out.stdout
    assert _recomputed(store)[-1] == [[BODY, str(FIRST_YEAR + 1)]]
    with Store(store, read_only=True) as s:
        raw = s.scalar("SELECT raw FROM votes WHERE body = ? AND ballot_id = ? AND member_id = ?",
                       [BODY, first[header.index("ballot_id")], first[header.index("member_id")]])
    assert raw == flipped


def test_changed_settings_make_every_period_stale(built):
    out = _ok(cli_here("status", "--min-shared", "7", project=built)).stdout
    stale = [line for line in out.splitlines() if line.strip().startswith("stale:")]
    assert stale and all(f"{FIRST_YEAR + k} (changed)" in stale[0] for k in range(3))
    assert "stale: none (up to date)" in _ok(cli_here("status", project=built)).stdout


def test_two_rebuilds_at_once_one_runs_one_exits_75(tmp_path):
    project = make_project(tmp_path / "p", 3)  # fast settings: only the overlap matters
    store = project / "blocwatch.duckdb"
    procs = [popen("rebuild", "--no-report", cwd=project) for _ in range(2)]
    results = [(p, *p.communicate(timeout=600)) for p in procs]
    codes = sorted(p.returncode for p, _, _ in results)
    assert codes == [0, EXIT_LOCKED], [(p.returncode, e) for p, _, e in results]
    winner = next(p for p, _, _ in results if p.returncode == 0)
    loser_err = next(e for p, _, e in results if p.returncode == EXIT_LOCKED)
    assert loser_err.count("\n") == 1 and loser_err.startswith("error: store ")
    assert f"pid {winner.pid}" in loser_err and "started " in loser_err
    # the store is intact: one finished run, every period built, nothing stale
    table = runs(store)
    assert list(table["status"]) == ["ok"]
    assert "stale: none (up to date)" in _ok(cli_here("status", project=project)).stdout


def test_build_and_ingest_take_the_lock_too(built):
    store = built / "blocwatch.duckdb"
    with store_lock(store, "test-holder"):  # flock is per open file: this process counts too
        for args in (["build"], ["ingest", built / "data" / f"votes-{FIRST_YEAR}.csv"],
                     ["rebuild"]):
            proc = cli_here(*args, project=built)
            assert proc.returncode == EXIT_LOCKED, (args, proc.stderr)
            assert "'test-holder'" in proc.stderr and "pid " in proc.stderr
        # status, a reader, waits up to --wait seconds, then exits 75 naming the holder
        proc = cli_here("status", "--wait", "0", project=built)
        assert proc.returncode == EXIT_LOCKED, proc.stderr
        assert "'test-holder'" in proc.stderr and "pass --wait SECONDS" in proc.stderr


def _move_member(project):
    """M001 leaves Upland Compact for Lantern Circle in mid-2002 (an edit of the roster)."""
    roster = project / "data" / "roster.csv"
    old = "M001,Nessa Rooksby,Upland Compact,2001-01-01,2004-12-31"
    text = roster.read_text()
    assert old in text
    roster.write_text(text.replace(old, "M001,Nessa Rooksby,Upland Compact,2001-01-01,"
                                        "2002-06-30\nM001,Nessa Rooksby,Lantern Circle,"
                                        "2002-07-01,2004-12-31"))


def test_changed_roster_recomputes_the_periods_it_touches(built, tmp_path):
    project = tmp_path / "p"
    shutil.copytree(built, project)
    store = project / "blocwatch.duckdb"
    _move_member(project)
    out = _ok(cli_here("rebuild", "--no-report", project=project))
    assert f"loaded: {project / 'data' / 'roster.csv'} (changed)" in out.stdout
    recomputed = {p for _, p in _recomputed(store)[-1]}
    # 2001 is untouched; 2003 holds only the new spell; 2002 holds both halves
    assert str(FIRST_YEAR + 2) in recomputed and str(FIRST_YEAR) not in recomputed
    assert recomputed <= {str(FIRST_YEAR + 1), str(FIRST_YEAR + 2)}
    fresh = make_project(tmp_path / "fresh", 3, settings=SETTINGS)
    _move_member(fresh)
    _ok(cli_here("rebuild", "--no-report", project=fresh))
    assert_same(contents(fresh / "blocwatch.duckdb"), contents(store))
