"""Cohen's kappa for every pair of members at once: unweighted, linear and quadratic weights.

For one pair on the ballots both answered, with observed counts O_kl (i said k, j said l),
row and column totals r_k, c_l and N shared ballots, and disagreement weights d_kl:

    κ_w = 1 − N Σ d_kl O_kl / Σ d_kl r_k c_l.

Both sums come from one-hot products. With X_k the member × ballot 0/1 array of level k and C
the answered mask (W = diag(ballot weights)):

    Σ_kl d_kl O_kl(i, j) = [Σ_k X_k W (Σ_l d_kl X_l)ᵀ]_ij   (one product of stacked arrays)
    r_k(i, j) = M_k[i, j],  c_l(i, j) = M_l[j, i],  M_k = X_k W Cᵀ

(the marginals count only the ballots the pair shared), so Σ d r c = Σ_k M_k ∘ (Σ_l d_kl M_lᵀ).
Memory is about 3·L·n² floats for L levels (L = 9, n = 1000: 216 MB); time O(L·n²·b).
"""

from __future__ import annotations

import numpy as np

from blocwatch.metrics.agreement.scales import _ballot_weights, _check_codes, level_one_hot

WEIGHTINGS = ("none", "linear", "quadratic")


def disagreement_weights(level_values, weighting: str) -> np.ndarray:
    """The L × L disagreement weights d_kl of Cohen (1968) for levels at ``level_values``.

    ``none``: 1 − [k = l]; ``linear``: |v_k − v_l|; ``quadratic``: (v_k − v_l)². Kappa is
    unchanged by scaling d, so levels 1..9 and positions 0, 1/8, …, 1 give the same κ.

    >>> disagreement_weights([0, 1, 2], "linear").tolist()
    [[0.0, 1.0, 2.0], [1.0, 0.0, 1.0], [2.0, 1.0, 0.0]]
    """
    v = np.asarray(level_values, dtype=np.float64)
    diff = v[:, None] - v[None, :]
    if weighting == "none":
        return 1.0 - np.eye(v.size)
    if weighting == "linear":
        return np.abs(diff)
    if weighting == "quadratic":
        return diff * diff
    raise ValueError(f"weighting: expected one of {', '.join(WEIGHTINGS)}, received "
                     f"{weighting!r}; fix: pick one")


def pairwise_kappa(codes, *, weighting: str = "none", level_values=None,
                   n_levels: int | None = None, ballot_weights=None,
                   min_shared: int = 1) -> np.ndarray:
    """Cohen's kappa (weighted or not) of every pair of members over their shared ballots.

    ``κ_w = 1 − N Σ_kl d_kl O_kl / Σ_kl d_kl r_k c_l``; with ``weighting="none"`` this is
    Cohen's (1960) κ = (p_o − p_e)/(1 − p_e), with ``linear``/``quadratic`` the weighted κ of
    Cohen (1968) for ordered levels. Marginals are each member's answers on the ballots the pair
    shared, as ``sklearn.metrics.cohen_kappa_score`` computes them for that pair.

    Parameters
    ----------
    codes : (n, b) int, level index 0..L−1 per answer, −1 for no answer.
    weighting : "none" (categories), "linear" or "quadratic" (ordered levels).
    level_values : (L,) float, optional, where each level lies (default 0..L−1).
    n_levels : int, optional, the number of levels L (default: highest code + 1).
    ballot_weights : (b,) float, optional (bootstrap counts).
    min_shared : pairs with fewer shared ballots get NaN.

    Returns
    -------
    (n, n) float in [−1, 1]; NaN where the pair shared too few ballots or chance disagreement
    is zero (both members gave one and the same level throughout: κ is 0/0). Diagonal 1.

    Examples
    --------
    The toy roll call of tests/toy_rollcall.py, A1 vs B3 on yes (0) / no (1), p_o = 1/2,
    p_e = 3/8, so κ = 0.2:

    >>> k = pairwise_kappa([[0, 0, 0, 1], [1, 1, 0, 1]])
    >>> round(float(k[0, 1]), 12)
    0.2

    References
    ----------
    Cohen J (1960). A coefficient of agreement for nominal scales. Educational and
    Psychological Measurement 20(1):37–46.
    Cohen J (1968). Weighted kappa: nominal scale agreement with provision for scaled
    disagreement or partial credit. Psychological Bulletin 70(4):213–220.
    """
    c = _check_codes(codes)
    n, b = c.shape
    x = level_one_hot(c, n_levels)
    L = x.shape[0]
    values = np.arange(L, dtype=np.float64) if level_values is None \
        else np.asarray(level_values, dtype=np.float64)
    if values.shape != (L,):
        raise ValueError(f"level_values: expected {L} values (one per level), received shape "
                         f"{values.shape}; fix: pass one position per level code")
    d = disagreement_weights(values, weighting)
    w = _ballot_weights(ballot_weights, b)
    cast = (c >= 0).astype(np.float64)
    shared = (cast * w) @ cast.T
    out = np.full((n, n), np.nan)
    if L == 0:
        np.fill_diagonal(out, 1.0)
        return out
    stacked = x.transpose(1, 0, 2).reshape(n, L * b)
    weighted = np.tensordot(d, x, axes=(1, 0)).transpose(1, 0, 2).reshape(n, L * b)
    observed = (stacked * np.tile(w, L)) @ weighted.T
    margins = ((x * w).reshape(L * n, b) @ cast.T).reshape(L, n, n)
    expected = (margins * np.tensordot(d, margins.transpose(0, 2, 1), axes=(1, 0))).sum(axis=0)
    scale = np.maximum(shared * shared, 1.0) * max(float(d.max()), 1e-300)
    ok = (shared >= max(min_shared, 1e-12)) & (expected > 1e-12 * scale)
    np.divide(shared * observed, np.where(ok, expected, 1.0), out=out, where=ok)
    out = np.where(ok, 1.0 - out, np.nan)
    np.fill_diagonal(out, 1.0)
    return out
