"""The agreement kernel's fast routes give the exact counts of the plain definition.

References are computed here from the definition (float64 pair counts over repeated ballot
columns: a bootstrap weight w is the ballot drawn w times), never from the kernel.
"""

import numpy as np
import pytest

from blocwatch.pipeline.build.agreement import ROOT_WEIGHT_LIMIT, agreement_counts

YES, NO, ABSTAIN = 1, 2, 3


def _reference(votes, weights=None, abstain=False):
    """same/both by the definition, on ballot columns repeated ``weights`` times (float64)."""
    if weights is not None:
        votes = np.repeat(votes, np.asarray(weights, dtype=np.int64), axis=1)
    positions = (YES, NO, ABSTAIN) if abstain else (YES, NO)
    onehot = [(votes == c).astype(np.float64) for c in positions]
    cast = sum(onehot)
    return sum(p @ p.T for p in onehot), cast @ cast.T


@pytest.fixture
def votes():
    return np.random.default_rng(3).integers(0, 4, size=(23, 61)).astype(np.int8)


@pytest.mark.parametrize("abstain", [False, True])
def test_unweighted_counts_match_definition(votes, abstain):
    same, both = agreement_counts(votes, abstain_as_position=abstain)
    ref_same, ref_both = _reference(votes, abstain=abstain)
    assert np.array_equal(same, ref_same) and np.array_equal(both, ref_both)


@pytest.mark.parametrize("abstain", [False, True])
def test_bootstrap_weights_take_the_root_route_exactly(votes, abstain):
    """Multinomial counts as in the ballot bootstrap: equal to repeating the columns."""
    rng = np.random.default_rng(4)
    for w in rng.multinomial(votes.shape[1], np.full(votes.shape[1], 1 / votes.shape[1]),
                             size=5):
        same, both = agreement_counts(votes, weights=w, abstain_as_position=abstain)
        ref_same, ref_both = _reference(votes, w, abstain=abstain)
        assert np.array_equal(same, ref_same) and np.array_equal(both, ref_both)


def test_large_whole_weights_stay_exact():
    """Totals near the √w limit: rounding still restores every count exactly."""
    rng = np.random.default_rng(5)
    votes = rng.integers(0, 3, size=(12, 400)).astype(np.int8)
    w = rng.integers(0, 2 * ROOT_WEIGHT_LIMIT // 400, size=400)
    assert w.sum() <= ROOT_WEIGHT_LIMIT
    cast = ((votes == YES) | (votes == NO)).astype(np.float64)
    signed = (votes == YES).astype(np.float64) - (votes == NO)
    same, both = agreement_counts(votes, weights=w)
    assert np.array_equal(both, (cast * w) @ cast.T)
    assert np.array_equal(same, ((cast * w) @ cast.T + (signed * w) @ signed.T) / 2)


def test_fractional_weights_take_the_plain_product(votes):
    w = np.random.default_rng(6).random(votes.shape[1]) * 3
    same, both = agreement_counts(votes, weights=w)
    cast = ((votes == YES) | (votes == NO)).astype(np.float64)
    np.testing.assert_allclose(both, (cast * w) @ cast.T, rtol=1e-5)
    assert np.allclose(same, same.T) and (same <= both + 1e-4).all()


def test_zero_weight_removes_a_ballot(votes):
    w = np.ones(votes.shape[1], dtype=np.int64)
    w[7] = 0
    same, both = agreement_counts(votes, weights=w)
    ref_same, ref_both = agreement_counts(np.delete(votes, 7, axis=1))
    assert np.array_equal(same, ref_same) and np.array_equal(both, ref_both)
