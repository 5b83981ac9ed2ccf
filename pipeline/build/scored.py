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

The agreement itself is computed in :mod:`blocwatch.pipeline.build.scored_agreement`.
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
from dataclasses import dataclass

import numpy as np
import pandas as pd

from blocwatch.metrics.registry import ABSTAIN, MISSING, YES
from blocwatch.pipeline.build.agreement import ballot_mask
from blocwatch.pipeline.build.scored_agreement import (  # noqa: F401  (the period-side API)
    MEASURES,
    answer_sets,
    scored_agreement,
    scored_period_input,
)
from blocwatch.pipeline.store.database import Store


@dataclass(frozen=True)
class ScaleMatrix:
    """The scale of each ballot of a :class:`~blocwatch.pipeline.build.matrices.VoteMatrix` and the
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
