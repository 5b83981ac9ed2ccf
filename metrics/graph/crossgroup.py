"""Ties that cross group lines: share, share relative to chance, and the E–I index.

Registers the ``crossgroup`` family (``cross_group_share``, ``cross_group_ratio``,
``ei_index``), computed on the thresholded edge set chosen by the period's graph rule, every
edge counting 1 (the weighted forms are available through ``weighted=True``).
"""

from __future__ import annotations

import numpy as np

from blocwatch.metrics.registry import MetricValue, PeriodInput, register
from blocwatch.metrics.validation import check_adjacency, normalise_labels

__all__ = ["same_group_pair_share", "cross_group_share", "cross_group_ratio", "ei_index"]


def _internal_external(adjacency, labels, weighted: bool) -> tuple[float, float, np.ndarray]:
    codes, _ = normalise_labels(labels)
    a = check_adjacency(adjacency, "adjacency", n=codes.shape[0])
    if not weighted:
        a = (a != 0).astype(float)
    same = codes[:, None] == codes[None, :]
    internal = float(a[same].sum()) / 2.0  # each undirected edge appears twice
    return internal, float(a.sum()) / 2.0 - internal, codes


def _no_edges() -> ValueError:
    return ValueError("adjacency: expected at least one edge, received none; fix: lower the "
                      "threshold or use the weighted rule")


def same_group_pair_share(labels) -> float:
    r"""π: the share of member pairs that are in the same group.

    .. math:: \pi = \frac{\sum_c n_c (n_c - 1)}{n (n - 1)}

    Under random labels with fixed group sizes an edge joins two members of the same group
    with probability π, whatever the graph.

    Examples
    --------
    >>> same_group_pair_share(["a", "a", "a", "b", "b", "b"])  # 12/30
    0.4

    References
    ----------
    .. [1] D. Krackhardt, R. N. Stern, "Informal networks and organizational crises: an
       experimental simulation", Social Psychology Quarterly 51(2), 123-140, 1988.
    """
    codes, _ = normalise_labels(labels)
    n = codes.shape[0]
    if n < 2:
        raise ValueError(f"labels: expected at least 2 members, received {n}; fix: measure "
                         "periods with two or more members")
    sizes = np.bincount(codes).astype(float)
    return float((sizes * (sizes - 1)).sum() / (n * (n - 1)))


def cross_group_share(adjacency, labels, *, weighted: bool = False) -> float:
    r"""Share of edges (or of edge weight) joining members of different groups.

    .. math:: s = \frac{E}{E + I}

    with E the number (weight sum) of edges between groups and I within groups. Equals
    1 − coverage of ``networkx.community.partition_quality``.

    Parameters
    ----------
    adjacency : array-like (n, n)
        Symmetric, non-negative, zero diagonal; any non-zero entry is an edge.
    labels : array-like (n,)
    weighted : bool, keyword-only
        Sum edge weights instead of counting edges.

    Raises
    ------
    ValueError
        If there is no edge (0/0).

    Examples
    --------
    >>> a = [[0, 1, 1], [1, 0, 0], [1, 0, 0]]
    >>> cross_group_share(a, [0, 0, 1])
    0.5

    References
    ----------
    .. [1] D. Krackhardt, R. N. Stern, Social Psychology Quarterly 51(2), 123-140, 1988.
    """
    internal, external, _ = _internal_external(adjacency, labels, weighted)
    if internal + external == 0:
        raise _no_edges()
    return external / (internal + external)


def cross_group_ratio(adjacency, labels, *, weighted: bool = False) -> float:
    r"""Cross-group edge share relative to its expectation if ties ignored groups.

    .. math:: r = \frac{E / (E + I)}{1 - \pi}

    π from :func:`same_group_pair_share`. r = 1: ties cross group lines as often as random
    labels (same sizes) would make them; r → 0: groups never tie across. The upper bound
    depends on group sizes (n/2 for groups of n − 1 and 1).

    Examples
    --------
    >>> a = [[0, 1, 1], [1, 0, 0], [1, 0, 0]]
    >>> round(cross_group_ratio(a, [0, 0, 1]), 6)  # (1/2) / (2/3)
    0.75

    References
    ----------
    .. [1] D. Krackhardt, R. N. Stern, Social Psychology Quarterly 51(2), 123-140, 1988.
    """
    share = cross_group_share(adjacency, labels, weighted=weighted)
    chance = 1.0 - same_group_pair_share(labels)
    if chance == 0.0:
        raise ValueError("labels: expected at least two groups, received one; fix: the "
                         "ratio is undefined when every pair is in the same group")
    return share / chance


def ei_index(adjacency, labels, *, weighted: bool = False) -> float:
    r"""Krackhardt–Stern E–I index: external minus internal ties over all ties.

    .. math:: EI = \frac{E - I}{E + I} \in [-1, 1]

    −1: every tie inside groups; +1: every tie across. With ``weighted=True`` E and I are
    sums of edge weights. Under random labels E[EI] = 1 − 2π for unweighted edges.

    Examples
    --------
    >>> a = [[0, 1, 1], [1, 0, 0], [1, 0, 0]]
    >>> ei_index(a, [0, 0, 1])
    0.0

    References
    ----------
    .. [1] D. Krackhardt, R. N. Stern, "Informal networks and organizational crises: an
       experimental simulation", Social Psychology Quarterly 51(2), 123-140, 1988.
    """
    internal, external, _ = _internal_external(adjacency, labels, weighted)
    if internal + external == 0:
        raise _no_edges()
    return (external - internal) / (internal + external)


_NAMES = ("cross_group_share", "cross_group_ratio", "ei_index")


def _agreement_crossing(inp: PeriodInput) -> float:
    """Share of all agreement weight (every pair with a value) that crosses groups: orders
    label permutations tied on the edge-count share, which has an atom at 0 when the rule
    chooses few edges."""
    a = np.nan_to_num(np.asarray(inp.agreement, dtype=np.float64), nan=0.0)
    np.fill_diagonal(a, 0.0)
    try:
        return cross_group_share(a, inp.labels, weighted=True)
    except ValueError:
        return float("nan")


@register("crossgroup", _NAMES,
          bounds={"cross_group_share": (0.0, 1.0), "cross_group_ratio": (0.0, float("inf")),
                  "ei_index": (-1.0, 1.0)},
          permutation_null=("cross_group_share",),
          null_tiebreak={"cross_group_share": _agreement_crossing}, interval="basic",
          direction={"cross_group_share": "lower", "cross_group_ratio": "lower",
                     "ei_index": "lower"})
def _family(inp: PeriodInput) -> dict[str, MetricValue]:
    codes, k = normalise_labels(inp.labels)
    edges = np.asarray(inp.edges)
    internal, external, codes = _internal_external(edges.astype(float), codes, False)
    if codes.shape[0] == 0:
        return {m: MetricValue.missing("no members in this period") for m in _NAMES}
    if k < 2:
        return {m: MetricValue.missing("only one group: no tie can cross group lines")
                for m in _NAMES}
    total = internal + external
    if total == 0:
        return {m: MetricValue.missing("the thresholded graph has no edges") for m in _NAMES}
    share = external / total
    chance = 1.0 - same_group_pair_share(codes)
    return {"cross_group_share": MetricValue(share),
            "cross_group_ratio": MetricValue(share / chance),
            "ei_index": MetricValue((external - internal) / total)}
