"""Classical MDS, distance imputation and agreement distances."""

import numpy as np
import pytest
from scipy.spatial.distance import pdist, squareform
from sklearn.manifold import ClassicalMDS

from blocwatch.metrics.space.mds import agreement_distances, classical_mds, impute_distances


def blocks_agreement(h):
    """Two equal blocks: agreement 1 within, 0 across."""
    return np.kron(np.eye(2), np.ones((h, h)))


@pytest.mark.parametrize("h", [2, 3, 5])
def test_two_blocks_at_plus_minus_half(h):
    # derived by hand (Torgerson 1952 double centring): every member at ±1/2, lambda_1 = n/4,
    # other lambda = 0
    n = 2 * h
    x, lam = classical_mds(agreement_distances(blocks_agreement(h)), 3,
                           return_eigenvalues=True)
    assert np.abs(x[:, 0]) == pytest.approx(np.full(n, 0.5))
    assert np.sign(x[:h, 0]).tolist() == [1.0] * h  # sign rule: member 0 (tied max) positive
    assert np.sign(x[h:, 0]).tolist() == [-1.0] * h
    assert lam[0] == pytest.approx(n / 4)
    assert lam[1:] == pytest.approx([0.0, 0.0], abs=1e-12)
    assert x[:, 1:] == pytest.approx(np.zeros((n, 2)), abs=1e-12)


@pytest.mark.parametrize("seed", range(4))
def test_matches_sklearn_classical_mds(seed):
    rng = np.random.default_rng(seed)
    d = squareform(pdist(rng.random((12, 4))))
    ref = ClassicalMDS(n_components=3, metric="precomputed").fit(d)  # [S: scikit-learn]
    x, lam = classical_mds(d, 3, return_eigenvalues=True)
    assert lam == pytest.approx(ref.eigenvalues_, rel=1e-9)
    for c in range(3):  # equal up to the sign of each axis
        s = np.sign(x[:, c] @ ref.embedding_[:, c])
        assert x[:, c] == pytest.approx(s * ref.embedding_[:, c], abs=1e-9)


def test_recovers_euclidean_configuration():
    # Torgerson 1952: for Euclidean distances of points in R^2, two axes reproduce every
    # distance (reference distances from scipy.spatial.distance.pdist)
    pts = np.random.default_rng(1).normal(size=(15, 2))
    x = classical_mds(squareform(pdist(pts)), 2)
    assert pdist(x) == pytest.approx(pdist(pts), abs=1e-9)
    assert x.mean(axis=0) == pytest.approx([0, 0], abs=1e-12)  # centred by J


def test_sign_rule_largest_absolute_coordinate_positive():
    pts = np.random.default_rng(2).normal(size=(10, 2))
    for flip in (1, -1):
        x = classical_mds(squareform(pdist(flip * pts)), 2)
        top = np.argmax(np.abs(x), axis=0)
        assert (x[top, [0, 1]] > 0).all()


def test_non_euclidean_gives_zero_columns():
    # three points at mutual distance 1 span a plane: k=4 asks for more than exists
    d = 1 - np.eye(3)
    x, lam = classical_mds(d, 4, return_eigenvalues=True)
    assert x.shape == (3, 4)
    assert lam[:2] == pytest.approx([0.5, 0.5])  # hand: equilateral triangle, B = J/2
    assert lam[2:] == pytest.approx([0, 0], abs=1e-12)
    assert pdist(x) == pytest.approx([1, 1, 1])


def test_empty_and_single():
    assert classical_mds(np.zeros((0, 0)), 2).shape == (0, 2)
    assert classical_mds(np.zeros((1, 1)), 2).tolist() == [[0.0, 0.0]]


def test_impute_row_means():
    nan = np.nan
    d = np.array([[0, 0.2, nan, 0.4],
                  [0.2, 0, 0.6, nan],
                  [nan, 0.6, 0, 0.8],
                  [0.4, nan, 0.8, 0]])
    out = impute_distances(d)
    # hand: r = (0.3, 0.4, 0.7, 0.6); d02 = (0.3 + 0.7)/2, d13 = (0.4 + 0.6)/2
    assert out[0, 2] == out[2, 0] == pytest.approx(0.5)
    assert out[1, 3] == pytest.approx(0.5)
    assert out[0, 1] == 0.2 and np.diag(out).tolist() == [0, 0, 0, 0]


def test_impute_member_with_no_known_pair_takes_overall_mean():
    nan = np.nan
    d = np.array([[0, 0.2, nan], [0.2, 0, nan], [nan, nan, 0]])
    out = impute_distances(d)
    assert out[0, 2] == pytest.approx(0.2)  # hand: r2 = overall mean 0.2
    with pytest.raises(ValueError, match="no two members shared"):
        impute_distances(np.full((3, 3), nan))


def test_mds_imputes_nan():
    d = agreement_distances(blocks_agreement(3))
    d[0, 1] = d[1, 0] = np.nan
    assert np.isfinite(classical_mds(d, 2)).all()


def test_agreement_distances_checks():
    a = np.array([[1.0, 0.25, np.nan], [0.25, 1.0, 0.5], [np.nan, 0.5, 1.0]])
    d = agreement_distances(a)
    assert d[0, 1] == 0.75 and np.isnan(d[0, 2]) and d[1, 1] == 0.0
    with pytest.raises(ValueError, match=r"\[0, 1\]"):
        agreement_distances([[1.0, -0.5], [-0.5, 1.0]])
    with pytest.raises(ValueError, match="symmetric"):
        agreement_distances([[1.0, 0.5], [0.2, 1.0]])
    with pytest.raises(ValueError, match="positive integer"):
        classical_mds(np.zeros((2, 2)), 0)
