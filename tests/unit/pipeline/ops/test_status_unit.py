"""ops/status.py in-process on a real DuckDB file: what it reports before and after a build,
when a period goes stale, and while the lock is held. Expected values are the store's contents
(toy roll call, tests/toy_rollcall.py) and the planner's stale list."""

import pytest

from blocwatch.pipeline.build.builder import build
from blocwatch.pipeline.config import Config
from blocwatch.pipeline.ops.lock import store_lock
from blocwatch.pipeline.ops.status import status
from tests import toy_rollcall as toy

NO_CONFIG = Config(None, {})


@pytest.fixture
def store_path(tmp_path):
    path = tmp_path / "s.duckdb"
    toy.load_store(path).close()
    return path


def test_a_store_not_created_yet(tmp_path):
    report = status(tmp_path / "none.duckdb", config=NO_CONFIG)
    assert not report.exists and report.bodies == [] and report.last_run is None
    assert report.lines()[0].endswith("(not created yet)")


def test_loaded_but_not_built_every_period_is_new(store_path):
    report = status(store_path, options=toy.fast_options(), config=NO_CONFIG)
    (body,) = report.bodies
    assert (body.body, body.members, body.ballots) == ("Toy", 6, 8)
    assert body.periods == [] and body.stale == [["2019", "new"], ["2020", "new"]]


def test_after_a_build_up_to_date_and_the_run_shown(store_path):
    from blocwatch.pipeline.store.database import Store

    with Store(store_path) as store:
        run = build(store, options=toy.fast_options()).run_id
    report = status(store_path, options=toy.fast_options(), config=NO_CONFIG)
    (body,) = report.bodies
    assert body.periods == ["2019", "2020"] and body.stale == []
    assert report.last_run["run_id"] == run and report.last_run["status"] == "ok"
    assert "  stale: none (up to date)" in report.lines()
    # other options: every built period is stale ("changed") — status and rebuild agree
    other = status(store_path, options=toy.fast_options(min_shared=2), config=NO_CONFIG)
    assert other.bodies[0].stale == [["2019", "changed"], ["2020", "changed"]]


def test_while_a_run_holds_the_lock_status_names_it_and_stops(store_path):
    with store_lock(store_path, "rebuild"):
        report = status(store_path, config=NO_CONFIG)
    assert report.lock is not None and report.bodies == []
    assert "held by a run in progress" in report.lines()[1]
