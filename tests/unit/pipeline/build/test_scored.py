"""Periods with scored ballots (build/scored.py, scored_agreement.py, filters.py): the
combination rule, kappa, and the one filter rule on scored ballots."""

import warnings
from datetime import date

import numpy as np
import pytest
from sklearn.metrics import cohen_kappa_score

from blocwatch.metrics.registry import ABSTAIN, MISSING, NO, YES
from blocwatch.pipeline.build.agreement import agreement_counts, agreement_matrix
from blocwatch.pipeline.build.filters import filter_period
from blocwatch.pipeline.build.matrices import VoteMatrix
from blocwatch.pipeline.build.scored import ScaleMatrix
from blocwatch.pipeline.build.scored_agreement import scored_agreement, scored_period_input
from blocwatch.pipeline.options import AgreementOptions, Period
from tests.toy_rollcall import VOTES as TOY

Y, N, A, X = YES, NO, ABSTAIN, MISSING


class Opts:  # the slice of BuildOptions that scored_period_input reads
    def __init__(self, **agreement):
        self.agreement = AgreementOptions(**{"min_shared": 1, **agreement})
        self.rule = "weighted"


def scales(kinds, scores, low=None, high=None, options=None):
    b = len(kinds)
    opts = np.empty(b, dtype=object)
    opts[:] = [tuple(o) for o in (options or [()] * b)]
    return ScaleMatrix(np.array(kinds, dtype=object),
                       np.array(low if low is not None else [np.nan] * b, dtype=float),
                       np.array(high if high is not None else [np.nan] * b, dtype=float),
                       opts, np.asarray(scores, dtype=float))


def mixed():
    """Five members; ballots: two yes/no, two ordinal 1–9, one categorical (3 options)."""
    nan = np.nan
    votes = np.array([[Y, N, Y, Y, Y], [Y, Y, Y, Y, Y], [N, N, Y, X, Y], [N, A, Y, Y, A],
                      [X, N, Y, Y, Y]], dtype=np.int8)
    scores = np.array([[nan, nan, 4, 9, 0], [nan, nan, 5, 8, 0], [nan, nan, 1, nan, 2],
                       [nan, nan, 9, 1, nan], [nan, nan, 2, 5, 1]])
    sm = scales(["binary", "binary", "ordinal", "ordinal", "categorical"], scores,
                low=[nan, nan, 1, 1, nan], high=[nan, nan, 9, 9, nan],
                options=[(), (), (), (), ("fund", "defer", "decline")])
    return votes, sm


def per_ballot(votes, sm, i, j):
    """The combination rule by hand: the mean over shared ballots of each ballot's agreement."""
    parts = []
    for b, kind in enumerate(sm.kinds):
        if kind == "binary":
            if votes[i, b] in (Y, N) and votes[j, b] in (Y, N):
                parts.append(float(votes[i, b] == votes[j, b]))
        elif not np.isnan(sm.scores[i, b]) and not np.isnan(sm.scores[j, b]):
            if kind == "categorical":
                parts.append(float(sm.scores[i, b] == sm.scores[j, b]))
            else:
                span = sm.high[b] - sm.low[b]
                parts.append(1 - abs(sm.scores[i, b] - sm.scores[j, b]) / span)
    return np.mean(parts) if parts else np.nan


def test_yes_no_body_is_unchanged():
    """With only yes/no ballots the rule is the share of shared ballots cast alike (the toy
    roll call's hand values, tests/toy_rollcall.py), identical to the yes/no products."""
    got, shared = scored_agreement(TOY, None, AgreementOptions(min_shared=1))
    same, both = agreement_counts(TOY)
    np.testing.assert_array_equal(got, agreement_matrix(same, both, min_shared=1))
    assert got[0, 2] == 0.75 and got[0, 3] == 0.25
    np.testing.assert_array_equal(shared, both)


def test_mixed_body_is_the_mean_of_per_ballot_agreements():
    votes, sm = mixed()
    got, _ = scored_agreement(votes, sm, AgreementOptions(min_shared=1))
    for i in range(5):
        for j in range(5):
            if i != j:
                assert got[i, j] == pytest.approx(per_ballot(votes, sm, i, j), abs=1e-12)


def test_ordinal_distance_and_categorical_equality_in_the_pipeline():
    """Issue 8 through the pipeline: 4–5 closer than 1–5 on 1–9; categories all equally far."""
    votes = np.full((3, 1), Y, dtype=np.int8)
    ordinal = scales(["ordinal"], [[4], [5], [1]], low=[1], high=[9])
    a, _ = scored_agreement(votes, ordinal, AgreementOptions(min_shared=1))
    assert a[0, 1] == pytest.approx(7 / 8) and a[1, 2] == pytest.approx(1 / 2)
    categorical = scales(["categorical"], [[0], [1], [2]], options=[("a", "b", "c")])
    c, _ = scored_agreement(votes, categorical, AgreementOptions(min_shared=1))
    assert c[0, 1] == c[1, 2] == c[0, 2] == 0.0
    assert not np.isnan(c).any()


def test_kappa_measure_on_yes_no_is_clipped_cohen_kappa():
    """--agreement kappa: Cohen's kappa per pair [S: sklearn cohen_kappa_score], graph weight
    max(κ, 0) (no negative weights: they break modularity's null model). A1–B3 κ = 0.2
    (derived by hand, tests/toy_rollcall.py)."""
    got, _ = scored_agreement(TOY, None, AgreementOptions(min_shared=1, measure="kappa"))
    assert got[0, 5] == pytest.approx(0.2)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        for i in range(6):
            for j in range(6):
                if i == j:
                    continue
                k = cohen_kappa_score(TOY[i], TOY[j], labels=[Y, N])
                expected = max(k, 0.0) if np.isfinite(k) else np.nan
                assert got[i, j] == pytest.approx(expected, abs=1e-12, nan_ok=True)
    assert (got[~np.isnan(got)] >= 0).all()


def test_kappa_measure_mixed_weights_kinds_by_shared_ballots():
    """A body mixing kinds: kappa per kind, weighted by each kind's shared ballots [D]."""
    rng = np.random.default_rng(3)
    n, b = 6, 24
    votes = np.where(rng.random((n, b)) < 0.5, Y, N).astype(np.int8)
    scores = np.full((n, b), np.nan)
    scores[:, 12:] = rng.integers(1, 10, size=(n, 12))
    kinds = ["binary"] * 12 + ["ordinal"] * 12
    sm = scales(kinds, scores, low=[np.nan] * 12 + [1] * 12, high=[np.nan] * 12 + [9] * 12)
    votes[:, 12:] = Y
    got, _ = scored_agreement(votes, sm, AgreementOptions(min_shared=1, measure="kappa"))
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        kb = cohen_kappa_score(votes[0, :12], votes[1, :12], labels=[Y, N])
        ko = cohen_kappa_score(scores[0, 12:], scores[1, 12:], labels=list(range(1, 10)),
                               weights="linear")
    assert got[0, 1] == pytest.approx(max((12 * kb + 12 * ko) / 24, 0.0), abs=1e-12)


def _vm(votes, sm):
    n, b = votes.shape
    ids = np.array([f"m{i}" for i in range(n)], dtype=object)
    return VoteMatrix("Panel", Period(date(2020, 1, 1), date(2020, 12, 31), "2020"), ids, ids,
                      np.array(["g0", "g1"] * (n // 2) + ["g0"] * (n % 2), dtype=object),
                      np.array([f"b{j}" for j in range(b)], dtype=object),
                      np.array([""] * b, dtype=object), votes, 0, sm)


def test_filter_drops_unanimous_and_single_answer_scored_ballots():
    nan = np.nan
    votes = np.full((4, 4), Y, dtype=np.int8)
    scores = np.array([[7, 3, 5, 1], [7, 4, nan, 2], [7, 5, nan, 3], [7, 3, nan, 4]])
    votes[1:, 2] = X
    sm = scales(["ordinal"] * 4, scores, low=[1] * 4, high=[9] * 4)
    out = filter_period(_vm(votes, sm), AgreementOptions(min_share_cast=0))
    assert out.ballot_ids.tolist() == ["b1", "b3"]  # b0 unanimous, b2 a single answer
    assert out.scales.scores.shape == (4, 2)
    kept = filter_period(_vm(votes, sm), AgreementOptions(drop_unanimous=False,
                                                          min_share_cast=0))
    assert kept.ballot_ids.tolist() == ["b0", "b1", "b3"]


def test_bootstrap_weights_equal_repeated_ballots_and_scores_reach_alpha():
    votes, sm = mixed()
    w = np.array([2, 0, 1, 3, 1])
    inp = scored_period_input(votes, sm, np.array([0, 0, 1, 1, 0]), Opts(), 5, weights=w)
    rep = np.repeat(np.arange(5), w)
    rep_sm = sm.subset(None, rep)
    direct = scored_period_input(votes[:, rep], rep_sm, np.array([0, 0, 1, 1, 0]), Opts(), 5)
    np.testing.assert_allclose(inp.agreement, direct.agreement, atol=1e-12)
    assert inp.score_level == "ordinal" and inp.scores.shape == (5, 4)  # ballots 2, 3×3
    assert inp.votes.shape == (5, 2)  # the yes/no ballots, resampled


def test_digest_follows_scores():
    _, sm = mixed()
    changed = scales(list(sm.kinds), np.where(np.isnan(sm.scores), np.nan, sm.scores + 1),
                     list(sm.low), list(sm.high), list(sm.options))
    assert sm.digest() != changed.digest()
    assert sm.digest() == mixed()[1].digest()


def test_yes_no_period_input_keeps_the_yes_no_path():
    """compute.period_input without scales and with --agreement match is the yes/no path:
    the float32 products, no scores (so the reliability family is left out)."""
    from blocwatch.pipeline.build.compute import period_input
    from blocwatch.pipeline.options import BuildOptions

    opts = BuildOptions(agreement=AgreementOptions(min_shared=1))
    inp = period_input(TOY, np.array([0, 0, 0, 1, 1, 1]), opts, 1)
    same, both = agreement_counts(TOY)
    np.testing.assert_array_equal(inp.agreement, agreement_matrix(same, both, min_shared=1))
    assert inp.scores is None and inp.votes is TOY
