"""Real builds (CLI, DuckDB file): every stored estimate lies inside its interval or its note
says why; intervals without spread carry a caution; empty values name their cause and flag."""

import csv
import io

import numpy as np
import pandas as pd
import pytest

from tests.interval_checks import assert_no_silent_contradiction
from tests.spatial_sim import spatial_votes

CODES = {1: "yes", 2: "no", 3: "abstain"}  # YES, NO, ABSTAIN; MISSING rows are left out


def _write_body(path, years, n, b, *, separation, seed):
    with path.open("w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["ballot_id", "date", "member_id", "vote", "group"])
        for y, year in enumerate(years):
            # spatial_votes seats two equal groups: draw n + 1 and seat the first n
            votes, _, groups = spatial_votes(n + n % 2, b, separation=separation,
                                             seed=seed + y)
            for j in range(b):
                day = f"{year}-{1 + j % 12:02d}-{1 + j // 12 % 28:02d}"
                for i in range(n):
                    if votes[i, j] in CODES:
                        w.writerow([f"{year}-{j}", day, f"m{i:02d}", CODES[votes[i, j]],
                                    "North" if groups[i] == 0 else "South"])
    return path


def _stored(run_cli, store, *build_args):
    run_cli("build", "--store", store, *build_args, check=True, timeout=1200)
    out = run_cli("export", "--store", store, "--table", "metrics", check=True).stdout
    return pd.read_csv(io.StringIO(out))


@pytest.mark.slow
def test_planted_council_intervals_hold_their_estimates(run_cli, tmp_path):
    # Planted truth (tests/spatial_sim.py): 30 members, 90 ballots a year, two years.
    _write_body(tmp_path / "council.csv", [2021, 2022], 30, 90, separation=2.0, seed=3)
    run_cli("ingest", "council.csv", "--store", "c.duckdb", "--body", "Planted Council",
            check=True)
    rows = _stored(run_cli, "c.duckdb", "--bootstrap", 60, "--permutations", 20,
                   "--expensive-replicates", 20)
    assert_no_silent_contradiction(rows)


@pytest.mark.slow
def test_nine_member_board_is_cautioned(run_cli, tmp_path):
    # A 9-member board (12 motions a year) split cleanly: every interval says it cannot show
    # the body's uncertainty (members are not resampled; or no spread at all).
    _write_body(tmp_path / "board.csv", [2021], 9, 12, separation=5.0, seed=1)
    run_cli("ingest", "board.csv", "--store", "b.duckdb", "--body", "Small Board", check=True)
    rows = _stored(run_cli, "b.duckdb", "--bootstrap", 40, "--permutations", 20,
                   "--expensive-replicates", 20)
    assert_no_silent_contradiction(rows)
    has = rows[np.isfinite(rows["low"])]
    for _, r in has.iterrows():
        assert ("members" in r["note"]) or ("no spread" in r["note"]), r.to_dict()
