"""Group cohesion on a roll call: Rice index, Agreement Index, group-line ballots, loyalty.

Every count is a matrix product of a one-hot member × group array with a 0/1 member × ballot
array (``G.T @ (votes == YES)``), so no loop runs over members or ballots. Labels are
any hashable group ids; per-group outputs follow their sorted order (codes 0..k−1, as
:func:`blocwatch.metrics.validation.normalise_labels` assigns them).

Conventions (stated once, used everywhere below):

* Rice ignores abstentions; the Agreement Index counts abstain as a third option.
* A group's *line* on a ballot is YES (or NO) when strictly more than half of its members who
  cast yes, no or abstain chose it. An exactly even split, or a plurality short of a majority,
  gives no line; an abstain majority is no line either (abstaining opposes nobody).
* A *group-line ballot* is one on which some group's line is YES and another group's is NO.
"""

from __future__ import annotations

import numpy as np

from blocwatch.metrics.registry import (
    ABSTAIN,
    MISSING,
    NO,
    YES,
    MetricValue,
    PeriodInput,
    register,
)
from blocwatch.metrics.validation import check_square, normalise_labels

__all__ = ["group_counts", "rice_index", "agreement_index", "group_lines", "group_line_ballots",
           "loyalty", "group_agreement_matrix", "LINE_NONE", "LINE_YES", "LINE_NO"]

LINE_NONE, LINE_YES, LINE_NO = 0, 1, 2


def _votes_labels(votes, labels) -> tuple[np.ndarray, np.ndarray, int]:
    """Validate at the boundary: a 2-D code matrix and one group label per row (any hashable
    labels, coded 0..k−1 in sorted order by :func:`normalise_labels`)."""
    votes = np.asarray(votes)
    if votes.ndim != 2:
        raise ValueError(f"votes: expected a 2-D member × ballot array, received shape "
                         f"{votes.shape}; pass one row per member")
    codes, k = normalise_labels(labels, n=votes.shape[0])
    if votes.size and (votes.min() < 0 or votes.max() > ABSTAIN):
        raise ValueError(f"votes: expected codes 0..3 (MISSING, YES, NO, ABSTAIN), received "
                         f"values in {votes.min()}..{votes.max()}; recode the choices")
    return votes, codes, k


def _one_hot(labels: np.ndarray, k: int) -> np.ndarray:
    return (labels[:, None] == np.arange(k)[None, :]).astype(np.float64)


def group_counts(votes, labels) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    """Yes, no and abstain counts per group per ballot, each of shape (k, b).

    >>> y, n, a = group_counts([[1, 2], [1, 3], [2, 0]], [0, 0, 1])
    >>> y.tolist(), n.tolist(), a.tolist()
    ([[2.0, 0.0], [0.0, 0.0]], [[0.0, 1.0], [1.0, 0.0]], [[0.0, 1.0], [0.0, 0.0]])
    """
    votes, labels, k = _votes_labels(votes, labels)
    g = _one_hot(labels, k).T
    return tuple(g @ (votes == code).astype(np.float64) for code in (YES, NO, ABSTAIN))


def _ballot_mean(values: np.ndarray, valid: np.ndarray) -> np.ndarray:
    """Mean over ballots (axis 1) of ``values`` where ``valid``; NaN for a row with none."""
    n = valid.sum(axis=1)
    total = np.where(valid, values, 0.0).sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(n > 0, total / np.maximum(n, 1), np.nan)


def rice_index(votes, labels) -> np.ndarray:
    """Rice index per group: the mean over ballots of ``|Y − N| / (Y + N)``.

    Abstentions and absences are ignored; a ballot on which the group cast no yes or no vote is
    skipped. A group that never cast one gets NaN.

    Parameters
    ----------
    votes : (n, b) int array of codes MISSING=0, YES=1, NO=2, ABSTAIN=3.
    labels : (n,) group of each member.

    Returns
    -------
    (k,) float array over the sorted distinct labels, values in [0, 1].

    Examples
    --------
    One defector in a group of three gives 1/3 on that ballot:

    >>> rice_index([[1, 1], [1, 1], [1, 2]], [0, 0, 0]).round(4).tolist()
    [0.6667]

    References
    ----------
    Rice SA (1925). The behavior of legislative groups: a method of measurement. Political
    Science Quarterly 40(1):60–72.
    """
    y, n, _ = group_counts(votes, labels)
    cast = y + n
    with np.errstate(invalid="ignore", divide="ignore"):
        per_ballot = np.abs(y - n) / cast
    return _ballot_mean(per_ballot, cast > 0)


def agreement_index(votes, labels) -> np.ndarray:
    """Agreement Index per group with abstain as a third option, averaged over ballots.

    ``AI = [max(Y, N, A) − ½((Y + N + A) − max(Y, N, A))] / (Y + N + A)``: 1 when the group votes
    as one, 0 when it splits evenly over the three options. With only yes and no in use the
    floor is 1/4. Ballots on which the group cast nothing are skipped; never → NaN.

    Parameters
    ----------
    votes : (n, b) int array of codes MISSING=0, YES=1, NO=2, ABSTAIN=3.
    labels : (n,) group of each member.

    Returns
    -------
    (k,) float array in [0, 1].

    Examples
    --------
    Six yes, three no and one abstention: (6 − ½·4)/10 = 0.4.

    >>> agreement_index([[1]] * 6 + [[2]] * 3 + [[3]], [0] * 10).round(4).tolist()
    [0.4]

    References
    ----------
    Hix S, Noury A, Roland G (2005). Power to the parties: cohesion and competition in the
    European Parliament, 1979–2001. British Journal of Political Science 35(2):209–234.
    """
    y, n, a = group_counts(votes, labels)
    total = y + n + a
    top = np.maximum(np.maximum(y, n), a)
    with np.errstate(invalid="ignore", divide="ignore"):
        per_ballot = (top - 0.5 * (total - top)) / total
    return _ballot_mean(per_ballot, total > 0)


def group_lines(votes, labels) -> np.ndarray:
    """Each group's line per ballot, (k, b) of LINE_NONE=0, LINE_YES=1, LINE_NO=2.

    A line is a strict majority of the group's members who cast yes, no or abstain; a tie or
    a plurality short of half gives LINE_NONE.

    >>> group_lines([[1, 1], [1, 2], [2, 3]], [0, 0, 0]).tolist()
    [[1, 0]]

    References
    ----------
    Hix S, Noury A, Roland G (2007). Democratic Politics in the European Parliament. Cambridge
    University Press (group majorities on roll calls).
    """
    y, n, a = group_counts(votes, labels)
    total = y + n + a
    return np.where(2 * y > total, LINE_YES, np.where(2 * n > total, LINE_NO, LINE_NONE))


def group_line_ballots(votes, labels) -> np.ndarray:
    """Which ballots are group-line ballots: one group's majority for, another's against.

    A group's majority is a strict majority of its members who cast yes, no or abstain; an
    exactly even split has no majority, and neither does an abstain majority.

    Returns
    -------
    (b,) bool array.

    Examples
    --------
    >>> votes = [[1, 1, 1], [1, 2, 1], [2, 2, 2], [2, 1, 2]]
    >>> group_line_ballots(votes, [0, 0, 1, 1]).tolist()
    [True, False, True]

    References
    ----------
    Hix S, Noury A, Roland G (2007). Democratic Politics in the European Parliament. Cambridge
    University Press (the "majority of one group against the majority of another" reading).
    """
    lines = group_lines(votes, labels)
    return (lines == LINE_YES).any(axis=0) & (lines == LINE_NO).any(axis=0)


def loyalty(votes, labels) -> np.ndarray:
    """Per member: share of group-line ballots on which the member voted with its group's line.

    Counted over the group-line ballots on which the member's own group had a line and the
    member cast yes, no or abstain (an abstention is not voting with a yes or no line). NaN for
    a member with no such ballot.

    ``loyalty_i = #{j : line_j, cast_ij, vote_ij = line_{g(i), j}} / #{j : line_j, cast_ij}``

    Examples
    --------
    >>> votes = [[1, 1], [1, 1], [1, 2], [2, 2], [2, 2], [2, 2]]
    >>> loyalty(votes, [0, 0, 0, 1, 1, 1]).round(3).tolist()
    [1.0, 1.0, 0.5, 1.0, 1.0, 1.0]

    References
    ----------
    Hix S, Noury A, Roland G (2005). Power to the parties. British Journal of Political
    Science 35(2):209–234.
    """
    votes, labels, _ = _votes_labels(votes, labels)
    lines = group_lines(votes, labels)
    on_line = group_line_ballots(votes, labels)
    own = lines[labels] if labels.size else np.zeros_like(votes)  # (n, b) own group's line
    counted = on_line[None, :] & (own != LINE_NONE) & (votes != MISSING)
    with_line = counted & (votes == own)
    n_counted = counted.sum(axis=1)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(n_counted > 0, with_line.sum(axis=1) / np.maximum(n_counted, 1), np.nan)


def group_agreement_matrix(agreement, labels) -> tuple[np.ndarray, np.ndarray]:
    """Mean pairwise agreement within (diagonal) and between (off-diagonal) groups.

    ``M_gh = mean{a_ij : g(i) = g, g(j) = h, i ≠ j, a_ij defined}``; self-pairs and NaN pairs
    are left out. Also returns the number of distinct member pairs behind each mean (within a
    group each unordered pair once). NaN where a cell has no pair.

    Returns
    -------
    mean : (k, k) float, symmetric.
    pairs : (k, k) int.

    Examples
    --------
    >>> a = [[1, .8, .2], [.8, 1, .4], [.2, .4, 1]]
    >>> mean, pairs = group_agreement_matrix(a, [0, 0, 1])
    >>> mean.round(2).tolist(), pairs.tolist()
    ([[0.8, 0.3], [0.3, nan]], [[1, 2], [2, 0]])

    References
    ----------
    Hix S, Noury A, Roland G (2007). Democratic Politics in the European Parliament, ch. 9
    (group-by-group coalition patterns).
    """
    codes, k = normalise_labels(labels)
    a = check_square(agreement, "agreement", n=codes.shape[0], allow_nan=True)
    labels = codes
    valid = np.isfinite(a)
    np.fill_diagonal(valid, False)
    g = _one_hot(labels, k)
    total = g.T @ np.where(valid, a, 0.0) @ g
    count = g.T @ valid.astype(np.float64) @ g
    with np.errstate(invalid="ignore", divide="ignore"):
        mean = np.where(count > 0, total / np.maximum(count, 1), np.nan)
    pairs = count.copy()
    pairs[np.diag_indices(k)] /= 2  # ordered pairs i≠j within a group count each pair twice
    return mean, np.rint(pairs).astype(np.int64)


def _size_weighted(values: np.ndarray, labels: np.ndarray) -> MetricValue:
    """Mean over groups of two or more members, weighted by group size (singletons excluded:
    a one-member group is trivially cohesive)."""
    sizes = np.bincount(labels, minlength=values.size).astype(np.float64)[:values.size]
    ok = (sizes >= 2) & np.isfinite(values)
    if not ok.any():
        return MetricValue.missing("no group of two or more members cast a vote")
    return MetricValue(float(np.average(values[ok], weights=sizes[ok])))


@register("cohesion", ("rice_mean", "agreement_index_mean", "group_line_share", "mean_loyalty"),
          bounds={"rice_mean": (0.0, 1.0), "agreement_index_mean": (0.0, 1.0),
                  "group_line_share": (0.0, 1.0), "mean_loyalty": (0.0, 1.0)},
          direction={"rice_mean": "higher", "agreement_index_mean": "higher",
                     "group_line_share": "higher", "mean_loyalty": "higher"})
def _cohesion_family(inp: PeriodInput) -> dict[str, MetricValue]:
    """Rice and AI: size-weighted mean over groups of ≥ 2 members; group-line share over the
    period's ballots; loyalty: plain mean over members who had a group-line ballot and are not
    alone in their group (a lone member's line is its own vote). Every
    metric needs at least two groups (with one, "group cohesion" is the body's own)."""
    names = ("rice_mean", "agreement_index_mean", "group_line_share", "mean_loyalty")
    codes, k = normalise_labels(inp.labels)
    if inp.votes is None:
        return {m: MetricValue.missing("needs the vote matrix, which was not available")
                for m in names}
    votes = np.asarray(inp.votes)
    if votes.shape[0] == 0 or votes.shape[1] == 0:
        return {m: MetricValue.missing("no members or no ballots in this period") for m in names}
    if k < 2:
        return {m: MetricValue.missing("needs at least two groups; this period has one")
                for m in names}
    loyal = loyalty(votes, codes)
    loyal[np.bincount(codes, minlength=k)[codes] < 2] = np.nan  # alone: trivially loyal
    return {
        "rice_mean": _size_weighted(rice_index(votes, codes), codes),
        "agreement_index_mean": _size_weighted(agreement_index(votes, codes), codes),
        "group_line_share": MetricValue(float(group_line_ballots(votes, codes).mean())),
        "mean_loyalty": (MetricValue(float(np.nanmean(loyal))) if np.isfinite(loyal).any()
                         else MetricValue.missing("no member voted on a group-line ballot")),
    }
