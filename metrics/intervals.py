"""Each metric's stored interval: its family's method applied to the bootstrap replicates,
with a note wherever the interval cannot be read as a 95 % range for the value.

A pure function of the point estimate and the replicate values, so the way replicates are
formed (ballot or block bootstrap, warm-started fits) can change without touching this.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from blocwatch.metrics import registry
from blocwatch.metrics.resampling import bootstrap_interval

__all__ = ["MetricInterval", "metric_interval", "MIN_REPLICATES", "SMALL_BODY"]

# Fewer finite replicates than this give no interval: a 95 % range read off a handful of
# values is noise (common practice: at least a few dozen; Efron & Tibshirani 1993 §13).
MIN_REPLICATES = 20
# Below this many members, resampling ballots shows only the agenda's share of the
# uncertainty: with so few members, who sits on the body matters as much (our choice).
SMALL_BODY = 15


_METHOD_NAMES = {"percentile": "percentile", "basic": "basic (pivotal)",
                 "bc": "bias-corrected percentile"}


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
                    level: float = 0.95) -> MetricInterval:
    """The interval of ``metric`` and a note saying where it cannot be read at face value.

    Notes (the first two exclude each other; the last adds to either):

    - fewer than :data:`MIN_REPLICATES` replicates had a value: no interval;
    - the interval has no width: every resample gave the same value, which shows no
      uncertainty rather than none existing (a perfect split, or a tiny body);
    - the estimate lies outside the interval: the resampling shifts this measure (the
      replicates centre away from it) — the note gives the replicates' median;
    - the body has fewer than :data:`SMALL_BODY` members: ballots are resampled, members are
      not, so the interval understates the uncertainty.

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
    if n_members < SMALL_BODY:
        notes.append(f"only {n_members} members: the interval resamples ballots, not members, "
                     f"and understates the uncertainty")
    return MetricInterval(low, high, "; ".join(notes))
