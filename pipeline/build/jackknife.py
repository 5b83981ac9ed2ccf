"""Delete-one-member jackknife of a small body's period metrics.

Resampling ballots shows how much a figure depends on the agenda; in a body of a handful of
members it depends as much on who sits on it, which ballots cannot show. Leaving out one member
at a time and recomputing every metric gives that spread (Efron & Tibshirani 1993, ch. 11);
:func:`blocwatch.metrics.uncertainty.intervals.metric_interval` widens the ballot interval by it.
"""

from __future__ import annotations

import numpy as np

from blocwatch.metrics import compute_all
from blocwatch.metrics.space.positions import with_ideal_points
from blocwatch.metrics.uncertainty.intervals import SMALL_BODY
from blocwatch.metrics.uncertainty.resampling import jackknife_se
from blocwatch.pipeline.build.matrices import VoteMatrix

__all__ = ["member_jackknife_se"]


def member_jackknife_se(vm: VoteMatrix, labels: np.ndarray, opts, seed: int,
                        names: list[str], families: list[str] | None,
                        period_input) -> dict[str, float]:
    """Each metric's delete-one-member jackknife standard error, for bodies of fewer than
    :data:`~blocwatch.metrics.uncertainty.intervals.SMALL_BODY` members (empty otherwise: larger
    bodies keep the ballot interval alone).

    ``period_input(votes, labels, opts, seed, scales=...)`` builds the metric input of the
    reduced body (passed in by the caller, :mod:`blocwatch.pipeline.build.compute`). A metric
    with no value without some member counts only the members it has a value without.
    """
    n = int(vm.votes.shape[0])
    if n >= SMALL_BODY or n < 3 or opts.bootstrap <= 0:
        return {}
    values = np.full((n, len(names)), np.nan)
    for i in range(n):
        keep = np.arange(n) != i
        part = vm.subset(keep)  # the member's scored answers leave with them
        inp = with_ideal_points(period_input(part.votes, labels[keep], opts, seed,
                                             scales=part.scales))
        got = compute_all(inp, families=families)
        values[i] = [got[m].value if m in got and got[m].ok else np.nan for m in names]
    return {m: jackknife_se(values[:, j]) for j, m in enumerate(names)}
