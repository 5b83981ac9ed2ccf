"""The period planner and the build it drives, on the toy roll call in a real DuckDB file.

Expected states follow from the planner's definitions (new: no stored result; changed: the
fingerprint differs; removed: the spec no longer produces a period it stored; trends older
than the periods), checked against what ``build`` then writes. Each spec is judged on its own.
"""

import pytest

from blocwatch.pipeline.build.builder import build
from blocwatch.pipeline.build.fingerprint import fingerprint
from blocwatch.pipeline.build.planner import Stale, plan_body, stale_periods
from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.store.runs import tool_version
from tests import toy_rollcall as toy


@pytest.fixture
def store(tmp_path):
    with toy.load_store(tmp_path / "s.duckdb") as s:
        yield s


def _period_names(store):
    return [r[0] for r in store.rows("SELECT period FROM periods WHERE body = 'Toy' "
                                     "ORDER BY period")]


def test_fresh_store_every_period_is_new(store):
    opts = toy.fast_options()
    assert stale_periods(store, opts) == [Stale("Toy", "2019", "new"), Stale("Toy", "2020", "new")]
    plan = plan_body(store, "Toy", opts.period)
    assert [p.name for p in plan.periods] == ["2019", "2020"] and plan.removed == []


def test_after_a_build_nothing_is_stale_and_a_second_build_skips_everything(store):
    opts = toy.fast_options()
    first = build(store, options=opts)
    assert first.periods == [("Toy", "2019"), ("Toy", "2020")]
    assert stale_periods(store, opts) == []
    again = build(store, options=opts, only_changed=True)
    assert again.periods == [] and again.skipped == [("Toy", "2019"), ("Toy", "2020")]


def test_stored_fingerprint_is_the_planners(store):
    opts = toy.fast_options()
    build(store, options=opts)
    plan = plan_body(store, "Toy", opts.period)
    for vm in plan.matrices(store):
        assert plan.stored[vm.period.name] == fingerprint(vm, opts, tool_version())
        assert plan.state(vm, opts, tool_version()) is None


def test_other_options_make_every_period_changed(store):
    build(store, options=toy.fast_options())
    other = toy.fast_options(min_shared=2)
    assert {s.reason for s in stale_periods(store, other)} == {"changed"}
    report = build(store, options=other, only_changed=True)
    assert len(report.periods) == 2 and report.skipped == []


def test_a_period_the_spec_no_longer_produces_is_removed_and_dropped(store, tmp_path):
    build(store, options=toy.fast_options())  # yearly: 2019, 2020
    terms = tmp_path / "terms.csv"
    terms.write_text("name,start,end\nT19,2019-01-01,2019-12-31\nT20,2020-01-01,2020-12-31\n",
                     encoding="utf-8")
    opts = toy.fast_options().__class__(period=f"terms:{terms}", bootstrap=0, permutations=0,
                                        agreement=toy.fast_options().agreement)
    # another spec: its periods are new, the yearly ones are neither stale nor removed
    assert stale_periods(store, opts) == [Stale("Toy", "T19", "new"), Stale("Toy", "T20", "new")]
    build(store, options=opts)
    # the same spec without T19: only T19 is removed and dropped, the yearly results stay
    terms.write_text("name,start,end\nT20,2020-01-01,2020-12-31\n", encoding="utf-8")
    assert Stale("Toy", "T19", "removed") in stale_periods(store, opts)
    report = build(store, options=opts)
    assert report.removed == [("Toy", "T19")] and report.other_specs == {"year": 2}
    assert _period_names(store) == ["2019", "2020", "T20"]
    left = store.rows("SELECT DISTINCT period FROM period_metrics WHERE body = 'Toy' AND "
                      "spec = ? ORDER BY ALL", [opts.period])
    assert left == [("T20",)]


def test_trends_older_than_the_periods_are_stale(store):
    opts = toy.fast_options()
    build(store, options=opts)
    store.execute("DELETE FROM trends WHERE body = 'Toy'")
    assert stale_periods(store, opts) == [Stale("Toy", None, "trends")]


def test_only_limits_the_work_and_counts_the_rest_as_skipped(store):
    opts = toy.fast_options()
    build(store, options=opts)
    report = build(store, options=opts, only={("Toy", "2020")})
    assert report.periods == [("Toy", "2020")] and report.skipped == [("Toy", "2019")]


def test_build_checks_the_body_against_the_store(store):
    with pytest.raises(UsageError, match="did you mean 'Toy'"):
        build(store, body="Toyy", options=toy.fast_options())
    assert store.rows("SELECT count(*) FROM runs") == [(0,)]
