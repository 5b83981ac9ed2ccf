"""One body × period from its vote matrix to result rows: filters, agreement, graph, metrics,
ballot bootstrap and label-permutation nulls. No store access here, so a worker process can run
it on a matrix it was handed.
"""

from __future__ import annotations

import dataclasses
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from blocwatch.metrics import PeriodInput, compute_all, registry
from blocwatch.metrics.agreement.cohesion import group_agreement_matrix
from blocwatch.metrics.agreement.reliability import alpha_by_group
from blocwatch.metrics.graph.bridging import member_notes
from blocwatch.metrics.member_registry import compute_members
from blocwatch.metrics.space.positions import replicate_start, with_ideal_points
from blocwatch.metrics.uncertainty.intervals import metric_interval
from blocwatch.metrics.uncertainty.nulls import label_permutation_null
from blocwatch.metrics.uncertainty.resampling import (
    ballot_weights,
    percentile_interval,
    stable_seed,
)
from blocwatch.pipeline.build.agreement import agreement_counts, agreement_matrix
from blocwatch.pipeline.build.causes import empty_cause, explain_missing
from blocwatch.pipeline.build.edges import EDGE_COLUMNS, strongest_pairs
from blocwatch.pipeline.build.filters import filter_period
from blocwatch.pipeline.build.fingerprint import fingerprint
from blocwatch.pipeline.build.graphs import build_graph
from blocwatch.pipeline.build.jackknife import member_jackknife_se
from blocwatch.pipeline.build.left_out import left_out_rows
from blocwatch.pipeline.build.matrices import VoteMatrix
from blocwatch.pipeline.build.scored_agreement import scored_period_input
from blocwatch.pipeline.build.topics import SUBSET_COLUMNS, subset_rows
from blocwatch.pipeline.options import EDGE_BUDGET, BuildOptions, parse_rule

METRIC_COLUMNS = ["metric", "value", "low", "high", "null_mean", "null_z", "null_p", "note"]


@dataclass
class PeriodResult:
    body: str
    period_name: str
    period_start: object
    period_end: object
    n_members: int
    n_ballots: int
    n_dropped: int
    fingerprint: str
    metrics: pd.DataFrame
    members: pd.DataFrame
    groups: pd.DataFrame
    # Per-topic and agenda-standardised rows (blocwatch.pipeline.build.topics.SUBSET_COLUMNS).
    subsets: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(columns=SUBSET_COLUMNS))
    replicates: dict | None = None  # metric → bootstrap values (compute_period keep_replicates)
    # The strongest pairs for the network picture (EDGE_BUDGET) and how many pairs had a value.
    edges: pd.DataFrame = field(default_factory=lambda: pd.DataFrame(columns=EDGE_COLUMNS))
    n_pairs: int = 0


def period_input(votes: np.ndarray, labels: np.ndarray, opts: BuildOptions, seed: int,
                 weights: np.ndarray | None = None, scales=None) -> PeriodInput:
    """Agreement, graph and metric input for one (possibly reweighted) vote matrix.

    Scored ballots (``scales``) and the kappa measure go through
    :func:`blocwatch.pipeline.build.scored_agreement.scored_period_input`; yes/no with
    ``match`` stays here.
    """
    if scales is not None or opts.agreement.measure != "match":
        return scored_period_input(votes, scales, labels, opts, seed, weights)
    same, both = agreement_counts(votes, weights=weights,
                                  abstain_as_position=opts.agreement.abstain_as_position)
    agreement = agreement_matrix(same, both, min_shared=opts.agreement.min_shared)
    graph = build_graph(agreement, labels, parse_rule(opts.rule))
    if weights is not None:  # the resampled matrix, for the families that read votes
        votes = np.repeat(votes, np.asarray(weights, dtype=np.int64), axis=1)
    return PeriodInput(agreement=agreement, shared=both.astype(np.int64), labels=labels,
                       weights=graph.weights, edges=graph.edges, votes=votes, seed=seed)


def _bootstrap(vm: VoteMatrix, labels: np.ndarray, opts: BuildOptions, seed: int,
               names: list[str], families: list[str] | None = None, fit=None
               ) -> tuple[dict[str, np.ndarray], np.ndarray | None]:
    """Each metric's replicate values over ``opts.bootstrap`` reweightings of the ballots
    (NaN where a replicate has no value; costly families have ``expensive_replicates``), and
    the percentile intervals of the group × group mean agreement ((k, k, 2) low/high, from
    the same replicates; None without a bootstrap).

    ``fit`` (the period's ideal points) warm-starts each replicate's EM fit where the
    replicate's vote matrix is the period's yes/no ballots repeated (not scored, not kappa)."""
    if opts.bootstrap <= 0 or vm.votes.shape[1] == 0:
        return {}, None
    blocks = vm.items if any(vm.items) else None
    w = ballot_weights(vm.votes.shape[1], opts.bootstrap, seed=seed, blocks=blocks)
    samples = np.full((opts.bootstrap, len(names)), np.nan)
    k = len(vm.group_names)
    pair_samples = np.full((opts.bootstrap, k, k), np.nan)
    every = [f.name for f in registry.FAMILIES.values()
             if families is None or f.name in families]
    cheap = [name for name in every if not registry.FAMILIES[name].expensive]
    warm = fit is not None and vm.scales is None and opts.agreement.measure == "match"
    for r in range(opts.bootstrap):
        inp = period_input(vm.votes, labels, opts, seed, weights=w[r], scales=vm.scales)
        full = r < opts.expensive_replicates
        if warm and full:
            inp = with_ideal_points(inp, start=replicate_start(fit, w[r]))
        values = compute_all(inp, families=every if full else cheap)
        samples[r] = [values[m].value if m in values and values[m].ok else np.nan
                      for m in names]
        if inp.n:
            pair_samples[r] = np.asarray(group_agreement_matrix(inp.agreement, labels)[0],
                                         dtype=float)[:k, :k]
    pairs = np.array([[percentile_interval(pair_samples[:, a, b]) for b in range(k)]
                      for a in range(k)]).reshape(k, k, 2)
    # Costly families ran on the first expensive_replicates reweightings only.
    costly = {m for name in every if registry.FAMILIES[name].expensive
              for m in registry.FAMILIES[name].metrics}
    return {m: samples[:opts.expensive_replicates, j] if m in costly else samples[:, j]
            for j, m in enumerate(names)}, pairs


def permutation_nulls(inp: PeriodInput, opts: BuildOptions, seed: int, *,
                      families: list[str] | None = None) -> dict[str, dict]:
    """Label-permutation null of each metric a family names in ``permutation_null``, tested
    in the metric's registered direction (small p, positive z: more split than chance).

    Each permutation rebuilds the graph from the agreement matrix with the shuffled labels:
    the equal-likelihood edge set is chosen *with* the labels, and a null that kept the
    observed labels' edges would favour them (measured: 18 % of p ≤ 0.05 for cross-group
    share on bodies whose groups carry no signal). ``families`` limits the work to the named
    families.
    """
    if opts.permutations <= 0 or inp.n_groups < 2:
        return {}
    rule = parse_rule(opts.rule)
    out = {}
    for fam in registry.FAMILIES.values():
        if families is not None and fam.name not in families:
            continue
        for metric in fam.permutation_null:
            def stat(labels, _fam=fam, _metric=metric):
                value = _fam.func(_relabelled(inp, labels, rule))[_metric]
                return value.value if value.ok else np.nan
            second = fam.null_tiebreak.get(metric)
            tiebreak = None if second is None else (
                lambda labels, _f=second: _f(_relabelled(inp, labels, rule)))
            n_perm = min(opts.permutations, opts.expensive_replicates) if fam.expensive \
                else opts.permutations
            out[metric] = label_permutation_null(stat, inp.labels, n_perm=n_perm, seed=seed,
                                                 direction=fam.direction[metric],
                                                 tiebreak=tiebreak)
    return out


def _relabelled(inp: PeriodInput, labels: np.ndarray, rule) -> PeriodInput:
    graph = build_graph(inp.agreement, labels, rule)
    return dataclasses.replace(inp, labels=labels, weights=graph.weights, edges=graph.edges)


def compute_period(vm: VoteMatrix, opts: BuildOptions, version: str, *,
                   families: list[str] | None = None,
                   keep_replicates: bool = False) -> PeriodResult:
    """All result rows of one period (``vm`` as loaded, before filtering); ``families``
    limits the metric rows to the named families and ``keep_replicates`` keeps the bootstrap
    values on the result (benchmarks; a build computes them all and keeps none)."""
    # 32 bits: scikit-learn's random_state (separability folds) refuses larger seeds.
    seed = stable_seed(opts.seed, vm.body, vm.period.name) % 2**32
    fp = fingerprint(vm, opts, version)
    n_loaded = int(vm.votes.shape[1])
    vm = filter_period(vm, opts.agreement)
    labels = vm.labels
    # One ideal-point fit, passed along: the period family, the member table and the
    # permutation null (same votes, other labels) all read it.
    inp = with_ideal_points(period_input(vm.votes, labels, opts, seed, scales=vm.scales))
    values = compute_all(inp, families=families)
    cause = empty_cause(n_loaded, inp, int(vm.votes.shape[1]), opts)
    members = _member_rows(vm, inp, cause)
    extra = left_out_rows(vm, opts.agreement.min_share_cast)
    if len(extra):
        members = pd.concat([members, extra], ignore_index=True) if len(members) else extra
    names = list(values)
    replicates, pair_intervals = _bootstrap(vm, labels, opts, seed, names, families,
                                            fit=inp.ideal_points)
    nulls = permutation_nulls(inp, opts, seed, families=families)
    # A small body: who sits on it matters as much as the agenda (widens its intervals).
    member_se = member_jackknife_se(vm, labels, opts, seed, names, families, period_input)
    rows = []
    for m in names:
        v = values[m]
        value = v.value if v.ok else np.nan
        iv = metric_interval(m, value, replicates.get(m, ()), n_members=inp.n,
                             member_se=member_se.get(m))
        null = nulls.get(m, {})
        own = v.note if v.ok else explain_missing(v.note, cause)
        note = "; ".join(n for n in (own, iv.note) if n) or None
        rows.append([m, value, iv.low, iv.high, null.get("mean", np.nan),
                     null.get("z", np.nan), null.get("p", np.nan), note])
    metrics = pd.DataFrame(rows, columns=METRIC_COLUMNS)
    # The picture draws the ties the rule keeps (the edge set), not every pair.
    edges, n_pairs = strongest_pairs(inp.agreement, vm.member_ids, EDGE_BUDGET, keep=inp.edges)
    return PeriodResult(vm.body, vm.period.name, vm.period.start, vm.period.end, inp.n,
                        int(vm.votes.shape[1]), vm.dropped, fp, metrics,
                        members, _group_rows(vm, inp, pair_intervals),
                        subset_rows(vm, labels, opts, seed, period_input),
                        replicates if keep_replicates else None, edges, n_pairs)


def _member_rows(vm: VoteMatrix, inp: PeriodInput, cause: str = "") -> pd.DataFrame:
    if inp.n == 0:
        return pd.DataFrame(columns=["member_id", "group_name", "metric", "value", "note"])
    notes: dict[str, str] = {}
    scores = compute_members(inp, notes=notes)
    frames = [pd.DataFrame({"member_id": vm.member_ids, "group_name": vm.groups, "metric": name,
                            "value": np.asarray(vals, dtype=float)})
              for name, vals in scores.items()]
    out = pd.concat(frames, ignore_index=True)
    for name, vals in scores.items():  # a whole metric empty: its cause, not its symptom
        if np.isnan(np.asarray(vals, dtype=float)).all():
            notes[name] = explain_missing(notes.get(name), cause) or notes.get(name, "")
    out["note"] = out["metric"].map(notes).astype(object)  # why a whole metric is empty
    for name, per_member in member_notes(inp.labels, scores).items():  # why one member's is
        rows = (out["metric"] == name).to_numpy()
        if rows.any():
            mine = pd.Series(per_member, dtype=object).to_numpy()
            out.loc[rows, "note"] = np.where(pd.isna(mine), out.loc[rows, "note"], mine)
    out.loc[out["note"].isna(), "note"] = None
    return out


def _group_rows(vm: VoteMatrix, inp: PeriodInput,
                intervals: np.ndarray | None = None) -> pd.DataFrame:
    cols = ["group_a", "group_b", "agreement", "n_pairs", "alpha", "low", "high"]
    if inp.n == 0:
        return pd.DataFrame(columns=cols)
    mean, pairs = group_agreement_matrix(inp.agreement, inp.labels)
    g = vm.group_names
    ia, ib = np.meshgrid(np.arange(len(g)), np.arange(len(g)), indexing="ij")
    # Per-group Krippendorff alpha on the diagonal, for periods with scored ballots.
    alpha = np.full((len(g), len(g)), np.nan)
    if inp.scores is not None:
        np.fill_diagonal(alpha, alpha_by_group(inp.scores, inp.labels,
                                               level=inp.score_level)[: len(g)])
    return pd.DataFrame({"group_a": np.array(g, dtype=object)[ia.ravel()],
                         "group_b": np.array(g, dtype=object)[ib.ravel()],
                         "agreement": np.asarray(mean, dtype=float).ravel(),
                         "n_pairs": np.asarray(pairs, dtype=np.int64).ravel(),
                         "alpha": alpha.ravel(),
                         # bootstrap interval of the mean agreement (same replicates as above)
                         "low": intervals[..., 0].ravel() if intervals is not None
                         else np.full(len(g) ** 2, np.nan),
                         "high": intervals[..., 1].ravel() if intervals is not None
                         else np.full(len(g) ** 2, np.nan)})
