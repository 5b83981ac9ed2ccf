"""Cohesion indices against hand-derived values: the toy roll call (tests/toy_rollcall.py) and
worked Agreement Index counts."""

from fractions import Fraction

import numpy as np
import pytest
from sklearn.metrics import cohen_kappa_score

from blocwatch.metrics.agreement import cohesion
from blocwatch.metrics.registry import ABSTAIN, MISSING, NO, YES, PeriodInput
from tests import toy_rollcall as toy

Y, N, A, M = YES, NO, ABSTAIN, MISSING
TOY, TOY_LABELS = toy.VOTES, toy.LABELS


def _agreement(votes):
    """Share of both-cast ballots with the same choice (test-local; tests/toy_rollcall.py)."""
    cast = votes != M
    both = cast[:, None, :] & cast[None, :, :]
    same = both & (votes[:, None, :] == votes[None, :, :])
    return same.sum(-1) / both.sum(-1)


def _group(counts):
    """A one-group, one-ballot vote column with the given (yes, no, abstain) counts."""
    y, n, a = counts
    return np.array([[Y]] * y + [[N]] * n + [[A]] * a, dtype=np.int8), np.zeros(y + n + a, int)


def test_toy_rice_of_a_is_five_sixths():
    # derived by hand (tests/toy_rollcall.py): per ballot 1, 1/3, 1, 1 → mean 5/6.
    assert cohesion.rice_index(TOY, TOY_LABELS)[0] == pytest.approx(float(Fraction(5, 6)))


def test_toy_agreement_index_of_a_on_v2():
    # derived by hand (tests/toy_rollcall.py): A on v2 is 2 yes, 1 no → AI 0.5.
    assert cohesion.agreement_index(TOY[:, [1]], TOY_LABELS)[0] == pytest.approx(0.5)


def test_toy_group_line_ballots_three_of_four():
    # derived by hand (tests/toy_rollcall.py): v1, v2, v4 are group-line ballots.
    assert cohesion.group_line_ballots(TOY, TOY_LABELS).tolist() == [True, True, False, True]


def test_toy_loyalty_of_a3_is_two_thirds():
    # derived by hand (tests/toy_rollcall.py): A3 votes with A's majority on 2 of the 3
    # group-line ballots.
    loyal = cohesion.loyalty(TOY, TOY_LABELS)
    assert loyal[2] == pytest.approx(2 / 3)
    assert loyal[0] == loyal[1] == 1.0


def test_toy_kappa_a1_b3_matches_sklearn():
    # derived by hand (tests/toy_rollcall.py): κ = 0.2, confirmed with
    # sklearn.metrics.cohen_kappa_score.
    assert cohen_kappa_score(TOY[0], TOY[5]) == pytest.approx(0.2)


@pytest.mark.parametrize("counts, expected", [
    ((10, 0, 0), 1.0), ((4, 4, 4), 0.0), ((6, 3, 1), 0.4), ((7, 3, 0), 0.55),
])
def test_agreement_index_worked_numbers(counts, expected):
    # derived by hand: worked numbers for the Hix–Noury–Roland AI.
    votes, labels = _group(counts)
    assert cohesion.agreement_index(votes, labels)[0] == pytest.approx(expected)


def test_agreement_index_two_option_floor_is_a_quarter():
    # derived by hand: with yes/no only, an even split gives 1/4.
    votes, labels = _group((5, 5, 0))
    assert cohesion.agreement_index(votes, labels)[0] == pytest.approx(0.25)


def test_rice_ignores_abstentions_and_skips_empty_ballots():
    # hand-calculated: ballot 1 is 2Y/1N/1A → |2−1|/3 = 1/3; ballot 2 all absent → skipped.
    votes = np.array([[Y, M], [Y, M], [N, M], [A, M]], dtype=np.int8)
    assert cohesion.rice_index(votes, [0, 0, 0, 0])[0] == pytest.approx(1 / 3)


def test_group_without_votes_is_nan_and_labels_are_sorted_codes():
    votes = np.array([[Y], [M], [N], [N]], dtype=np.int8)
    rice = cohesion.rice_index(votes, ["x", "b", "x", "x"])  # "b" never voted; "x" 1Y/2N
    assert np.isnan(rice[0]) and rice[1] == pytest.approx(1 / 3)


def test_even_split_and_abstain_majority_have_no_line():
    # hand-calculated: group 0 splits 1–1 (no line); group 1 abstains 2 of 3 (no line).
    votes = np.array([[Y], [N], [A], [A], [N]], dtype=np.int8)
    lines = cohesion.group_lines(votes, [0, 0, 1, 1, 1])
    assert lines[:, 0].tolist() == [cohesion.LINE_NONE, cohesion.LINE_NONE]
    assert not cohesion.group_line_ballots(votes, [0, 0, 1, 1, 1])[0]


def test_loyalty_nan_without_group_line_ballot():
    votes = np.array([[Y], [Y]], dtype=np.int8)
    assert np.isnan(cohesion.loyalty(votes, [0, 1])).all()


def test_group_agreement_matrix_on_toy():
    # derived by hand (tests/toy_rollcall.py) pair values: within A (1 + 3/4 + 3/4)/3 = 5/6,
    # same for B;
    # between: (4·1/4 + 4·1/2 + 3/4)/9 = 5/12.
    mean, pairs = cohesion.group_agreement_matrix(_agreement(TOY), TOY_LABELS)
    np.testing.assert_allclose(mean, [[5 / 6, 5 / 12], [5 / 12, 5 / 6]])
    assert pairs.tolist() == [[3, 9], [9, 3]]


def test_group_agreement_matrix_skips_nan_pairs():
    a = np.array([[1, np.nan, .5], [np.nan, 1, .7], [.5, .7, 1]])
    mean, pairs = cohesion.group_agreement_matrix(a, [0, 0, 1])
    assert np.isnan(mean[0, 0]) and pairs[0, 0] == 0
    assert mean[0, 1] == pytest.approx(0.6) and pairs[0, 1] == 2


def test_bad_codes_raise_with_fix():
    with pytest.raises(ValueError, match="codes 0..3"):
        cohesion.rice_index(np.array([[5]]), [0])
    with pytest.raises(ValueError, match="one per member"):
        cohesion.rice_index(TOY, [0, 1])


def _inp(votes, labels):
    n = len(labels)
    return PeriodInput(agreement=np.eye(n), shared=np.zeros((n, n), int),
                       labels=np.asarray(labels), weights=np.zeros((n, n)),
                       edges=np.zeros((n, n), bool), votes=votes)


def test_family_on_toy():
    # derived by hand (tests/toy_rollcall.py): both groups have Rice 5/6; group-line share 3/4;
    # loyalty: A3 and B3 2/3, the rest 1 → mean 8/9.
    out = cohesion._cohesion_family(_inp(TOY, TOY_LABELS))
    assert out["rice_mean"].value == pytest.approx(5 / 6)
    assert out["group_line_share"].value == pytest.approx(0.75)
    assert out["mean_loyalty"].value == pytest.approx(8 / 9)


def test_family_is_size_weighted_and_skips_singletons():
    # hand-calculated: group 0 (3 members) Rice 1/3; group 1 (1 member) excluded → 1/3.
    votes = np.array([[Y], [Y], [N], [N]], dtype=np.int8)
    out = cohesion._cohesion_family(_inp(votes, [0, 0, 0, 1]))
    assert out["rice_mean"].value == pytest.approx(1 / 3)


def test_family_invariant_to_relabelling_members_and_groups():
    rng = np.random.default_rng(3)
    votes = rng.integers(0, 4, size=(9, 12)).astype(np.int8)
    labels = np.array([0, 0, 0, 1, 1, 1, 2, 2, 2])
    base = cohesion._cohesion_family(_inp(votes, labels))
    perm = rng.permutation(9)
    swapped = np.array([2, 0, 1])[labels]
    other = cohesion._cohesion_family(_inp(votes[perm], swapped[perm]))
    for m, v in base.items():
        assert other[m].value == pytest.approx(v.value)


def test_family_degenerate_inputs_give_notes():
    out = cohesion._cohesion_family(_inp(None, [0, 1]))
    assert all(not v.ok and "vote matrix" in v.note for v in out.values())
    one = cohesion._cohesion_family(_inp(TOY, np.zeros(6, int)))
    assert all(not v.ok and "two groups" in v.note for v in one.values())
    with pytest.raises(ValueError, match="labels"):
        cohesion._cohesion_family(_inp(TOY, np.array([0, 0, 0, 1, 1, np.nan])))
    empty = cohesion._cohesion_family(_inp(np.zeros((0, 0), np.int8), np.zeros(0, int)))
    assert all(not v.ok for v in empty.values())
