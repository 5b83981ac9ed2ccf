"""Polarisation read from members' positions on a line: median gap, overlap, bimodality.

Positions come from probit ideal points (:mod:`blocwatch.metrics.space.ideal_points`) or from 1-D
classical MDS of 1 − agreement (:mod:`blocwatch.metrics.space.mds`). All three measures are
unchanged by flipping the line, so the orientation rule of either method does not matter
here. Registers the ``positions`` family.
"""

from __future__ import annotations

import dataclasses
import math

import numpy as np
from scipy import stats

from blocwatch.metrics.registry import MetricValue, PeriodInput, register
from blocwatch.metrics.space.ideal_points import IdealPoints, ideal_points_em
from blocwatch.metrics.space.mds import agreement_distances, classical_mds
from blocwatch.metrics.validation import normalise_labels

__all__ = ["main_pair", "median_distance", "overlap_count", "bimodality_coefficient",
           "fit_ideal_points", "replicate_start", "MIN_GROUP_SIZE"]

MIN_GROUP_SIZE = 3  # a median of fewer positioned members is not worth a number


def _groups(x, labels) -> tuple[np.ndarray, np.ndarray, int]:
    x = np.asarray(x, dtype=np.float64)
    codes, k = normalise_labels(labels, n=x.shape[0] if x.ndim == 1 else None)
    if x.ndim != 1:
        raise ValueError(f"x: expected a 1-D array of positions, received shape {x.shape}; "
                         "pass one coordinate per member")
    ok = np.isfinite(x)
    return x[ok], codes[ok], k


def main_pair(x, labels, *, min_size: int = MIN_GROUP_SIZE) -> tuple[int, int]:
    """The two groups compared: the two largest with at least ``min_size`` positioned members.

    Ties in size go to the pair with the larger median gap (so renumbering groups changes
    nothing). Returns codes into the sorted unique labels (as
    :func:`blocwatch.metrics.validation.normalise_labels` numbers them); raises ValueError
    when fewer than two groups are large enough.

    >>> main_pair([0, 1, 2, 5, 6, 7, 9, 9, 9, 9], [0, 0, 0, 1, 1, 1, 2, 2, 2, 2])
    (2, 0)
    """
    x, codes, k = _groups(x, labels)
    sizes = np.bincount(codes, minlength=k)
    eligible = np.flatnonzero(sizes >= min_size)
    if eligible.size < 2:
        raise ValueError(f"positions: expected two groups of at least {min_size} members with a "
                         f"position, received sizes {sorted(sizes.tolist(), reverse=True)}; "
                         "groups too small for medians")
    medians = np.array([np.median(x[codes == g]) for g in eligible])  # per group, not member
    i, j = np.triu_indices(eligible.size, k=1)
    s_i, s_j = sizes[eligible[i]], sizes[eligible[j]]
    # Lexicographic: larger of the two sizes, then the smaller, then the median gap.
    best = np.lexsort((np.abs(medians[i] - medians[j]), np.minimum(s_i, s_j),
                       np.maximum(s_i, s_j)))[-1]
    first, second = eligible[i[best]], eligible[j[best]]
    if sizes[second] > sizes[first]:
        first, second = second, first
    return int(first), int(second)


def median_distance(x, labels, *, min_size: int = MIN_GROUP_SIZE) -> float:
    """Distance between the medians of the two largest groups, in pooled-SD units.

    ``d = |med_g − med_h| / s_p``, ``s_p² = ((n_g − 1)s_g² + (n_h − 1)s_h²)/(n_g + n_h − 2)``
    for the pair chosen by :func:`main_pair` (the two largest groups with at least
    ``min_size`` positioned members). Positions are NaN-filtered first. Returns ``inf`` when
    the medians differ but neither group has any spread, 0 when both are zero.

    Examples
    --------
    >>> median_distance([0, 1, 2, 4, 5, 6], [0, 0, 0, 1, 1, 1])
    4.0

    References
    ----------
    Cohen J (1988). Statistical Power Analysis for the Behavioral Sciences, 2nd ed. (pooled
    SD); McCarty N, Poole KT, Rosenthal H (2006). Polarized America. MIT Press (party-median
    distance as a polarisation measure).
    """
    first, second = main_pair(x, labels, min_size=min_size)
    x, codes, _ = _groups(x, labels)
    a, b = x[codes == first], x[codes == second]
    gap = abs(float(np.median(a) - np.median(b)))
    pooled = np.sqrt(((a.size - 1) * a.var(ddof=1) + (b.size - 1) * b.var(ddof=1))
                     / (a.size + b.size - 2))
    if pooled == 0:
        return 0.0 if gap == 0 else float("inf")
    return gap / float(pooled)


def overlap_count(x, labels, *, min_size: int = MIN_GROUP_SIZE) -> int:
    """Members of the two largest groups lying beyond the other group's most extreme member.

    With L the group of lower median and H the other: ``#{i ∈ L : x_i > min_H} +
    #{i ∈ H : x_i < max_L}``. 0 means the groups are fully separated on the line. The pair is
    the one :func:`median_distance` uses.

    >>> overlap_count([0, 1, 5, 4, 6, 7], [0, 0, 0, 1, 1, 1])
    2

    References
    ----------
    Poole KT, Rosenthal H (1997). Congress: A Political-Economic History of Roll Call Voting.
    Oxford University Press (party overlap on the first dimension).
    """
    first, second = main_pair(x, labels, min_size=min_size)
    x, codes, _ = _groups(x, labels)
    a, b = x[codes == first], x[codes == second]
    low, high = (a, b) if np.median(a) <= np.median(b) else (b, a)
    return int((low > high.min()).sum() + (high < low.max()).sum())


def bimodality_coefficient(x) -> float:
    """Sarle's bimodality coefficient with sample-size corrected skewness and kurtosis.

    ``BC = (g₁² + 1) / (g₂ + 3(n − 1)² / ((n − 2)(n − 3)))`` with g₁ the bias-corrected
    skewness and g₂ the bias-corrected excess kurtosis (``scipy.stats.skew`` /
    ``kurtosis(bias=False)``). A uniform distribution gives 5/9; values above 5/9 suggest
    bimodality, a normal gives about 1/3. NaN positions are left out; needs n ≥ 4 values
    with some spread (ValueError otherwise).

    Examples
    --------
    Fifty members at −1 and fifty at +1 (g₁ = 0, g₂ = −2.0412):

    >>> round(bimodality_coefficient([-1] * 50 + [1] * 50), 4)
    0.9507

    References
    ----------
    Pfister R, Schwarz KA, Janczyk M, Dale R, Freeman JB (2013). Good things peak in pairs: a
    note on the bimodality coefficient. Frontiers in Psychology 4:700.
    SAS Institute (1990). SAS/STAT User's Guide, vol. 1 (Sarle's coefficient).
    """
    x = np.asarray(x, dtype=np.float64).ravel()
    x = x[np.isfinite(x)]
    n = x.size
    if n < 4:
        raise ValueError(f"bimodality: expected at least 4 positions, received {n}; the "
                         "corrected kurtosis needs n ≥ 4")
    if np.ptp(x) == 0:
        raise ValueError("bimodality: expected positions with some spread, received all "
                         "equal; skewness and kurtosis are undefined")
    g1 = float(stats.skew(x, bias=False))
    g2 = float(stats.kurtosis(x, fisher=True, bias=False))
    return (g1 * g1 + 1) / (g2 + 3 * (n - 1) ** 2 / ((n - 2) * (n - 3)))


def fit_ideal_points(votes, *, start: IdealPoints | None = None) -> IdealPoints:
    """:func:`ideal_points_em` with default settings, its arrays read-only so it can be shared.

    ``start``: a warm start (see :func:`replicate_start`); the stopping rule is unchanged.

    >>> v = np.array([[1, 1, 2, 1], [1, 1, 2, 2], [1, 2, 1, 2], [2, 2, 1, 2], [2, 2, 1, 1]])
    >>> fit_ideal_points(v).x.flags.writeable
    False
    """
    fit = ideal_points_em(np.ascontiguousarray(votes, dtype=np.int8), start=start)
    for arr in (fit.x, fit.alpha, fit.beta):
        arr.flags.writeable = False
    return fit


def with_ideal_points(inp: PeriodInput, *, start: IdealPoints | None = None) -> PeriodInput:
    """``inp`` carrying one fit of its votes, for the period family, the member table and the
    label-permutation null (labels change, votes do not) to share.

    ``start`` warm-starts the fit (a bootstrap replicate from its period's fit, laid out by
    :func:`replicate_start`). Unchanged where there are no votes or no fit is possible; the
    family then says why.
    """
    if inp.votes is None or inp.n == 0 or inp.ideal_points is not None:
        return inp
    try:
        return dataclasses.replace(inp, ideal_points=fit_ideal_points(inp.votes, start=start))
    except ValueError:
        return inp


def replicate_start(fit: IdealPoints, weights) -> IdealPoints:
    """The period's fit laid out for a bootstrap replicate whose vote matrix repeats ballot j
    ``weights[j]`` times (``np.repeat(votes, weights, axis=1)``): the warm start of the
    replicate's own EM fit (see :func:`~blocwatch.metrics.space.ideal_points.ideal_points_em`).

    >>> fit = IdealPoints(np.zeros(2), np.array([1.0, 2.0]), np.array([3.0, 4.0]), 1, True)
    >>> replicate_start(fit, [0, 2]).alpha.tolist()
    [2.0, 2.0]
    """
    reps = np.asarray(weights, dtype=np.int64)
    return IdealPoints(fit.x, np.repeat(fit.alpha, reps), np.repeat(fit.beta, reps),
                       fit.iterations, fit.converged, fit.centre, fit.scale)


def period_ideal_points(inp: PeriodInput) -> IdealPoints:
    """The fit ``inp`` carries (see :func:`with_ideal_points`), else a fresh fit of its votes."""
    if inp.ideal_points is not None:
        return inp.ideal_points
    if inp.votes is None:
        raise ValueError("ideal points: expected a vote matrix, received none")
    return fit_ideal_points(inp.votes)


def _value(compute) -> MetricValue:
    """Run one measure; a ValueError (e.g. groups too small) becomes a missing value + note."""
    try:
        value = float(compute())
    except ValueError as exc:
        return MetricValue.missing(str(exc))
    if math.isinf(value):
        return MetricValue.missing("the two groups have no spread: pooled SD is 0")
    return MetricValue(value)


_IDEAL_METRICS = ("ideal_median_gap", "ideal_overlap", "ideal_bimodality")


@register("positions", _IDEAL_METRICS, bounds={m: (0.0, math.inf) for m in _IDEAL_METRICS},
          expensive=True, direction={"ideal_median_gap": "higher", "ideal_overlap": "lower",
                                     "ideal_bimodality": "higher"},
          interval="normal")  # resampled fits shift ~2× the estimate's own bias (README)
def _positions_family(inp: PeriodInput) -> dict[str, MetricValue]:
    """Median gap, overlap and bimodality of the period's probit ideal points (an EM fit per
    call, hence ``expensive``)."""
    codes, _ = normalise_labels(inp.labels)  # bad labels raise here, not as a note
    if inp.n == 0:
        return {m: MetricValue.missing("no members in this period") for m in _IDEAL_METRICS}
    if inp.votes is None:
        return {m: MetricValue.missing("needs the vote matrix, which was not available")
                for m in _IDEAL_METRICS}
    try:
        x = period_ideal_points(inp).x
    except ValueError as exc:
        return {m: MetricValue.missing(str(exc)) for m in _IDEAL_METRICS}
    return {"ideal_median_gap": _value(lambda: median_distance(x, codes)),
            "ideal_overlap": _value(lambda: overlap_count(x, codes)),
            "ideal_bimodality": _value(lambda: bimodality_coefficient(x))}


@register("positions_mds", ("mds_median_gap",), bounds={"mds_median_gap": (0.0, math.inf)},
          direction={"mds_median_gap": "higher"}, interval="corrected-log")  # see README
def _mds_family(inp: PeriodInput) -> dict[str, MetricValue]:
    """Median gap on the first classical-MDS axis of 1 − agreement (NaN pairs imputed)."""
    codes, k = normalise_labels(inp.labels)
    if inp.n == 0:
        return {"mds_median_gap": MetricValue.missing("no members in this period")}
    if k < 2:
        return {"mds_median_gap": MetricValue.missing("needs two groups; this period has one")}
    return {"mds_median_gap": _value(lambda: median_distance(
        classical_mds(agreement_distances(inp.agreement), 1)[:, 0], codes))}
