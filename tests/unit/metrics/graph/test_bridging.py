"""Bridging ratio, its random-groups cut and the ranks: hand values of the toy roll call
(tests/toy_rollcall.py), the rules of the bridges list, and the cut's calibration."""

from fractions import Fraction

import numpy as np
import pytest

from blocwatch.metrics.graph import bridging
from blocwatch.pipeline.build.agreement import agreement_counts, agreement_matrix
from tests.spatial_sim import spatial_votes
from tests.toy_rollcall import LABELS, VOTES


def _toy_agreement():
    return agreement_matrix(*agreement_counts(VOTES), min_shared=1)


def test_toy_roll_call_hand_values():
    # Hand values (toy roll call, all four ballots): A1 agrees 1, 3/4 inside A and 1/4, 1/4,
    # 1/2 with B → (1/3)/(7/8) = 8/21; A3: (7/12)/(3/4) = 7/9; B3 likewise 7/9.
    got = bridging.bridging_ratio(_toy_agreement(), LABELS)
    want = [Fraction(8, 21)] * 2 + [Fraction(7, 9)] + [Fraction(8, 21)] * 2 + [Fraction(7, 9)]
    assert got == pytest.approx([float(w) for w in want], abs=1e-12)


def test_ties_share_a_rank_and_the_next_rank_skips():
    score = bridging.bridging_ratio(_toy_agreement(), LABELS)
    ranks = bridging.bridge_ranks(score, 0.5)
    assert ranks[2] == ranks[5] == 1  # A3 and B3 tie at 7/9
    assert np.isnan(ranks[[0, 1, 3, 4]]).all()  # 8/21 is not above 0.5
    assert bridging.bridge_ranks([2.0, 2.0, 1.5], 1.0).tolist() == [1.0, 1.0, 3.0]


def test_lone_and_small_group_members_are_never_scored_or_ranked():
    a = _toy_agreement()
    labels = np.array([0, 0, 0, 1, 1, 2])  # B3 alone, B1 and B2 a pair
    score = bridging.bridging_ratio(a, labels)
    assert np.isnan(score[3:]).all() and np.isfinite(score[:3]).all()
    assert np.isnan(bridging.bridge_ranks(score, -np.inf)[3:]).all()
    notes = bridging.member_notes(labels, {"bridging": score,
                                           "bridge_rank": np.full(6, np.nan),
                                           "loyalty": np.full(6, np.nan)})
    assert notes["bridging"][5].startswith("alone in its group")
    assert notes["bridging"][3].startswith("in a group of 2")
    assert notes["loyalty"][5].startswith("alone in its group") and notes["loyalty"][3] is None


def test_nobody_is_named_when_nobody_bridges():
    # A zero score, or one not above the cut, is never ranked; a NaN cut ranks nobody.
    assert np.isnan(bridging.bridge_ranks([0.0, 0.0, 0.0], 0.0)).all()
    assert np.isnan(bridging.bridge_ranks([0.5, 0.9], 0.95)).all()
    assert np.isnan(bridging.bridge_ranks([0.5, 0.9], np.nan)).all()
    # A cleanly split body: everyone agrees far more inside than across → nobody bridges.
    votes, _, groups = spatial_votes(30, 80, separation=4.0, spread=0.3, seed=4)
    a = agreement_matrix(*agreement_counts(votes))
    score = bridging.bridging_ratio(a, groups)
    cut = bridging.bridging_null_cut(a, groups, seed=1)
    assert np.isnan(bridging.bridge_ranks(score, cut)).all()


def test_random_groups_cut_is_calibrated():
    # Groups that carry no signal (one position distribution): about 5 % of members lie above
    # the 95 % cut, averaged over bodies (binomial slack for 20 bodies × 30 members).
    above = []
    for seed in range(20):
        votes, _, groups = spatial_votes(30, 60, separation=0.0, seed=seed)
        a = agreement_matrix(*agreement_counts(votes))
        score = bridging.bridging_ratio(a, groups)
        cut = bridging.bridging_null_cut(a, groups, seed=seed + 100)
        above.append(np.mean(score > cut))
    assert 0.0 < np.mean(above) < 0.12


def test_ratio_does_not_depend_on_group_size_like_a_tie_share():
    # Everyone agrees 0.6 with everyone: the ratio is 1 for every member of every group size
    # (a tie share would give the small group's members the larger share).
    a = np.full((7, 7), 0.6)
    np.fill_diagonal(a, 1.0)
    assert bridging.bridging_ratio(a, [0, 0, 0, 0, 1, 1, 1]) == pytest.approx([1.0] * 7)


def test_null_p_and_rank_agree_with_the_cut():
    # Members ranked by the registry family are exactly those with p ≤ BRIDGE_ALPHA, and p is
    # the tail share of the pooled random-group scores (recomputed here).
    votes, _, groups = spatial_votes(30, 60, separation=0.5, seed=9)
    a = agreement_matrix(*agreement_counts(votes))
    score = bridging.bridging_ratio(a, groups)
    pooled = bridging.bridging_null(a, groups, seed=3)
    p = bridging.bridging_null_p(score, pooled)
    for s, pi in zip(score, p):
        assert pi == pytest.approx((1 + (pooled >= s).sum()) / (1 + pooled.size))
    ranked = bridging.bridge_ranks(np.where(p <= bridging.BRIDGE_ALPHA, score, np.nan), -np.inf)
    assert (np.isfinite(ranked) == (p <= bridging.BRIDGE_ALPHA)).all()
