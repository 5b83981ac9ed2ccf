"""Member-level bridge scores: who carries the ties between groups?

Descriptive scores of voting patterns, never judgements of people: a member who agrees often
with another group may be a broker, a moderate, or simply absent on the divisive ballots.
All scores are one matrix product with the one-hot membership matrix H (``W @ H`` gives each
member's tie weight into every group), so no loop runs over members or pairs.
"""

from __future__ import annotations

import numpy as np

from blocwatch.metrics.graph.modularity import group_modularity
from blocwatch.metrics.validation import check_adjacency, check_square, normalise_labels, one_hot

__all__ = ["cross_tie_share", "participation_coefficient", "within_group_median",
           "super_cooperators", "leave_one_out_delta_q"]


def _graph(weights, labels) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    codes, k = normalise_labels(labels)
    w = check_adjacency(weights, n=codes.shape[0])
    return w, codes, one_hot(codes, k)


def _ratio(num: np.ndarray, den: np.ndarray) -> np.ndarray:
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(den > 0, num / np.where(den > 0, den, 1.0), np.nan)


def cross_tie_share(edges, labels) -> np.ndarray:
    """Per member: the share of its ties (or tie weight) that go to other groups.

    ``s_i = Σ_{j: g(j) ≠ g(i)} E_ij / Σ_j E_ij``; NaN for a member without ties.

    Parameters
    ----------
    edges : (n, n) symmetric, zero diagonal; bool edges or non-negative weights.
    labels : (n,) groups.

    Examples
    --------
    >>> e = [[0, 1, 1], [1, 0, 0], [1, 0, 0]]
    >>> cross_tie_share(e, [0, 0, 1]).tolist()
    [0.5, 0.0, 1.0]

    References
    ----------
    Krackhardt D, Stern RN (1988). Informal networks and organizational crises: an
    experimental simulation. Social Psychology Quarterly 51(2):123–140 (the member-level
    external/internal tie split behind the E–I index).
    """
    w, codes, h = _graph(edges, labels)
    degree = w.sum(axis=1)
    own = (w @ h)[np.arange(codes.shape[0]), codes]
    return _ratio(degree - own, degree)


def participation_coefficient(weights, labels) -> np.ndarray:
    """Participation coefficient per member: how evenly its tie weight spreads over groups.

    ``P_i = 1 − Σ_s (κ_is / k_i)²`` with κ_is the weight from i into group s and k_i its
    degree. 0 when all of i's weight stays in one group; 1 − 1/K when spread evenly over K
    groups. NaN for a member without ties.

    Examples
    --------
    >>> w = [[0, 1, 1], [1, 0, 0], [1, 0, 0]]
    >>> participation_coefficient(w, [0, 0, 1]).tolist()
    [0.5, 0.0, 0.0]

    References
    ----------
    Guimerà R, Amaral LAN (2005). Functional cartography of complex metabolic networks.
    Nature 433:895–900.
    """
    w, _, h = _graph(weights, labels)
    kappa = w @ h
    degree = kappa.sum(axis=1)
    return 1.0 - _ratio((kappa ** 2).sum(axis=1), degree ** 2)


def within_group_median(agreement, labels) -> float:
    """Median agreement over same-group pairs i ≠ j (NaN pairs ignored): the default cut-off
    of :func:`super_cooperators`. NaN when there is no same-group pair with a value.

    >>> within_group_median([[1, .9, .2], [.9, 1, .3], [.2, .3, 1]], [0, 0, 1])
    0.9
    """
    codes, _ = normalise_labels(labels)
    a = check_square(agreement, "agreement", n=codes.shape[0], allow_nan=True)
    iu = np.triu_indices(codes.shape[0], k=1)
    same = codes[iu[0]] == codes[iu[1]]
    values = a[iu][same]
    values = values[np.isfinite(values)]
    return float(np.median(values)) if values.size else float("nan")


def super_cooperators(agreement, labels, *, cutoff: float | None = None) -> np.ndarray:
    """Per member: the number of other-group members it agrees with at least ``cutoff``.

    ``c_i = #{j : g(j) ≠ g(i), a_ij ≥ cutoff}`` (NaN pairs never count). A member with many
    such partners is a "super-cooperator" in the sense of Andris et al. (2015), whose exact
    cut-off we do not reproduce. Ours, by default, is the period's median *same-group*
    agreement (:func:`within_group_median`): a cross-group partner is someone the member
    agrees with at least as often as a typical pair of colleagues inside a group. It moves
    with the period's overall level of agreement and does not depend on the graph rule.

    Parameters
    ----------
    agreement : (n, n) agreement shares, NaN where undefined.
    labels : (n,) groups.
    cutoff : float, keyword-only; None → the within-group median.

    Examples
    --------
    >>> a = [[1, .9, .8, .4], [.9, 1, .2, .1], [.8, .2, 1, .7], [.4, .1, .7, 1]]
    >>> super_cooperators(a, [0, 0, 1, 1]).tolist()  # cut-off = median(.9, .7) = .8
    [1, 0, 1, 0]

    References
    ----------
    Andris C, Lee D, Hamilton MJ, Martino M, Gunning CE, Selden JA (2015). The rise of
    partisanship and super-cooperators in the U.S. House of Representatives. PLOS ONE 10(4):
    e0123507.
    """
    codes, _ = normalise_labels(labels)
    a = check_square(agreement, "agreement", n=codes.shape[0], allow_nan=True)
    if cutoff is None:
        cutoff = within_group_median(a, codes)
        if not np.isfinite(cutoff):
            raise ValueError("super_cooperators: expected same-group pairs to set the default "
                             "cut-off, received none (every group has one member); pass "
                             "cutoff= explicitly")
    cross = codes[:, None] != codes[None, :]
    return (cross & np.isfinite(a) & (np.nan_to_num(a, nan=-np.inf) >= cutoff)).sum(axis=1)


def leave_one_out_delta_q(weights, labels, *, resolution: float = 1.0) -> np.ndarray:
    """Per member: the change in group modularity when that member is left out, ``Q₋ᵢ − Q``.

    Positive: the groups look more separate without i (i sits between them); negative: i
    strengthens its group's separation. All n values come from one closed-form update. With
    S = 2m, degrees k, κ = W·H (member-to-group weight), group degrees K = Hᵀk and within-group
    weights I_c = (HᵀWH)_cc, removing member i of group g gives (zero diagonal)

    ``S' = S − 2k_i``, ``K'_c = K_c − κ_ic − [c = g] k_i``, ``I'_c = I_c − [c = g] 2κ_ig``,
    ``Q₋ᵢ = (Σ_c I'_c − γ Σ_c K'_c² / S') / S'``.

    NaN where no edge is left without i (S' = 0).

    Examples
    --------
    Two triangles joined by the edge 2–3: leaving out an end of the bridge raises Q (hand-
    calculated: Q₋₂ = 3/8 against Q = 5/14), leaving out anyone else lowers it.

    >>> import networkx as nx
    >>> w = nx.to_numpy_array(nx.barbell_graph(3, 0))
    >>> leave_one_out_delta_q(w, [0, 0, 0, 1, 1, 1]).round(4).tolist()
    [-0.1371, -0.1371, 0.0179, 0.0179, -0.1371, -0.1371]

    References
    ----------
    Newman MEJ (2006). Modularity and community structure in networks. PNAS 103(23):8577–8582.
    Waugh AS, Pei L, Fowler JH, Mucha PJ, Porter MA (2009). Party polarization in Congress: a
    network science approach. arXiv:0907.3509 (members' contributions to modularity; this is
    a leave-one-out variant).
    """
    w, codes, h = _graph(weights, labels)
    n = codes.shape[0]
    base = group_modularity(w, codes, resolution=resolution)
    s = float(w.sum())
    degree = w.sum(axis=1)
    kappa = w @ h  # (n, k)
    own = h.astype(bool)
    group_degree = degree @ h  # (k,)
    inside = np.einsum("ic,ic->c", kappa, h)  # (k,)
    s_new = s - 2 * degree  # (n,)
    k_new = group_degree[None, :] - kappa - own * degree[:, None]
    inside_new = inside.sum() - 2 * kappa[np.arange(n), codes]
    with np.errstate(invalid="ignore", divide="ignore"):
        q_new = (inside_new - resolution * (k_new ** 2).sum(axis=1) / s_new) / s_new
    return np.where(s_new > 1e-12 * max(s, 1.0), q_new - base, np.nan)
