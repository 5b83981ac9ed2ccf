"""Agreement on periods with scored ballots: per-kind answer arrays, the combination rule,
kappa, and the :class:`PeriodInput` the metrics read.

The rules themselves are stated in :mod:`blocwatch.pipeline.build.scored`. ``sm`` below is a
:class:`~blocwatch.pipeline.build.scored.ScaleMatrix` (or None for a yes/no period).
"""

from __future__ import annotations

from typing import TYPE_CHECKING

import numpy as np

from blocwatch.metrics.kappa import pairwise_kappa
from blocwatch.metrics.registry import ABSTAIN, NO, YES, PeriodInput
from blocwatch.metrics.scales import distance_counts, match_counts, nonnegative, pairwise_pearson
from blocwatch.pipeline.build.agreement import agreement_counts
from blocwatch.pipeline.build.graphs import build_graph
from blocwatch.pipeline.options import parse_rule
from blocwatch.pipeline.scales import ALPHA_LEVEL

if TYPE_CHECKING:  # scored imports this module; the type is for readers only
    from blocwatch.pipeline.build.scored import ScaleMatrix

MEASURES = ("match", "kappa", "kappa-quadratic")


# -- per-kind answer arrays ---------------------------------------------------------------------

def _binary_codes(votes: np.ndarray, abstain: bool) -> np.ndarray:
    codes = np.full(votes.shape, -1, dtype=np.int64)
    codes[votes == YES], codes[votes == NO] = 0, 1
    if abstain:
        codes[votes == ABSTAIN] = 2
    return codes


def _category_codes(votes: np.ndarray, sm: ScaleMatrix, cols: np.ndarray, abstain: bool
                    ) -> np.ndarray:
    """Option labels as shared codes across ballots (same label → same category)."""
    s = sm.scores[:, cols]
    labels = np.full(s.shape, "", dtype=object)
    for k, b in enumerate(np.flatnonzero(cols)):  # per ballot column, not per pair
        opts = np.array(sm.options[b] or ("",), dtype=object)
        have = ~np.isnan(s[:, k])
        labels[have, k] = opts[np.clip(s[have, k].astype(int), 0, len(opts) - 1)]
    if abstain:
        labels[(votes[:, cols] == ABSTAIN) & np.isnan(s)] = "\x00abstain"
    uniq, codes = np.unique(labels.astype(str), return_inverse=True)
    codes = codes.reshape(s.shape).astype(np.int64)
    blank = np.flatnonzero(uniq == "")
    if blank.size:
        codes = np.where(codes == blank[0], -1, codes - (codes > blank[0]))
    return codes


def _columns(sm: ScaleMatrix | None, b: int) -> dict[str, np.ndarray]:
    kinds = np.full(b, "binary", dtype=object) if sm is None else sm.kinds
    return {k: np.asarray(kinds == k) for k in ("binary", "categorical", "ordinal",
                                                 "continuous")}


def answer_sets(votes: np.ndarray, sm: ScaleMatrix | None, abstain: bool) -> dict:
    """Per kind: ``(columns, array)`` — level codes (binary, categorical) or positions."""
    cols = _columns(sm, votes.shape[1])
    out = {"binary": (cols["binary"], _binary_codes(votes[:, cols["binary"]], abstain))}
    if sm is not None:
        out["categorical"] = (cols["categorical"],
                              _category_codes(votes, sm, cols["categorical"], abstain))
        pos = sm.positions()
        for k in ("ordinal", "continuous"):
            out[k] = (cols[k], pos[:, cols[k]])
    return {k: v for k, v in out.items() if v[0].any()}


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
        raise ValueError(f"agreement measure: expected one of {', '.join(MEASURES)}, "
                         f"received {measure!r}")
    out = np.full(num.shape, np.nan)
    ok = (shared >= max(opts.min_shared, 1)) & (defined > 0)
    np.divide(num, defined, out=out, where=ok)
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
    binary = _columns(sm, votes.shape[1])["binary"]
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
