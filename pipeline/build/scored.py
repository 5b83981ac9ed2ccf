"""Scored ballots: each ballot's scale and the scored answers beside the vote matrix, and the
answers of each kind as the arrays agreement and the period filter read.

The kind of answer decides when two answers are alike and how far apart they are (see
:mod:`blocwatch.metrics.agreement.scales`):

* binary — same position or not (as for every yes/no body);
* categorical — same option or not; any two different options are equally far apart;
* ordinal, continuous — ``1 − |a − b| / range``, the answers placed on [0, 1] by the ballot's
  declared range (or, for amounts without one, its spread: largest minus smallest answer).

Abstentions follow ``--abstain-as-position`` on binary and categorical ballots (an extra
option); a score ballot has no place for them on its scale, so there they count as absences.

How agreement combines the kinds is in :mod:`blocwatch.pipeline.build.scored_agreement`; which
ballots and members a period keeps, in :mod:`blocwatch.pipeline.build.filters`.
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
from dataclasses import dataclass

import numpy as np
import pandas as pd

from blocwatch.metrics.registry import ABSTAIN, MISSING, NO, YES
from blocwatch.pipeline.store.ballots import period_scale_ballots, period_scores
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
    ballots = period_scale_ballots(store, body, period.start, period.end)
    if ballots.empty or (ballots["scale"] == "binary").all():
        return None
    spread, answers = period_scores(store, body, period.start, period.end)
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


def kind_columns(sm: ScaleMatrix | None, b: int) -> dict[str, np.ndarray]:
    """Per kind: a boolean mask of the ballots (columns) of that kind."""
    kinds = np.full(b, "binary", dtype=object) if sm is None else sm.kinds
    return {k: np.asarray(kinds == k) for k in ("binary", "categorical", "ordinal",
                                                 "continuous")}


def answer_sets(votes: np.ndarray, sm: ScaleMatrix | None, abstain: bool) -> dict:
    """Per kind: ``(columns, array)`` — level codes (binary, categorical) or positions."""
    cols = kind_columns(sm, votes.shape[1])
    out = {"binary": (cols["binary"], _binary_codes(votes[:, cols["binary"]], abstain))}
    if sm is not None:
        out["categorical"] = (cols["categorical"],
                              _category_codes(votes, sm, cols["categorical"], abstain))
        pos = sm.positions()
        for k in ("ordinal", "continuous"):
            out[k] = (cols[k], pos[:, cols[k]])
    return {k: v for k, v in out.items() if v[0].any()}
