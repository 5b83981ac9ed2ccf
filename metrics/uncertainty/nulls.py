"""Label-permutation nulls: how large would a statistic be if groups were assigned at random?

Shuffling the labels among the period's members keeps every group's size and the graph itself;
only the link between votes and groups is broken. For group modularity the whole null is one
matrix product (all permutations' one-hot memberships side by side), and its expectation is
known exactly (:func:`expected_modularity`), which the tests use to check the sampler.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np

from blocwatch.metrics.graph.modularity import group_modularity
from blocwatch.metrics.validation import check_adjacency, normalise_labels

__all__ = ["permuted_labels", "label_permutation_null", "batched_group_modularity",
           "modularity_permutation_null", "expected_modularity"]

_CHUNK_COLUMNS = 1 << 15  # permutations × groups per matrix product (bounds memory)


def permuted_labels(labels, n_perm: int, *, seed) -> np.ndarray:
    """``n_perm`` independent shuffles of ``labels``, shape (n_perm, n); sizes are kept.

    >>> permuted_labels([0, 0, 1], 4, seed=0).sum(axis=1).tolist()
    [1, 1, 1, 1]
    """
    labels = np.asarray(labels)
    if int(n_perm) != n_perm or n_perm < 1:
        raise ValueError(f"n_perm: expected a positive integer, received {n_perm!r}; "
                         "e.g. n_perm=1000")
    rng = np.random.default_rng(seed)
    return rng.permuted(np.tile(labels, (int(n_perm), 1)), axis=1)


def _summary(observed: float, null: np.ndarray, direction: str = "higher",
             tie: tuple[float, np.ndarray] | None = None) -> dict:
    """Null mean/sd, signed z and the one-sided Phipson–Smyth p from the finite null values.

    ``direction`` is the side that means more division: "higher" counts permutations at
    least as large as the observed value, "lower" those at least as small, and z is signed so
    that a positive z always means "more split than chance". ``tie`` = (observed, null) of a
    second statistic read the same way: a permutation tied on the first counts as at least as
    extreme only if it is at least as extreme on the second (a lexicographic statistic).
    """
    if direction not in ("higher", "lower"):
        raise ValueError(f"direction: expected 'higher' or 'lower', received {direction!r}; "
                         "declare it in the metric's registry entry")
    finite = np.isfinite(null)
    null = null[finite]
    n_valid = int(null.size)
    out = {"observed": float(observed), "mean": np.nan, "sd": np.nan, "z": np.nan,
           "p": np.nan, "n_perm": n_valid}
    if n_valid == 0 or not np.isfinite(observed):
        return out
    mean = float(null.mean())
    sd = float(null.std(ddof=1)) if n_valid > 1 else 0.0
    # Ties within rounding count as "at least as extreme": a permutation that reproduces the
    # observed partition must not be lost to floating-point noise.
    tol = 1e-12 * max(1.0, abs(observed))
    sign = 1.0 if direction == "higher" else -1.0
    beyond = sign * (null - observed)
    extreme = beyond >= -tol
    if tie is not None and np.isfinite(tie[0]):
        tie_null = np.asarray(tie[1], dtype=np.float64)[finite]
        tied = np.abs(beyond) <= tol
        # NaN second values count as tied all the way (at least as extreme): conservative.
        tie_ok = ~(sign * (tie_null - tie[0]) < -1e-12 * max(1.0, abs(tie[0])))
        extreme = (beyond > tol) | (tied & tie_ok)
    exceed = int(extreme.sum())
    out.update(mean=mean, sd=sd, z=sign * (observed - mean) / sd if sd > 0 else np.nan,
               p=(1 + exceed) / (1 + n_valid))
    return out


def label_permutation_null(stat: Callable, labels, *, n_perm: int, seed,
                           batched: bool = False, direction: str = "higher",
                           tiebreak: Callable | None = None) -> dict:
    """Permutation null of any statistic of the labels: mean, sd, z and one-sided p.

    With ``direction="higher"`` (larger T means more division)
    ``p = (1 + #{perm : T(perm) ≥ T_obs}) / (1 + N)`` and ``z = (T_obs − mean)/sd``; with
    ``direction="lower"`` ``p = (1 + #{perm : T(perm) ≤ T_obs}) / (1 + N)`` and
    ``z = (mean − T_obs)/sd``. So a small p and a positive z always mean "more split than
    random groups of the same sizes" (Phipson & Smyth 2010: p is never 0, and exact for
    random permutations drawn with replacement). Permutations
    whose statistic is NaN are left out of N; the returned ``n_perm`` counts those used. z is
    NaN when the null has no spread; everything but ``observed`` is NaN when the observed
    value is not finite.

    Parameters
    ----------
    stat : callable
        ``stat(labels) -> float``; with ``batched=True``, ``stat(L) -> (n_perm,)`` for a
        (n_perm, n) stack of label vectors, and the observed value is ``stat(labels[None])[0]``.
    labels : (n,) array of the members' groups.
    n_perm : int, keyword-only.
    seed : keyword-only, for ``np.random.default_rng``.
    direction : "higher" or "lower", keyword-only; the side that means more division (the
        metric's registry entry, :func:`blocwatch.metrics.registry.metric_direction`).
    tiebreak : callable, keyword-only; ``tiebreak(labels) -> float`` read in the same
        direction. Permutations tied with the observed value (within 1e-12) count towards p
        only if they are at least as extreme on it too, i.e. the test statistic is the pair
        (stat, tiebreak) ordered lexicographically, still a function of the labels, so p
        stays exact. Not with ``batched``. mean, sd and z describe ``stat`` alone.

    Returns
    -------
    dict with keys observed, mean, sd, z, p, n_perm.

    Examples
    --------
    >>> lab = np.array([0, 0, 0, 1, 1, 1])
    >>> x = np.array([1.0, 2, 3, 10, 11, 12])
    >>> gap = lambda l: x[l == 1].mean() - x[l == 0].mean()
    >>> r = label_permutation_null(gap, lab, n_perm=999, seed=1)
    >>> r["observed"], bool(r["p"] < 0.1)
    (9.0, True)
    >>> r = label_permutation_null(gap, lab, n_perm=999, seed=1, direction="lower")
    >>> bool(r["p"] > 0.9), bool(r["z"] < 0)
    (True, True)

    References
    ----------
    Phipson B, Smyth GK (2010). Permutation p-values should never be zero: calculating exact
    p-values when permutations are randomly drawn. Statistical Applications in Genetics and
    Molecular Biology 9(1):39.
    """
    labels = np.asarray(labels)
    perms = permuted_labels(labels, n_perm, seed=seed)
    if tiebreak is not None and batched:
        raise ValueError("tiebreak: expected an unbatched statistic, received batched=True; "
                         "compute the pair per permutation")
    if batched:
        observed = float(np.asarray(stat(labels[None, :]), dtype=np.float64)[0])
        null = np.asarray(stat(perms), dtype=np.float64).reshape(-1)
    else:
        observed = float(stat(labels))
        null = np.array([stat(p) for p in perms], dtype=np.float64)
    tie = None if tiebreak is None else (
        float(tiebreak(labels)), np.array([tiebreak(p) for p in perms], dtype=np.float64))
    return _summary(observed, null, direction, tie)


def batched_group_modularity(weights, label_stack, *, resolution: float = 1.0) -> np.ndarray:
    """Group modularity Q for each row of a (P, n) stack of labelings of one graph.

    The one-hot memberships of all rows sit side by side in an n × (P·k) matrix H, so every
    within-group weight comes from one product ``W·H``:
    ``Q_p = [Σ_c (Hᵀ W H)_cc − γ Σ_c K_pc² / 2m] / 2m`` with ``K_p = Hᵀ k``.

    >>> w = np.ones((4, 4)) - np.eye(4)
    >>> batched_group_modularity(w, [[0, 0, 1, 1], [0, 0, 0, 0]]).round(6).tolist()
    [-0.166667, 0.0]

    References
    ----------
    Newman MEJ (2006). Modularity and community structure in networks. PNAS 103(23):8577–8582.
    """
    w = check_adjacency(weights)
    stack = np.atleast_2d(np.asarray(label_stack))
    n_rows, n = stack.shape
    if n != w.shape[0]:
        raise ValueError(f"label_stack: expected rows of {w.shape[0]} labels, received {n}; "
                         "align labels with the matrix")
    codes, k = normalise_labels(stack.ravel())
    codes = codes.reshape(n_rows, n)
    two_m = float(w.sum())
    if two_m == 0:
        return np.zeros(n_rows)
    degree = w.sum(axis=1)
    out = np.empty(n_rows)
    step = max(1, _CHUNK_COLUMNS // max(k, 1))
    for start in range(0, n_rows, step):  # chunks bound memory; each chunk is one product
        block = codes[start:start + step]
        p = block.shape[0]
        h = np.zeros((n, p * k))
        h[np.arange(n)[None, :], (block + k * np.arange(p)[:, None])] = 1.0
        inside = (h * (w @ h)).sum(axis=0).reshape(p, k).sum(axis=1)
        group_degree = (degree @ h).reshape(p, k)
        out[start:start + p] = (inside - resolution * (group_degree ** 2).sum(axis=1)
                                / two_m) / two_m
    return out


def modularity_permutation_null(weights, labels, *, n_perm: int, seed,
                                resolution: float = 1.0) -> dict:
    """:func:`label_permutation_null` of group modularity, all permutations in one batch.

    Same keys and p-value rule; the observed value is
    :func:`blocwatch.metrics.graph.modularity.group_modularity`.

    >>> import networkx as nx
    >>> w = nx.to_numpy_array(nx.barbell_graph(4, 0))
    >>> r = modularity_permutation_null(w, [0] * 4 + [1] * 4, n_perm=199, seed=0)
    >>> round(r["observed"], 4), r["p"] <= 0.05
    (0.4231, True)
    """
    codes, _ = normalise_labels(labels)
    observed = group_modularity(weights, codes, resolution=resolution)
    perms = permuted_labels(codes, n_perm, seed=seed)
    return _summary(observed, batched_group_modularity(weights, perms, resolution=resolution))


def expected_modularity(weights, labels, *, resolution: float = 1.0) -> float:
    """Exact mean of group modularity over all relabelings that keep the group sizes.

    For a graph without self-loops, i ≠ j share a group with probability
    ``π = Σ_c n_c(n_c − 1) / (n(n − 1))``, so

    ``E[Q] = π(1 − γ) − γ(1 − π) Σ_i k_i² / (2m)²``, i.e. ``−(1 − π) Σ_i k_i² / (2m)²`` at
    γ = 1. A graph without edges gives 0 (as :func:`group_modularity` does).

    Examples
    --------
    Karate club, unweighted, any 16/18 split:

    >>> import networkx as nx
    >>> w = nx.to_numpy_array(nx.karate_club_graph(), weight=None)
    >>> round(expected_modularity(w, [0] * 16 + [1] * 18), 6)
    -0.025567

    References
    ----------
    Newman MEJ (2006). Modularity and community structure in networks. PNAS 103(23):8577–8582
    (the degree null model whose label average this is); the label average derived by hand
    (tests/unit/metrics/uncertainty/test_nulls.py checks the sampler against it).
    """
    codes, k = normalise_labels(labels)
    w = check_adjacency(weights, n=codes.shape[0])
    n = codes.shape[0]
    two_m = float(w.sum())
    if two_m == 0 or n < 2:
        return 0.0
    sizes = np.bincount(codes, minlength=k).astype(np.float64)
    pi = float((sizes * (sizes - 1)).sum() / (n * (n - 1)))
    degree_term = float((w.sum(axis=1) ** 2).sum()) / two_m**2
    return pi * (1 - resolution) - resolution * (1 - pi) * degree_term
