"""Modularity of the group partition on a weighted agreement graph.

How much more agreement weight falls inside groups than a degree-preserving null expects: the
polarisation measure of co-voting networks (Waugh et al. 2009). Registers the
``group_modularity`` family.
"""

from __future__ import annotations

import networkx as nx
import numpy as np

from blocwatch.metrics.registry import MetricValue, PeriodInput, register
from blocwatch.metrics.validation import check_adjacency, normalise_labels, one_hot

__all__ = ["group_modularity", "modularity_graph"]


def _modularity(w: np.ndarray, codes: np.ndarray, k: int, resolution: float) -> float:
    """Q for a checked symmetric matrix whose row sums are the degrees (no checks here)."""
    two_m = float(w.sum())
    if two_m == 0.0:
        return 0.0
    h = one_hot(codes, k)
    inside = float(np.einsum("ic,ic->", w @ h, h))  # tr(Hᵀ W H) = Σ_c 2 L_c
    group_degree = w.sum(axis=1) @ h  # K_c
    return (inside - resolution * float(group_degree @ group_degree) / two_m) / two_m


def group_modularity(weights, labels, *, resolution: float = 1.0) -> float:
    r"""Weighted modularity Q(γ) of the partition given by ``labels``.

    .. math::

        Q = \frac{1}{2m}\sum_{ij}\Big[A_{ij} - \gamma\frac{k_i k_j}{2m}\Big]\delta(c_i, c_j)
          = \sum_c\Big[\frac{L_c}{m} - \gamma\Big(\frac{K_c}{2m}\Big)^2\Big]

    with :math:`k_i = \sum_j A_{ij}`, :math:`2m = \sum_{ij} A_{ij}`, :math:`L_c` the weight
    inside group c and :math:`K_c` its total degree. Computed as
    :math:`(\mathrm{tr}(H^T A H) - \gamma \lVert H^T k\rVert^2 / 2m) / 2m` with the one-hot
    membership matrix H. For γ = 1, −1/2 ≤ Q < 1.

    Parameters
    ----------
    weights : array-like, shape (n, n)
        Symmetric, non-negative, zero diagonal (agreement where an edge exists, else 0).
        Negative weights raise ``ValueError``: they break the degree null model.
    labels : array-like, shape (n,)
        Each member's group (any hashable values; NaN rejected).
    resolution : float, keyword-only
        γ; larger values favour smaller groups.

    Returns
    -------
    float
        Q. A graph without edges (m = 0) has nothing inside or across groups: Q is 0/0 and
        this returns 0.0 (networkx raises ``ZeroDivisionError`` there).

    Examples
    --------
    Two triangles joined by one edge (``nx.barbell_graph(3, 0)``), split at the bridge:

    >>> import networkx as nx
    >>> w = nx.to_numpy_array(nx.barbell_graph(3, 0))
    >>> round(group_modularity(w, [0, 0, 0, 1, 1, 1]), 6)  # 5/14
    0.357143

    References
    ----------
    .. [1] M. E. J. Newman, "Modularity and community structure in networks", PNAS 103(23),
       8577-8582, 2006.
    .. [2] A. S. Waugh, L. Pei, J. H. Fowler, P. J. Mucha, M. A. Porter, "Party polarization
       in Congress: a network science approach", arXiv:0907.3509, 2009.
    """
    codes, k = normalise_labels(labels)
    w = check_adjacency(weights, n=codes.shape[0])
    return _modularity(w, codes, k, float(resolution))


def modularity_graph(G: nx.Graph, communities, *, weight: str | None = "weight",
                     resolution: float = 1.0) -> float:
    """:func:`group_modularity` of a networkx graph, with networkx's conventions.

    Parameters
    ----------
    G : networkx.Graph
        Undirected. Self-loops count twice in a node's degree and once in :math:`L_c`, as in
        ``networkx.community.modularity``.
    communities : iterable of node sets, or mapping node -> label
        Must put every node in exactly one community.
    weight : str or None, keyword-only
        Edge attribute holding the weight; ``None`` counts every edge as 1. Pass it
        explicitly: many graphs (the karate club among them) carry weights.
    resolution : float, keyword-only

    Examples
    --------
    >>> import networkx as nx
    >>> G = nx.barbell_graph(3, 0)
    >>> round(modularity_graph(G, [{0, 1, 2}, {3, 4, 5}], weight=None), 6)
    0.357143

    References
    ----------
    .. [1] M. E. J. Newman, "Analysis of weighted networks", Phys. Rev. E 70, 056131, 2004.
    """
    if G.is_directed():
        raise ValueError("G: expected an undirected graph, received a directed one; fix: "
                         "G.to_undirected() or use networkx.community.modularity")
    nodes = list(G)
    index = {u: i for i, u in enumerate(nodes)}
    if hasattr(communities, "items"):  # a mapping node -> label
        codes, k = normalise_labels([communities.get(u) for u in nodes])
    else:
        codes, k = np.full(len(nodes), -1, dtype=np.int64), 0
        for k, block in enumerate(communities):
            for u in block:
                if u not in index or codes[index[u]] != -1:
                    raise ValueError(f"communities: expected each node of G exactly once, "
                                     f"received {u!r} twice or not in G; fix: pass a partition")
                codes[index[u]] = k
        k += 1
        if (codes == -1).any():
            missing = [nodes[i] for i in np.flatnonzero(codes == -1)[:5]]
            raise ValueError(f"communities: expected every node of G, received none for "
                             f"{missing}; fix: drop absent members from G first")
    w = nx.to_numpy_array(G, nodelist=nodes, weight=weight)
    w[np.diag_indices_from(w)] *= 2  # a self-loop adds its weight twice to the degree
    if (w < 0).any():
        raise ValueError("G: expected non-negative edge weights, received a negative one; "
                         "fix: use agreement shares, or a signed method for signed weights")
    return _modularity(w, codes, k, float(resolution))


@register("modularity", ("group_modularity",), bounds={"group_modularity": (-0.5, 1.0)},
          permutation_null=("group_modularity",),
          direction={"group_modularity": "higher"}, interval="bc")
def _family(inp: PeriodInput) -> dict[str, MetricValue]:
    codes, k = normalise_labels(inp.labels)
    w = check_adjacency(inp.weights, n=codes.shape[0])
    if codes.shape[0] == 0:
        return {"group_modularity": MetricValue.missing("no members in this period")}
    if k < 2:
        return {"group_modularity": MetricValue.missing(
            "only one group: the group partition has Q = 0 by construction")}
    if w.sum() == 0:
        return {"group_modularity": MetricValue.missing(
            "the graph has no edges (total weight 0): modularity is 0/0")}
    return {"group_modularity": MetricValue(_modularity(w, codes, k, 1.0))}
