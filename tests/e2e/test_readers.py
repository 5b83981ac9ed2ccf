"""Readers: unknown names and missing results are errors that say what exists; beside a running
run ``export``, ``report`` and ``status`` wait up to ``--wait`` seconds, then exit 75 naming the
holder (DuckDB's own message never shows); ``remove-body`` takes a body out in one go.

Real CLI in a subprocess, a real store built from fixtures/ingest/toy_long.csv. The holder is
this test process: ``store_lock`` (as a rebuild takes it) or a plain writing connection (a
program other than blocwatch, holding DuckDB's file lock).
"""

import shutil
import threading
import time
from pathlib import Path

import pytest

from blocwatch.pipeline.errors import EXIT_LOCKED
from blocwatch.pipeline.ops.lock import store_lock
from blocwatch.pipeline.store.database import Store
from tests.rebuild_util import cli

TOY = Path(__file__).resolve().parents[2] / "fixtures" / "ingest" / "toy_long.csv"
READERS = [["export", "--table", "metrics"], ["report", "--out", "rep"], ["status"]]


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    folder = tmp_path_factory.mktemp("toy")
    for args in (["ingest", TOY, "--body", "Toy Council"],
                 ["build", "--bootstrap", "0", "--permutations", "0"]):
        proc = cli(*args, cwd=folder)
        assert proc.returncode == 0, proc.stderr
    return folder / "blocwatch.duckdb"


@pytest.fixture
def store(built, tmp_path):
    path = tmp_path / "blocwatch.duckdb"
    shutil.copy(built, path)
    return path


def _hash(path):
    with Store(path, read_only=True) as s:
        return s.content_hash()


@pytest.mark.parametrize("args", READERS, ids=lambda a: a[0])
def test_reader_gives_up_after_wait_naming_the_holder(run_cli, store, args):
    before = _hash(store)
    with store_lock(store, "rebuild"):
        start = time.monotonic()
        proc = run_cli(*args, "--wait", "1")
        waited = time.monotonic() - start
    assert proc.returncode == EXIT_LOCKED, proc.stderr
    line = proc.stderr.strip()
    assert "\n" not in line and line.startswith("error: store ")
    assert "a blocwatch run holds its lock" in line and "running 'rebuild'" in line
    assert "still busy after waiting 1 s" in line and "pass --wait SECONDS" in line
    assert waited >= 1.0
    assert "IO Error" not in proc.stderr and "Traceback" not in proc.stderr
    assert _hash(store) == before


def test_a_program_holding_the_file_is_named_not_duckdb(run_cli, store):
    with Store(store):  # a writing connection without blocwatch's lock
        proc = run_cli("export", "--table", "metrics", "--wait", "0.5")
    assert proc.returncode == EXIT_LOCKED, proc.stderr
    assert "another program holds the file open" in proc.stderr
    assert "IO Error" not in proc.stderr and "Could not set lock" not in proc.stderr


def test_reader_waits_for_the_run_to_finish_then_reads(run_cli, store):
    held = threading.Event()

    def hold():
        with store_lock(store, "rebuild"):
            held.set()
            time.sleep(2.0)

    thread = threading.Thread(target=hold)
    thread.start()
    held.wait()
    proc = run_cli("export", "--table", "metrics", "--wait", "60")
    thread.join()
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.splitlines()[0].startswith("body,period,")
    assert len(proc.stdout.splitlines()) > 1
    assert "period spec: 'year' (the default period spec)" in proc.stderr  # says which spec


def test_a_reader_on_an_older_store_says_how_to_upgrade_it(run_cli, store):
    """A reader opens read-only and cannot migrate: an old schema is a message, not a crash."""
    with Store(store) as s:  # as a version-1 file reads: version 1 recorded, newer table gone
        s.execute("DROP TABLE subset_trends")
        s.execute("UPDATE meta SET value = '1' WHERE key = 'schema_version'")
    proc = run_cli("export", "--table", "trends")
    assert proc.returncode == 1 and proc.stdout == ""
    assert "has schema version 1, older than this blocwatch" in proc.stderr
    assert "Catalog" not in proc.stderr and "\n" not in proc.stderr.strip()
    assert run_cli("build", "--bootstrap", "0", "--permutations", "0").returncode == 0
    assert run_cli("export", "--table", "trends").returncode == 0


# -- names that do not exist, results not built, bodies added by mistake --------------------

BODY = "Toy Council"


def test_export_of_a_misspelt_body_names_the_close_one(run_cli, store):
    before = _hash(store)
    proc = run_cli("export", "--table", "metrics", "--body", "Toy Counsil")
    assert proc.returncode == 2 and proc.stdout == ""  # not even a header
    assert proc.stderr.strip() == ("error: body 'Toy Counsil': is not in the store — did you "
                                   "mean 'Toy Council'? the store holds 'Toy Council'")
    assert _hash(store) == before


def test_report_of_a_period_not_built_names_the_built_ones(run_cli, store, tmp_path):
    proc = run_cli("report", "--periods", "2030", "--out", "rep")
    assert proc.returncode == 2, proc.stderr
    assert "error: period '2030': has no stored results" in proc.stderr
    assert "built periods: '2020'" in proc.stderr
    assert not (tmp_path / "rep").exists()


def test_build_of_a_misspelt_body_names_the_close_one(run_cli, store):
    before = _hash(store)
    proc = run_cli("build", "--body", "Toy Counsil")
    assert proc.returncode == 2 and "did you mean 'Toy Council'?" in proc.stderr
    assert _hash(store) == before


def test_status_of_a_misspelt_body(run_cli, store):
    proc = run_cli("status", "--body", "toy council")
    assert proc.returncode == 2
    assert "did you mean 'Toy Council'?" in proc.stderr and proc.stdout == ""


def test_export_and_report_before_any_build_say_what_to_run(run_cli, tmp_path):
    assert run_cli("ingest", TOY, "--body", BODY).returncode == 0
    for args in (["export", "--table", "metrics"], ["report", "--out", "rep"]):
        proc = run_cli(*args)
        assert proc.returncode == 1 and proc.stdout == "", proc.stderr
        assert proc.stderr.strip() == (f"error: body '{BODY}': has ballots but no results yet — "
                                       "run 'blocwatch build' (or 'blocwatch rebuild') first")
    assert not (tmp_path / "rep").exists()


def test_report_on_an_empty_store_does_not_blame_build(run_cli, tmp_path):
    Store(tmp_path / "blocwatch.duckdb").close()  # a store with the schema and nothing else
    proc = run_cli("report")
    assert proc.returncode == 1
    assert proc.stderr.startswith("error: store: holds no ballots yet — load files with")
    assert "build:" not in proc.stderr


def test_a_close_new_body_warns_and_remove_body_takes_it_out_whole(run_cli, store):
    before = _hash(store)
    proc = run_cli("ingest", TOY, "--body", "Toy Counci")
    assert proc.returncode == 0, proc.stderr
    assert proc.stderr.startswith("warning: body 'Toy Counci' is new, but the store holds "
                                  "'Toy Council'")
    assert _hash(store) != before
    # a listing first: nothing changes
    listed = _hash(store)
    proc = run_cli("remove-body", "Toy Counci")
    assert proc.returncode == 0 and "would remove body 'Toy Counci': " in proc.stdout
    assert "24 votes" in proc.stdout and "nothing removed" in proc.stdout
    assert _hash(store) == listed
    # a misspelt name: an error, nothing changes
    proc = run_cli("remove-body", "Toy Councli", "--yes")
    assert proc.returncode == 2 and "did you mean" in proc.stderr
    assert _hash(store) == listed
    proc = run_cli("remove-body", "Toy Counci", "--yes")
    assert proc.returncode == 0, proc.stderr
    assert proc.stdout.startswith("removed body 'Toy Counci': ")
    after = _hash(store)
    # every table is as before the mistaken load, except the run log (it records runs only)
    assert {k: v for k, v in after.items() if k != "runs"} == \
        {k: v for k, v in before.items() if k != "runs"}
    with Store(store, read_only=True) as s:
        assert s.scalar("SELECT count(*) FROM bodies WHERE body = 'Toy Counci'") == 0


def test_another_period_spec_is_stored_beside_and_said_so(run_cli, store):
    proc = run_cli("build", "--period", "rolling:1m:1m", "--bootstrap", "0",
                   "--permutations", "0")
    assert proc.returncode == 0, proc.stderr
    assert "removed" not in proc.stderr  # the yearly results stay (tests/e2e/test_period_specs)
    assert ("note: period spec 'rolling:1m:1m' is stored beside 'year' (1 period), which this "
            "run kept as they were") in proc.stderr
    with Store(store, read_only=True) as s:
        assert s.rows("SELECT period FROM periods ORDER BY period") == [
            ("2020",), ("2020-03..2020-03",)]
