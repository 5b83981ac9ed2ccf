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
