"""Each metric's stored interval: its family's method applied to the bootstrap replicates,
with a note wherever the interval cannot be read as a 95 % range for the value.

A pure function of the point estimate and the replicate values, so the way replicates are
formed (ballot or block bootstrap, warm-started fits) can change without touching this.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from blocwatch.metrics import registry
from blocwatch.metrics.uncertainty.resampling import bootstrap_interval

__all__ = ["MetricInterval", "metric_interval", "MIN_REPLICATES", "SMALL_BODY"]

# Fewer finite replicates than this give no interval: a 95 % range read off a handful of
# values is noise (common practice: at least a few dozen; Efron & Tibshirani 1993 §13).
MIN_REPLICATES = 20
# Below this many members, resampling ballots shows only the agenda's share of the
# uncertainty: with so few members, who sits on the body matters as much (our choice).
SMALL_BODY = 15


_METHOD_NAMES = {"percentile": "percentile", "basic": "basic (pivotal)",
                 "bc": "bias-corrected percentile", "basic-log": "basic (log scale)",
                 "normal": "standard (estimate ± 1.96 resample SD)",
                 "corrected-log": "bias-corrected log-scale"}


def _number(v: float) -> str:
    """Three significant digits with a real minus sign (notes are printed on pages as is)."""
    return f"{v:.3g}".replace("-", "\u2212")


@dataclass(frozen=True)
class MetricInterval:
    low: float
    high: float
    note: str = ""


def _family(metric: str):
    for fam in registry.FAMILIES.values():
        if metric in fam.metrics:
            return fam
    return None


def metric_interval(metric: str, estimate, replicates, *, n_members: int,
                    level: float = 0.95, member_se: float | None = None) -> MetricInterval:
    """The interval of ``metric`` and a note saying where it cannot be read at face value.

    Notes (the first two exclude each other; the last adds to either):

    - fewer than :data:`MIN_REPLICATES` replicates had a value: no interval;
    - the interval has no width: every resample gave the same value, which shows no
      uncertainty rather than none existing (a perfect split, or a tiny body);
    - the estimate lies outside the interval: the resampling shifts this measure (the
      replicates centre away from it) — the note gives the replicates' median;
    - the body has fewer than :data:`SMALL_BODY` members: resampling ballots leaves out who
      sits on the body. With ``member_se`` (a delete-one-member jackknife standard error,
      :func:`~blocwatch.metrics.uncertainty.resampling.jackknife_se`) each side of the
      interval is widened by it in quadrature, ``θ̂ ∓ √(h² + (z·se)²)`` with h the side's
      ballot half-width, and
      the note says so (or that the jackknife did not move the value either); without it
      the note says the interval understates the uncertainty.

    >>> r = metric_interval("group_modularity", 0.3, np.full(50, 0.3), n_members=40)
    >>> (r.low, r.high), r.note.startswith("no spread")
    ((0.3, 0.3), True)
    """
    x = np.asarray(replicates, dtype=np.float64).ravel()
    finite = x[np.isfinite(x)]
    nan = float("nan")
    if estimate is None or not np.isfinite(estimate):
        return MetricInterval(nan, nan)
    if finite.size < MIN_REPLICATES:
        why = (f"no interval: only {finite.size} of {x.size} resamples gave a value "
               f"(fewer than {MIN_REPLICATES})") if x.size else ""
        return MetricInterval(nan, nan, why)
    fam = _family(metric)
    method = fam.interval if fam is not None else "percentile"
    bounds = fam.bounds.get(metric) if fam is not None else None
    low, high = bootstrap_interval(estimate, finite, method=method, level=level, bounds=bounds)
    if not (np.isfinite(low) and np.isfinite(high)):  # log-scale methods: a value ≤ 0
        return MetricInterval(nan, nan, f"no interval: the {_METHOD_NAMES[method]} interval "
                                        f"needs a positive value and positive resamples")
    widened = n_members < SMALL_BODY and member_se is not None and np.isfinite(member_se) \
        and member_se > 0
    if widened:
        low, high = _with_members(float(estimate), low, high, member_se, level, bounds)
    tol = 1e-12 * max(1.0, abs(float(estimate)))
    notes = []
    if high - low <= tol:
        notes.append("no spread: every resample of the ballots gave the same value, so the "
                     "interval cannot show the uncertainty (a perfect split or a small body); "
                     "read it as unknown")
    elif not (low - tol <= estimate <= high + tol):
        how = ("the percentile interval follows the resamples, not the estimate"
               if method == "percentile" else
               f"the {_METHOD_NAMES[method]} interval corrects for that shift")
        notes.append(f"the estimate lies outside its interval: resampled ballots shift this "
                     f"measure (their median is {_number(float(np.median(finite)))}); {how}")
    if widened:
        notes.append(f"only {n_members} members: the interval adds to the resampled ballots "
                     f"the spread of leaving out one member at a time (jackknife); with so few "
                     f"members read it as rough")
    elif n_members < SMALL_BODY and member_se == 0:
        notes.append(f"only {n_members} members: leaving out one member at a time (jackknife) "
                     f"did not move the value either, which with so few members is not "
                     f"certainty")
    elif n_members < SMALL_BODY:
        notes.append(f"only {n_members} members: the interval resamples ballots, not members, "
                     f"and understates the uncertainty")
    return MetricInterval(low, high, "; ".join(notes))


def _with_members(estimate: float, low: float, high: float, member_se: float, level: float,
                  bounds) -> tuple[float, float]:
    """Each side of the ballot interval widened in quadrature by the member jackknife's
    z·se (the two sources of uncertainty taken as independent), clipped to the bounds."""
    from scipy.stats import norm  # local: scipy is a heavy import for the cheap paths

    extra = float(norm.ppf(0.5 + level / 2)) * member_se
    low = min(low, estimate - float(np.hypot(max(estimate - low, 0.0), extra)))
    high = max(high, estimate + float(np.hypot(max(high - estimate, 0.0), extra)))
    if bounds is not None:
        low, high = (float(np.clip(v, bounds[0], bounds[1])) for v in (low, high))
    return low, high
