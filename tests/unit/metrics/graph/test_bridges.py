"""Member-level bridge scores against hand values, networkx and a loop reference."""

import networkx as nx
import numpy as np
import pytest

from blocwatch.metrics.graph import bridges
from blocwatch.metrics.graph.modularity import group_modularity
from tests import toy_rollcall as toy

KARATE_G = nx.karate_club_graph()
CLUB = np.array([d["club"] == "Officer" for _, d in KARATE_G.nodes(data=True)], dtype=int)

# The toy roll call's agreement, derived by hand (tests/toy_rollcall.py).
TOY_AGREEMENT, TOY_LABELS = toy.agreement(), toy.LABELS


def test_cross_tie_share_totals_match_networkx_coverage():
    # [S: networkx partition_quality] coverage 67/78 on karate's club split → 11 cross edges,
    # each counted at both ends: Σ_i share_i · degree_i = 22.
    e = nx.to_numpy_array(KARATE_G, weight=None)
    share = bridges.cross_tie_share(e, CLUB)
    parts = [set(np.flatnonzero(CLUB == c).tolist()) for c in (0, 1)]
    coverage, _ = nx.community.partition_quality(KARATE_G, parts)
    assert (share * e.sum(axis=1)).sum() == pytest.approx(2 * (1 - coverage) * 78)
    assert ((share >= 0) & (share <= 1)).all()


def test_cross_tie_share_isolated_member_is_nan():
    e = np.array([[0, 1, 0], [1, 0, 0], [0, 0, 0]], dtype=bool)
    share = bridges.cross_tie_share(e, [0, 1, 1])
    assert share[:2].tolist() == [1.0, 1.0] and np.isnan(share[2])


def test_participation_extremes():
    # derived by hand: all weight in own group → 0; even split over K groups → 1 − 1/K.
    k = 3
    w = np.zeros((4, 4))
    w[0, 1:] = w[1:, 0] = 1.0  # member 0 (group 0) tied once into each of 3 groups
    p = bridges.participation_coefficient(w, [0, 0, 1, 2])
    assert p[0] == pytest.approx(1 - 1 / k)
    inside = np.ones((3, 3)) - np.eye(3)
    assert bridges.participation_coefficient(inside, [5, 5, 5]).tolist() == [0.0, 0.0, 0.0]


def test_participation_hand_value():
    # hand-calculated: member 0 sends weight 3 to its group and 1 to the other:
    # P = 1 − (3/4)² − (1/4)² = 3/8.
    w = np.zeros((3, 3))
    w[0, 1] = w[1, 0] = 3.0
    w[0, 2] = w[2, 0] = 1.0
    assert bridges.participation_coefficient(w, [0, 0, 1])[0] == pytest.approx(3 / 8)


def test_super_cooperators_on_toy():
    # derived by hand (tests/toy_rollcall.py): same-group values 1, 3/4, 3/4 (twice) → median
    # 3/4; the only cross pair
    # at ≥ 3/4 is A3–B3.
    assert bridges.within_group_median(TOY_AGREEMENT, TOY_LABELS) == 0.75
    assert bridges.super_cooperators(TOY_AGREEMENT, TOY_LABELS).tolist() == [0, 0, 1, 0, 0, 1]
    explicit = bridges.super_cooperators(TOY_AGREEMENT, TOY_LABELS, cutoff=0.5)
    assert explicit.tolist() == [1, 1, 3, 1, 1, 3]


def test_super_cooperators_ignore_nan_and_need_a_cutoff():
    a = TOY_AGREEMENT.copy()
    a[2, 5] = a[5, 2] = np.nan
    assert bridges.super_cooperators(a, TOY_LABELS).sum() == 0
    with pytest.raises(ValueError, match="cutoff="):
        bridges.super_cooperators(np.eye(2), [0, 1])


def _loop_delta_q(w, labels, resolution=1.0):
    """Reference: recompute Q on each leave-one-out subgraph (networkx on the subgraph)."""
    g = nx.from_numpy_array(w)
    base = nx.community.modularity(
        g, [set(np.flatnonzero(labels == c).tolist()) for c in np.unique(labels)],
        weight="weight", resolution=resolution)
    out = []
    for i in range(len(labels)):
        keep = np.arange(len(labels)) != i
        sub = w[np.ix_(keep, keep)]
        if sub.sum() == 0:
            out.append(np.nan)
            continue
        out.append(group_modularity(sub, labels[keep], resolution=resolution) - base)
    return np.array(out)


@pytest.mark.parametrize("resolution", [1.0, 1.7])
def test_delta_q_vectorised_equals_loop_on_karate(resolution):
    w = nx.to_numpy_array(KARATE_G, weight="weight")
    got = bridges.leave_one_out_delta_q(w, CLUB, resolution=resolution)
    np.testing.assert_allclose(got, _loop_delta_q(w, CLUB, resolution), atol=1e-12)


def test_delta_q_vectorised_equals_loop_on_dense_three_groups():
    rng = np.random.default_rng(8)
    labels = rng.integers(0, 3, 25)
    w = rng.random((25, 25)) * (0.5 + 0.5 * (labels[:, None] == labels[None, :]))
    w = np.triu(w, 1)
    w = w + w.T
    np.testing.assert_allclose(bridges.leave_one_out_delta_q(w, labels),
                               _loop_delta_q(w, labels), atol=1e-12)


def test_delta_q_hand_value_and_star_centre():
    # hand-calculated: barbell(3, 0) has Q = 5/14; without node 2 it is two groups of
    # 1 and 3 edges, Q = 1/4 − (2/8)² + 3/4 − (6/8)² = 3/8.
    w = nx.to_numpy_array(nx.barbell_graph(3, 0))
    assert bridges.leave_one_out_delta_q(w, [0, 0, 0, 1, 1, 1])[2] == pytest.approx(
        3 / 8 - 5 / 14)
    star = nx.to_numpy_array(nx.star_graph(3))
    dq = bridges.leave_one_out_delta_q(star, [0, 0, 1, 1])
    assert np.isnan(dq[0]) and np.isfinite(dq[1:]).all()  # no edge left without the centre


def test_scores_invariant_to_member_order():
    w = nx.to_numpy_array(KARATE_G, weight="weight")
    perm = np.random.default_rng(1).permutation(34)
    wp, lp = w[np.ix_(perm, perm)], (1 - CLUB)[perm]  # also swap the group codes
    for f in (bridges.cross_tie_share, bridges.participation_coefficient,
              bridges.leave_one_out_delta_q):
        np.testing.assert_allclose(f(wp, lp), f(w, CLUB)[perm], atol=1e-12)
