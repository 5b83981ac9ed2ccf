"""Communities found without looking at groups (Leiden), and how well they match the groups.

Registers the ``louvain`` family (name kept: metric names are an export contract):
``best_modularity``, ``communities``, ``community_group_ari`` from one modularity maximisation
per period. The optimiser is the Leiden algorithm (Traag, Waltman & van Eck 2019), Louvain's
successor with connected communities, compiled in ``leidenalg`` on a ``python-igraph`` graph
built straight from the weight matrix (no Python object per edge). It visits nodes in a seeded
random order, so its result would depend on the order members are listed in; we run it on the
members sorted by a permutation-invariant key (their weighted degree and two refinements),
which makes the result depend on the seed and the graph only.
"""

from __future__ import annotations

import igraph
import leidenalg
import networkx as nx
import numpy as np
from sklearn.metrics import adjusted_rand_score

from blocwatch.metrics.graph.modularity import _modularity
from blocwatch.metrics.registry import MetricValue, PeriodInput, register
from blocwatch.metrics.validation import check_adjacency, normalise_labels

__all__ = ["best_partition", "best_modularity", "communities", "community_group_ari"]


def _canonical_order(w: np.ndarray) -> np.ndarray:
    """Member order by (strength, Σ w², Σ w·strength of neighbours), rounded so that
    values equal up to float noise tie; ties keep the given order."""
    s = w.sum(axis=1)
    keys = np.round(np.vstack([w @ s, (w * w).sum(axis=1), s]), 9)
    return np.lexsort(keys)  # the last row is the primary key


def _igraph(w: np.ndarray) -> igraph.Graph:
    """Undirected weighted igraph graph of the upper triangle's positive weights."""
    i, j = np.nonzero(np.triu(w, k=1))
    g = igraph.Graph(n=w.shape[0], edges=np.column_stack([i, j]).tolist())
    g.es["weight"] = w[i, j].tolist()
    return g


def _leiden(w: np.ndarray, seed: int, resolution: float) -> np.ndarray:
    """Leiden partition (codes numbered by first member) of the weight matrix ``w``."""
    n = w.shape[0]
    order = _canonical_order(w)
    g = _igraph(w[np.ix_(order, order)])
    # RB configuration quality = modularity with resolution γ (γ = 1: Newman's Q); iterate
    # until no node moves (n_iterations < 0). leidenalg seeds its own generator.
    found = leidenalg.find_partition(g, leidenalg.RBConfigurationVertexPartition,
                                     weights="weight", resolution_parameter=resolution,
                                     n_iterations=-1, seed=seed % 2**31)
    codes = np.empty(n, dtype=np.int64)
    codes[order] = np.asarray(found.membership, dtype=np.int64)
    # Number communities by their first member so the output does not depend on set order.
    _, first = np.unique(codes, return_index=True)
    rank = np.empty(first.size, dtype=np.int64)
    rank[np.argsort(first)] = np.arange(first.size)
    return rank[codes]


def _as_matrix(W, weight: str | None) -> np.ndarray:
    if isinstance(W, nx.Graph):
        if W.is_directed():
            raise ValueError("W: expected an undirected graph, received a directed one; "
                             "fix: W.to_undirected()")
        W = nx.to_numpy_array(W, weight=weight)
    return check_adjacency(W)


def best_partition(W, *, seed: int, resolution: float = 1.0,
                   weight: str | None = "weight") -> np.ndarray:
    r"""Community labels ``0..c-1`` per member from Leiden modularity maximisation.

    Like Louvain, Leiden moves single nodes to the neighbouring community with the largest gain

    .. math:: \Delta Q = \frac{k_{i,in}}{m} - \gamma\frac{\Sigma_{tot} k_i}{2m^2}

    then aggregates communities into nodes and repeats until Q stops rising; between the two
    it refines each community so that every community found is connected. Runs
    ``leidenalg.find_partition`` (RB configuration quality, i.e. modularity at resolution γ)
    with explicit ``seed`` on the members in a permutation-invariant order, until no node
    moves. Communities are numbered by their first member. A graph without edges gives one
    community per member.

    Parameters
    ----------
    W : array-like (n, n) or networkx.Graph
        Non-negative symmetric weights, zero diagonal; a graph is read in ``list(G)`` order.
    seed : int, keyword-only
    resolution : float, keyword-only
        γ.
    weight : str or None, keyword-only
        Edge attribute when ``W`` is a graph (``None``: every edge weighs 1).

    Examples
    --------
    >>> import networkx as nx
    >>> best_partition(nx.barbell_graph(3, 0), seed=1).tolist()
    [0, 0, 0, 1, 1, 1]

    References
    ----------
    .. [1] V. D. Blondel, J.-L. Guillaume, R. Lambiotte, E. Lefebvre, "Fast unfolding of
       communities in large networks", J. Stat. Mech. P10008, 2008.
    .. [2] V. A. Traag, L. Waltman, N. J. van Eck, "From Louvain to Leiden: guaranteeing
       well-connected communities", Sci. Rep. 9, 5233, 2019.
    """
    w = _as_matrix(W, weight)
    if w.shape[0] == 0:
        return np.empty(0, dtype=np.int64)
    return _leiden(w, int(seed), float(resolution))


def best_modularity(W, *, seed: int, resolution: float = 1.0,
                    weight: str | None = "weight") -> float:
    """Modularity Q(γ) of the Leiden partition: the highest Q found, a lower bound on max Q.

    Maximised Q is high even on random graphs (Guimerà et al. 2004): read it beside the group
    partition's Q or a null. No edges (m = 0) → 0.0, as in
    :func:`~blocwatch.metrics.graph.modularity.group_modularity`.

    Examples
    --------
    >>> import networkx as nx
    >>> round(best_modularity(nx.barbell_graph(3, 0), seed=1), 6)  # 5/14
    0.357143

    References
    ----------
    .. [1] V. D. Blondel et al., J. Stat. Mech. P10008, 2008.
    .. [2] R. Guimerà, M. Sales-Pardo, L. A. N. Amaral, "Modularity from fluctuations in
       random graphs and complex networks", Phys. Rev. E 70, 025101, 2004.
    """
    w = _as_matrix(W, weight)
    codes = best_partition(w, seed=seed, resolution=resolution)
    return _modularity(w, codes, int(codes.max(initial=-1)) + 1, float(resolution))


def communities(W, *, seed: int, resolution: float = 1.0, weight: str | None = "weight"
                ) -> int:
    """Number of Leiden communities (isolated members count as their own community).

    Examples
    --------
    >>> import networkx as nx
    >>> communities(nx.barbell_graph(3, 0), seed=1)
    2

    References
    ----------
    .. [1] V. D. Blondel et al., J. Stat. Mech. P10008, 2008.
    """
    return int(np.unique(best_partition(W, seed=seed, resolution=resolution,
                                        weight=weight)).size)


def community_group_ari(W, labels, *, seed: int, resolution: float = 1.0,
                        weight: str | None = "weight") -> float:
    r"""Adjusted Rand index between Leiden communities and the groups.

    .. math:: ARI = \frac{RI - E[RI]}{\max RI - E[RI]}

    over pairs of members (same/different community vs same/different group), via
    ``sklearn.metrics.adjusted_rand_score``. 1: communities are the groups; about 0: unrelated;
    bounded below by −1/2.

    Examples
    --------
    >>> import networkx as nx
    >>> community_group_ari(nx.barbell_graph(3, 0), ["a", "a", "a", "b", "b", "b"], seed=1)
    1.0

    References
    ----------
    .. [1] L. Hubert, P. Arabie, "Comparing partitions", J. Classification 2, 193-218, 1985.
    """
    codes, _ = normalise_labels(labels)
    found = best_partition(W, seed=seed, resolution=resolution, weight=weight)
    if found.shape[0] != codes.shape[0]:
        raise ValueError(f"labels: expected {found.shape[0]} labels (one per member), "
                         f"received {codes.shape[0]}; fix: align labels with the matrix")
    return float(adjusted_rand_score(codes, found))


_NAMES = ("best_modularity", "communities", "community_group_ari")


@register("louvain", _NAMES, bounds={"best_modularity": (-0.5, 1.0),
                                     "communities": (1.0, float("inf")),
                                     "community_group_ari": (-0.5, 1.0)},
          expensive=True, direction={"best_modularity": "higher",
                                     "community_group_ari": "higher"})
def _family(inp: PeriodInput) -> dict[str, MetricValue]:
    codes, k = normalise_labels(inp.labels)
    w = check_adjacency(inp.weights, n=codes.shape[0])
    if codes.shape[0] == 0:
        return {m: MetricValue.missing("no members in this period") for m in _NAMES}
    if w.sum() == 0:
        return {m: MetricValue.missing("the graph has no edges: no community structure")
                for m in _NAMES}
    found = _leiden(w, int(inp.seed), 1.0)
    c = int(found.max()) + 1
    out = {"best_modularity": MetricValue(_modularity(w, found, c, 1.0)),
           "communities": MetricValue(float(c))}
    if k < 2:
        out["community_group_ari"] = MetricValue.missing(
            "only one group: nothing to compare the communities with")
    else:
        out["community_group_ari"] = MetricValue(float(adjusted_rand_score(codes, found)))
    return out
