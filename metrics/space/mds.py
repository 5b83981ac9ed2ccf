"""Classical multidimensional scaling of a disagreement matrix: members as points.

Shared by the separability metrics and by anyone who needs positions (maps, dashboards).
"""

from __future__ import annotations

import numpy as np
import scipy.linalg

from blocwatch.metrics.validation import check_distances, check_square

__all__ = ["agreement_distances", "impute_distances", "classical_mds"]


def agreement_distances(agreement) -> np.ndarray:
    """D = 1 − agreement with a zero diagonal; NaN stays NaN (pairs with no shared ballot).

    Examples
    --------
    >>> agreement_distances([[1.0, 0.75], [0.75, 1.0]]).tolist()
    [[0.0, 0.25], [0.25, 0.0]]
    """
    a = check_square(agreement, "agreement", allow_nan=True)
    if ((a < 0) | (a > 1)).any():
        i, j = np.argwhere((a < 0) | (a > 1))[0]
        raise ValueError(f"agreement: expected shares in [0, 1], received {a[i, j]} at "
                         f"({i}, {j}); fix: pass the agreement matrix, not a signed index")
    return check_distances(1.0 - a, "1 - agreement")


def impute_distances(distances) -> np.ndarray:
    r"""Fill NaN distances: d_ij ← (r_i + r_j) / 2, r_i the mean of i's known distances.

    A member with no known distance takes the mean of all known distances for r_i. The
    diagonal is 0. Raises ``ValueError`` when no off-diagonal distance is known.

    .. math:: \hat d_{ij} = \tfrac12\Big(\bar d_{i\cdot} + \bar d_{\cdot j}\Big)

    Examples
    --------
    >>> nan = float("nan")
    >>> impute_distances([[0, 0.2, nan], [0.2, 0, 0.6], [nan, 0.6, 0]])[0, 2].round(6)
    np.float64(0.4)

    References
    ----------
    .. [1] J. C. Gower, "Some distance properties of latent root and vector methods used in
       multivariate analysis", Biometrika 53(3/4), 325-338, 1966.
    """
    d = check_distances(distances)
    n = d.shape[0]
    gaps = np.isnan(d)
    if not gaps.any():
        return d
    known = ~gaps & ~np.eye(n, dtype=bool)
    if not known.any():
        raise ValueError("distances: expected at least one known pair, received none (no "
                         "two members shared a ballot); fix: widen the period")
    counts = known.sum(axis=1)
    sums = np.where(known, d, 0.0).sum(axis=1)
    overall = sums.sum() / counts.sum()
    row = np.where(counts > 0, sums / np.maximum(counts, 1), overall)
    return np.where(gaps, (row[:, None] + row[None, :]) / 2.0, d)


def classical_mds(distances, k: int = 2, *, return_eigenvalues: bool = False):
    r"""Torgerson–Gower classical scaling: k coordinates per member.

    .. math:: B = -\tfrac12 J D^{(2)} J,\quad J = I - \tfrac1n \mathbf{1}\mathbf{1}^T,
              \quad X = V_k \Lambda_k^{1/2}

    on the k largest eigenvalues of B; non-positive ones (D not Euclidean) give a zero column
    and eigenvalue 0. NaN distances are imputed first (:func:`impute_distances`).

    Sign rule (eigenvectors have arbitrary sign): on each axis the member with the largest
    absolute coordinate gets a positive one (ties within 1e-10: the lowest index).

    Parameters
    ----------
    distances : array-like (n, n)
        Symmetric, non-negative; typically 1 − agreement.
    k : int
        Number of dimensions.
    return_eigenvalues : bool, keyword-only
        Also return the k eigenvalues used (clipped at 0).

    Examples
    --------
    Two blocks, distance 0 within and 1 across: every member at ±½, λ₁ = n/4.

    >>> d = [[0, 0, 1, 1], [0, 0, 1, 1], [1, 1, 0, 0], [1, 1, 0, 0]]
    >>> x, lam = classical_mds(d, 1, return_eigenvalues=True)
    >>> x[:, 0].round(6).tolist(), lam.round(6).tolist()
    ([0.5, 0.5, -0.5, -0.5], [1.0])

    References
    ----------
    .. [1] W. S. Torgerson, "Multidimensional scaling: I. Theory and method",
       Psychometrika 17, 401-419, 1952.
    .. [2] J. C. Gower, Biometrika 53(3/4), 325-338, 1966.
    """
    d = impute_distances(distances)
    n = d.shape[0]
    if int(k) != k or k < 1:
        raise ValueError(f"k: expected a positive integer, received {k!r}; fix: k=2")
    k = int(k)
    x = np.zeros((n, k))
    lam = np.zeros(k)
    if n > 0:
        d2 = d * d
        # J D² J without forming J: subtract row and column means, add back the grand mean.
        b = -0.5 * (d2 - d2.mean(axis=0) - d2.mean(axis=1)[:, None] + d2.mean())
        m = min(k, n)
        vals, vecs = scipy.linalg.eigh(b, subset_by_index=[n - m, n - 1])
        vals, vecs = vals[::-1], vecs[:, ::-1]
        pos = vals > 1e-12 * max(1.0, float(np.abs(vals).max(initial=0.0)))
        vals = np.where(pos, vals, 0.0)
        coords = vecs * np.sqrt(vals)
        top = np.argmax(np.round(np.abs(coords), 10), axis=0)
        coords *= np.where(coords[top, np.arange(m)] < 0, -1.0, 1.0)
        x[:, :m], lam[:m] = coords, vals
    return (x, lam) if return_eigenvalues else x
