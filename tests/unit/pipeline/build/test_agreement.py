"""Agreement counts by one-hot matrix products, checked against the toy roll call's hand values
(tests/toy_rollcall.py) and a pair loop; the filter rule on yes/no ballots."""


import numpy as np
import pytest

from blocwatch.pipeline.build.agreement import agreement_counts, agreement_matrix
from blocwatch.pipeline.build.filters import ballot_mask
from blocwatch.pipeline.options import AgreementOptions
from tests import toy_rollcall as toy

Y, N, A, X = 1, 2, 3, 0
TOY = toy.VOTES


def test_toy_roll_call_agreement_fractions():
    """Hand values of the toy roll call (derived by hand, tests/toy_rollcall.py)."""
    same, both = agreement_counts(TOY)
    a = agreement_matrix(same, both)
    for (i, j), value in toy.AGREEMENT_PAIRS.items():
        assert a[i, j] == pytest.approx(float(value)), (i, j)
        assert a[j, i] == a[i, j]


def test_unanimous_ballot_is_dropped_by_default():
    """v3 is unanimous (tests/toy_rollcall.py): the default filter removes exactly that ballot."""
    assert ballot_mask(TOY, None, AgreementOptions()).tolist() == [True, True, False, True]
    assert ballot_mask(TOY, None, AgreementOptions(drop_unanimous=False)).all()


def _pair_loop(votes, positions):
    n = votes.shape[0]
    same = np.zeros((n, n))
    both = np.zeros((n, n))
    for i in range(n):
        for j in range(n):
            cast = np.isin(votes[i], positions) & np.isin(votes[j], positions)
            both[i, j] = cast.sum()
            same[i, j] = (cast & (votes[i] == votes[j])).sum()
    return same, both


@pytest.mark.parametrize("abstain", [False, True])
def test_products_equal_a_pair_loop(abstain):
    """The matrix-product counts equal a plain loop over pairs on random votes with gaps."""
    rng = np.random.default_rng(3)
    votes = rng.choice([X, Y, N, A], p=[0.1, 0.45, 0.4, 0.05], size=(12, 40)).astype(np.int8)
    same, both = agreement_counts(votes, abstain_as_position=abstain)
    ref_same, ref_both = _pair_loop(votes, [Y, N, A] if abstain else [Y, N])
    np.testing.assert_array_equal(same, ref_same)
    np.testing.assert_array_equal(both, ref_both)


def test_weights_equal_repeated_columns():
    """A bootstrap weight vector gives the counts of the column-resampled matrix."""
    rng = np.random.default_rng(5)
    votes = rng.choice([X, Y, N], size=(8, 30)).astype(np.int8)
    w = rng.multinomial(30, np.full(30, 1 / 30))
    same_w, both_w = agreement_counts(votes, weights=w)
    same_r, both_r = agreement_counts(np.repeat(votes, w, axis=1))
    np.testing.assert_array_equal(same_w, same_r)
    np.testing.assert_array_equal(both_w, both_r)


def test_min_shared_leaves_pairs_without_value():
    votes = np.array([[Y, Y, X], [Y, X, N], [N, N, N]], dtype=np.int8)
    same, both = agreement_counts(votes)
    a = agreement_matrix(same, both, min_shared=2)
    assert np.isnan(a[0, 1])  # one shared ballot only
    assert a[0, 2] == 0.0 and a[1, 2] == 0.5
    assert (np.diag(a) == 1).all()


def test_lopsided_filter():
    votes = np.array([[Y] * 4 + [N], [Y] * 5, [Y] * 5, [N] * 5], dtype=np.int8)
    # ballots 0..3: 3 yes 1 no (minority 1/4); ballot 4: 2 yes 2 no
    keep = ballot_mask(votes, None, AgreementOptions(lopsided=0.3))
    assert keep.tolist() == [False, False, False, False, True]
