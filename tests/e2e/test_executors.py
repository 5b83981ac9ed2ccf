"""Serial, ``--jobs 2`` and Dask runs of one build store the same numbers.

The data is a cut-down demo scenario (the invented assembly, three years, few replicates) so the
three builds stay fast; every stored result table must be equal cell for cell, since each
period's seed is a SHA-256 of (seed, body, period) and integer agreement counts are exact.
"""

from __future__ import annotations

import csv
from pathlib import Path

import pandas as pd
import pytest

from blocwatch.pipeline.build import build
from blocwatch.pipeline.compute import BuildOptions
from blocwatch.pipeline.demo_data import BODY, generate
from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.executors import ExecutorSpec, make_executor
from blocwatch.pipeline.store import Store

OPTS = BuildOptions(bootstrap=6, permutations=6, expensive_replicates=2)
TABLES = ("periods", "period_metrics", "member_metrics", "group_agreement", "trends")
YEARS = {str(y) for y in range(2001, 2004)}


@pytest.fixture(scope="module")
def demo_files(tmp_path_factory) -> tuple[Path, Path]:
    """The demo's files, cut to its first three years."""
    out = tmp_path_factory.mktemp("demo")
    files = generate(out / "full")
    with files.votes.open(newline="", encoding="utf-8") as fh:
        rows = list(csv.reader(fh))
    cut = out / "votes.csv"
    with cut.open("w", newline="", encoding="utf-8") as fh:
        csv.writer(fh).writerows([rows[0]] + [r for r in rows[1:] if r[1][:4] in YEARS])
    return cut, files.roster


def _store(tmp_path: Path, files: tuple[Path, Path]) -> Store:
    from blocwatch.pipeline.ingest import ingest_files

    store = Store(tmp_path / "s.duckdb")
    ingest_files(store, [files[0]], body=BODY, members=files[1])
    return store


def _results(store: Store) -> dict[str, pd.DataFrame]:
    out = {}
    for name in TABLES:
        frame = store.table(name).drop(columns=["run_id"])
        out[name] = frame.sort_values(list(frame.columns)).reset_index(drop=True)
    return out


def _run(tmp_path: Path, files, executor) -> dict[str, pd.DataFrame]:
    with _store(tmp_path, files) as store:
        report = build(store, options=OPTS, executor=executor)
        assert [p for _, p in report.periods] == sorted(YEARS)
        return _results(store)


@pytest.fixture(scope="module")
def serial(demo_files, tmp_path_factory) -> dict[str, pd.DataFrame]:
    return _run(tmp_path_factory.mktemp("serial"), demo_files, None)


def _assert_same(a: dict, b: dict) -> None:
    for name in TABLES:
        pd.testing.assert_frame_equal(a[name], b[name], check_exact=True, obj=name)


def test_serial_build_has_results(serial):
    metrics = serial["period_metrics"]
    assert set(metrics["period"]) == YEARS
    assert metrics["value"].notna().any()
    assert metrics["low"].notna().any()  # the bootstrap ran


def test_process_pool_matches_serial(serial, demo_files, tmp_path):
    _assert_same(serial, _run(tmp_path, demo_files, ExecutorSpec("local", jobs=2)))


def test_dask_local_cluster_matches_serial(serial, demo_files, tmp_path):
    pytest.importorskip("distributed")
    from distributed import LocalCluster

    with LocalCluster(n_workers=2, threads_per_worker=1, processes=True,
                      dashboard_address=None) as cluster:
        spec = ExecutorSpec("dask", jobs=2, scheduler=cluster.scheduler_address)
        _assert_same(serial, _run(tmp_path, demo_files, spec))


def test_open_executor_is_reused_and_left_open(serial, demo_files, tmp_path):
    """One job in flight at a time (window 1): same numbers; the pool serves two builds."""
    spec = ExecutorSpec("local", jobs=2, window=1)
    with make_executor(spec) as pool, _store(tmp_path, demo_files) as store:
        first = build(store, options=OPTS, executor=pool)
        _assert_same(serial, _results(store))
        second = build(store, options=OPTS, executor=pool, only_changed=True)
        assert [p for _, p in first.periods] == sorted(YEARS)
        assert second.periods == [] and len(second.skipped) == len(YEARS)


@pytest.mark.parametrize("kwargs,word", [
    ({"kind": "spark"}, "not known"),
    ({"kind": "local", "jobs": 0}, "positive"),
    ({"kind": "local", "scheduler": "tcp://127.0.0.1:1"}, "only applies to Dask"),
])
def test_bad_executor_specs_are_usage_errors(kwargs, word):
    with pytest.raises(UsageError, match=word):
        ExecutorSpec(**kwargs)
