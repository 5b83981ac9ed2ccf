"""Trend and change in a metric's series over periods: Mann–Kendall, Theil–Sen, PELT.

Series are short (one value per period), so everything here is exact: the Mann–Kendall S is
summed over all pairs of periods with one vectorised outer difference.
"""

from __future__ import annotations

import math
from typing import NamedTuple

import numpy as np
import ruptures
from scipy import stats

__all__ = ["MannKendall", "TheilSen", "mann_kendall", "theil_sen", "default_penalty",
           "change_points", "trend_summary", "MIN_TREND_PERIODS"]

MIN_TREND_PERIODS = 4  # below this the trends row carries a note instead of a test


class MannKendall(NamedTuple):
    s: float
    var_s: float
    z: float
    p: float
    tau: float
    n: int


class TheilSen(NamedTuple):
    slope: float
    intercept: float
    low: float
    high: float


def _series(y) -> np.ndarray:
    y = np.asarray(y, dtype=np.float64)
    if y.ndim != 1:
        raise ValueError(f"y: expected a 1-D series, received shape {y.shape}; pass one value "
                         "per period")
    return y


def mann_kendall(y) -> MannKendall:
    """Mann–Kendall trend test on a series in time order (NaN values left out).

    ``S = Σ_{i<j} sign(y_j − y_i)``;
    ``Var S = [n(n−1)(2n+5) − Σ_t t(t−1)(2t+5)] / 18`` over groups of t tied values;
    ``Z = (S − sign(S)) / √Var S`` (continuity correction), two-sided ``p = 2(1 − Φ(|Z|))``;
    ``τ = S / √(n₀(n₀ − n_ties))`` with ``n₀ = n(n−1)/2``, ``n_ties = Σ_t t(t−1)/2`` — Kendall's
    τ-b between y and the time index. A constant series has S = Var S = 0: Z = 0, p = 1 and
    τ = NaN.

    Raises ValueError for fewer than 3 values.

    Examples
    --------
    >>> r = mann_kendall([1, 2, 3, 4, 5])
    >>> r.s, round(r.var_s, 4), round(r.z, 4), round(r.p, 4), r.tau
    (10.0, 16.6667, 2.2045, 0.0275, 1.0)

    References
    ----------
    Mann HB (1945). Nonparametric tests against trend. Econometrica 13(3):245–259.
    Kendall MG (1975). Rank Correlation Methods, 4th ed. Griffin.
    """
    y = _series(y)
    y = y[np.isfinite(y)]
    n = int(y.size)
    if n < 3:
        raise ValueError(f"mann_kendall: expected at least 3 finite values, received {n}; a "
                         "trend needs more periods")
    d = np.sign(np.subtract.outer(y, y))  # d[i, j] = sign(y_i − y_j)
    s = float(np.triu(d.T, k=1).sum())  # Σ_{i<j} sign(y_j − y_i)
    _, t = np.unique(y, return_counts=True)
    var_s = float((n * (n - 1) * (2 * n + 5) - (t * (t - 1) * (2 * t + 5)).sum()) / 18)
    if var_s == 0:
        return MannKendall(s, 0.0, 0.0, 1.0, float("nan"), n)
    z = (s - math.copysign(1.0, s)) / math.sqrt(var_s) if s != 0 else 0.0
    p = float(2 * stats.norm.sf(abs(z)))
    n0 = n * (n - 1) / 2
    tau = s / math.sqrt(n0 * (n0 - float((t * (t - 1) / 2).sum())))
    return MannKendall(s, var_s, float(z), p, float(tau), n)


def theil_sen(y, x=None, *, alpha: float = 0.95) -> TheilSen:
    """Theil–Sen slope of y on x with its confidence interval (scipy ``theilslopes``).

    The slope is the median of ``(y_j − y_i)/(x_j − x_i)`` over pairs with ``x_i ≠ x_j``;
    ``alpha`` is the confidence *level* of the interval (0.95 → 95%). x defaults to 0..n−1.
    NaN values of y are left out.

    Examples
    --------
    >>> tuple(round(float(v), 6) for v in theil_sen([1, 2, 3, 4, 5], [1, 2, 3, 4, 5]))
    (1.0, 0.0, 1.0, 1.0)

    References
    ----------
    Sen PK (1968). Estimates of the regression coefficient based on Kendall's tau. Journal of
    the American Statistical Association 63(324):1379–1389.
    Theil H (1950). A rank-invariant method of linear and polynomial regression analysis.
    Indagationes Mathematicae 12:85–91.
    """
    y = _series(y)
    x = np.arange(y.size, dtype=np.float64) if x is None else np.asarray(x, dtype=np.float64)
    if x.shape != y.shape:
        raise ValueError(f"x: expected one position per value ({y.size}), received shape "
                         f"{x.shape}; pass x aligned with y")
    if not 0 < alpha < 1:
        raise ValueError(f"alpha: expected a confidence level in (0, 1), received {alpha!r}; "
                         "e.g. alpha=0.95")
    ok = np.isfinite(y) & np.isfinite(x)
    if ok.sum() < 2 or np.unique(x[ok]).size < 2:
        raise ValueError("theil_sen: expected at least two finite values at distinct x, "
                         f"received {int(ok.sum())}; a slope needs two periods")
    r = stats.theilslopes(y[ok], x[ok], alpha=alpha)  # y first: scipy's order
    return TheilSen(float(r.slope), float(r.intercept), float(r.low_slope), float(r.high_slope))


def default_penalty(y) -> float:
    """PELT penalty ``2 σ̂² log n``, σ̂ = MAD(first differences)·1.4826 / √2.

    Differencing removes the level shifts we are looking for, so σ̂ estimates the noise alone;
    the MAD (normal-consistent) resists the few large differences at the breaks. When σ̂ = 0
    (piecewise-constant series) it is floored at 1% of the series' SD, so that a penalty stays
    positive and spurious breaks cost something; a constant series gets penalty 0 (and no
    break can lower its cost). A noise-free linear series has σ̂ = 0 too and will be cut into
    steps: the l2 cost models shifts in the mean, not slopes.

    >>> round(default_penalty([1.0, 1.2, 0.9, 1.1, 1.0, 3.0, 3.1, 2.9, 3.2]), 4)
    0.1932

    References
    ----------
    Killick R, Fearnhead P, Eckley IA (2012), JASA 107(500):1590–1598 (penalties of order
    σ² log n for a change in mean); Hampel FR (1974). The influence curve and its role in
    robust estimation. JASA 69(346):383–393 (the MAD and its 1.4826 factor).
    """
    y = _series(y)
    y = y[np.isfinite(y)]
    n = y.size
    if n < 2:
        return 0.0
    sigma = float(stats.median_abs_deviation(np.diff(y), scale="normal")) / math.sqrt(2)
    if sigma == 0:
        sigma = 0.01 * float(np.std(y))
    return 2 * sigma**2 * math.log(n)


def change_points(y, *, penalty: float | None = None, min_size: int = 2) -> list[int]:
    """Change points in the mean by PELT with the l2 cost (ruptures, ``jump=1``).

    Returns ruptures' breakpoint list: the end index (exclusive) of each segment, the last
    being n; ``[n]`` means no change. ``penalty`` defaults to :func:`default_penalty`. The
    series must be free of NaN (drop missing periods first). ``jump=1`` lets a break fall at
    any period (ruptures' default of 5 only allows multiples of 5).

    Examples
    --------
    >>> change_points([0] * 10 + [5] * 10, penalty=1)
    [10, 20]

    References
    ----------
    Killick R, Fearnhead P, Eckley IA (2012). Optimal detection of changepoints with a linear
    computational cost. Journal of the American Statistical Association 107(500):1590–1598.
    Truong C, Oudre L, Vayatis N (2020). Selective review of offline change point detection
    methods. Signal Processing 167:107299 (the ruptures package).
    """
    y = _series(y)
    if not np.isfinite(y).all():
        raise ValueError("change_points: expected a series without NaN, received "
                         f"{int((~np.isfinite(y)).sum())} missing values; drop them first")
    n = int(y.size)
    pen = default_penalty(y) if penalty is None else float(penalty)
    if n < 2 * min_size or np.ptp(y) == 0:
        return [n]
    algo = ruptures.Pelt(model="l2", min_size=min_size, jump=1).fit(y)
    return [int(b) for b in algo.predict(pen=pen)]


def _smallest_p(n: int) -> float:
    """Two-sided MK p of a strictly monotone series of length n: the best a test can do."""
    return mann_kendall(np.arange(n)).p


def trend_summary(y, x=None) -> dict:
    """One trends-table row for a metric series: Mann–Kendall, Theil–Sen 95% CI, PELT breaks.

    Periods where y is NaN are left out (and counted in the note). With fewer than
    :data:`MIN_TREND_PERIODS` values every statistic is NaN and the note says why; when even a
    strictly monotone series of this length could not reach p < 0.05, the note says so.
    ``change_points`` lists the x of the first period of each new segment, ``change_index``
    their positions in the (NaN-free) series.

    >>> y = [1.0, 1.2, 0.9, 1.1, 1.0, 3.0, 3.1, 2.9, 3.2]
    >>> row = trend_summary(y, list(range(2011, 2020)))
    >>> row["mk_s"], round(row["mk_p"], 4), round(row["slope"], 4), row["change_points"]
    (21.0, 0.036, 0.2845, [2016.0])

    The mean-shift model reads a steady trend as steps: look at breaks beside the slope.
    """
    y = _series(y)
    x = np.arange(y.size, dtype=np.float64) if x is None else np.asarray(x, dtype=np.float64)
    if x.shape != y.shape:
        raise ValueError(f"x: expected one position per value ({y.size}), received shape "
                         f"{x.shape}; pass x aligned with y")
    ok = np.isfinite(y)
    y, x = y[ok], x[ok]
    n = int(y.size)
    nan = float("nan")
    row = {"n_periods": n, "mk_s": nan, "mk_z": nan, "mk_p": nan, "tau": nan, "slope": nan,
           "slope_low": nan, "slope_high": nan, "penalty": nan, "change_points": [],
           "change_index": [], "note": ""}
    notes = []
    if (~ok).sum():
        notes.append(f"{int((~ok).sum())} period(s) without a value left out")
    if n < MIN_TREND_PERIODS:
        notes.append(f"too few periods for a trend test ({n}; needs at least "
                     f"{MIN_TREND_PERIODS})")
        row["note"] = "; ".join(notes)
        return row
    mk = mann_kendall(y)
    ts = theil_sen(y, x, alpha=0.95)
    pen = default_penalty(y)
    breaks = change_points(y, penalty=pen)[:-1]
    row.update(mk_s=mk.s, mk_z=mk.z, mk_p=mk.p, tau=mk.tau, slope=ts.slope, slope_low=ts.low,
               slope_high=ts.high, penalty=pen, change_index=breaks,
               change_points=[float(x[b]) for b in breaks])
    if (p_min := _smallest_p(n)) > 0.05:
        notes.append(f"with {n} periods the smallest attainable p is {p_min:.3f}")
    row["note"] = "; ".join(notes)
    return row
