"""``build --partitions`` (build/partitions.py) in-process on a real DuckDB file: it honours
``body`` and, like a normal build, drops stored periods that have no partition any more.
Input: the toy roll call for two years under two bodies (tests/toy_rollcall.py)."""

import shutil

import pytest

from blocwatch.pipeline.build.partitions import (
    build_partitions,
    partition_dir,
    write_vote_partitions,
)
from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.ingest.load import ingest_files
from tests import toy_rollcall as toy


@pytest.fixture
def store(tmp_path):
    with toy.load_store(tmp_path / "s.duckdb") as s:
        ingest_files(s, toy.write_years(tmp_path), body="Other")
        yield s


def _periods(store):
    return store.rows("SELECT body, period FROM periods ORDER BY ALL")


def test_partitions_of_one_body_leave_the_other_alone(store, tmp_path):
    root = tmp_path / "parts"
    assert len(write_vote_partitions(store, root)) == 4  # 2 bodies × 2 years
    report = build_partitions(store, root, tmp_path / "results", body="Toy",
                              options=toy.fast_options())
    assert report.periods == [("Toy", "2019"), ("Toy", "2020")]
    assert _periods(store) == [("Toy", "2019"), ("Toy", "2020")]
    assert store.rows("SELECT DISTINCT body FROM trends") == [("Toy",)]


def test_a_period_without_a_partition_is_dropped_like_in_a_normal_build(store, tmp_path):
    root = tmp_path / "parts"
    write_vote_partitions(store, root, body="Toy")
    build_partitions(store, root, tmp_path / "results", options=toy.fast_options())
    shutil.rmtree(partition_dir(root, "Toy", "2019"))
    build_partitions(store, root, tmp_path / "results", options=toy.fast_options())
    assert _periods(store) == [("Toy", "2020")]
    assert store.rows("SELECT DISTINCT period FROM period_metrics") == [("2020",)]


def test_a_body_without_partitions_is_a_usage_error_naming_those_there(store, tmp_path):
    root = tmp_path / "parts"
    write_vote_partitions(store, root, body="Toy")
    with pytest.raises(UsageError, match="holds no partition of body 'Other' — use one of: Toy"):
        build_partitions(store, root, tmp_path / "results", body="Other")
    assert _periods(store) == []
