"""The registry of per-period metrics: one entry per family, one invariance suite over all.

A *family* is a function that takes a :class:`PeriodInput` and returns one
:class:`MetricValue` per metric name it declares (one Louvain run gives ``best_modularity``,
``communities`` and ``community_group_ari`` together). The pipeline calls
:func:`compute_all` once per period and once per bootstrap replicate; the invariance tests in
``tests/unit/metrics/test_registry.py`` run over :data:`FAMILIES`.

The family modules are listed in :data:`FAMILY_MODULES` and imported on first use of the
families (:func:`loaded_families`, or the module attribute ``FAMILIES``), not when this module
is: the vote codes and :class:`PeriodInput` stay light for readers such as ``blocwatch
status``, and the order of families is the list's, whatever order modules are imported in.

What each metric means (label, description, formula, reference, check values) is in
:mod:`blocwatch.metrics.reference`, read through :func:`metric_info`.

Metric names are part of the export contract: add names, never rename them.
"""

from __future__ import annotations

import importlib
import math
from collections.abc import Callable
from dataclasses import dataclass, field

import numpy as np

from blocwatch.metrics.reference import METRIC_INFO, MetricInfo

# Vote codes in a member × ballot matrix (int8).
MISSING, YES, NO, ABSTAIN = 0, 1, 2, 3

# Which side of a metric means "more division between groups".
DIRECTIONS = ("higher", "lower")


@dataclass(frozen=True)
class PeriodInput:
    """Everything a metric may look at for one body × period (members already filtered).

    agreement : (n, n) float, share of shared ballots on which i and j chose the same; NaN
        where the pair shared no ballot (or fewer than the minimum). Diagonal is 1.
    shared : (n, n) int, number of ballots both cast.
    labels : (n,) int in 0..k-1, each member's group in this period.
    weights : (n, n) float >= 0, the weighted graph (agreement where an edge exists, else 0),
        zero diagonal.
    edges : (n, n) bool, the thresholded graph chosen by the rule, symmetric, zero diagonal.
    votes : (n, b) int8 codes MISSING/YES/NO/ABSTAIN, or None where not available.
    seed : int, for every random step (Louvain, CV splits).
    scores : (n, b) float answers on the period's scored (non-yes/no) ballots, NaN where none
        was given, or None for yes/no bodies (see :mod:`blocwatch.metrics.agreement.reliability`).
    score_level : "nominal", "ordinal" or "interval": how ``scores`` are measured, or None.
    ideal_points : an :class:`~blocwatch.metrics.space.ideal_points.IdealPoints` fit of exactly
        ``votes``, made once by the caller
        (:func:`blocwatch.metrics.space.positions.with_ideal_points`)
        so the families and member table that need it share one fit; None: fitted on demand.
    """

    agreement: np.ndarray
    shared: np.ndarray
    labels: np.ndarray
    weights: np.ndarray
    edges: np.ndarray
    votes: np.ndarray | None = None
    seed: int = 0
    scores: np.ndarray | None = None
    score_level: str | None = None
    ideal_points: object | None = None

    @property
    def n(self) -> int:
        return int(self.labels.shape[0])

    @property
    def n_groups(self) -> int:
        return int(np.unique(self.labels).size)


@dataclass(frozen=True)
class MetricValue:
    """A metric's value, or ``None`` with a note saying why it could not be computed."""

    value: float | None
    note: str = ""

    @staticmethod
    def missing(why: str) -> MetricValue:
        return MetricValue(None, why)

    @property
    def ok(self) -> bool:
        return self.value is not None and math.isfinite(self.value)


@dataclass(frozen=True)
class Family:
    name: str
    metrics: tuple[str, ...]
    func: Callable[[PeriodInput], dict[str, MetricValue]]
    bounds: dict[str, tuple[float, float]] = field(default_factory=dict)
    # Metrics that get a label-permutation null.
    permutation_null: tuple[str, ...] = ()
    # Costly families (an optimisation or a fit per call) get fewer bootstrap replicates and
    # permutations: BuildOptions.expensive_replicates.
    expensive: bool = False
    # Optional PeriodInput fields the family reads (e.g. "scores", None for yes/no bodies):
    # compute_all leaves the family out of a period where one of them is None.
    needs: tuple[str, ...] = ()
    # Which way means "more division" per metric ("higher" or "lower"); metrics without an
    # entry have no such reading. The label-permutation null tests in this direction.
    direction: dict[str, str] = field(default_factory=dict)
    # Optional second statistic per null-tested metric, ``f(PeriodInput) -> float`` read in the
    # same direction, that orders permutations tied on the metric itself (a discrete measure
    # with an atom, e.g. a cross-group share of 0, would otherwise lose its power).
    null_tiebreak: dict[str, Callable[[PeriodInput], float]] = field(default_factory=dict)
    # How the bootstrap interval is read off the replicates (metrics/uncertainty/resampling.py
    # INTERVAL_METHODS), chosen per family for coverage: tests/benchmarks/coverage.py.
    interval: str = "percentile"


# The modules that register the period families, in the order families are listed and computed.
# A new family module is added here (DEVELOPERS.md, "Adding a metric").
FAMILY_MODULES = ("graph.modularity", "graph.community", "graph.crossgroup",
                  "space.separability", "agreement.reliability", "agreement.cohesion",
                  "space.positions")
_REGISTERED: dict[str, Family] = {}


def loaded_families() -> dict[str, Family]:
    """Every registered family, the :data:`FAMILY_MODULES` imported first, in their order
    (families registered from elsewhere, e.g. a test, come last)."""
    for module in FAMILY_MODULES:
        importlib.import_module(f"blocwatch.metrics.{module}")
    rank = {f"blocwatch.metrics.{m}": i for i, m in enumerate(FAMILY_MODULES)}
    ordered = sorted(_REGISTERED.values(), key=lambda f: rank.get(f.func.__module__, len(rank)))
    if [f.name for f in ordered] != list(_REGISTERED):  # a module imported out of turn
        _REGISTERED.clear()
        _REGISTERED.update((f.name, f) for f in ordered)
    return _REGISTERED


def __getattr__(name: str):
    """``FAMILIES``: the registered families (:func:`loaded_families`), loaded on first use."""
    if name == "FAMILIES":
        return loaded_families()
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")


def register(name: str, metrics: tuple[str, ...], *,
             bounds: dict[str, tuple[float, float]] | None = None,
             permutation_null: tuple[str, ...] = (), expensive: bool = False,
             needs: tuple[str, ...] = (), direction: dict[str, str] | None = None,
             null_tiebreak: dict[str, Callable[[PeriodInput], float]] | None = None,
             interval: str = "percentile"):
    """Decorator: add a family to :data:`FAMILIES`.

    ``bounds`` gives the closed interval each metric must lie in (the invariance suite checks
    it); ``permutation_null`` names the metrics that get a label-permutation null;
    ``expensive`` marks families whose every call fits or optimises something; ``needs``
    names optional :class:`PeriodInput` fields without which the family is left out.
    ``direction`` maps a metric to ``"higher"`` or ``"lower"``: the side that means more
    division between groups; every metric in ``permutation_null`` must have one.
    ``null_tiebreak`` gives a null-tested metric a second statistic that orders tied
    permutations (:func:`blocwatch.metrics.uncertainty.nulls.label_permutation_null`).
    ``interval`` is the bootstrap interval method of every metric of the family
    (:func:`blocwatch.metrics.uncertainty.resampling.bootstrap_interval`).
    """
    direction = dict(direction or {})
    bad = {m: d for m, d in direction.items() if d not in DIRECTIONS or m not in metrics}
    untested = [m for m in permutation_null if m not in direction]
    if bad or untested:
        raise ValueError(f"metric family {name!r}: expected a direction in {DIRECTIONS} for "
                         f"each of its null-tested metrics, received {bad or untested}")

    def deco(func: Callable[[PeriodInput], dict[str, MetricValue]]):
        if name in _REGISTERED:
            raise ValueError(f"metric family {name!r} is registered twice")
        _REGISTERED[name] = Family(name, metrics, func, bounds or {}, permutation_null, expensive,
                                needs, direction, dict(null_tiebreak or {}), interval)
        return func

    return deco


def metric_direction(metric: str) -> str | None:
    """``"higher"`` or ``"lower"``: which way of ``metric`` means more division, else None.

    >>> metric_direction("cross_group_share"), metric_direction("communities")
    ('lower', None)
    """
    for fam in loaded_families().values():
        if metric in fam.metrics:
            return fam.direction.get(metric)
    return None


def metric_names() -> list[str]:
    """Every registered metric, in the order of :data:`~blocwatch.metrics.reference.METRIC_INFO`
    (set there on purpose, not by the order modules happen to be imported in)."""
    registered = [m for fam in loaded_families().values() for m in fam.metrics]
    return [m for m in METRIC_INFO if m in registered] + sorted(set(registered) - set(METRIC_INFO))


def metric_info(metric: str) -> MetricInfo:
    """Label, description, formula, reference and check values of a registered metric
    (:mod:`blocwatch.metrics.reference`); KeyError names a metric without an entry."""
    if metric not in METRIC_INFO:
        raise KeyError(f"metric {metric!r} has no entry in blocwatch.metrics.reference")
    return METRIC_INFO[metric]


def compute_all(inp: PeriodInput, *, families: list[str] | None = None
                ) -> dict[str, MetricValue]:
    """Run every (or the named) families on one period; never raises for degenerate input.

    A family that raises ``ValueError`` on this input gets a missing value with the message as
    note for each of its metrics: a period where a metric cannot be computed is a note, not a
    crash. A family whose ``needs`` field is None here is left out (no rows at all).
    """
    out: dict[str, MetricValue] = {}
    for fam in loaded_families().values():
        if families is not None and fam.name not in families:
            continue
        if any(getattr(inp, f) is None for f in fam.needs):
            continue
        try:
            values = fam.func(inp)
        except ValueError as exc:
            values = {m: MetricValue.missing(str(exc)) for m in fam.metrics}
        for m in fam.metrics:
            out[m] = values.get(m, MetricValue.missing("not computed"))
    return out
