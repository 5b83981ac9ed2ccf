"""Separability (cross-validated balanced accuracy on an MDS embedding) and silhouette."""

import numpy as np
import pytest
from scipy.spatial.distance import pdist, squareform
from sklearn.metrics import silhouette_score

from blocwatch.metrics import PeriodInput
from blocwatch.metrics.space.mds import agreement_distances, impute_distances
from blocwatch.metrics.space.separability import _family, separability, silhouette


def noisy_blocs(sizes, gap, seed):
    """Agreement of members on a line: groups centred `gap` apart, unit noise."""
    rng = np.random.default_rng(seed)
    pos = np.concatenate([g * gap + rng.normal(size=s) for g, s in enumerate(sizes)])
    a = 1 - np.abs(pos[:, None] - pos[None, :]) / (np.ptp(pos) + 1e-9)
    return a, np.repeat(np.arange(len(sizes)), sizes)


def test_silhouette_methods_points():
    # derived by hand, confirmed by sklearn.metrics.silhouette_score: points {0, 1} vs
    # {10, 11} -> 0.899749
    x = np.array([0.0, 1.0, 10.0, 11.0])
    assert silhouette(np.abs(x[:, None] - x[None, :]), [0, 0, 1, 1]) == pytest.approx(
        0.899749, abs=1e-6)


@pytest.mark.parametrize("seed", range(4))
def test_silhouette_matches_sklearn(seed):
    rng = np.random.default_rng(seed)
    d = squareform(pdist(rng.random((15, 3))))
    labels = rng.integers(0, 3, 15)
    ref = silhouette_score(d, labels, metric="precomputed")  # [S: scikit-learn]
    assert silhouette(d, labels) == pytest.approx(ref, abs=1e-12)


def test_silhouette_imputes_nan_pairs():
    a, labels = noisy_blocs([4, 4], 3.0, 0)
    d = agreement_distances(a)
    d[0, 5] = d[5, 0] = np.nan
    ref = silhouette_score(impute_distances(d), labels, metric="precomputed")  # [S: sklearn]
    assert silhouette(d, labels) == pytest.approx(ref)


def test_silhouette_undefined():
    d = 1 - np.eye(3)
    with pytest.raises(ValueError, match="between 2 and n - 1"):
        silhouette(d, [0, 0, 0])
    with pytest.raises(ValueError, match="between 2 and n - 1"):
        silhouette(d, [0, 1, 2])


def test_perfect_blocs_are_fully_separable():
    # two blocs, agreement 1 within and 0 across: every fold classifies every member
    d = agreement_distances(np.kron(np.eye(2), np.ones((5, 5))))
    for seed in range(3):
        assert separability(d, [0] * 5 + [1] * 5, seed=seed) == 1.0
    d3 = agreement_distances(np.kron(np.eye(3), np.ones((4, 4))))
    assert separability(d3, np.repeat([0, 1, 2], 4), seed=0) == 1.0


@pytest.mark.parametrize("sizes", [[5, 5], [6, 3], [4, 4, 4]])
def test_identical_members_score_chance(sizes):
    # no information (every pair agrees fully): balanced accuracy is exactly 1/k
    labels = np.repeat(np.arange(len(sizes)), sizes)
    d = np.zeros((len(labels), len(labels)))
    assert separability(d, labels, seed=1) == pytest.approx(1 / len(sizes))


def test_noisy_blocs_order_of_magnitude():
    a, labels = noisy_blocs([10, 10], 6.0, 3)
    assert separability(agreement_distances(a), labels, seed=0) >= 0.9
    a, labels = noisy_blocs([10, 10], 0.0, 3)  # same centre: near chance
    assert separability(agreement_distances(a), labels, seed=0) <= 0.8


def test_member_order_and_group_names_do_not_matter():
    a, labels = noisy_blocs([7, 6, 5], 1.5, 4)
    d = agreement_distances(a)
    perm = np.random.default_rng(0).permutation(labels.size)
    names = np.array(["z", "x", "y"])[labels]
    for seed in range(3):
        v = separability(d, labels, seed=seed)
        assert separability(d[np.ix_(perm, perm)], labels[perm], seed=seed) == pytest.approx(v)
        assert separability(d, names, seed=seed) == pytest.approx(v)


def test_singleton_groups_left_out():
    d = agreement_distances(np.kron(np.eye(2), np.ones((4, 4))))
    d = np.pad(d, (0, 1), constant_values=0.5)
    d[-1, -1] = 0
    assert separability(d, [0] * 4 + [1] * 4 + [2], seed=0) == 1.0
    with pytest.raises(ValueError, match="two groups of 2"):
        separability(d, [0] * 8 + [1], seed=0)


def _inp(a, labels, seed=0):
    n = len(labels)
    return PeriodInput(agreement=a, shared=np.ones((n, n), int), labels=np.asarray(labels),
                       weights=np.zeros((n, n)), edges=np.zeros((n, n), bool), seed=seed)


def test_family_values_and_notes():
    a, labels = noisy_blocs([6, 2, 1], 4.0, 5)
    out = _family(_inp(a, labels, seed=3))
    assert out["separability"].value == pytest.approx(
        separability(agreement_distances(a), labels, seed=3))
    note = out["separability"].note
    assert "chance level 1/2" in note and "1 member(s)" in note and "unstable" in note
    assert out["silhouette"].value == pytest.approx(
        silhouette_score(agreement_distances(a), labels, metric="precomputed"))
    one = _family(_inp(a, [0] * 9))
    assert all(v.value is None and "one group" in v.note for v in one.values())
    tiny = _family(_inp(np.ones((3, 3)), [0, 1, 2]))
    assert tiny["separability"].value is None and "group sizes" in tiny["separability"].note
    assert tiny["silhouette"].value is None and "own group" in tiny["silhouette"].note
    blank = np.full((3, 3), np.nan)
    np.fill_diagonal(blank, 1.0)
    assert all(v.value is None and "shared a ballot" in v.note
               for v in _family(_inp(blank, [0, 0, 1])).values())
