"""Input checks shared by the metric functions: validate once at the boundary, then trust.

Every check raises ``ValueError`` whose message says what was expected, what was received and
how to fix it. Labels are normalised to integer codes ``0..k-1`` (in sorted order of the
original values), so a metric never depends on how groups happen to be numbered or named.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["normalise_labels", "check_square", "check_adjacency", "check_distances", "one_hot"]


def normalise_labels(labels, *, n: int | None = None) -> tuple[np.ndarray, int]:
    """Group labels as integer codes ``0..k-1`` and the number of groups ``k``.

    Parameters
    ----------
    labels : array-like of shape (n,)
        Any hashable group identifiers (ints, strings). NaN or None is rejected: a member
        without a group must be dropped or given an explicit group before measuring.
    n : int, optional
        The number of members the labels must cover.

    Returns
    -------
    codes : ndarray of int64, shape (n,)
    k : int

    Examples
    --------
    >>> codes, k = normalise_labels(["right", "left", "right"])
    >>> codes.tolist(), k
    ([1, 0, 1], 2)
    >>> normalise_labels([0.0, float("nan")])  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    ValueError: labels: expected a group for every member, received NaN/None at position(s) [1]; ...
    """
    arr = np.asarray(labels, dtype=object) if not isinstance(labels, np.ndarray) else labels
    if arr.ndim != 1:
        raise ValueError(f"labels: expected a 1-D array of group labels, received shape "
                         f"{arr.shape}; fix: pass one label per member")
    if n is not None and arr.shape[0] != n:
        raise ValueError(f"labels: expected {n} labels (one per member), received "
                         f"{arr.shape[0]}; fix: align labels with the matrix rows")
    if arr.dtype.kind in "iu" and arr.size and 0 <= arr.min() and arr.max() < 4 * arr.size:
        # Small non-negative integer codes (every resampled period relabels this way): no
        # NaN is possible and a count replaces the sort of np.unique (same codes, same k).
        present = np.bincount(arr) > 0
        return (np.cumsum(present) - 1)[arr].astype(np.int64), int(np.count_nonzero(present))
    bad = np.flatnonzero(pd.isna(arr)) if arr.size else np.empty(0, dtype=np.int64)
    if bad.size:
        raise ValueError("labels: expected a group for every member, received NaN/None at "
                         f"position(s) {bad[:10].tolist()}; fix: drop members without a group "
                         "or give them one (e.g. 'unaffiliated')")
    if arr.size == 0:
        return np.empty(0, dtype=np.int64), 0
    try:
        uniq, codes = np.unique(arr, return_inverse=True)
    except TypeError as exc:  # mixed types such as 1 and "a" do not sort
        raise ValueError(f"labels: expected labels of one type, received a mix ({exc}); "
                         "fix: convert all labels to str") from exc
    return codes.astype(np.int64).reshape(-1), int(uniq.size)


def check_square(matrix, name: str, *, n: int | None = None, allow_nan: bool = False
                 ) -> np.ndarray:
    """A float copy of a square matrix, checked for shape and (unless allowed) NaN/inf.

    Examples
    --------
    >>> check_square([[0, 1], [1, 0]], "weights").dtype
    dtype('float64')
    """
    a = np.array(matrix, dtype=float)
    if a.ndim != 2 or a.shape[0] != a.shape[1]:
        raise ValueError(f"{name}: expected a square n × n matrix, received shape {a.shape}; "
                         "fix: pass one row and one column per member")
    if n is not None and a.shape[0] != n:
        raise ValueError(f"{name}: expected {n} × {n} to match the labels, received "
                         f"{a.shape[0]} × {a.shape[1]}; fix: align matrix and labels")
    bad = ~np.isfinite(a) if not allow_nan else np.isinf(a)
    if bad.any():
        i, j = np.argwhere(bad)[0]
        raise ValueError(f"{name}: expected finite values, received {a[i, j]} at ({i}, {j}); "
                         "fix: replace missing pairs with 0 (no edge)")
    return a


def check_adjacency(matrix, name: str = "weights", *, n: int | None = None) -> np.ndarray:
    """A weighted undirected adjacency: square, finite, symmetric, >= 0, zero diagonal.

    Examples
    --------
    >>> check_adjacency([[0, -1], [-1, 0]])  # doctest: +ELLIPSIS
    Traceback (most recent call last):
    ...
    ValueError: weights: expected non-negative weights, received -1.0 at (0, 1); fix: ...
    """
    a = check_square(matrix, name, n=n)
    if (a < 0).any():
        i, j = np.argwhere(a < 0)[0]
        raise ValueError(f"{name}: expected non-negative weights, received {a[i, j]} at "
                         f"({i}, {j}); fix: use agreement shares in [0, 1], or a signed "
                         "method for signed weights")
    if np.any(np.diag(a) != 0):
        i = int(np.flatnonzero(np.diag(a))[0])
        raise ValueError(f"{name}: expected a zero diagonal (no self-loops), received "
                         f"{a[i, i]} at ({i}, {i}); fix: np.fill_diagonal(w, 0)")
    if not np.array_equal(a, a.T) and not np.allclose(a, a.T, rtol=1e-10, atol=1e-12):
        i, j = np.argwhere(~np.isclose(a, a.T, rtol=1e-10, atol=1e-12))[0]
        raise ValueError(f"{name}: expected a symmetric matrix, received {a[i, j]} at "
                         f"({i}, {j}) but {a[j, i]} at ({j}, {i}); fix: use (w + w.T) / 2")
    return a


def check_distances(matrix, name: str = "distances", *, n: int | None = None) -> np.ndarray:
    """A dissimilarity matrix: square, symmetric, >= 0; NaN allowed (pairs with no data).

    The diagonal is set to 0 in the returned copy.

    Examples
    --------
    >>> check_distances([[0, 0.5], [0.5, 0]]).tolist()
    [[0.0, 0.5], [0.5, 0.0]]
    """
    d = check_square(matrix, name, n=n, allow_nan=True)
    if (d < 0).any():
        i, j = np.argwhere(d < 0)[0]
        raise ValueError(f"{name}: expected non-negative distances, received {d[i, j]} at "
                         f"({i}, {j}); fix: use 1 - agreement with agreement in [0, 1]")
    same = np.isclose(d, d.T, rtol=1e-10, atol=1e-12) | (np.isnan(d) & np.isnan(d.T))
    if not same.all():
        i, j = np.argwhere(~same)[0]
        raise ValueError(f"{name}: expected a symmetric matrix, received {d[i, j]} at "
                         f"({i}, {j}) but {d[j, i]} at ({j}, {i}); fix: use (d + d.T) / 2")
    np.fill_diagonal(d, 0.0)
    return d


def one_hot(codes: np.ndarray, k: int) -> np.ndarray:
    """The n × k membership matrix H with H[i, c] = 1 when member i is in group c.

    Examples
    --------
    >>> one_hot(np.array([0, 1, 1]), 2).tolist()
    [[1.0, 0.0], [0.0, 1.0], [0.0, 1.0]]
    """
    h = np.zeros((codes.shape[0], k))
    h[np.arange(codes.shape[0]), codes] = 1.0
    return h
