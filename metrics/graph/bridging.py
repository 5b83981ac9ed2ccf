"""Bridging: does a member agree with other groups as much as with its own?

The score compares like with like: a member's mean agreement with members of other groups over
its mean agreement with the other members of its own group. It does not saturate (1 = no
preference for the own group; above 1 = closer to the others) and, unlike a share of ties,
does not reward a member for sitting in a small group. Members of a group with fewer than
:data:`MIN_GROUP_FOR_BRIDGING` members get no score: their own-group mean rests on one or two
pairs, and a lone member has none at all.

A member *bridges* only if its score lies above what random groups give: at most
:data:`BRIDGE_ALPHA` of the scores of every member over label permutations (sizes kept) reach
it (:func:`bridging_null_p`). :func:`bridge_ranks` ranks those members, ties sharing a rank.
"""

from __future__ import annotations

import numpy as np

from blocwatch.metrics.validation import check_square, normalise_labels, one_hot

__all__ = ["bridging_ratio", "bridging_null", "bridging_null_cut", "bridging_null_p",
           "bridge_ranks", "member_notes", "MIN_GROUP_FOR_BRIDGING", "BRIDGING_PERMUTATIONS",
           "BRIDGE_ALPHA"]

# A group needs this many members for its members' own-group mean (over the others) to rest
# on at least two pairs (our choice, documented in the README).
MIN_GROUP_FOR_BRIDGING = 3
# Label permutations behind the "bridges" cut (a fixed count: the cut is a 95 % quantile of
# n × this many scores, so it is stable well before the build's --permutations).
BRIDGING_PERMUTATIONS = 100
# A member is ranked as a bridge only when at most this share of random-group scores reach
# its own (the page's NULL_ALPHA reads the same stored p).
BRIDGE_ALPHA = 0.05


def _ratios(a0: np.ndarray, valid: np.ndarray, codes: np.ndarray, k: int,
            min_size: int) -> np.ndarray:
    """Ratios for one labelling; a0 = agreement with NaN → 0 and zero diagonal."""
    h = one_hot(codes, k)
    sums, counts = a0 @ h, valid @ h  # (n, k): agreement summed / pairs counted per group
    rows = np.arange(codes.shape[0])
    own_sum, own_n = sums[rows, codes], counts[rows, codes]
    other_sum, other_n = sums.sum(axis=1) - own_sum, counts.sum(axis=1) - own_n
    with np.errstate(invalid="ignore", divide="ignore"):
        ratio = (other_sum / other_n) / (own_sum / own_n)
    sizes = np.bincount(codes, minlength=k)
    ok = (sizes[codes] >= min_size) & (own_n > 0) & (other_n > 0) & (own_sum > 0)
    return np.where(ok, ratio, np.nan)


def _prepare(agreement, labels):
    codes, k = normalise_labels(labels)
    a = check_square(agreement, "agreement", n=codes.shape[0], allow_nan=True)
    valid = np.isfinite(a)
    np.fill_diagonal(valid, False)
    return np.where(valid, a, 0.0), valid.astype(float), codes, k


def bridging_ratio(agreement, labels, *, min_size: int = MIN_GROUP_FOR_BRIDGING) -> np.ndarray:
    r"""Per member: mean agreement with other groups over mean agreement within its own group.

    .. math:: b_i = \frac{\operatorname{mean}_{j:\,g(j) \ne g(i)} a_{ij}}
                         {\operatorname{mean}_{j \ne i:\,g(j) = g(i)} a_{ij}}

    over the pairs with an agreement value. NaN for a member whose group has fewer than
    ``min_size`` members, who has no valued pair inside or outside its group, or whose
    own-group mean is 0.

    Examples
    --------
    The toy roll call of ``tests/toy_rollcall.py`` (hand values): A1 agrees 1 and 3/4 with
    its group and 1/4, 1/4, 1/2 with B, so b = (1/3)/(7/8) = 8/21; A3 and B3 tie at 7/9.

    >>> a = np.array([[1, 1, .75, .25, .25, .5], [1, 1, .75, .25, .25, .5],
    ...               [.75, .75, 1, .5, .5, .75], [.25, .25, .5, 1, 1, .75],
    ...               [.25, .25, .5, 1, 1, .75], [.5, .5, .75, .75, .75, 1]])
    >>> bridging_ratio(a, [0, 0, 0, 1, 1, 1]).round(4).tolist()
    [0.381, 0.381, 0.7778, 0.381, 0.381, 0.7778]

    References
    ----------
    Hix S, Noury A, Roland G (2007). Democratic Politics in the European Parliament, ch. 5.
    Cambridge University Press (agreement within and between groups; this is its member-level
    ratio, our construction).
    """
    a0, valid, codes, k = _prepare(agreement, labels)
    return _ratios(a0, valid, codes, k, min_size)


def bridging_null(agreement, labels, *, n_perm: int = BRIDGING_PERMUTATIONS, seed=0,
                  min_size: int = MIN_GROUP_FOR_BRIDGING) -> np.ndarray:
    """Scores of every member over ``n_perm`` random relabellings (group sizes kept), pooled:
    what :func:`bridging_ratio` gives when groups carry no information (finite values only).

    >>> a = np.full((6, 6), 0.5); np.fill_diagonal(a, 1)
    >>> bridging_null(a, [0, 0, 0, 1, 1, 1], n_perm=2).tolist()
    [1.0, 1.0, 1.0, 1.0, 1.0, 1.0, 1.0, 1.0, 1.0, 1.0, 1.0, 1.0]
    """
    a0, valid, codes, k = _prepare(agreement, labels)
    rng = np.random.default_rng(seed)
    scores = [_ratios(a0, valid, rng.permutation(codes), k, min_size) for _ in range(n_perm)]
    pooled = np.concatenate(scores) if scores else np.zeros(0)
    return pooled[np.isfinite(pooled)]


def bridging_null_cut(agreement, labels, *, level: float = 1 - BRIDGE_ALPHA, **kw) -> float:
    """The ``level``-quantile of :func:`bridging_null`: scores above it are more than random
    groups give. NaN when no permutation gives a score.

    >>> a = np.full((6, 6), 0.5); np.fill_diagonal(a, 1)
    >>> float(bridging_null_cut(a, [0, 0, 0, 1, 1, 1], n_perm=20))
    1.0
    """
    pooled = bridging_null(agreement, labels, **kw)
    return float(np.quantile(pooled, level)) if pooled.size else float("nan")


def bridging_null_p(scores, pooled) -> np.ndarray:
    """Per member, the share of random-group scores at least as high as its own, counted as
    ``(1 + #{null ≥ s}) / (1 + N)`` (Phipson & Smyth 2010); NaN without a score or a null.

    >>> bridging_null_p([1.5, 0.5, np.nan], np.array([0.8, 0.9, 1.0, 1.1])).tolist()
    [0.2, 1.0, nan]
    """
    s = np.asarray(scores, dtype=np.float64)
    null = np.sort(np.asarray(pooled, dtype=np.float64))
    if null.size == 0:
        return np.full(s.shape, np.nan)
    at_least = null.size - np.searchsorted(null, np.where(np.isfinite(s), s, 0.0), side="left")
    return np.where(np.isfinite(s), (1 + at_least) / (1 + null.size), np.nan)


def bridge_ranks(scores, cut: float) -> np.ndarray:
    """Rank (1 = highest) of each member whose score is above ``cut``; NaN for the others.

    Equal scores share the lower rank and the next rank skips ("1, 2, 2, 4"), so ties show as
    ties. A member at or below the cut (or without a score) is never ranked: nobody is named
    when nobody bridges.

    >>> bridge_ranks([0.9, 1.4, 1.4, 1.2, np.nan], 1.0).tolist()
    [nan, 1.0, 1.0, 3.0, nan]
    """
    s = np.asarray(scores, dtype=np.float64)
    above = np.isfinite(s) & (s > cut) if not np.isnan(cut) else np.zeros(s.shape, bool)
    ranks = np.full(s.shape, np.nan)
    vals = s[above]
    ranks[above] = 1 + (vals[None, :] > vals[:, None]).sum(axis=1)
    return ranks


def member_notes(labels, values: dict[str, np.ndarray]) -> dict[str, list[str | None]]:
    """Per member, why its bridging score, bridge rank or loyalty is empty (None where not).

    ``values`` holds the member arrays ("bridging", "bridge_rank", "loyalty") as computed.

    >>> notes = member_notes([0, 0, 0, 1], {"bridging": np.array([1.2, 0.8, 0.9, np.nan]),
    ...                                     "bridge_rank": np.array([np.nan] * 4),
    ...                                     "loyalty": np.array([1, 1, 1, np.nan])})
    >>> notes["bridging"][3]
    'alone in its group: no bridging score (needs a group of 3 or more)'
    >>> notes["bridge_rank"][0]
    'not above what random groups give (95 % level of 100 relabellings): not ranked'
    >>> notes["loyalty"][3]
    'alone in its group: no loyalty value (its group line is its own vote)'
    """
    codes, k = normalise_labels(labels)
    sizes = np.bincount(codes, minlength=k)[codes]
    out: dict[str, list[str | None]] = {}
    small = [("alone in its group" if s == 1 else f"in a group of {s}") +
             f": no bridging score (needs a group of {MIN_GROUP_FOR_BRIDGING} or more)"
             if s < MIN_GROUP_FOR_BRIDGING else None for s in sizes]
    score = np.asarray(values.get("bridging", np.full(codes.shape, np.nan)), dtype=float)
    rank = np.asarray(values.get("bridge_rank", np.full(codes.shape, np.nan)), dtype=float)
    out["bridging"] = small
    out["bridge_rank"] = [
        s if s else ("not above what random groups give (95 % level of "
                     f"{BRIDGING_PERMUTATIONS} relabellings): not ranked"
                     if np.isfinite(v) and not np.isfinite(r) else None)
        for s, v, r in zip(small, score, rank)]
    loyal = np.asarray(values.get("loyalty", np.full(codes.shape, np.nan)), dtype=float)
    out["loyalty"] = ["alone in its group: no loyalty value (its group line is its own vote)"
                      if size == 1 and not np.isfinite(v) else None
                      for size, v in zip(sizes, loyal)]
    return out
