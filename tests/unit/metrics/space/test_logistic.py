"""The Newton logistic regression equals scikit-learn's LogisticRegression on the same data."""

import numpy as np
import pytest
from sklearn.linear_model import LogisticRegression

from blocwatch.metrics.space.logistic import fit_logistic, predict_logistic


def _data(n, k, seed, spread=1.5):
    rng = np.random.default_rng(seed)
    y = np.arange(n) % k
    centres = rng.normal(0, spread, size=(k, 2))
    return centres[y] + rng.normal(0, 1, size=(n, 2)), y


@pytest.mark.parametrize("k", [2, 3, 4])
@pytest.mark.parametrize("seed", [0, 1, 2])
@pytest.mark.parametrize("c", [1.0, 0.1])
def test_equals_scikit_learn(k, seed, c):
    """Reference: sklearn.linear_model.LogisticRegression(C=c), default L2 penalty."""
    x, y = _data(40, k, seed)
    ref = LogisticRegression(C=c, tol=1e-12, max_iter=10_000).fit(x, y)
    coef = fit_logistic(x, y, c=c)
    if k == 2:
        np.testing.assert_allclose(coef[:-1, 0], ref.coef_[0], atol=1e-5)
        np.testing.assert_allclose(coef[-1, 0], ref.intercept_[0], atol=1e-5)
    else:  # multinomial: equal up to a common shift of the intercepts
        np.testing.assert_allclose(coef[:-1].T, ref.coef_, atol=1e-5)
        shift = coef[-1] - ref.intercept_
        np.testing.assert_allclose(shift, shift.mean(), atol=1e-5)
    grid = np.random.default_rng(9).normal(0, 3, size=(200, 2))
    assert (predict_logistic(grid, coef) == ref.predict(grid)).mean() >= 0.99


def test_separable_data_stays_finite():
    """Perfectly separated classes: the penalty keeps the coefficients finite."""
    x = np.array([[0.0, 0], [0.1, 0], [5, 5], [5.1, 5]])
    coef = fit_logistic(x, np.array([0, 0, 1, 1]))
    assert np.isfinite(coef).all()
    assert predict_logistic(x, coef).tolist() == [0, 0, 1, 1]


def test_balanced_accuracy_equals_scikit_learn():
    """Reference: sklearn.metrics.balanced_accuracy_score on random labels."""
    from sklearn.metrics import balanced_accuracy_score

    from blocwatch.metrics.space.separability import balanced_accuracy

    rng = np.random.default_rng(4)
    for _ in range(20):
        y = rng.integers(0, 3, 30)
        y[:3] = [0, 1, 2]
        pred = rng.integers(0, 3, 30)
        assert balanced_accuracy(y, pred) == pytest.approx(balanced_accuracy_score(y, pred))
