"""The pairs a build keeps for the network pictures, against pandas' own top-n selection."""

import numpy as np
import pandas as pd

from blocwatch.pipeline.build.edges import strongest_pairs


def _random_agreement(n=30, seed=0):
    rng = np.random.default_rng(seed)
    a = rng.random((n, n)).round(2)  # rounded: many ties
    a = np.triu(a, 1) + np.triu(a, 1).T
    a[rng.random((n, n)) < 0.1] = np.nan
    a = np.fmax(a, a.T)  # symmetric NaN pattern only where both sides are NaN
    np.fill_diagonal(a, 1.0)
    return a


def test_keeps_what_pandas_nlargest_keeps():
    # Reference: pandas.DataFrame.nlargest over every upper-triangle pair with a value.
    a = _random_agreement()
    ids = np.array([f"m{i:02d}" for i in range(a.shape[0])], dtype=object)
    i, j = np.triu_indices(a.shape[0], 1)
    every = pd.DataFrame({"member_a": ids[i], "member_b": ids[j], "agreement": a[i, j]}).dropna()
    frame, n_pairs = strongest_pairs(a, ids, budget=100)
    assert n_pairs == len(every)
    expected = every.nlargest(100, "agreement", keep="all")
    # Every kept pair is among the strongest, and nothing stronger than the weakest kept is left.
    assert len(frame) == 100
    assert set(map(tuple, frame[["member_a", "member_b"]].values)) <= set(
        map(tuple, expected[["member_a", "member_b"]].values))
    left = every.merge(frame, how="left", indicator=True).query("_merge == 'left_only'")
    assert left["agreement"].max() <= frame["agreement"].min()
    assert frame["agreement"].is_monotonic_decreasing


def test_budget_larger_than_pairs_keeps_all_and_no_nan():
    a = _random_agreement(n=8, seed=3)
    frame, n_pairs = strongest_pairs(a, np.arange(8), budget=10_000)
    assert len(frame) == n_pairs and frame["agreement"].notna().all()


def test_ties_are_cut_the_same_way_every_time():
    a = np.full((5, 5), 0.5)
    first, _ = strongest_pairs(a, np.arange(5), budget=3)
    again, _ = strongest_pairs(a.copy(), np.arange(5), budget=3)
    assert first.equals(again)
    assert first[["member_a", "member_b"]].values.tolist() == [[0, 1], [0, 2], [0, 3]]


def test_only_the_rules_edges_are_kept_and_all_pairs_are_counted():
    # Reference: pandas nlargest over the pairs the edge set holds (here: agreement ≥ 0.6, as
    # the threshold:0.6 rule gives); n_pairs still counts every pair with a value.
    a = _random_agreement(seed=5)
    ids = np.array([f"m{i:02d}" for i in range(a.shape[0])], dtype=object)
    keep = np.nan_to_num(a) >= 0.6
    np.fill_diagonal(keep, False)
    i, j = np.triu_indices(a.shape[0], 1)
    every = pd.DataFrame({"member_a": ids[i], "member_b": ids[j], "agreement": a[i, j]}).dropna()
    frame, n_pairs = strongest_pairs(a, ids, budget=10_000, keep=keep)
    assert n_pairs == len(every)
    expected = every[every["agreement"] >= 0.6]
    assert len(frame) == len(expected) < len(every)
    assert set(map(tuple, frame[["member_a", "member_b"]].values)) == set(
        map(tuple, expected[["member_a", "member_b"]].values))
    capped, _ = strongest_pairs(a, ids, budget=50, keep=keep)
    assert capped.equals(frame.head(50))


def test_a_build_stores_the_rules_edge_set(tmp_path):
    # Invented board of 14 in two groups voting along group lines with 25 % defection, 40
    # ballots: built under threshold:0.5 and threshold:0.7, the stored pairs are exactly the
    # pairs at or above the level, and the higher level's are the lower level's pairs ≥ 0.7.
    import csv

    from blocwatch.pipeline.build.builder import build
    from blocwatch.pipeline.ingest.load import ingest_files
    from blocwatch.pipeline.options import BuildOptions
    from blocwatch.pipeline.store.database import Store
    from blocwatch.pipeline.store.results import period_edges

    rng = np.random.default_rng(2)
    with (tmp_path / "v.csv").open("w", newline="") as fh:
        w = csv.writer(fh)
        w.writerow(["ballot_id", "date", "member_id", "vote", "group"])
        for k in range(40):
            side = int(rng.integers(2))
            for i in range(14):
                lean = side if i < 7 else 1 - side
                vote = lean if rng.random() > 0.25 else 1 - lean
                w.writerow([f"b{k:02d}", f"2022-{1 + k // 4:02d}-{1 + k % 4:02d}", f"m{i:02d}",
                            ["yes", "no"][vote], "East" if i < 7 else "West"])
    stored = {}
    for level in (0.5, 0.7):
        with Store(tmp_path / f"s{level}.duckdb") as store:
            ingest_files(store, [tmp_path / "v.csv"], body="Quay Board")
            build(store, options=BuildOptions(rule=f"threshold:{level}", bootstrap=0,
                                              permutations=0))
            stored[level] = period_edges(store, "Quay Board")
    low, high = stored[0.5], stored[0.7]
    assert (low["agreement"] >= 0.5).all() and (high["agreement"] >= 0.7).all()
    assert len(high) < len(low) < int(low["n_pairs"].iloc[0]) == 91  # 14·13/2 pairs
    expected = low[low["agreement"] >= 0.7][["member_a", "member_b"]]
    assert set(map(tuple, high[["member_a", "member_b"]].values)) == set(
        map(tuple, expected.values))
