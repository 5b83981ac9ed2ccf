"""Agreement on periods with scored ballots (or the chance-corrected measures): the
combination rule, kappa, and the :class:`PeriodInput` the metrics read.

**Combination rule** for a body mixing kinds (``--agreement match``, the default): the mean,
over the ballots both members answered, of each ballot's agreement in [0, 1]:
``a_ij = Σ_b w_b s_b(i, j) / Σ_b w_b``. On a yes/no body this is the usual share of shared
ballots cast alike, so nothing changes there.

**Chance-corrected** (``--agreement kappa``; ``kappa-quadratic``): per kind, Cohen's kappa
(binary, categorical: unweighted; ordinal: linear or quadratic weights) and, for amounts,
Pearson's r; a body mixing kinds takes their mean weighted by the shared ballots of each kind.
These are signed, and negative weights break modularity's degree null model (see
:func:`blocwatch.metrics.graph.modularity.group_modularity`), so the
graph gets **max(κ, 0)**: chance-level and worse-than-chance pairs get no tie, and 0 keeps its
meaning "no affinity beyond chance". (κ + 1)/2 was rejected: it gives every chance-level pair
weight ½ and brings back the compression of Q that dense graphs suffer.

``sm`` below is a :class:`~blocwatch.pipeline.build.scored.ScaleMatrix` (or None for a yes/no
period); the answers of each kind come from :func:`~blocwatch.pipeline.build.scored.answer_sets`.
"""

from __future__ import annotations

import numpy as np

from blocwatch.metrics.agreement.kappa import pairwise_kappa
from blocwatch.metrics.agreement.scales import (
    distance_counts,
    match_counts,
    nonnegative,
    pairwise_pearson,
    ratio_matrix,
)
from blocwatch.metrics.registry import PeriodInput
from blocwatch.pipeline.build.agreement import agreement_counts
from blocwatch.pipeline.build.graphs import build_graph
from blocwatch.pipeline.build.scored import answer_sets, kind_columns
from blocwatch.pipeline.options import AGREEMENT_MEASURES, parse_rule
from blocwatch.pipeline.scales import ALPHA_LEVEL

# -- agreement ------------------------------------------------------------------------------------

def _w(weights, cols):
    return None if weights is None else np.asarray(weights, dtype=np.float64)[cols]


def match_sums(votes, sm, *, abstain: bool = False, weights=None):
    """``(Σ_b w_b s_b(i, j), Σ_b w_b)`` over shared ballots, summed over the kinds."""
    n = votes.shape[0]
    num, shared = np.zeros((n, n)), np.zeros((n, n))
    for kind, (cols, x) in answer_sets(votes, sm, abstain).items():
        if kind == "binary":  # the yes/no products, exactly as for a yes/no body
            same, both = agreement_counts(votes[:, cols], weights=_w(weights, cols),
                                          abstain_as_position=abstain)
            same, both = same.astype(np.float64), both.astype(np.float64)
        elif kind == "categorical":
            same, both = match_counts(x, ballot_weights=_w(weights, cols))
        else:
            dist, both = distance_counts(x, ballot_weights=_w(weights, cols))
            same = both - dist
        num += same
        shared += both
    return num, shared


def kappa_sums(votes, sm, *, abstain: bool = False, weights=None, ordinal: str = "linear"):
    """``(Σ_kind shared_kind·κ_kind, Σ_kind shared_kind)`` over kinds where κ is defined."""
    n = votes.shape[0]
    num, shared = np.zeros((n, n)), np.zeros((n, n))
    for kind, (cols, x) in answer_sets(votes, sm, abstain).items():
        w = _w(weights, cols)
        if kind in ("binary", "categorical"):
            k = pairwise_kappa(x, ballot_weights=w)
            cast = (x >= 0).astype(np.float64)
        elif kind == "ordinal":
            levels = np.unique(x[~np.isnan(x)])
            codes = np.where(np.isnan(x), -1, np.searchsorted(levels, np.nan_to_num(x)))
            k = pairwise_kappa(codes, weighting=ordinal, level_values=levels, ballot_weights=w)
            cast = (~np.isnan(x)).astype(np.float64)
        else:
            k = pairwise_pearson(x, ballot_weights=w)
            cast = (~np.isnan(x)).astype(np.float64)
        both = (cast * (1.0 if w is None else w)) @ cast.T
        ok = np.isfinite(k)
        num += np.where(ok, k * both, 0.0)
        shared += np.where(ok, both, 0.0)
    return num, shared


def shared_counts(votes, sm, *, abstain: bool = False, weights=None) -> np.ndarray:
    """Σ_b w_b over the ballots both members answered, any kind."""
    n = votes.shape[0]
    shared = np.zeros((n, n))
    for cols, x in answer_sets(votes, sm, abstain).values():
        cast = (x >= 0) if np.issubdtype(x.dtype, np.integer) else ~np.isnan(x)
        cast = cast.astype(np.float64)
        w = _w(weights, cols)
        shared += (cast if w is None else cast * w) @ cast.T
    return shared


def scored_agreement(votes, sm, opts, *, weights=None) -> tuple[np.ndarray, np.ndarray]:
    """``(agreement, shared)``: the graph-ready agreement in [0, 1] (NaN where the pair
    shared fewer than ``min_shared`` ballots) and the shared-ballot counts.

    ``opts`` is the :class:`~blocwatch.pipeline.build.agreement.AgreementOptions`.
    """
    measure = getattr(opts, "measure", "match")
    abstain = opts.abstain_as_position
    if measure == "match":
        num, defined = match_sums(votes, sm, abstain=abstain, weights=weights)
        shared = defined
    elif measure in ("kappa", "kappa-quadratic"):
        ordinal = "quadratic" if measure == "kappa-quadratic" else "linear"
        num, defined = kappa_sums(votes, sm, abstain=abstain, weights=weights, ordinal=ordinal)
        shared = shared_counts(votes, sm, abstain=abstain, weights=weights)
    else:
        raise ValueError(f"agreement measure: expected one of {', '.join(AGREEMENT_MEASURES)}, "
                         f"received {measure!r}")
    out = ratio_matrix(num, defined, shared=shared, min_shared=max(opts.min_shared, 1))
    if measure != "match":
        out = nonnegative(out, how="clip")
        np.fill_diagonal(out, 1.0)
    return out, shared


def alpha_scores(votes, sm):
    """``(columns, answers, level)`` for Krippendorff's alpha: the period's most common
    scored kind (ties: categorical, ordinal, continuous) at its level of measurement; None
    when the period has no scored ballot."""
    if sm is None:
        return None
    counts = {k: int((sm.kinds == k).sum()) for k in ("categorical", "ordinal", "continuous")}
    kind = max(counts, key=lambda k: counts[k])
    if counts[kind] == 0:
        return None
    cols, x = answer_sets(votes, sm, False)[kind]
    if kind == "categorical":
        x = np.where(x >= 0, x.astype(np.float64), np.nan)
    return cols, x, ALPHA_LEVEL[kind]


def scored_period_input(votes, sm, labels, opts, seed: int, weights=None) -> PeriodInput:
    """:class:`PeriodInput` for a period with scored ballots (or the kappa measure).

    ``opts`` is the BuildOptions; ``weights`` bootstrap counts per ballot.
    """
    agreement, shared = scored_agreement(votes, sm, opts.agreement, weights=weights)
    graph = build_graph(agreement, labels, parse_rule(opts.rule))
    binary = kind_columns(sm, votes.shape[1])["binary"]
    # Yes/no ballots only, for the families that read votes; None when there are none (a
    # scored panel), so those families say the vote matrix is not available.
    yes_no = votes[:, binary] if binary.any() or not votes.shape[1] else None
    alpha = alpha_scores(votes, sm)
    scores, level = (None, None) if alpha is None else alpha[1:]
    if weights is not None:  # the resampled matrices, for the families that read them
        reps = np.asarray(weights, dtype=np.int64)
        yes_no = None if yes_no is None else np.repeat(yes_no, reps[binary], axis=1)
        if alpha is not None:
            scores = np.repeat(scores, reps[alpha[0]], axis=1)
    return PeriodInput(agreement=agreement, shared=np.rint(shared).astype(np.int64),
                       labels=labels, weights=graph.weights, edges=graph.edges, votes=yes_no,
                       seed=seed, scores=scores, score_level=level)
