"""L2-penalised logistic regression by Newton's method, for the few features separability uses.

The separability metric fits five small models per call, and it is called once per bootstrap
replicate and per permutation, so scikit-learn's per-fit overhead (validation, solver set-up)
dominated its cost. This module fits the same model as
``sklearn.linear_model.LogisticRegression(C=C)`` — binary with one coefficient vector, several
classes with the symmetric multinomial parametrisation, intercepts unpenalised — and
``tests/unit/metrics/space/test_logistic.py``
checks coefficients and predictions against scikit-learn.
"""

from __future__ import annotations

import numpy as np

__all__ = ["fit_logistic", "predict_logistic"]


def _probabilities(xt: np.ndarray, coef: np.ndarray, binary: bool) -> np.ndarray:
    logits = xt @ coef
    if binary:
        logits = np.hstack([np.zeros_like(logits), logits])
    logits -= logits.max(axis=1, keepdims=True)
    p = np.exp(logits)
    return p / p.sum(axis=1, keepdims=True)


def fit_logistic(x: np.ndarray, y: np.ndarray, *, n_classes: int | None = None, c: float = 1.0,
                 max_iter: int = 50, tol: float = 1e-8) -> np.ndarray:
    r"""Coefficients (with the intercept as the last row) of an L2 logistic regression.

    Minimises, as scikit-learn's ``LogisticRegression(C=c)`` does,

    .. math:: \sum_i -\log p_{i, y_i} + \frac{1}{2c} \lVert W \rVert^2

    where p_i = softmax(x̃_i B), x̃_i = (x_i, 1) and W is B without its intercept row. With two
    classes B has one column (class 1's logit; class 0's is 0); with more, one column per
    class. Newton steps with a tiny ridge on the intercepts, whose common shift the
    multinomial likelihood does not identify (it changes no prediction).

    Parameters
    ----------
    x : (n, p) float
    y : (n,) int in 0..K−1
    n_classes : K (default: max(y) + 1)
    c : inverse penalty strength, as scikit-learn's ``C``
    max_iter, tol : Newton steps at most; stop when every gradient entry is below ``tol``

    Returns
    -------
    (p + 1, 1) array for two classes, (p + 1, K) otherwise.

    Examples
    --------
    >>> x = np.array([[0.0], [1.0], [2.0], [3.0]])
    >>> b = fit_logistic(x, np.array([0, 0, 1, 1]))
    >>> predict_logistic(x, b).tolist()
    [0, 0, 1, 1]

    References
    ----------
    .. [1] T. Hastie, R. Tibshirani, J. Friedman, The Elements of Statistical Learning, 2nd ed.,
       §4.4.1 (Newton–Raphson for logistic regression), Springer 2009.
    """
    x = np.asarray(x, dtype=float)
    y = np.asarray(y, dtype=np.int64)
    k = int(n_classes if n_classes is not None else y.max() + 1)
    binary = k == 2
    free = 1 if binary else k
    n, p = x.shape
    xt = np.hstack([x, np.ones((n, 1))])
    onehot = np.zeros((n, k))
    onehot[np.arange(n), y] = 1.0
    target = onehot[:, 1:] if binary else onehot
    penalty = np.full(p + 1, 1.0 / c)
    penalty[-1] = 1e-10  # intercept: unpenalised (the ridge only fixes the free shift)
    ridge = np.diag(np.tile(penalty, free))  # parameter order: class-major, feature-minor
    coef = np.zeros((p + 1, free))
    for _ in range(max_iter):
        prob = _probabilities(xt, coef, binary)
        pf = prob[:, 1:] if binary else prob
        grad = xt.T @ (pf - target) + penalty[:, None] * coef
        if np.abs(grad).max() < tol:  # the objective's gradient: converged
            break
        # Hessian block (a, b) = Σ_i x̃_i x̃_iᵀ (δ_ab p_ia − p_ia p_ib)
        s = np.einsum("ia,ab->iab", pf, np.eye(free)) - np.einsum("ia,ib->iab", pf, pf)
        hess = np.einsum("iab,ij,il->ajbl", s, xt, xt).reshape(free * (p + 1), free * (p + 1))
        step = np.linalg.solve(hess + ridge, grad.T.reshape(-1))
        coef -= step.reshape(free, p + 1).T
    return coef


def predict_logistic(x: np.ndarray, coef: np.ndarray) -> np.ndarray:
    """Most probable class for each row of ``x`` under :func:`fit_logistic` coefficients.

    >>> coef = np.array([[2.0], [-1.0]])  # one feature, intercept -1: class 1 when 2x > 1
    >>> predict_logistic(np.array([[0.0], [1.0]]), coef).tolist()
    [0, 1]
    """
    x = np.asarray(x, dtype=float)
    xt = np.hstack([x, np.ones((x.shape[0], 1))])
    return _probabilities(xt, coef, coef.shape[1] == 1).argmax(axis=1)
