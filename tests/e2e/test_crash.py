"""kill -9 at random moments (a few trials of tests/benchmarks/crash_harness.py) and at the worst
moment on purpose: inside a period's write transaction and inside a load's transaction."""

import shutil
import subprocess
import sys

import pytest

from blocwatch.pipeline.demo.assembly import BODY, FIRST_YEAR
from blocwatch.pipeline.ops.lock import lock_holder
from blocwatch.pipeline.store.database import Store
from tests.benchmarks.crash_harness import check_consistent, prepare, run_trials
from tests.rebuild_util import assert_same, cli_here, contents, make_project

# The real CLI, with Store.execute wrapped so the process SIGKILLs itself right after the
# statement containing TRIGGER ran inside an open transaction (before its COMMIT).
KILL_INSIDE = """
import os, signal, sys
from blocwatch.pipeline.store.database import Store
trigger = sys.argv[1]
original = Store.execute
def execute(self, sql, params=None):
    original(self, sql, params)
    if trigger in sql and self._depth:
        os.kill(os.getpid(), signal.SIGKILL)
Store.execute = execute
from blocwatch.pipeline.cli.main import main
main(sys.argv[2:])
"""


def _kill_inside(trigger, *args, cwd):
    proc = subprocess.run([sys.executable, "-c", KILL_INSIDE, trigger, *map(str, args)],
                          cwd=cwd, capture_output=True, text=True, timeout=600)
    assert proc.returncode == -9, f"expected SIGKILL, got {proc.returncode}: {proc.stderr}"


@pytest.fixture(scope="module")
def base(tmp_path_factory):
    folder = tmp_path_factory.mktemp("crash") / "base"
    prepare(folder)  # two years built, two more years' files waiting
    return folder


@pytest.fixture(scope="module")
def expected(tmp_path_factory):
    folder = make_project(tmp_path_factory.mktemp("ref") / "p", 4)
    out = cli_here("rebuild", "--no-report", project=folder)
    assert out.returncode == 0, out.stderr
    return contents(folder / "blocwatch.duckdb")


def _without_new_run(store):
    with Store(store, read_only=True) as s:
        return s.df("SELECT * FROM runs WHERE status <> 'running' ORDER BY run_id")


def test_kill_inside_a_period_transaction_keeps_the_old_period(base, expected, tmp_path):
    project = tmp_path / "p"
    shutil.copytree(base, project)
    store = project / "blocwatch.duckdb"
    assert cli_here("rebuild", "--no-report", project=project).returncode == 0
    before = contents(store)
    runs_before = _without_new_run(store)
    # New settings make every period stale; the kill lands after the first period's old rows
    # were deleted and some new rows inserted, before COMMIT.
    _kill_inside("INSERT INTO member_metrics", "rebuild", "--no-report", "--min-shared", "7",
                 cwd=project)
    assert lock_holder(store) is None
    assert_same(before, contents(store))  # the old period whole: the delete was undone too
    assert _without_new_run(store).equals(runs_before)
    check_consistent(store)  # the killed run shows as interrupted
    assert cli_here("rebuild", "--no-report", project=project).stdout.startswith("nothing")


def test_kill_inside_a_load_transaction_writes_nothing(base, expected, tmp_path):
    project = tmp_path / "p"
    shutil.copytree(base, project)
    store = project / "blocwatch.duckdb"
    before = contents(store)
    with Store(store, read_only=True) as s:
        ingests_before = s.table("ingests")
    new = project / "data" / f"votes-{FIRST_YEAR + 2}.csv"
    _kill_inside("INSERT INTO votes", "ingest", new, "--body", BODY, cwd=project)
    assert_same(before, contents(store))
    with Store(store, read_only=True) as s:
        assert s.table("ingests").equals(ingests_before)
    check_consistent(store)
    out = cli_here("rebuild", "--no-report", project=project)
    assert out.returncode == 0, out.stderr
    assert_same(expected, contents(store))


def test_random_kills_of_rebuild_and_ingest(tmp_path):
    """Three trials of the harness (it runs 20 or more as a script, with measured spans)."""
    trials = run_trials(3, seed=11, work=tmp_path, log=lambda line: None,
                        spans={"rebuild": 1.5, "ingest": 1.0, "resettle": 1.5})
    assert [t.kind for t in trials] == ["rebuild", "ingest", "resettle"]


def test_the_consistency_check_can_fail(base, tmp_path):
    """Negative control: a period whose metric rows are gone is reported as half written."""
    project = tmp_path / "p"
    shutil.copytree(base, project)
    store = project / "blocwatch.duckdb"
    check_consistent(store)
    with Store(store) as s:
        s.execute("DELETE FROM period_metrics WHERE period = ?", [str(FIRST_YEAR)])
    with pytest.raises(AssertionError, match="half written"):
        check_consistent(store)
