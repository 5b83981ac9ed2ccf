"""Agreement per kind of answer (metrics/agreement/scales.py, metrics/agreement/kappa.py)
against scikit-learn, scipy, hand-derived values and direct per-pair definitions."""

import warnings
from fractions import Fraction

import numpy as np
import pytest
from scipy.stats import pearsonr
from sklearn.metrics import cohen_kappa_score

from blocwatch.metrics.agreement import scales
from blocwatch.metrics.agreement.kappa import disagreement_weights, pairwise_kappa
from blocwatch.metrics.agreement.scales import (
    distance_agreement,
    distance_counts,
    match_agreement,
    nonnegative,
    pairwise_pearson,
)


def _random_codes(seed, n=6, b=30, levels=9, missing=0.25):
    rng = np.random.default_rng(seed)
    codes = rng.integers(0, levels, size=(n, b))
    codes[rng.random((n, b)) < missing] = -1
    return codes


def _pairs(n):
    return [(i, j) for i in range(n) for j in range(n) if i != j]


def _sk_kappa(a, b, weights, labels):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        return cohen_kappa_score(a, b, labels=labels, weights=weights)


# -- Cohen's kappa ------------------------------------------------------------------------------

@pytest.mark.parametrize("seed", [0, 1, 2])
def test_categorical_kappa_equals_sklearn(seed):
    """Unweighted kappa of every pair on its shared ballots [S: sklearn cohen_kappa_score]."""
    codes = _random_codes(seed, levels=4)
    k = pairwise_kappa(codes)
    for i, j in _pairs(codes.shape[0]):
        m = (codes[i] >= 0) & (codes[j] >= 0)
        ref = _sk_kappa(codes[i][m], codes[j][m], None, list(range(4)))
        assert k[i, j] == pytest.approx(ref, abs=1e-12), (i, j)


@pytest.mark.parametrize("weighting", ["linear", "quadratic"])
@pytest.mark.parametrize("seed", [3, 4])
def test_ordinal_weighted_kappa_equals_sklearn(weighting, seed):
    """Weighted kappa on a 1–9 scale [S: sklearn cohen_kappa_score(weights=...)]; sklearn's
    weights use label positions, so all nine levels are passed as labels."""
    codes = _random_codes(seed, levels=9)
    scores = codes + 1  # the 1–9 answers
    k = pairwise_kappa(codes, weighting=weighting, n_levels=9)
    for i, j in _pairs(codes.shape[0]):
        m = (codes[i] >= 0) & (codes[j] >= 0)
        ref = _sk_kappa(scores[i][m], scores[j][m], weighting, list(range(1, 10)))
        assert k[i, j] == pytest.approx(ref, abs=1e-12), (i, j)


def test_kappa_methods_values():
    """Derived by hand: A1 vs B3 of the toy roll call κ = 0.2 (tests/toy_rollcall.py); yes 7/10
    vs 6/10, yes-yes 5,
    no-no 2 → κ = 0.347826 (= 8/23)."""
    toy = pairwise_kappa([[0, 0, 0, 1], [1, 1, 0, 1]])  # A1, B3 on v1..v4 (0 = yes, 1 = no)
    assert toy[0, 1] == pytest.approx(0.2, abs=1e-12)
    r1 = [0] * 5 + [0, 0] + [1] + [1, 1]
    r2 = [0] * 5 + [1, 1] + [0] + [1, 1]
    k = pairwise_kappa([r1, r2])[0, 1]
    assert k == pytest.approx(float(Fraction(8, 23)), abs=1e-12)
    assert k == pytest.approx(0.347826, abs=1e-6)


def test_kappa_ignores_the_unit_of_the_levels():
    """Weighted kappa is unchanged by scaling the disagreement weights [D]."""
    codes = _random_codes(5)
    for w in ("linear", "quadratic"):
        a = pairwise_kappa(codes, weighting=w, n_levels=9)
        b = pairwise_kappa(codes, weighting=w, level_values=np.arange(9) / 8)
        np.testing.assert_allclose(a, b, atol=1e-12)


def test_kappa_degenerate_pairs_are_nan():
    """Both members always gave one and the same answer: p_e = 1, κ = 0/0 (sklearn: nan);
    a pair sharing no ballot has no value."""
    k = pairwise_kappa([[2, 2, 2, -1], [2, 2, 2, -1], [-1, -1, -1, 0]], n_levels=3)
    assert np.isnan(k[0, 1]) and np.isnan(k[0, 2])
    assert np.isnan(_sk_kappa([2, 2, 2], [2, 2, 2], None, [0, 1, 2]))
    assert np.all(np.diag(k) == 1)


def test_kappa_rejects_bad_input():
    with pytest.raises(ValueError, match="weighting"):
        disagreement_weights([0, 1], "cubic")
    with pytest.raises(ValueError, match="level_values"):
        pairwise_kappa([[0, 1]], level_values=[0, 1, 2])
    with pytest.raises(ValueError, match="integer"):
        pairwise_kappa([[0.5, 1.0]])


# -- match rate and distance agreement ----------------------------------------------------------

def test_match_agreement_equals_pair_definition():
    """Share of shared ballots with the same option [D, per-pair definition]."""
    codes = _random_codes(6, levels=3)
    a = match_agreement(codes)
    for i, j in _pairs(codes.shape[0]):
        m = (codes[i] >= 0) & (codes[j] >= 0)
        assert a[i, j] == pytest.approx(np.mean(codes[i][m] == codes[j][m]))


def test_four_and_five_closer_than_one_and_five_only_when_ordered():
    """Issue 8: on an ordinal 1–9 ballot 4–5 is closer than 1–5; on a categorical one every
    two different options are equally far apart [D: 1 − 1/8 = 7/8, 1 − 4/8 = 1/2]."""
    answers = np.array([[4], [5], [1]])
    ordinal = distance_agreement((answers - 1) / 8.0)
    assert ordinal[0, 1] == pytest.approx(7 / 8) and ordinal[1, 2] == pytest.approx(1 / 2)
    assert ordinal[0, 1] > ordinal[1, 2]
    categorical = match_agreement(answers - 1)
    assert categorical[0, 1] == categorical[1, 2] == categorical[0, 2] == 0.0


@pytest.mark.parametrize("product_levels", [64, 0])
def test_distance_agreement_equals_pair_loop(monkeypatch, product_levels):
    """Both exact forms (level products; chunked broadcast when forced with 0) equal the
    direct per-pair definition 1 − mean |x_i − x_j| [D], on a 1–9 scale and on amounts."""
    monkeypatch.setattr(scales, "MAX_LEVELS_FOR_PRODUCT", product_levels)
    rng = np.random.default_rng(7)
    codes = _random_codes(7, n=9, b=25)
    ordinal = np.where(codes >= 0, codes / 8.0, np.nan)
    amounts = np.where(rng.random(ordinal.shape) < 0.2, np.nan, rng.random(ordinal.shape))
    for x in (ordinal, amounts):
        expected = np.ones((9, 9))
        for i, j in _pairs(9):
            m = ~np.isnan(x[i]) & ~np.isnan(x[j])
            expected[i, j] = 1 - np.mean(np.abs(x[i][m] - x[j][m]))
        np.testing.assert_allclose(distance_agreement(x), expected, atol=1e-12)
        d_tiny_blocks, _ = distance_counts(x, max_bytes=1)  # one row per block
        np.testing.assert_allclose(1 - d_tiny_blocks / distance_counts(x)[1],
                                   expected, atol=1e-12)


@pytest.mark.parametrize("func", [match_agreement, pairwise_kappa, pairwise_pearson,
                                  distance_agreement])
def test_ballot_weights_equal_repeated_columns(func):
    """Integer bootstrap weights equal repeating each ballot that many times [D]."""
    rng = np.random.default_rng(8)
    codes = _random_codes(8, n=5, b=12, levels=5)
    w = rng.integers(0, 3, size=12)
    x = codes if func in (match_agreement, pairwise_kappa) else \
        np.where(codes >= 0, codes / 4.0, np.nan)
    repeated = np.repeat(x, w, axis=1)
    np.testing.assert_allclose(func(x, ballot_weights=w), func(repeated), atol=1e-12)


def test_positions_outside_unit_interval_are_rejected():
    with pytest.raises(ValueError, match=r"\[0, 1\]"):
        distance_agreement([[0.0, 2.0]])
    with pytest.raises(ValueError, match="ballot_weights"):
        match_agreement([[0, 1]], ballot_weights=[1.0])


def test_no_shared_ballots_and_min_shared():
    a = match_agreement([[0, -1, 1], [-1, 0, 1]], min_shared=2)
    assert np.isnan(a[0, 1]) and a[0, 0] == 1.0


# -- correlation --------------------------------------------------------------------------------

@pytest.mark.parametrize("seed", [9, 10])
def test_pearson_equals_scipy(seed):
    """Correlation over each pair's shared ballots [S: scipy.stats.pearsonr]."""
    rng = np.random.default_rng(seed)
    s = rng.normal(50, 20, size=(6, 40))
    s[rng.random(s.shape) < 0.3] = np.nan
    r = pairwise_pearson(s)
    for i, j in _pairs(6):
        m = ~np.isnan(s[i]) & ~np.isnan(s[j])
        assert r[i, j] == pytest.approx(pearsonr(s[i][m], s[j][m]).statistic, abs=1e-12)


def test_pearson_degenerate():
    """A member whose answers do not vary, or fewer than three shared ballots: no value."""
    r = pairwise_pearson([[1.0, 1, 1, 1], [1, 2, 3, 4], [np.nan, np.nan, 2, 3]])
    assert np.isnan(r[0, 1]) and np.isnan(r[1, 2])
    assert r[1, 1] == 1.0


# -- signed weights -----------------------------------------------------------------------------

def test_nonnegative_transforms():
    """Signed weights must not reach modularity (its degree null model needs weights ≥ 0);
    clip or shift, both in [0, 1]."""
    s = np.array([-1.0, -0.2, 0.0, 0.5, 1.0, np.nan])
    clip, shift = nonnegative(s), nonnegative(s, how="shift")
    np.testing.assert_allclose(clip[:5], [0, 0, 0, 0.5, 1])
    np.testing.assert_allclose(shift[:5], [0, 0.4, 0.5, 0.75, 1])
    assert np.isnan(clip[5]) and np.isnan(shift[5])
    with pytest.raises(ValueError, match="clip"):
        nonnegative(s, how="abs")
