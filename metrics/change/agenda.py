"""The agenda's share of a change: topic mixes, direct standardisation, resampling within topics.

A period's agreement between two members mixes what they do on each kind of question with how
many questions of each kind the agenda held. Direct standardisation (the demographers' method for
comparing rates across populations of different age make-up) holds the mix fixed: each period's
pair agreement becomes the mean of its per-topic agreements weighted by one reference mix, so a
rise that comes only from the agenda shifting toward divisive topics leaves the standardised
series flat.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

__all__ = ["standardise_agreement", "stratified_ballot_weights", "topic_mix"]


def topic_mix(topics) -> dict[str, float]:
    """Share of ballots per topic, sorted by topic name; shares sum to 1.

    >>> topic_mix(["b", "a", "b", "b"])
    {'a': 0.25, 'b': 0.75}
    """
    values = pd.Series(np.asarray(topics, dtype=object)).astype(str)
    if values.empty:
        raise ValueError("topic_mix: expected at least one ballot, received none; pass the "
                         "ballots' topic column")
    counts = values.value_counts().sort_index()
    return {str(t): float(c / counts.sum()) for t, c in counts.items()}


def standardise_agreement(per_topic: np.ndarray, reference: np.ndarray) -> np.ndarray:
    r"""Directly standardised pair agreement from per-topic agreement matrices.

    .. math:: A^{std}_{ij} = \sum_{t \in K_{ij}} w_t A^{(t)}_{ij} \Big/ \sum_{t \in K_{ij}} w_t

    K_ij: the topics on which pair (i, j) has an agreement value.

    A^(t) is the pair agreement on topic t's ballots alone (NaN where the pair shared too few of
    them), w the reference mix. Topics a pair has no value for drop out and the remaining
    weights are rescaled to sum to 1 (so a topic missing from a period spreads its weight over
    the others — a documented limit: the standardisation is then only partial). A pair with no
    topic known stays NaN. With one topic, or with w equal to the period's own mix and every
    pair sharing every ballot, the result equals the plain agreement (tested).

    Parameters
    ----------
    per_topic : (T, n, n) float, NaN where unknown.
    reference : (T,) non-negative weights (need not sum to 1).

    Returns
    -------
    (n, n) float.

    Examples
    --------
    >>> a = np.array([[[1.0, 0.2], [0.2, 1.0]], [[1.0, 0.8], [0.8, 1.0]]])
    >>> float(standardise_agreement(a, np.array([0.5, 0.5]))[0, 1])
    0.5
    >>> round(float(standardise_agreement(a, np.array([0.9, 0.1]))[0, 1]), 6)
    0.26

    References
    ----------
    .. [1] J. L. Fleiss, B. Levin, M. C. Paik, *Statistical Methods for Rates and Proportions*,
       3rd ed., Wiley 2003, ch. 19 "The standardization of rates" (direct standardisation).
    .. [2] E. M. Kitagawa, "Components of a difference between two rates", Journal of the
       American Statistical Association 50(272), 1168-1194, 1955.
    """
    a = np.asarray(per_topic, dtype=float)
    w = np.asarray(reference, dtype=float)
    if a.ndim != 3 or a.shape[1] != a.shape[2] or w.shape != (a.shape[0],):
        raise ValueError(f"standardise_agreement: expected (T, n, n) agreement and (T,) "
                         f"weights, received {a.shape} and {w.shape}; stack one matrix per topic")
    if (w < 0).any() or not np.isfinite(w).all():
        raise ValueError("standardise_agreement: reference weights must be finite and >= 0; "
                         "pass topic shares")
    if w.sum() > 0:  # shares first, so one topic's weight is exactly 1 (result = its matrix)
        w = w / w.sum()
    known = np.isfinite(a)
    weight = np.where(known, w[:, None, None], 0.0)
    total = weight.sum(axis=0)
    num = np.where(known, a, 0.0) * weight
    with np.errstate(invalid="ignore", divide="ignore"):
        out = num.sum(axis=0) / total
    out[total <= 0] = np.nan
    return out


def stratified_ballot_weights(strata, n_boot: int, *, seed) -> np.ndarray:
    """Bootstrap count weights that resample ballots within each stratum (topic).

    Each replicate draws, for every topic with n_t ballots, n_t ballots with replacement from
    that topic alone, so every replicate keeps the period's topic mix exactly and only the
    within-topic variation enters the interval (stratified bootstrap).

    Returns
    -------
    (n_boot, b) int64 counts; in every row each stratum's counts sum to its size.

    Examples
    --------
    >>> w = stratified_ballot_weights(["a", "a", "b", "b", "b"], 4, seed=1)
    >>> w[:, :2].sum(axis=1).tolist(), w[:, 2:].sum(axis=1).tolist()
    ([2, 2, 2, 2], [3, 3, 3, 3])

    References
    ----------
    .. [1] B. Efron, R. J. Tibshirani, *An Introduction to the Bootstrap*, Chapman & Hall 1993
       (the two-sample bootstrap: each sample is resampled on its own; here one per topic).
    """
    labels = np.asarray(strata, dtype=object).astype(str)
    if int(n_boot) != n_boot or n_boot < 0:
        raise ValueError(f"stratified_ballot_weights: n_boot must be a count >= 0, received "
                         f"{n_boot!r}; pass the number of replicates")
    rng = np.random.default_rng(seed)
    out = np.zeros((int(n_boot), labels.size), dtype=np.int64)
    for topic in sorted(set(labels.tolist())):
        cols = np.flatnonzero(labels == topic)
        out[:, cols] = rng.multinomial(cols.size, np.full(cols.size, 1.0 / cols.size),
                                       size=int(n_boot))
    return out
