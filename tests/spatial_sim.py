"""Planted-truth roll calls for tests: a spatial voting model with two groups (own generator)."""

import numpy as np
from scipy import stats

from blocwatch.metrics.registry import ABSTAIN, MISSING, NO, YES


def spatial_votes(n=60, b=150, *, separation=2.0, spread=0.6, missing=0.1, abstain=0.02,
                  seed=0):
    """Own generator: two groups at ±separation/2, ballots with random cut points and
    discriminations, probit votes; some votes missing or abstentions."""
    rng = np.random.default_rng(seed)
    groups = np.repeat([0, 1], n // 2)
    x = rng.normal(np.where(groups == 0, -separation / 2, separation / 2), spread)
    return ballots_for(x, b, missing=missing, abstain=abstain, rng=rng), x, groups


def ballots_for(x, b, *, missing=0.1, abstain=0.02, rng):
    """``b`` fresh ballots for members at fixed positions ``x``: the planted truth of a body
    stays put while its agenda is redrawn (coverage of the large-sample value)."""
    x = np.asarray(x, dtype=np.float64)
    n = x.shape[0]
    alpha, beta = rng.normal(0, 1, b), rng.normal(0, 1.5, b)
    yes = rng.random((n, b)) < stats.norm.cdf(alpha + np.outer(x, beta))
    votes = np.where(yes, YES, NO).astype(np.int8)
    votes[rng.random((n, b)) < abstain] = ABSTAIN
    votes[rng.random((n, b)) < missing] = MISSING
    return votes
