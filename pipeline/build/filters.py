"""The period filter: which ballots and members a period's numbers are computed from.

One rule for every kind of ballot, yes/no and scored alike:

1. A ballot is kept when at least two members answered it and, as configured, its *minority
   share* — the answers other than the most common one, over all its answers — is above 0
   (``drop_unanimous``, default on: each unanimous ballot adds the same amount to every pair
   and pulls modularity toward 0) and at least ``lopsided`` (default 0, off).
2. Then a member is kept when they answered at least ``min_share_cast`` of the kept ballots
   (and at least one); the others are left out of the period and counted in ``dropped``.

What counts as an answer, and when two answers are "the same": yes and no (and abstain, with
``abstain_as_position``) on yes/no ballots; the option chosen on categorical ballots; the
score on ordinal and continuous ballots, where an abstention has no place on the scale. The
answers of each kind come from :func:`blocwatch.pipeline.build.scored.answer_sets`.
"""

from __future__ import annotations

import numpy as np

from blocwatch.metrics.registry import MISSING
from blocwatch.pipeline.build.matrices import VoteMatrix
from blocwatch.pipeline.build.scored import answer_sets
from blocwatch.pipeline.options import AgreementOptions


def answer_counts(x: np.ndarray) -> tuple[np.ndarray, np.ndarray]:
    """Per ballot (column): the number of answers and the count of the most common one.

    ``x`` holds level codes (int, −1 for no answer) or positions (float, NaN for none).

    >>> total, top = answer_counts(np.array([[0, 1], [0, -1], [1, -1]]))
    >>> total.tolist(), top.tolist()
    ([3, 1], [2, 1])
    """
    if np.issubdtype(x.dtype, np.integer):
        valid = x >= 0
        total = valid.sum(axis=0)
        levels = int(x.max()) + 1 if x.size else 0
        if levels == 0:
            return total, np.zeros_like(total)
        # a few levels (yes/no, options): one comparison per level beats sorting
        top = np.max([(x == c).sum(axis=0) for c in range(levels)], axis=0)
        return total, top
    valid = ~np.isnan(x)
    total = valid.sum(axis=0)
    if x.shape[0] == 0:
        return total, np.zeros_like(total)
    s = np.sort(np.where(valid, x, np.inf), axis=0)  # answers first, no-answers last
    new = np.vstack([np.ones((1, s.shape[1]), bool), s[1:] != s[:-1]])
    run = np.cumsum(new, axis=0) + (np.arange(s.shape[1]) * (s.shape[0] + 1))[None, :]
    counts = np.bincount(run[np.isfinite(s)], minlength=s.shape[1] * (s.shape[0] + 1))
    return total, counts.reshape(s.shape[1], s.shape[0] + 1).max(axis=1)


def kept_ballots(total: np.ndarray, top: np.ndarray, opts: AgreementOptions) -> np.ndarray:
    """Rule 1 on answer counts: two or more answers, not unanimous / lopsided as configured.

    >>> kept_ballots(np.array([4, 4, 1]), np.array([4, 3, 1]), AgreementOptions()).tolist()
    [False, True, False]
    """
    total = np.asarray(total, dtype=np.float64)
    minority = np.divide(total - top, total, out=np.zeros_like(total), where=total > 0)
    keep = total >= 2
    if opts.drop_unanimous:
        keep &= minority > 0
    if opts.lopsided > 0:
        keep &= minority >= opts.lopsided
    return keep


def ballot_mask(votes: np.ndarray, scales, opts: AgreementOptions) -> np.ndarray:
    """Rule 1 for every ballot of a period (``scales``: its ScaleMatrix, None if yes/no)."""
    keep = np.zeros(votes.shape[1], dtype=bool)
    for cols, x in answer_sets(votes, scales, opts.abstain_as_position).values():
        keep[cols] = kept_ballots(*answer_counts(x), opts)
    return keep


def member_mask(votes: np.ndarray, min_share_cast: float) -> np.ndarray:
    """Rule 2: members who answered at least ``min_share_cast`` of the ballots (at least one)."""
    needed = max(1, int(np.ceil(min_share_cast * votes.shape[1])))
    return (votes != MISSING).sum(axis=1) >= needed


def filter_period(vm: VoteMatrix, opts: AgreementOptions) -> VoteMatrix:
    """The period as its numbers see it: rule 1 on the ballots, then rule 2 on the members."""
    vm = vm.subset(ballots=ballot_mask(vm.votes, vm.scales, opts))
    keep = member_mask(vm.votes, opts.min_share_cast)
    # Who was left out, with their counts (stored as members rows: build/left_out.py).
    cast = (vm.votes != MISSING).sum(axis=1)
    needed = max(1, int(np.ceil(opts.min_share_cast * vm.votes.shape[1])))
    left = tuple((str(vm.member_ids[i]), str(vm.groups[i]), int(cast[i]), needed,
                  "min_share_cast") for i in np.flatnonzero(~keep))
    return vm.subset(members=keep, dropped=int((~keep).sum()), left_out=left)
