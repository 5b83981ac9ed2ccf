"""Schema 4: results keyed by period spec. A store written before keeps every result row,
each labelled with the spec of the run that wrote it, and two specs then live side by side.

The toy roll call (tests/toy_rollcall.py) is built for real twice; the older store is the same
file with the spec column taken out again (the shape every schema-3 table had), so the
migration meets real result rows, not made-up ones.
"""

import json

import pytest

from blocwatch.pipeline.build.builder import build
from blocwatch.pipeline.build.planner import stale_periods
from blocwatch.pipeline.ingest.load import ingest_files
from blocwatch.pipeline.options import AgreementOptions, BuildOptions
from blocwatch.pipeline.report.export import export_frame
from blocwatch.pipeline.store import schema
from blocwatch.pipeline.store.database import Store
from blocwatch.pipeline.store.spec_key import SPEC_KEYS
from tests import toy_rollcall as toy

OPTS = BuildOptions(bootstrap=0, permutations=0,
                    agreement=AgreementOptions(min_shared=1, drop_unanimous=False))
MONTHLY = "rolling:1m:1m"  # the toy's four ballots fall in one month: one window


def _opts(spec):
    import dataclasses

    return dataclasses.replace(OPTS, period=spec)


@pytest.fixture()
def store_path(tmp_path):
    path = tmp_path / "toy.duckdb"
    with Store(path) as store:
        ingest_files(store, [toy.write_csv(tmp_path / "toy.csv")], body="Toy")
    return path


def _results(store):
    return {t: store.table(t) for t in SPEC_KEYS}


def test_two_specs_live_side_by_side(store_path):
    with Store(store_path) as store:
        build(store, options=OPTS)
        yearly = _results(store)
        report = build(store, options=_opts(MONTHLY))
        assert report.removed == [] and report.other_specs == {"year": 1}
        after = _results(store)
        # the yearly rows are all still there, unchanged
        for table, frame in yearly.items():
            kept = after[table][after[table]["spec"] == "year"].reset_index(drop=True)
            assert kept.equals(frame), table
        assert store.rows("SELECT spec, period FROM periods ORDER BY ALL") == [
            (MONTHLY, "2020-03..2020-03"), ("year", "2020")]
        # each spec is judged on its own: neither makes the other stale or removed
        assert stale_periods(store, OPTS, "Toy") == []
        assert stale_periods(store, _opts(MONTHLY), "Toy") == []
        year = export_frame(store, "metrics", spec="year")
        month = export_frame(store, "metrics", spec=MONTHLY)
    assert set(year["period_spec"]) == {"year"} and set(month["period_spec"]) == {MONTHLY}
    assert set(year["period"]) == {"2020"} and set(month["period"]) == {"2020-03..2020-03"}


def _as_schema_3(path):
    """Take the spec column out of every result table again and record version 3."""
    with Store(path) as store:
        for table in SPEC_KEYS:
            store.execute(f"CREATE TABLE {table}__old AS SELECT * EXCLUDE (spec) FROM {table}")
            store.execute(f"DROP TABLE {table}")
            store.execute(f"ALTER TABLE {table}__old RENAME TO {table}")
        store.execute("UPDATE meta SET value = '3' WHERE key = 'schema_version'")


def test_an_older_store_keeps_every_result_with_the_spec_it_was_built_with(store_path):
    with Store(store_path) as store:
        build(store, options=_opts(MONTHLY))  # run 1: the store's only results are monthly
        before = {t: f.drop(columns="spec") for t, f in _results(store).items()}
        params = json.loads(store.scalar("SELECT params FROM runs WHERE run_id = 1"))
    assert params["period"] == MONTHLY  # what the migration reads
    _as_schema_3(store_path)
    with Store(store_path) as store:  # a writing open migrates
        assert store.scalar("SELECT value FROM meta WHERE key = 'schema_version'") == \
            str(schema.SCHEMA_VERSION)
        after = _results(store)
        for table, frame in after.items():
            assert set(frame["spec"]) <= {MONTHLY}, table
            assert frame.drop(columns="spec").equals(before[table]), table  # no row lost
        assert all(not after[t].empty for t in ("periods", "period_metrics", "trends"))
        # spec is in every key: a yearly build adds its rows beside the monthly ones
        build(store, options=OPTS)
        assert store.rows("SELECT spec, count(*) FROM periods GROUP BY spec ORDER BY spec") \
            == [(MONTHLY, 1), ("year", 1)]


def test_rows_of_a_run_that_recorded_no_spec_get_the_old_default(store_path):
    with Store(store_path) as store:
        build(store, options=OPTS)
        store.execute("UPDATE runs SET params = '{}'")
    _as_schema_3(store_path)
    with Store(store_path) as store:
        assert store.rows("SELECT DISTINCT spec FROM periods") == [("year",)]
