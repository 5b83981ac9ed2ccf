"""Graph rules: from an agreement matrix to the weighted graph and the edge set metrics use.

Rule specs (``--rule``, parsed by :func:`blocwatch.pipeline.options.parse_rule`):

``weighted`` (default)
    every pair with an agreement value is an edge weighted by its agreement (Waugh et al.
    2009). The edge set for edge-count measures (cross-group share, E–I, bridges) is the one
    the ``equal-likelihood`` rule gives, since on a complete graph every pair is an edge.
``threshold:X``
    an edge where agreement ≥ X (0 < X ≤ 1), weighted by its agreement.
``equal-likelihood``
    Andris et al. (2015): an edge where agreement lies above the level at which a pair is as
    likely to be a same-group pair as a cross-group pair; see :func:`equal_likelihood_threshold`.
``backbone:ALPHA``
    the disparity filter of Serrano, Boguñá & Vespignani (2009): an edge where the pair's
    agreement is a larger share of one member's total agreement than chance gives at
    significance ALPHA (:func:`blocwatch.pipeline.build.backbone.disparity_backbone`), weighted
    by its agreement. A local rule: each member keeps its few outstanding partners.

The network pictures draw a period's edge set (the strongest first, up to the stored budget),
so what a picture shows is what the edge-count measures counted.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import networkx as nx
import numpy as np

from blocwatch.pipeline.build.backbone import disparity_backbone
from blocwatch.pipeline.options import Rule


@functools.lru_cache(maxsize=16)
def _upper_pairs(n: int) -> tuple[np.ndarray, np.ndarray]:
    """Pairs i < j of n members (every replicate and permutation of a period asks again)."""
    i, j = np.triu_indices(n, k=1)
    i.flags.writeable = j.flags.writeable = False
    return i, j


def equal_likelihood_threshold(agreement: np.ndarray, labels: np.ndarray) -> float:
    """The agreement level above which a pair is more likely same-group than cross-group.

    Andris et al. (2015) draw an edge above the agreement "where any pair exhibiting this
    number of agreements is equally likely to be" a same-group or a cross-group pair. We read
    "equally likely" with the raw pair counts (not per-class densities): the crossing of the two
    count histograms, found without binning as the cut t that minimises

        #{cross-group pairs with a > t} + #{same-group pairs with a ≤ t},

    the number of pairs the cut puts on the wrong side (the Bayes boundary with the classes'
    own frequencies). Ties are broken by the lowest such t; pairs without an agreement value
    are ignored. Returns NaN when either kind of pair is absent.

    >>> a = np.array([[1, .9, .2, .3], [.9, 1, .1, .2], [.2, .1, 1, .8], [.3, .2, .8, 1]])
    >>> equal_likelihood_threshold(a, np.array([0, 0, 1, 1]))
    0.3

    References
    ----------
    Andris C, Lee D, Hamilton MJ, Martino M, Gunning CE, Selden JA (2015). The rise of
    partisanship and super-cooperators in the U.S. House of Representatives. PLOS ONE 10(4):
    e0123507.
    """
    iu = _upper_pairs(len(labels))
    values = agreement[iu]
    same_group = (labels[iu[0]] == labels[iu[1]])
    ok = ~np.isnan(values)
    values, same_group = values[ok], same_group[ok]
    if not same_group.any() or same_group.all():
        return float("nan")
    order = np.argsort(values, kind="stable")
    v, s = values[order], same_group[order]
    # Candidate cuts: below everything, then at each distinct value (pairs ≤ t are "cross").
    last_of_value = np.r_[v[1:] != v[:-1], True]
    same_below = np.cumsum(s)[last_of_value]
    cross_below = np.cumsum(~s)[last_of_value]
    cross_above = (~s).sum() - cross_below
    errors = np.r_[(~s).sum(), cross_above + same_below]
    cuts = np.r_[v[0] - 1e-12, v[last_of_value]]
    return float(cuts[int(np.argmin(errors))])


@dataclass(frozen=True)
class PeriodGraph:
    weights: np.ndarray  # n × n, >= 0, zero diagonal
    edges: np.ndarray  # n × n bool, symmetric, zero diagonal
    threshold: float  # the agreement level edges lie above (NaN if undefined)


def build_graph(agreement: np.ndarray, labels: np.ndarray, rule: Rule) -> PeriodGraph:
    """Apply ``rule`` to an agreement matrix (NaN = no value for that pair)."""
    a = np.nan_to_num(agreement, nan=0.0)
    has_value = ~np.isnan(agreement)
    np.fill_diagonal(has_value, False)
    if rule.kind == "threshold":
        threshold = float(rule.level)
        edges = has_value & (a >= threshold)
    elif rule.kind == "backbone":
        threshold = float("nan")  # a local rule: no single agreement level
        edges = has_value & disparity_backbone(np.where(has_value, a, 0.0), float(rule.level))
    else:
        threshold = equal_likelihood_threshold(agreement, labels)
        edges = has_value & (a > threshold) if np.isfinite(threshold) \
            else np.zeros_like(has_value)
    weights = np.where(has_value if rule.kind == "weighted" else edges, a, 0.0)
    return PeriodGraph(weights, edges, threshold)


def to_networkx(weights: np.ndarray, names: list[str] | None = None) -> nx.Graph:
    """The weighted graph as networkx (edge attribute ``weight``), for users' own analysis."""
    g = nx.from_numpy_array(weights)
    if names is not None:
        g = nx.relabel_nodes(g, dict(enumerate(names)))
    return g
