"""Issue 13, finding 7: results of different period specs live side by side.

Real CLI in a subprocess, a real store built from fixtures/ingest/toy_long.csv (four ballots in
March 2020: one yearly period '2020', one monthly window '2020-03..2020-03'). A second spec
is stored beside the first and said so; ``export`` and ``report`` show one spec and say which
and why; ``status`` judges one spec and names the others; a store from before (schema 3)
keeps its results, labelled with the spec they were built with.
"""

import csv
import io
import shutil
from pathlib import Path

import pytest

from blocwatch.pipeline.store.database import Store
from blocwatch.pipeline.store.spec_key import SPEC_KEYS
from tests.rebuild_util import cli

TOY = Path(__file__).resolve().parents[2] / "fixtures" / "ingest" / "toy_long.csv"
MONTHLY = "rolling:1m:1m"
FAST = ["--bootstrap", "0", "--permutations", "0"]


@pytest.fixture(scope="module")
def built(tmp_path_factory):
    folder = tmp_path_factory.mktemp("toy")
    for args in (["ingest", TOY, "--body", "Toy Council"], ["build", *FAST]):
        proc = cli(*args, cwd=folder)
        assert proc.returncode == 0, proc.stderr
    return folder / "blocwatch.duckdb"


@pytest.fixture
def project(built, tmp_path):
    shutil.copy(built, tmp_path / "blocwatch.duckdb")
    return tmp_path


def _hash(path):
    with Store(path, read_only=True) as s:
        return s.content_hash()


def _table(text):
    return list(csv.DictReader(io.StringIO(text)))


def _ok(*args, cwd):
    proc = cli(*args, cwd=cwd)
    assert proc.returncode == 0, proc.stderr
    return proc


def test_a_second_spec_is_stored_beside_the_first_and_readers_pick_one(project):
    store = project / "blocwatch.duckdb"
    yearly = _table(_ok("export", "--table", "metrics", cwd=project).stdout)
    proc = _ok("build", "--period", MONTHLY, *FAST, cwd=project)
    assert "removed" not in proc.stderr
    assert (f"note: period spec '{MONTHLY}' is stored beside 'year' (1 period), which this "
            "run kept as they were") in proc.stderr
    with Store(store, read_only=True) as s:
        assert s.rows("SELECT spec, period FROM periods ORDER BY ALL") == [
            (MONTHLY, "2020-03..2020-03"), ("year", "2020")]

    # export: the default spec, said on stderr; the yearly rows exactly as before
    proc = _ok("export", "--table", "metrics", cwd=project)
    assert proc.stderr.strip().splitlines()[-1] == (
        f"period spec: 'year' (the default period spec); also stored: '{MONTHLY}' — show one "
        "with --period SPEC")
    assert _table(proc.stdout) == yearly
    assert {r["period_spec"] for r in yearly} == {"year"} and list(yearly[0])[-1] == \
        "period_spec"  # a new column goes at the end
    proc = _ok("export", "--table", "members", "--period", MONTHLY, cwd=project)
    rows = _table(proc.stdout)
    assert rows and {(r["period"], r["period_spec"]) for r in rows} == {
        ("2020-03..2020-03", MONTHLY)}
    assert f"period spec: '{MONTHLY}' (chosen with --period); also stored: 'year'" in \
        proc.stderr

    # a spec with no results: exit 2, what is stored, the command that makes it; nothing written
    before = _hash(store)
    proc = cli("export", "--table", "metrics", "--period", "rolling:1m:2m", cwd=project)
    assert proc.returncode == 2 and proc.stdout == ""
    assert proc.stderr == (
        "error: --period rolling:1m:2m: has no stored results — did you mean "
        f"'{MONTHLY}'? the store holds 'year' (1 period), '{MONTHLY}' (1 period); or compute "
        "it with 'blocwatch build --period rolling:1m:2m'\n")
    proc = cli("report", "--out", "rep", "--periods", "2020", "--period", MONTHLY, cwd=project)
    assert proc.returncode == 2 and f"has no stored results of period spec '{MONTHLY}'" in \
        proc.stderr and "built periods: '2020-03..2020-03'" in proc.stderr
    assert _hash(store) == before

    # report: says which spec, draws that spec's periods
    proc = _ok("report", "--out", "rep", "--period", MONTHLY, cwd=project)
    assert proc.stdout.startswith(f"period spec: '{MONTHLY}' (chosen with --period)")
    pages = "".join(p.read_text(encoding="utf-8") for p in (project / "rep").glob("*.html"))
    assert "2020-03..2020-03" in pages

    # status judges one spec and names the other
    out = _ok("status", *FAST, cwd=project).stdout
    assert "  periods built (period spec 'year'): 1 (2020 .. 2020)" in out
    assert (f"  also stored, not judged here: period spec '{MONTHLY}' (1 period) — pass "
            "--period SPEC to judge one") in out
    assert "stale: none (up to date)" in out
    out = _ok("status", "--period", MONTHLY, *FAST, cwd=project).stdout
    assert f"  periods built (period spec '{MONTHLY}'): 1" in out
    assert "stale: none (up to date)" in out and "removed" not in out

    # building the first spec again leaves the second as it was
    before = {t: v for t, v in _hash(store).items() if t != "runs"}
    proc = _ok("build", *FAST, cwd=project)
    assert "removed" not in proc.stderr
    after = _hash(store)
    with Store(store, read_only=True) as s:
        monthly = s.rows("SELECT run_id FROM periods WHERE spec = ?", [MONTHLY])
    assert monthly == [(2,)]  # still the rows of run 2
    assert after["votes"] == before["votes"]


def test_the_configured_spec_is_the_readers_default_and_the_only_one_stored_next(project):
    (project / "blocwatch.toml").write_text(f'[build]\nperiod = "{MONTHLY}"\n')
    proc = _ok("export", "--table", "trends", cwd=project)  # only 'year' is stored
    assert proc.stderr.strip().splitlines()[-1] == (
        "period spec: 'year' (the only period spec stored; the [build] period of "
        f"blocwatch.toml, '{MONTHLY}', has no results)")
    _ok("build", *FAST, cwd=project)  # [build] period feeds build
    proc = _ok("export", "--table", "trends", cwd=project)
    assert proc.stderr.strip().splitlines()[-1] == (
        f"period spec: '{MONTHLY}' (the [build] period of blocwatch.toml); also stored: "
        "'year' — show one with --period SPEC")
    assert {r["period_spec"] for r in _table(proc.stdout)} == {MONTHLY}


def test_several_specs_and_not_the_default_one_is_an_error_naming_them(project):
    for spec in (MONTHLY, "rolling:2m:1m"):
        _ok("build", "--period", spec, *FAST, cwd=project)
    with Store(project / "blocwatch.duckdb") as s:  # take the yearly results out again
        for table in ("period_metrics", "member_metrics", "group_agreement", "subset_metrics",
                      "period_edges", "trends", "subset_trends", "periods"):
            s.execute(f"DELETE FROM {table} WHERE spec = 'year'")
    proc = cli("report", "--out", "rep", cwd=project)
    assert proc.returncode == 2 and not (project / "rep").exists()
    assert proc.stderr.startswith("error: period spec: the store holds results of 2 period "
                                  "specs, none of them 'year' (the default period spec) — "
                                  "pass --period with one of: ")
    assert f"'{MONTHLY}' (1 period)" in proc.stderr


def test_a_store_from_before_keeps_its_results_under_the_spec_they_were_built_with(project):
    store = project / "blocwatch.duckdb"
    _ok("build", "--period", MONTHLY, *FAST, cwd=project)
    with Store(store, read_only=True) as s:
        counts = {t: len(s.table(t)) for t in SPEC_KEYS}
    with Store(store) as s:  # as schema 3 had them: no spec column, version 3
        for table in SPEC_KEYS:
            s.execute(f"CREATE TABLE {table}__old AS SELECT * EXCLUDE (spec) FROM {table}")
            s.execute(f"DROP TABLE {table}")
            s.execute(f"ALTER TABLE {table}__old RENAME TO {table}")
        s.execute("UPDATE meta SET value = '3' WHERE key = 'schema_version'")
    proc = cli("export", "--table", "metrics", cwd=project)  # a reader cannot migrate
    assert proc.returncode == 1 and "has schema version 3" in proc.stderr
    _ok("ingest", TOY, "--body", "Toy Council", cwd=project)  # a writer migrates (file unchanged)
    with Store(store, read_only=True) as s:
        assert {t: len(s.table(t)) for t in SPEC_KEYS} == counts  # no row lost
        assert s.rows("SELECT spec, period FROM periods ORDER BY ALL") == [
            (MONTHLY, "2020-03..2020-03"), ("year", "2020")]
    proc = _ok("export", "--table", "groups", "--period", MONTHLY, cwd=project)
    assert {r["period_spec"] for r in _table(proc.stdout)} == {MONTHLY}
