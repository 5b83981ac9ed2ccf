"""Pairwise agreement from a member × ballot vote matrix, by matrix products of one-hot arrays.

For the positions yes (Y) and no (N) as 0/1 arrays and ballot weights w (1 each, or bootstrap
counts), with S = Y − N and C = Y + N:

    both = C·diag(w)·Cᵀ        (ballots both members cast)
    same = (both + S·diag(w)·Sᵀ) / 2

since S_i·S_j is +1 where the two chose alike and −1 where they differ. With abstain as a third
position C also counts abstentions and ``same`` gains A·diag(w)·Aᵀ. Counts are computed in
float32 (exact for integers below 2²⁴, i.e. up to 16 million ballots) on BLAS; there is no loop
over pairs.
"""

from __future__ import annotations

import numpy as np

from blocwatch.metrics.agreement.scales import ratio_matrix
from blocwatch.metrics.registry import ABSTAIN, NO, YES

# Largest total weight for the √w route: each term then carries at most ~2⁻²² of rounding, so
# a count's error stays far below ½ and rounding restores the exact whole number.
ROOT_WEIGHT_LIMIT = 2**20


def _gram(x: np.ndarray, w: np.ndarray | None, root_w: np.ndarray | None) -> np.ndarray:
    """x·diag(w)·xᵀ. With √w it is (x·√w)(x·√w)ᵀ: one operand, so BLAS runs syrk (half the
    work of gemm), then rounding to the whole number the count is."""
    if w is None:
        return x @ x.T
    if root_w is None:
        return (x * w) @ x.T
    drawn = np.flatnonzero(root_w)  # a bootstrap leaves ~37 % of ballots out: skip them
    xw = x[:, drawn] * root_w[drawn] if drawn.size < root_w.size else x * root_w
    out = xw @ xw.T
    return np.rint(out, out=out)


def agreement_counts(votes: np.ndarray, *, weights: np.ndarray | None = None,
                     abstain_as_position: bool = False) -> tuple[np.ndarray, np.ndarray]:
    """``(same, both)`` count matrices (float32, n × n) for one vote matrix.

    ``weights`` (length b) multiplies each ballot's column, e.g. bootstrap counts. Whole-number
    weights summing to at most :data:`ROOT_WEIGHT_LIMIT` go through √w, so each product is a
    symmetric rank-k update (syrk, half the work), and the counts are rounded back to the whole
    numbers they are; other weights take the plain product.

    >>> v = np.array([[1, 1, 2], [1, 2, 2]], dtype=np.int8)
    >>> same, both = agreement_counts(v)
    >>> same[0, 1], both[0, 1]
    (np.float32(2.0), np.float32(3.0))
    >>> same, both = agreement_counts(v, weights=[3, 0, 1])
    >>> same[0, 1], both[0, 1]
    (np.float32(4.0), np.float32(4.0))
    """
    votes = np.asarray(votes)
    w = None if weights is None else np.asarray(weights, dtype=np.float32)
    root_w = None
    if w is not None and np.all(w >= 0) and np.all(w == np.round(w)) \
            and float(w.sum(dtype=np.float64)) <= ROOT_WEIGHT_LIMIT:
        root_w = np.sqrt(w)

    def gram(x: np.ndarray) -> np.ndarray:
        return _gram(x, w, root_w)

    yes, no = votes == YES, votes == NO
    cast = yes | no
    if abstain_as_position:
        cast |= votes == ABSTAIN
    both = gram(cast.astype(np.float32))
    if not abstain_as_position:
        # S = Y − N: S_i·S_j is +1 where two members chose alike, −1 where they differ.
        signed = yes.astype(np.float32)
        np.subtract(signed, no, out=signed)
        same = (both + gram(signed)) * np.float32(0.5)
    else:  # three positions: sum the per-position co-occurrences directly
        same = sum(gram((votes == c).astype(np.float32)) for c in (YES, NO, ABSTAIN))
    return same, both


def agreement_matrix(same: np.ndarray, both: np.ndarray, *, min_shared: int = 1) -> np.ndarray:
    """same / both as float64, NaN where both < ``min_shared``; diagonal 1
    (:func:`~blocwatch.metrics.agreement.scales.ratio_matrix`, the one divider)."""
    return ratio_matrix(same, both, min_shared=max(min_shared, 1))
