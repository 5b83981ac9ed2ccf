"""One body × period from its vote matrix to result rows: filters, agreement, graph, metrics,
ballot bootstrap and label-permutation nulls. No store access here, so a worker process can run
it on a matrix it was handed.
"""

from __future__ import annotations

import dataclasses
import hashlib
import json
from dataclasses import dataclass, field

import numpy as np
import pandas as pd

from blocwatch.metrics import PeriodInput, compute_all, registry
from blocwatch.metrics.cohesion import group_agreement_matrix
from blocwatch.metrics.member_registry import compute_members
from blocwatch.metrics.nulls import label_permutation_null
from blocwatch.metrics.positions import replicate_start, with_ideal_points
from blocwatch.metrics.reliability import alpha_by_group
from blocwatch.metrics.resampling import ballot_weights, percentile_interval, stable_seed
from blocwatch.pipeline.build.agreement import agreement_counts, agreement_matrix
from blocwatch.pipeline.build.filters import filter_period
from blocwatch.pipeline.build.graphs import build_graph
from blocwatch.pipeline.build.matrices import VoteMatrix
from blocwatch.pipeline.build.scored_agreement import scored_period_input
from blocwatch.pipeline.build.topics import SUBSET_COLUMNS, subset_rows
from blocwatch.pipeline.options import BuildOptions, parse_rule

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


def fingerprint(vm: VoteMatrix, opts: BuildOptions, version: str) -> str:
    """Hash of the period's votes, the groups in force, the parameters and the tool version."""
    h = hashlib.sha256()
    for arr in (vm.member_ids, vm.groups, vm.ballot_ids, vm.items):
        h.update("\x1f".join(map(str, arr)).encode())
        h.update(b"\x1e")
    h.update(np.ascontiguousarray(vm.votes).tobytes())
    if vm.topics is not None:  # only bodies with topics: others keep their stored fingerprints
        h.update(b"topics\x1e" + "\x1f".join(map(str, vm.topics)).encode())
    if vm.scales is not None:  # scored ballots: their scales and answers
        h.update(vm.scales.digest())
    h.update(json.dumps(opts.params(), sort_keys=True, default=str).encode())
    h.update(version.encode())
    return h.hexdigest()


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
               names: list[str], fit=None
               ) -> tuple[dict[str, tuple[float, float]], np.ndarray | None]:
    """Percentile intervals of the metrics, and of the group × group mean agreement
    ((k, k, 2) low/high, from the same replicates; None without a bootstrap).

    ``fit`` (the period's ideal points) warm-starts each replicate's EM fit where the
    replicate's vote matrix is the period's yes/no ballots repeated (not scored, not kappa)."""
    if opts.bootstrap <= 0 or vm.votes.shape[1] == 0:
        return {}, None
    blocks = vm.items if any(vm.items) else None
    w = ballot_weights(vm.votes.shape[1], opts.bootstrap, seed=seed, blocks=blocks)
    samples = np.full((opts.bootstrap, len(names)), np.nan)
    k = len(vm.group_names)
    pair_samples = np.full((opts.bootstrap, k, k), np.nan)
    cheap = [f.name for f in registry.FAMILIES.values() if not f.expensive]
    warm = fit is not None and vm.scales is None and opts.agreement.measure == "match"
    for r in range(opts.bootstrap):
        families = None if r < opts.expensive_replicates else cheap
        inp = period_input(vm.votes, labels, opts, seed, weights=w[r], scales=vm.scales)
        if warm and families is None:
            inp = with_ideal_points(inp, start=replicate_start(fit, w[r]))
        values = compute_all(inp, families=families)
        samples[r] = [values[m].value if m in values and values[m].ok else np.nan
                      for m in names]
        if inp.n:
            pair_samples[r] = np.asarray(group_agreement_matrix(inp.agreement, labels)[0],
                                         dtype=float)[:k, :k]
    pairs = np.array([[percentile_interval(pair_samples[:, a, b]) for b in range(k)]
                      for a in range(k)]).reshape(k, k, 2)
    return {m: percentile_interval(samples[:, j]) for j, m in enumerate(names)}, pairs


def _nulls(inp: PeriodInput, opts: BuildOptions, seed: int) -> dict[str, dict]:
    if opts.permutations <= 0 or inp.n_groups < 2:
        return {}
    out = {}
    for fam in registry.FAMILIES.values():
        for metric in fam.permutation_null:
            def stat(labels, _fam=fam, _metric=metric):
                value = _fam.func(_replace_labels(inp, labels))[_metric]
                return value.value if value.ok else np.nan
            n_perm = min(opts.permutations, opts.expensive_replicates) if fam.expensive \
                else opts.permutations
            out[metric] = label_permutation_null(stat, inp.labels, n_perm=n_perm, seed=seed)
    return out


def _replace_labels(inp: PeriodInput, labels: np.ndarray) -> PeriodInput:
    return dataclasses.replace(inp, labels=labels)


def compute_period(vm: VoteMatrix, opts: BuildOptions, version: str) -> PeriodResult:
    """All result rows of one period (``vm`` as loaded, before filtering)."""
    # 32 bits: scikit-learn's random_state (separability folds) refuses larger seeds.
    seed = stable_seed(opts.seed, vm.body, vm.period.name) % 2**32
    fp = fingerprint(vm, opts, version)
    vm = filter_period(vm, opts.agreement)
    labels = vm.labels
    # One ideal-point fit, passed along: the period family, the member table and the
    # permutation null (same votes, other labels) all read it.
    inp = with_ideal_points(period_input(vm.votes, labels, opts, seed, scales=vm.scales))
    values = compute_all(inp)
    members = _member_rows(vm, inp)
    names = list(values)
    intervals, pair_intervals = _bootstrap(vm, labels, opts, seed, names,
                                           fit=inp.ideal_points)
    nulls = _nulls(inp, opts, seed)
    rows = []
    for m in names:
        v = values[m]
        low, high = intervals.get(m, (np.nan, np.nan))
        null = nulls.get(m, {})
        rows.append([m, v.value if v.ok else np.nan, low, high, null.get("mean", np.nan),
                     null.get("z", np.nan), null.get("p", np.nan), v.note or None])
    metrics = pd.DataFrame(rows, columns=METRIC_COLUMNS)
    return PeriodResult(vm.body, vm.period.name, vm.period.start, vm.period.end, inp.n,
                        int(vm.votes.shape[1]), vm.dropped, fp, metrics,
                        members, _group_rows(vm, inp, pair_intervals),
                        subset_rows(vm, labels, opts, seed, period_input))


def _member_rows(vm: VoteMatrix, inp: PeriodInput) -> pd.DataFrame:
    if inp.n == 0:
        return pd.DataFrame(columns=["member_id", "group_name", "metric", "value", "note"])
    notes: dict[str, str] = {}
    scores = compute_members(inp, notes=notes)
    frames = [pd.DataFrame({"member_id": vm.member_ids, "group_name": vm.groups, "metric": name,
                            "value": np.asarray(vals, dtype=float)})
              for name, vals in scores.items()]
    out = pd.concat(frames, ignore_index=True)
    out["note"] = out["metric"].map(notes).astype(object)  # why a whole metric is empty
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
