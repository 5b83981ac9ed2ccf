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

from blocwatch.metrics.uncertainty.intervals import MIN_REPLICATES
from blocwatch.pipeline.build.builder import build
from blocwatch.pipeline.build.executors import ExecutorSpec, make_executor
from blocwatch.pipeline.demo.assembly import BODY, generate
from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.options import BuildOptions
from blocwatch.pipeline.store.database import Store

# The fewest replicates that still give an interval (metrics.uncertainty.intervals.MIN_REPLICATES).
OPTS = BuildOptions(bootstrap=MIN_REPLICATES, permutations=6, expensive_replicates=2)
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
    from blocwatch.pipeline.ingest.load import ingest_files

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
                      dashboard_address=":0") as cluster:
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


def _partition_build(tmp_path, files, executor) -> dict[str, pd.DataFrame]:
    """Vote partitions written from a loaded store, computed by workers into result
    partitions, merged into a second store that holds no ballots at all."""
    from blocwatch.pipeline.build.partitions import build_partitions, write_vote_partitions

    with _store(tmp_path, files) as source:
        written = write_vote_partitions(source, tmp_path / "lake")
    assert sorted(p.name for p in written) == [f"period={y}" for y in sorted(YEARS)]
    assert all(p.parent.name == "body=Assembly%20of%20Marrow%20Sound" for p in written)
    with Store(tmp_path / "results.duckdb") as store:
        report = build_partitions(store, tmp_path / "lake", tmp_path / "out", options=OPTS,
                                  executor=executor)
        assert [p for _, p in report.periods] == sorted(YEARS)
        assert (tmp_path / "out" / written[0].parent.name / written[0].name /
                "metrics.parquet").exists()
        return _results(store)


def test_partitions_match_store_build(serial, demo_files, tmp_path):
    _assert_same(serial, _partition_build(tmp_path, demo_files, None))


def test_partitions_on_dask_match_store_build(serial, demo_files, tmp_path):
    pytest.importorskip("distributed")
    _assert_same(serial, _partition_build(tmp_path, demo_files, ExecutorSpec("dask", jobs=2)))


def test_partition_folder_errors(tmp_path):
    from blocwatch.pipeline.build.partitions import list_partitions, read_partition

    with pytest.raises(UsageError, match="does not exist"):
        list_partitions(tmp_path / "nowhere")
    folder = tmp_path / "body=X" / "period=2001"
    folder.mkdir(parents=True)
    pd.DataFrame({"member_id": ["a"], "choice": ["yes"]}).to_parquet(folder / "votes.parquet")
    assert list_partitions(tmp_path) == [("X", "2001", folder)]
    from blocwatch.pipeline.errors import BadInputError

    with pytest.raises(BadInputError, match="lacks column"):
        read_partition(folder, "X", "2001")


def test_cli_build_flags(demo_files, tmp_path):
    """``build --jobs 2`` and ``build --partitions DIR`` through the command line."""
    from click.testing import CliRunner

    from blocwatch.pipeline.build.partitions import write_vote_partitions
    from blocwatch.pipeline.cli.main import cli

    flags = ["--bootstrap", "2", "--permutations", "2", "--expensive-replicates", "1"]
    with _store(tmp_path, demo_files) as store:
        write_vote_partitions(store, tmp_path / "lake")
    runner = CliRunner()
    jobs = runner.invoke(cli, ["build", "--store", str(tmp_path / "s.duckdb"), "--jobs", "2",
                               *flags])
    assert jobs.exit_code == 0, jobs.output
    assert f"{len(YEARS)} period(s) computed" in jobs.output
    lake = runner.invoke(cli, ["build", "--store", str(tmp_path / "r.duckdb"), "--partitions",
                               str(tmp_path / "lake"), *flags])
    assert lake.exit_code == 0, lake.output
    with Store(tmp_path / "r.duckdb") as store:
        assert set(store.table("periods")["period"]) == YEARS
    bad = runner.invoke(cli, ["build", "--store", str(tmp_path / "s.duckdb"), "--scheduler",
                              "tcp://127.0.0.1:1", *flags])
    assert bad.exit_code == 2 and "only applies to Dask" in bad.output
