"""The toy roll call (tests/toy_rollcall.py) through the real pipeline: file → store → agreement
→ metrics, against the values derived by hand there."""

import io
from datetime import date
from fractions import Fraction

import pandas as pd
import pytest

from blocwatch.pipeline.build.agreement import agreement_counts, agreement_matrix
from blocwatch.pipeline.build.matrices import load_votes
from blocwatch.pipeline.build.periods import make_periods
from blocwatch.pipeline.store.database import Store
from tests import toy_rollcall as toy

MEMBERS = toy.MEMBERS


@pytest.fixture
def toy_files(tmp_path):
    return toy.write_csv(tmp_path / "toy_votes.csv")


def _metrics(run_cli, tmp_path, *extra):
    run_cli("build", "--store", "toy.duckdb", "--bootstrap", 0, "--permutations", 0,
            "--min-shared", 1, "--min-share-cast", 0, *extra, check=True)
    out = run_cli("export", "--store", "toy.duckdb", "--table", "metrics", check=True).stdout
    frame = pd.read_csv(io.StringIO(out))
    return frame.set_index("metric")["value"]


def test_toy_roll_call_end_to_end(run_cli, tmp_path, toy_files):
    run_cli("ingest", toy_files, "--store", "toy.duckdb", "--body", "Toy", check=True)
    # Agreement fractions as stored and read back (derived by hand, tests/toy_rollcall.py).
    with Store(tmp_path / "toy.duckdb", read_only=True) as store:
        period = make_periods("year", date(2020, 3, 2), date(2020, 3, 23))[0]
        vm = load_votes(store, "Toy", period)
    assert list(vm.member_ids) == MEMBERS and list(vm.groups) == list("AAABBB")
    a = agreement_matrix(*agreement_counts(vm.votes))
    assert a[0, 1] == 1 and a[0, 2] == pytest.approx(0.75) and a[0, 3] == pytest.approx(0.25)
    assert a[0, 5] == pytest.approx(0.5) and a[2, 5] == pytest.approx(0.75)

    # Weighted modularity of the group partition: 1/14 with v3, 0.2 without (derived by hand).
    with_v3 = _metrics(run_cli, tmp_path, "--keep-unanimous")
    assert with_v3["group_modularity"] == pytest.approx(float(Fraction(1, 14)))
    without_v3 = _metrics(run_cli, tmp_path)
    assert without_v3["group_modularity"] == pytest.approx(0.2)


def test_toy_roll_call_at_default_min_shared_names_the_minimum(run_cli, tmp_path, toy_files):
    # The toy roll call's four ballots (tests/toy_rollcall.py), default --min-shared 5: v3 is
    # unanimous and left out, every pair shared the other 3, so no pair reaches the minimum. Each
    # empty value must say so with the value and the flag, not "the graph has no edges".
    run_cli("ingest", toy_files, "--store", "toy.duckdb", "--body", "Toy", check=True)
    run_cli("build", "--store", "toy.duckdb", "--bootstrap", 0, "--permutations", 0,
            check=True)
    for table in ("metrics", "members"):
        out = run_cli("export", "--store", "toy.duckdb", "--table", table, check=True).stdout
        frame = pd.read_csv(io.StringIO(out))
        empty = frame[frame["value"].isna()]
        assert len(empty) > 0
        for note in empty["note"]:
            if "one group" in str(note) or "vote matrix" in str(note):
                continue
            assert "minimum of 5 ballots (--min-shared 5)" in note, (table, note)
            assert "the most any pair shared was 3" in note and "--min-shared 3" in note
            assert "no edges" not in note and "shared a ballot" not in note
    # Following the note's fix gives the pairs values.
    run_cli("build", "--store", "toy.duckdb", "--bootstrap", 0, "--permutations", 0,
            "--min-shared", 3, check=True)
    out = run_cli("export", "--store", "toy.duckdb", "--table", "metrics", check=True).stdout
    assert pd.read_csv(io.StringIO(out)).set_index("metric")["value"]["group_modularity"] > 0
