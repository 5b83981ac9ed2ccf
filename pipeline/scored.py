"""Periods with scored ballots: their answers beside the vote matrix, filters, and agreement.

The kind of answer decides the distance (see :mod:`blocwatch.metrics.scales`):

* binary — same position or not (as for every yes/no body);
* categorical — same option or not; any two different options are equally far apart;
* ordinal, continuous — ``1 − |a − b| / range``, the answers placed on [0, 1] by the ballot's
  declared range (or, for amounts without one, its spread: largest minus smallest answer).

**Combination rule** for a body mixing kinds (``--agreement match``, the default): the mean,
over the ballots both members answered, of each ballot's agreement in [0, 1]:
``a_ij = Σ_b w_b s_b(i, j) / Σ_b w_b``. On a yes/no body this is the usual share of shared
ballots cast alike, so nothing changes there.

**Chance-corrected** (``--agreement kappa``; ``kappa-quadratic``): per kind, Cohen's kappa
(binary, categorical: unweighted; ordinal: linear or quadratic weights) and, for amounts,
Pearson's r; a body mixing kinds takes their mean weighted by the shared ballots of each kind.
These are signed, and negative weights break modularity's null model (METHODS §1), so the
graph gets **max(κ, 0)**: chance-level and worse-than-chance pairs get no tie, and 0 keeps its
meaning "no affinity beyond chance". (κ + 1)/2 was rejected: it gives every chance-level pair
weight ½ and brings back the compression of Q that dense graphs suffer.

Abstentions follow ``--abstain-as-position`` on binary and categorical ballots (an extra
option); a score ballot has no place for them on its scale, so there they count as absences.
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
from dataclasses import dataclass

import numpy as np
import pandas as pd

from blocwatch.metrics.kappa import pairwise_kappa
from blocwatch.metrics.registry import ABSTAIN, MISSING, NO, YES, PeriodInput
from blocwatch.metrics.scales import distance_counts, match_counts, nonnegative, pairwise_pearson
from blocwatch.pipeline.agreement import agreement_counts, ballot_mask
from blocwatch.pipeline.graphs import build_graph, parse_rule
from blocwatch.pipeline.scales import ALPHA_LEVEL
from blocwatch.pipeline.store import Store

MEASURES = ("match", "kappa", "kappa-quadratic")


@dataclass(frozen=True)
class ScaleMatrix:
    """The scale of each ballot of a :class:`~blocwatch.pipeline.matrices.VoteMatrix` and the
    scored answers, aligned with its rows and columns."""

    kinds: np.ndarray  # (b,) str
    low: np.ndarray  # (b,) float, NaN unless ordinal/continuous
    high: np.ndarray  # (b,) float
    options: np.ndarray  # (b,) object: tuple of option labels (categorical), else ()
    scores: np.ndarray  # (n, b) float: number or option index; NaN where none / binary

    def subset(self, members=None, ballots=None) -> ScaleMatrix:
        m = slice(None) if members is None else members
        b = slice(None) if ballots is None else ballots
        return ScaleMatrix(self.kinds[b], self.low[b], self.high[b], self.options[b],
                           self.scores[m][:, b])

    def digest(self) -> bytes:
        """Bytes that change whenever a scale or a scored answer does (for fingerprints)."""
        h = hashlib.sha256(json.dumps([list(map(str, self.kinds)), self.low.tolist(),
                                       self.high.tolist(), [list(o) for o in self.options]],
                                      default=str).encode())
        h.update(np.ascontiguousarray(self.scores).tobytes())
        return h.digest()

    def positions(self) -> np.ndarray:
        """Answers on [0, 1] by each ballot's range (ordinal, continuous columns; else NaN)."""
        span = self.high - self.low
        with np.errstate(invalid="ignore", divide="ignore"):
            u = np.where(span > 0, (self.scores - self.low) / np.where(span > 0, span, 1), 0.0)
        ranged = np.isin(self.kinds, ("ordinal", "continuous"))
        return np.where(ranged[None, :] & ~np.isnan(self.scores), np.clip(u, 0, 1), np.nan)


def load_scales(store: Store, body: str, period, member_ids, ballot_ids) -> ScaleMatrix | None:
    """The period's scales and scored answers, or None when every ballot is yes/no."""
    params = [body, period.start, period.end]
    ballots = store.df(
        """SELECT ballot_id, scale, scale_min, scale_max, options FROM ballots
           WHERE body = ? AND held_on BETWEEN ? AND ?""", params)
    if ballots.empty or (ballots["scale"] == "binary").all():
        return None
    spread = store.df(
        """SELECT v.ballot_id, min(v.score) AS lo, max(v.score) AS hi FROM votes v
           JOIN ballots b ON b.body = v.body AND b.ballot_id = v.ballot_id
           WHERE v.body = ? AND b.held_on BETWEEN ? AND ? AND b.scale = 'continuous'
             AND v.score IS NOT NULL GROUP BY v.ballot_id""", params)
    answers = store.df(
        """SELECT v.member_id, v.ballot_id, v.score FROM votes v
           JOIN ballots b ON b.body = v.body AND b.ballot_id = v.ballot_id
           WHERE v.body = ? AND b.held_on BETWEEN ? AND ? AND b.scale <> 'binary'
             AND v.score IS NOT NULL AND v.choice NOT IN ('abstain', 'absent')""", params)
    info = ballots.set_index("ballot_id").reindex(list(ballot_ids))
    lo = info["scale_min"].astype(float).to_numpy()
    hi = info["scale_max"].astype(float).to_numpy()
    sp = spread.set_index("ballot_id").reindex(list(ballot_ids))
    no_range = np.isnan(lo) & (info["scale"] == "continuous").to_numpy()
    lo = np.where(no_range, sp["lo"].astype(float).to_numpy(), lo)
    hi = np.where(no_range, sp["hi"].astype(float).to_numpy(), hi)
    options = np.empty(len(ballot_ids), dtype=object)
    options[:] = [tuple(json.loads(o)) if isinstance(o, str) and o else ()
                  for o in info["options"]]
    scores = np.full((len(member_ids), len(ballot_ids)), np.nan)
    i = np.asarray(_index(member_ids).get_indexer(answers["member_id"]))
    j = np.asarray(_index(ballot_ids).get_indexer(answers["ballot_id"]))
    ok = (i >= 0) & (j >= 0)
    scores[i[ok], j[ok]] = answers["score"].to_numpy(dtype=float)[ok]
    kinds = info["scale"].fillna("binary").to_numpy(dtype=object)
    return ScaleMatrix(kinds, lo, hi, options, scores)


def _index(values) -> pd.Index:
    return pd.Index(list(values))


def attach_scales(store: Store, vm):
    """``vm`` with its scales, and each scored answer marked as cast (YES) in ``vm.votes`` so
    attendance counts see it; unchanged for a yes/no period."""
    scales = load_scales(store, vm.body, vm.period, vm.member_ids, vm.ballot_ids)
    if scales is None:
        return vm
    scored = scales.kinds != "binary"
    votes = vm.votes.copy()
    answered = ~np.isnan(scales.scores) & scored[None, :]
    votes[:, scored] = np.where(answered[:, scored], YES,
                                np.where(votes[:, scored] == ABSTAIN, ABSTAIN, MISSING))
    return dataclasses.replace(vm, votes=votes, scales=scales)


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

    ``opts`` is the :class:`~blocwatch.pipeline.agreement.AgreementOptions`.
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


# -- filters --------------------------------------------------------------------------------------

def _mode_share(x: np.ndarray, missing) -> tuple[np.ndarray, np.ndarray]:
    """Per column: number of answers and the count of the most common one (vectorised)."""
    valid = ~np.isnan(x) if missing is None else (x != missing)
    v = np.where(valid, x, np.inf).astype(np.float64)
    s = np.sort(v, axis=0)
    n = valid.sum(axis=0)
    if s.shape[0] == 0:
        return n, np.zeros_like(n)
    new = np.vstack([np.ones((1, s.shape[1]), bool), s[1:] != s[:-1]])
    run = np.cumsum(new, axis=0)
    idx = run + (np.arange(s.shape[1]) * (s.shape[0] + 1))[None, :]
    counts = np.bincount(idx[np.isfinite(s)], minlength=s.shape[1] * (s.shape[0] + 1))
    top = counts.reshape(s.shape[1], s.shape[0] + 1).max(axis=1)
    return n, top


def scored_ballot_mask(vm, opts) -> np.ndarray:
    """Ballots kept: two or more answers, not unanimous / lopsided (same rule as yes/no)."""
    sm = vm.scales
    keep = np.ones(vm.votes.shape[1], dtype=bool)
    binary = sm.kinds == "binary"
    if binary.any():
        keep[binary] = ballot_mask(vm.votes[:, binary], opts)
    for kind, (cols, x) in answer_sets(vm.votes, sm, opts.abstain_as_position).items():
        if kind == "binary":
            continue
        total, top = _mode_share(x.astype(np.float64), -1 if kind == "categorical" else None)
        minority = np.where(total > 0, (total - top) / np.maximum(total, 1), 0.0)
        k = total >= 2
        if opts.drop_unanimous:
            k &= minority > 0
        if opts.lopsided > 0:
            k &= minority >= opts.lopsided
        keep[cols] = k
    return keep


def filter_scored(vm, opts):
    """Drop unanimous/lopsided ballots, then members who answered too few of the rest."""
    vm = vm.subset(ballots=scored_ballot_mask(vm, opts))
    cast = (vm.votes != MISSING).sum(axis=1)
    needed = max(1, int(np.ceil(opts.min_share_cast * vm.votes.shape[1])))
    keep = cast >= needed
    return vm.subset(members=keep, dropped=int((~keep).sum()))
