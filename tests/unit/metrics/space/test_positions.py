"""Polarisation on positions: median gap, overlap, bimodality and the positions family."""

import dataclasses
import math

import numpy as np
import pytest
from scipy import stats

from blocwatch.metrics.registry import PeriodInput
from blocwatch.metrics.space import positions
from tests.spatial_sim import spatial_votes


def test_median_distance_hand_values():
    # hand-calculated: medians 1 and 5, SDs 1 and 1 → 4; groups [0, 0, 3] (var 3) and
    # [5, 6, 7] (var 1): medians 0 and 6, pooled SD √((2·3 + 2·1)/4) = √2 → 6/√2.
    assert positions.median_distance([0, 1, 2, 4, 5, 6], [0, 0, 0, 1, 1, 1]) == 4.0
    assert positions.median_distance([0, 0, 3, 5, 6, 7], [0, 0, 0, 1, 1, 1]) == pytest.approx(
        6 / math.sqrt(2))


def test_median_distance_degenerate_spread():
    assert positions.median_distance([1, 1, 1, 2, 2, 2], [0, 0, 0, 1, 1, 1]) == math.inf
    assert positions.median_distance([1, 1, 1, 1, 1, 1], [0, 0, 0, 1, 1, 1]) == 0.0


def test_main_pair_is_the_two_largest_groups_and_label_free():
    x = np.array([0, 1, 2, 3, 10, 11, 12, 20, 21, 22.0])
    labels = np.array([0, 0, 0, 0, 1, 1, 1, 2, 2, 2])
    # hand-calculated: group 0 (4 members) pairs with a size-3 group; the tie between groups 1
    # and 2 goes to the larger median gap (|1.5 − 21| > |1.5 − 11|): group 2.
    assert positions.main_pair(x, labels) == (0, 2)
    renamed = np.array(["c", "c", "c", "c", "a", "a", "a", "b", "b", "b"])
    assert positions.median_distance(x, renamed) == positions.median_distance(x, labels)


def test_small_groups_raise_a_note_worthy_error():
    with pytest.raises(ValueError, match="at least 3 members"):
        positions.median_distance([0, 1, 5, 6], [0, 0, 1, 1])
    assert positions.median_distance([0, 1, 5, 6], [0, 0, 1, 1], min_size=2) > 0


def test_overlap_count_hand_values_and_nan():
    # hand-calculated: low group [0, 1, 5], high group [4, 6, 7]: 5 > min_H = 4 (one), and 4 <
    # max_L = 5 (one) → 2. Separated groups → 0. NaN positions are left out.
    assert positions.overlap_count([0, 1, 5, 4, 6, 7], [0, 0, 0, 1, 1, 1]) == 2
    assert positions.overlap_count([0, 1, 2, np.nan, 4, 6, 7], [0, 0, 0, 0, 1, 1, 1]) == 0


def test_bimodality_reference_distributions():
    # Pfister et al. (2013) [S, stated in the paper]: uniform → 5/9, normal → 1/3; the
    # corrected estimators are consistent, so large quantile grids land close.
    grid = (np.arange(20000) + 0.5) / 20000
    assert positions.bimodality_coefficient(grid) == pytest.approx(5 / 9, abs=1e-3)
    assert positions.bimodality_coefficient(stats.norm.ppf(grid)) == pytest.approx(1 / 3,
                                                                                    abs=2e-3)
    # hand-calculated from scipy's corrected g1, g2 on a small sample (formula check).
    x = np.array([0.1, 0.4, 0.5, 2.0, 2.2, 2.9, 3.0])
    g1, g2 = stats.skew(x, bias=False), stats.kurtosis(x, bias=False)
    assert positions.bimodality_coefficient(x) == pytest.approx(
        (g1**2 + 1) / (g2 + 3 * 36 / (5 * 4)))


def test_bimodality_needs_four_spread_values():
    with pytest.raises(ValueError, match="at least 4"):
        positions.bimodality_coefficient([1.0, 2.0, np.nan, 3.0])
    with pytest.raises(ValueError, match="spread"):
        positions.bimodality_coefficient([1.0] * 5)


def _inp(votes, labels, agreement=None):
    n = len(labels)
    if agreement is None:
        cast = votes != 0
        both = cast.astype(float) @ cast.T.astype(float)
        same = sum((votes == c).astype(float) @ (votes == c).T.astype(float) for c in (1, 2, 3))
        agreement = np.where(both > 0, same / np.maximum(both, 1), np.nan)
    return PeriodInput(agreement=agreement, shared=np.zeros((n, n), int),
                       labels=np.asarray(labels), weights=np.zeros((n, n)),
                       edges=np.zeros((n, n), bool), votes=votes)


def _both(inp):
    return {**positions._positions_family(inp), **positions._mds_family(inp)}


def test_family_rises_with_planted_separation():
    # Planted truth (own generator): the median gaps must rank the separations (Spearman ≥ 0.9).
    seps = [0.0, 0.5, 1.0, 1.5, 2.0, 2.5, 3.0, 3.5]
    ideal, mds = [], []
    for i, sep in enumerate(seps):
        votes, _, groups = spatial_votes(n=40, b=80, separation=sep, seed=100 + i)
        out = _both(_inp(votes, groups))
        ideal.append(out["ideal_median_gap"].value)
        mds.append(out["mds_median_gap"].value)
        assert out["ideal_bimodality"].ok and out["ideal_overlap"].ok
    assert stats.spearmanr(seps, ideal).statistic >= 0.9
    assert stats.spearmanr(seps, mds).statistic >= 0.9


def test_family_invariant_to_relabelling():
    votes, _, groups = spatial_votes(n=30, b=60, seed=9)
    perm = np.random.default_rng(2).permutation(30)
    base = _both(_inp(votes, groups))
    other = _both(_inp(votes[perm], (1 - groups)[perm]))
    for m, v in base.items():
        assert other[m].value == pytest.approx(v.value, rel=1e-3, abs=1e-3), m


def test_family_notes_for_small_groups_missing_votes_and_empty():
    votes, _, _ = spatial_votes(n=10, b=40, seed=3)
    labels = np.array([0] * 8 + [1] * 2)  # second group too small for a median
    out = _both(_inp(votes, labels))
    assert not out["ideal_median_gap"].ok and "too small" in out["ideal_median_gap"].note
    assert not out["mds_median_gap"].ok and out["ideal_bimodality"].ok
    no_votes = _both(_inp(None, labels, agreement=np.eye(10)))
    assert "vote matrix" in no_votes["ideal_overlap"].note
    empty = _both(_inp(np.zeros((0, 0), np.int8), np.zeros(0, int),
                                             agreement=np.zeros((0, 0))))
    assert all(not v.ok for v in empty.values())


def test_one_fit_is_passed_along_read_only_and_used_by_family_and_member_table():
    """The fit travels on the input (no module cache): what the family and the member table
    report is computed from the fit the input carries, whatever order they are called in."""
    from blocwatch.metrics.member_registry import compute_members

    votes, _, _ = spatial_votes(n=20, b=30, seed=1)
    labels = np.repeat([0, 1], 10)
    inp = positions.with_ideal_points(_inp(votes, labels))
    fit = inp.ideal_points
    assert positions.with_ideal_points(inp) is inp  # never fitted twice
    with pytest.raises(ValueError):
        fit.x[0] = 0.0
    # Hand the family a different (reversed, then shifted) fit: its numbers must follow it.
    other = dataclasses.replace(fit, x=np.ascontiguousarray(fit.x[::-1]) + 1.0)
    swapped = dataclasses.replace(inp, ideal_points=other)
    got = positions._positions_family(swapped)["ideal_median_gap"].value
    assert got == pytest.approx(positions.median_distance(other.x, labels))
    assert np.array_equal(compute_members(swapped)["ideal_point"], other.x)
    # Without a carried fit the result equals the fit made here (same default settings).
    fresh = positions._positions_family(_inp(votes, labels))["ideal_median_gap"].value
    assert fresh == pytest.approx(positions.median_distance(fit.x, labels))
