"""The disparity filter: the backbone of a weighted graph (Serrano, Boguñá & Vespignani 2009).

A tie is kept when its weight is a larger share of one of its members' total than chance would
give: the backbone keeps each member's few strongest ties, judged against that member's own
spread of weights, so a member with uniformly strong ties keeps few, and a member with one
outstanding partner keeps that one. It is a local rule (no global cut-off), which suits
agreement graphs whose weights differ in level from period to period. It is a graph rule
(``--rule backbone:ALPHA``, :mod:`blocwatch.pipeline.build.graphs`), not a measure.
"""

from __future__ import annotations

import numpy as np

__all__ = ["disparity_alpha", "disparity_backbone"]


def disparity_alpha(weights) -> np.ndarray:
    r"""Significance of each tie under the disparity filter's null model.

    For member :math:`i` with degree :math:`k_i` (ties of positive weight) and strength
    :math:`s_i = \sum_j w_{ij}`, the normalised weight of tie :math:`ij` is
    :math:`p_{ij} = w_{ij} / s_i`. Under the null, the :math:`k_i` shares are the gaps left by
    :math:`k_i - 1` points thrown uniformly on [0, 1], and the probability of a share at least
    :math:`p_{ij}` is

    .. math:: \alpha_{ij} = 1 - (k_i - 1)\int_0^{p_{ij}} (1 - x)^{k_i - 2}\,dx
              = (1 - p_{ij})^{k_i - 1}.

    An undirected tie is judged from both ends; the value returned is
    :math:`\min(\alpha_{ij}, \alpha_{ji})` (the tie is kept when it is significant for at
    least one of its members, as in the paper). A member with a single tie gives
    :math:`(1-p)^0 = 1` from its side: its one tie is kept only if the other member's spread
    makes it stand out.

    Parameters
    ----------
    weights : (n, n) array_like
        Symmetric non-negative weights; 0 or NaN means no tie; the diagonal is ignored.

    Returns
    -------
    ndarray
        (n, n) symmetric, :math:`\min(\alpha_{ij}, \alpha_{ji})` where there is a tie, NaN
        elsewhere (and on the diagonal).

    Examples
    --------
    Ties 0–1 (6), 0–2 (1), 0–3 (1), 1–2 (2): from member 0 (k = 3, s = 8) the tie to 1 has
    p = 3/4 and α = (1/4)² = 1/16; from member 2 (k = 2, s = 3) the tie to 1 has α = 1/3.

    >>> w = np.zeros((4, 4))
    >>> for i, j, v in [(0, 1, 6), (0, 2, 1), (0, 3, 1), (1, 2, 2)]:
    ...     w[i, j] = w[j, i] = v
    >>> a = disparity_alpha(w)
    >>> float(a[0, 1]), round(float(a[1, 2]), 4), round(float(a[0, 2]), 4), float(a[0, 3])
    (0.0625, 0.3333, 0.6667, 0.765625)

    References
    ----------
    Serrano MÁ, Boguñá M, Vespignani A (2009). Extracting the multiscale backbone of complex
    weighted networks. PNAS 106(16): 6483–6488, eq. 2.
    """
    w = np.nan_to_num(np.asarray(weights, dtype=float), nan=0.0)
    if w.ndim != 2 or w.shape[0] != w.shape[1]:
        raise ValueError(f"expected a square weight matrix, received shape {w.shape}")
    if (w < 0).any():
        raise ValueError("weights must be non-negative")
    w = w.copy()
    np.fill_diagonal(w, 0.0)
    tie = w > 0
    degree = tie.sum(axis=1)
    strength = w.sum(axis=1)
    with np.errstate(divide="ignore", invalid="ignore"):
        share = np.where(tie, w / strength[:, None], 0.0)
    from_i = np.where(tie, (1.0 - share) ** (degree[:, None] - 1), np.nan)
    return np.where(tie, np.fmin(from_i, from_i.T), np.nan)


def disparity_backbone(weights, alpha: float) -> np.ndarray:
    """Boolean (n, n) mask of the ties the disparity filter keeps at significance ``alpha``.

    A tie is kept when :func:`disparity_alpha` is below ``alpha`` (0 < alpha < 1); smaller
    ``alpha`` keeps fewer ties. Same reference as :func:`disparity_alpha`.

    >>> w = np.zeros((4, 4))
    >>> for i, j, v in [(0, 1, 6), (0, 2, 1), (0, 3, 1), (1, 2, 2)]:
    ...     w[i, j] = w[j, i] = v
    >>> np.argwhere(np.triu(disparity_backbone(w, 0.5))).tolist()
    [[0, 1], [1, 2]]
    """
    if not 0 < alpha < 1:
        raise ValueError(f"alpha must lie in (0, 1), received {alpha!r}")
    a = disparity_alpha(weights)
    return np.nan_to_num(a, nan=1.0) < alpha
