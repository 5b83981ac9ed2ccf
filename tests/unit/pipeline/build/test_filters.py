"""The one period filter (build/filters.py): the same rule for yes/no and scored ballots.

Answer counts are checked against ``collections.Counter`` (the standard library) column by
column; the rule itself against its definition (minority share = answers other than the most
common one over all answers) and the toy roll call (tests/toy_rollcall.py).
"""

from collections import Counter

import numpy as np
import pytest

from blocwatch.metrics.registry import ABSTAIN, MISSING, NO, YES
from blocwatch.pipeline.build.filters import (
    answer_counts,
    ballot_mask,
    filter_period,
    kept_ballots,
    member_mask,
)
from blocwatch.pipeline.build.scored import ScaleMatrix
from blocwatch.pipeline.options import AgreementOptions
from tests import toy_rollcall as toy


def _reference(x):
    """(answers, count of the most common) per column, by Counter."""
    total, top = [], []
    for col in x.T:
        answers = [v for v in col.tolist() if (v >= 0 if isinstance(v, int) else v == v)]
        total.append(len(answers))
        top.append(Counter(answers).most_common(1)[0][1] if answers else 0)
    return total, top


@pytest.mark.parametrize("seed", range(5))
def test_answer_counts_match_counter_for_codes_and_positions(seed):
    rng = np.random.default_rng(seed)
    codes = rng.integers(-1, 4, size=(9, 12))
    assert [a.tolist() for a in answer_counts(codes)] == list(_reference(codes))
    positions = np.where(codes >= 0, codes / 4.0, np.nan)
    assert [a.tolist() for a in answer_counts(positions)] == list(_reference(positions))


def test_no_answers_at_all():
    assert [a.tolist() for a in answer_counts(np.full((3, 2), -1))] == [[0, 0], [0, 0]]
    assert [a.tolist() for a in answer_counts(np.full((0, 2), np.nan))] == [[0, 0], [0, 0]]


def test_rule_by_its_definition():
    total, top = np.array([5, 5, 5, 1, 0]), np.array([5, 4, 3, 1, 0])  # minority 0, .2, .4
    assert kept_ballots(total, top, AgreementOptions()).tolist() == [False, True, True,
                                                                     False, False]
    assert kept_ballots(total, top, AgreementOptions(lopsided=0.3)).tolist() == [
        False, False, True, False, False]
    # unanimous kept when asked; a single answer never is (no pair can share it)
    assert kept_ballots(total, top, AgreementOptions(drop_unanimous=False)).tolist() == [
        True, True, True, False, False]


def test_yes_no_ballots_and_the_same_ballots_as_two_option_categories_filter_alike():
    # The toy roll call as yes/no, and as categorical ballots with options ("yes", "no").
    votes = toy.VOTES
    scores = np.where(votes == YES, 0.0, 1.0)
    b = votes.shape[1]
    options = np.empty(b, dtype=object)
    options[:] = [("yes", "no")] * b
    as_categories = ScaleMatrix(np.array(["categorical"] * b, dtype=object),
                                np.full(b, np.nan), np.full(b, np.nan), options, scores)
    for opts in (AgreementOptions(), AgreementOptions(lopsided=0.4),
                 AgreementOptions(drop_unanimous=False)):
        yes_no = ballot_mask(votes, None, opts)
        scored = ballot_mask(np.full_like(votes, YES), as_categories, opts)
        assert yes_no.tolist() == scored.tolist(), opts
    assert ballot_mask(votes, None, AgreementOptions()).tolist() == [True, True, False, True]


def test_abstain_counts_as_an_answer_only_as_a_position():
    votes = np.array([[YES], [YES], [ABSTAIN]], dtype=np.int8)
    assert not ballot_mask(votes, None, AgreementOptions())[0]  # two yes: unanimous
    assert ballot_mask(votes, None, AgreementOptions(abstain_as_position=True))[0]


def test_member_rule_needs_the_share_rounded_up_and_at_least_one():
    votes = np.array([[YES, NO, YES, NO], [YES, MISSING, MISSING, MISSING],
                      [MISSING] * 4], dtype=np.int8)
    assert member_mask(votes, 0.25).tolist() == [True, True, False]  # ceil(1) = 1
    assert member_mask(votes, 0.3).tolist() == [True, False, False]  # ceil(1.2) = 2
    assert member_mask(votes, 0.0).tolist() == [True, True, False]  # at least one


def test_filter_period_counts_the_members_it_leaves_out():
    from datetime import date

    from blocwatch.pipeline.build.matrices import VoteMatrix
    from blocwatch.pipeline.options import Period

    votes = np.vstack([toy.VOTES, np.full((1, 4), MISSING, dtype=np.int8)])
    ids = np.array(toy.MEMBERS + ["C1"], dtype=object)
    vm = VoteMatrix("Toy", Period(date(2020, 1, 1), date(2020, 12, 31), "2020"), ids, ids,
                    np.array(toy.GROUPS + ["C"], dtype=object),
                    np.array(list(toy.TABLE), dtype=object), np.array([""] * 4, dtype=object),
                    votes)
    out = filter_period(vm, AgreementOptions())
    assert out.ballot_ids.tolist() == ["v1", "v2", "v4"] and out.dropped == 1
    assert out.member_ids.tolist() == toy.MEMBERS
