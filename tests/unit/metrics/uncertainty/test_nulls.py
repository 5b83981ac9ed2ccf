"""Label-permutation nulls: the sampler against the exact expectation of Q under random labels,
E[Q] = −(1 − π) Σ_i k_i² / (2m)² (derived by hand; see metrics/uncertainty/nulls.py)."""

import itertools
import math

import networkx as nx
import numpy as np
import pytest

from blocwatch.metrics.graph.modularity import group_modularity
from blocwatch.metrics.uncertainty import nulls

KARATE = nx.to_numpy_array(nx.karate_club_graph(), weight=None)
SPLIT_16_18 = np.array([0] * 16 + [1] * 18)


def test_expected_modularity_karate_16_18():
    # derived by hand: karate, unweighted, random 16/18 labels → E[Q] = −0.025567.
    assert nulls.expected_modularity(KARATE, SPLIT_16_18) == pytest.approx(-0.025567, abs=5e-7)


@pytest.mark.parametrize("resolution", [1.0, 0.5, 2.0])
def test_expected_modularity_equals_brute_force_enumeration(resolution):
    # Exhaustive: the mean of Q over all 7! orderings of a 3/2/2 label vector (every distinct
    # relabeling equally often) must equal the closed form, for any γ.
    rng = np.random.default_rng(2)
    w = np.triu(rng.random((7, 7)) * (rng.random((7, 7)) < 0.7), 1)
    w = w + w.T
    base = [0, 0, 0, 1, 1, 2, 2]
    values = [group_modularity(w, np.array(p), resolution=resolution)
              for p in itertools.permutations(base)]
    assert nulls.expected_modularity(w, base, resolution=resolution) == pytest.approx(
        np.mean(values), abs=1e-12)


def test_permutation_mean_converges_to_exact_expectation():
    # the permutation mean must converge to E[Q]. With N draws the sampling error
    # of the mean has sd σ/√N; 4 σ/√N fails a correct sampler with probability < 1e-4.
    n_perm = 5000
    r = nulls.modularity_permutation_null(KARATE, SPLIT_16_18, n_perm=n_perm, seed=11)
    exact = nulls.expected_modularity(KARATE, SPLIT_16_18)
    assert abs(r["mean"] - exact) < 4 * r["sd"] / math.sqrt(n_perm)
    assert r["n_perm"] == n_perm


def test_batched_modularity_matches_networkx_and_group_modularity():
    # [S: networkx] nx.community.modularity on the same partitions, weighted karate.
    g = nx.karate_club_graph()
    w = nx.to_numpy_array(g, weight="weight")
    stack = nulls.permuted_labels(np.array([0] * 10 + [1] * 12 + [2] * 12), 25, seed=3)
    got = nulls.batched_group_modularity(w, stack, resolution=1.3)
    for row, q in zip(stack, got):
        parts = [set(np.flatnonzero(row == c).tolist()) for c in range(3)]
        assert q == pytest.approx(nx.community.modularity(g, parts, weight="weight",
                                                          resolution=1.3))
        assert q == pytest.approx(group_modularity(w, row, resolution=1.3))


def test_batched_modularity_chunks_agree(monkeypatch):
    stack = nulls.permuted_labels(SPLIT_16_18, 40, seed=5)
    whole = nulls.batched_group_modularity(KARATE, stack)
    monkeypatch.setattr(nulls, "_CHUNK_COLUMNS", 6)  # 3 permutations per product
    np.testing.assert_allclose(nulls.batched_group_modularity(KARATE, stack), whole)


def test_observed_club_split_is_far_in_the_tail():
    # [networkx 3.6.1, computed] club split Q = 0.3582; no random 17/17 split
    # comes near it, so p is the Phipson–Smyth floor 1/(N + 1).
    club = np.array([d["club"] == "Officer" for _, d in nx.karate_club_graph().nodes(data=True)])
    r = nulls.modularity_permutation_null(KARATE, club.astype(int), n_perm=999, seed=0)
    assert r["observed"] == pytest.approx(0.3582347140039448)
    assert r["p"] == pytest.approx(1 / 1000) and r["z"] > 5


def test_generic_null_p_value_rule():
    # Phipson & Smyth (2010): p = (1 + #{perm ≥ obs}) / (1 + N); recomputed from the same draws.
    x = np.arange(8, dtype=float)
    labels = np.array([0, 0, 0, 0, 1, 1, 1, 1])

    def stat(lab):
        return x[lab == 1].mean() - x[lab == 0].mean()

    r = nulls.label_permutation_null(stat, labels, n_perm=300, seed=4)
    draws = np.array([stat(p) for p in nulls.permuted_labels(labels, 300, seed=4)])
    assert r["p"] == pytest.approx((1 + (draws >= stat(labels)).sum()) / 301)
    assert r["mean"] == pytest.approx(draws.mean()) and r["sd"] == pytest.approx(draws.std(ddof=1))
    batched = nulls.label_permutation_null(
        lambda stack: np.array([stat(s) for s in stack]), labels, n_perm=300, seed=4,
        batched=True)
    assert batched == pytest.approx(r)


def test_null_degenerate_cases():
    const = nulls.label_permutation_null(lambda lab: 1.0, [0, 1, 1], n_perm=50, seed=0)
    assert const["p"] == 1.0 and math.isnan(const["z"]) and const["sd"] == 0.0
    nan_obs = nulls.label_permutation_null(lambda lab: float("nan"), [0, 1], n_perm=5, seed=0)
    assert math.isnan(nan_obs["p"]) and math.isnan(nan_obs["mean"])
    with pytest.raises(ValueError, match="positive integer"):
        nulls.label_permutation_null(lambda lab: 1.0, [0, 1], n_perm=0, seed=0)
    assert nulls.expected_modularity(np.zeros((3, 3)), [0, 1, 1]) == 0.0


def test_permuted_labels_keep_group_sizes():
    stack = nulls.permuted_labels(np.array([2, 2, 0, 1, 1, 1]), 100, seed=9)
    assert (np.sort(stack, axis=1) == [0, 1, 1, 1, 2, 2]).all()
    assert len({tuple(r) for r in stack}) > 30  # the draws really differ


def test_lower_direction_is_the_higher_test_of_the_negated_statistic():
    # Phipson & Smyth (2010) in the other tail: p(T, lower) = p(−T, higher), z(T, lower) =
    # z(−T, higher), from the same draws (same seed).
    x = np.random.default_rng(0).normal(size=10)
    labels = np.array([0] * 5 + [1] * 5)

    def gap(lab):
        return x[lab == 1].mean() - x[lab == 0].mean()

    low = nulls.label_permutation_null(gap, labels, n_perm=199, seed=3, direction="lower")
    neg = nulls.label_permutation_null(lambda lab: -gap(lab), labels, n_perm=199, seed=3)
    assert low["p"] == pytest.approx(neg["p"]) and low["z"] == pytest.approx(neg["z"])
    high = nulls.label_permutation_null(gap, labels, n_perm=199, seed=3)
    # The two tails share only the permutations tied with the observed value (none here).
    assert high["p"] + low["p"] == pytest.approx(1 + 2 / 200)
    with pytest.raises(ValueError, match="direction"):
        nulls.label_permutation_null(gap, labels, n_perm=9, seed=3, direction="up")


def test_tiebreak_orders_only_tied_permutations():
    # A statistic with an atom: how many of the first three members are in group 1 (0..3).
    # Tied permutations count only if the second statistic is at least as extreme; the p-value
    # rule recomputed by hand from the same draws.
    labels = np.array([1, 1, 1, 0, 0, 0, 0, 0])
    x = np.arange(8, dtype=float)

    def count(lab):
        return float(lab[:3].sum())

    def second(lab):
        return x[lab == 1].sum()

    r = nulls.label_permutation_null(count, labels, n_perm=500, seed=2, tiebreak=second)
    perms = nulls.permuted_labels(labels, 500, seed=2)
    c = np.array([count(p) for p in perms])
    s = np.array([second(p) for p in perms])
    expected = (1 + ((c > 3) | ((c == 3) & (s >= second(labels)))).sum()) / 501
    assert r["p"] == pytest.approx(expected)
    plain = nulls.label_permutation_null(count, labels, n_perm=500, seed=2)
    assert plain["p"] == pytest.approx((1 + (c >= 3).sum()) / 501)
