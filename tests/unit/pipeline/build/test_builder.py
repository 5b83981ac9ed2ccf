"""build/builder.py on a real DuckDB file: the run row, one transaction per period, trends.

Input: the toy roll call for two years (tests/toy_rollcall.py). Expected values are the
builder's own contract (a run is ``running`` until it ends ``ok`` or ``failed``, each computed
period has its periods row and metric rows, trends hold one row per metric series) and, for the
numbers, the hand-derived modularity of the toy roll call without its unanimous ballot: 0.2.
"""

import json

import pytest

from blocwatch.pipeline.build.builder import build
from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.options import BuildOptions
from tests import toy_rollcall as toy


@pytest.fixture
def store(tmp_path):
    with toy.load_store(tmp_path / "s.duckdb") as s:
        yield s


def test_a_build_records_its_run_periods_and_trends(store):
    report = build(store, options=toy.fast_options())
    run = store.df("SELECT * FROM runs").iloc[0]
    assert (run["run_id"], run["command"], run["status"]) == (report.run_id, "build", "ok")
    assert json.loads(run["recomputed"]) == [["Toy", "2019"], ["Toy", "2020"]]
    periods = store.rows("SELECT period, n_members, n_ballots, n_dropped, run_id FROM periods "
                         "ORDER BY period")
    # 6 members; v3 (unanimous) left out by default, so 3 ballots a year
    assert periods == [("2019", 6, 3, 0, report.run_id), ("2020", 6, 3, 0, report.run_id)]
    q = store.rows("SELECT period, value FROM period_metrics WHERE metric = 'group_modularity' "
                   "ORDER BY period")
    assert [p for p, _ in q] == ["2019", "2020"]
    assert all(v == pytest.approx(0.2) for _, v in q)  # derived by hand, tests/toy_rollcall.py
    metrics = {r[0] for r in store.rows("SELECT DISTINCT metric FROM period_metrics")}
    trends = {r[0] for r in store.rows("SELECT metric FROM trends WHERE body = 'Toy'")}
    assert trends == metrics
    assert store.scalar("SELECT min(run_id) FROM trends") == report.run_id


def test_a_failing_build_is_recorded_as_failed_and_writes_no_period(store):
    bad = BuildOptions(rule="no-such-rule", bootstrap=0, permutations=0,
                       agreement=toy.fast_options().agreement)
    with pytest.raises(UsageError, match="no-such-rule"):
        build(store, options=bad)
    assert store.rows("SELECT status FROM runs") == [("failed",)]
    assert store.rows("SELECT count(*) FROM periods") == [(0,)]


def test_a_second_build_replaces_a_period_whole(store):
    first = build(store, options=toy.fast_options()).run_id
    second = build(store, options=toy.fast_options(), only={("Toy", "2020")}).run_id
    runs = dict(store.rows("SELECT period, run_id FROM periods"))
    assert runs == {"2019": first, "2020": second}
    # no metric row of the old 2020 is left beside the new ones
    assert store.rows("SELECT DISTINCT run_id FROM period_metrics WHERE period = '2020'") == \
        [(second,)]
