"""Who was left out of a period, and how a member in two groups was placed: stored in the
members table and shown by the members export (real CLI, real DuckDB file)."""

import csv
import io

import numpy as np
import pandas as pd

from tests.spatial_sim import spatial_votes

CODES = {1: "yes", 2: "no", 3: "abstain"}


def test_late_joiner_and_switcher_are_in_the_members_export(run_cli, tmp_path):
    # 12 members, 40 ballots in 2021 (invented). m11 joins for the last 5 ballots (below the
    # default --min-share-cast 0.25 of 40 = 10); m00 moves from North to South after ballot 25.
    votes, _, groups = spatial_votes(12, 40, separation=2.0, missing=0.0, abstain=0.0, seed=5)
    path = tmp_path / "board.csv"
    with path.open("w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["ballot_id", "date", "member_id", "vote", "group"])
        for j in range(40):
            day = f"2021-{1 + j // 4:02d}-{1 + 7 * (j % 4):02d}"
            for i in range(12):
                if i == 11 and j < 35:
                    continue
                group = "North" if groups[i] == 0 else "South"
                if i == 0 and j >= 25:
                    group = "South"
                w.writerow([f"b{j:02d}", day, f"m{i:02d}", CODES[votes[i, j]], group])
    run_cli("ingest", path, "--store", "s.duckdb", "--body", "Harbour Board", check=True)
    run_cli("build", "--store", "s.duckdb", "--bootstrap", 0, "--permutations", 0,
            "--keep-unanimous", check=True)
    out = run_cli("export", "--store", "s.duckdb", "--table", "members", check=True).stdout
    rows = pd.read_csv(io.StringIO(out))
    left = rows[rows["metric"] == "left_out"]
    assert left["member_id"].tolist() == ["m11"]
    assert left["value"].tolist() == [5.0]
    assert "cast 5 of its 40 ballots, fewer than the 10 that --min-share-cast 0.25" in \
        left["note"].iloc[0]
    placed = rows[rows["metric"] == "placement"]
    assert placed["member_id"].tolist() == ["m00"]
    assert placed["group_name"].tolist() == ["North"]  # 25 of 40 ballots in North
    assert np.isclose(placed["value"].iloc[0], 25 / 40)
    note = placed["note"].iloc[0]
    assert note.startswith("placed in North: North for 25 cast ballots, South for 15")
    assert "most of the ballots they cast" in note
    # The metrics export counts the one member left out.
    metrics = pd.read_csv(io.StringIO(run_cli("export", "--store", "s.duckdb", "--table",
                                              "metrics", check=True).stdout))
    assert set(metrics["n_dropped"]) == {1}
