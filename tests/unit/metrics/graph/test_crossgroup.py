"""Cross-group ties: share, ratio to chance, E–I index."""

import itertools

import networkx as nx
import numpy as np
import pytest

from blocwatch.metrics import PeriodInput
from blocwatch.metrics.graph.crossgroup import (
    _family,
    cross_group_ratio,
    cross_group_share,
    ei_index,
    same_group_pair_share,
)
from tests.toy_rollcall import GROUPS as TOY_GROUPS
from tests.toy_rollcall import agreement_weights as toy_weights

KARATE = nx.karate_club_graph()
KARATE_A = nx.to_numpy_array(KARATE, weight=None)
CLUB = [KARATE.nodes[u]["club"] for u in KARATE]


def test_karate_ei_and_share():
    # derived by hand from networkx partition_quality (coverage 67/78)
    assert ei_index(KARATE_A, CLUB) == pytest.approx((11 - 67) / 78)
    assert ei_index(KARATE_A, CLUB) == pytest.approx(-0.717949, abs=1e-6)
    parts = [{u for u in KARATE if KARATE.nodes[u]["club"] == c} for c in set(CLUB)]
    coverage, _ = nx.community.partition_quality(KARATE, parts)  # [S: networkx] 67/78
    assert coverage == pytest.approx(67 / 78)
    assert cross_group_share(KARATE_A, CLUB) == pytest.approx(1 - coverage)
    # [networkx partition_quality: coverage 67/78]
    assert cross_group_share(KARATE_A, CLUB) == pytest.approx(11 / 78)


def test_unweighted_ignores_weight_values():
    w = nx.to_numpy_array(KARATE, weight="weight")
    assert ei_index(w, CLUB) == pytest.approx((11 - 67) / 78)
    assert ei_index(w, CLUB, weighted=True) != pytest.approx((11 - 67) / 78)


def test_toy_weighted_ei():
    # derived by hand (tests/toy_rollcall.py): weighted E–I -1/7 with v3, -0.4 without
    assert ei_index(toy_weights(), TOY_GROUPS, weighted=True) == pytest.approx(-1 / 7)
    assert ei_index(toy_weights(drop=[2]), TOY_GROUPS, weighted=True) == pytest.approx(-0.4)


def test_toy_thresholded_share_and_ratio():
    # hand-calculated: edges where agreement >= 3/4 are the 6 within-group pairs plus A3–B3,
    # so share = 1/7; pi = (3*2 + 3*2)/(6*5) = 2/5, ratio = (1/7)/(3/5) = 5/21
    e = toy_weights() >= 0.75
    assert same_group_pair_share(TOY_GROUPS) == pytest.approx(0.4)
    assert cross_group_share(e.astype(float), TOY_GROUPS) == pytest.approx(1 / 7)
    assert cross_group_ratio(e.astype(float), TOY_GROUPS) == pytest.approx(5 / 21)
    assert ei_index(e.astype(float), TOY_GROUPS) == pytest.approx((1 - 6) / 7)


@pytest.mark.parametrize("seed", range(3))
def test_expected_share_under_random_labels_is_one_minus_pi(seed):
    # derived by hand: under random labels with fixed sizes E[EI] = 1 - 2 pi, so the mean
    # cross share over every relabelling is 1 - pi and the mean ratio is 1. Exact enumeration.
    rng = np.random.default_rng(seed)
    a = np.triu(rng.random((6, 6)) < 0.5, 1).astype(float)
    a = a + a.T
    labels = np.array([0, 0, 0, 1, 1, 2])
    pi = same_group_pair_share(labels)
    perms = list(itertools.permutations(range(6)))
    shares = [cross_group_share(a, labels[list(p)]) for p in perms]
    eis = [ei_index(a, labels[list(p)]) for p in perms]
    assert np.mean(shares) == pytest.approx(1 - pi)
    assert np.mean(eis) == pytest.approx(1 - 2 * pi)
    assert np.mean([cross_group_ratio(a, labels[list(p)]) for p in perms]) == pytest.approx(1)


def test_pi_hand_values():
    assert same_group_pair_share([0, 0, 1, 1]) == pytest.approx(1 / 3)  # hand: (2+2)/12
    assert same_group_pair_share([0, 1, 2]) == 0.0
    assert same_group_pair_share([5, 5, 5]) == 1.0


def test_degenerate_inputs():
    with pytest.raises(ValueError, match="at least one edge"):
        ei_index(np.zeros((3, 3)), [0, 1, 1])
    with pytest.raises(ValueError, match="at least one edge"):
        cross_group_share(np.zeros((3, 3)), [0, 1, 1])
    with pytest.raises(ValueError, match="two groups"):
        cross_group_ratio(1 - np.eye(3), [0, 0, 0])
    assert cross_group_share(1 - np.eye(3), [0, 0, 0]) == 0.0  # one group: nothing crosses
    assert ei_index(1 - np.eye(3), [0, 0, 0]) == -1.0
    with pytest.raises(ValueError, match="NaN"):
        ei_index(1 - np.eye(2), [0, None])
    with pytest.raises(ValueError, match="non-negative"):
        ei_index(np.eye(2)[::-1] * -1, [0, 1])


def _inp(edges, labels):
    n = len(labels)
    return PeriodInput(agreement=np.eye(n), shared=np.zeros((n, n), int),
                       labels=np.asarray(labels), weights=edges.astype(float), edges=edges)


def test_family_uses_thresholded_edges():
    e = toy_weights() >= 0.75
    out = _family(_inp(e, [0, 0, 0, 1, 1, 1]))
    assert out["cross_group_share"].value == pytest.approx(1 / 7)
    assert out["cross_group_ratio"].value == pytest.approx(5 / 21)
    assert out["ei_index"].value == pytest.approx(-5 / 7)
    none = _family(_inp(np.zeros((4, 4), bool), [0, 0, 1, 1]))
    assert all(v.value is None and "no edges" in v.note for v in none.values())
    one = _family(_inp(e, [0] * 6))
    assert all(v.value is None and "one group" in v.note for v in one.values())
