"""Per-topic and agenda-standardised series of one period (bodies whose ballots carry topics).

For each topic with at least ``min_topic_ballots`` counted ballots in the period the headline
families (:data:`SUBSET_FAMILIES`, plus the costly :data:`TOPIC_FAMILIES`) are computed on that
topic's ballots alone (subset ``topic:<name>``); a topic with fewer gets a row per metric with
no value and a note. The agenda-standardised series (subset ``agenda-standardised``) computes
the cheap families on the directly standardised agreement
(:func:`blocwatch.metrics.change.agenda.standardise_agreement`): each pair's agreement is
the mean of its
per-topic agreements weighted by the body's reference topic mix, so a change that only
comes from the agenda's make-up leaves it flat.

Intervals come from one stratified bootstrap: every replicate resamples ballots within each
topic (the topic mix stays the period's own), and the same replicate gives the per-topic values
and, through their agreement matrices, the standardised one. The costly families run on the
first ``expensive_replicates`` replicates only, as for the whole period. Ballots without a
topic form the stratum ``(none)``; it counts like any topic.
"""

from __future__ import annotations

from collections.abc import Callable

import numpy as np
import pandas as pd

from blocwatch.metrics import compute_all
from blocwatch.metrics.change.agenda import standardise_agreement, stratified_ballot_weights
from blocwatch.metrics.registry import FAMILIES, PeriodInput
from blocwatch.metrics.uncertainty.resampling import percentile_interval
from blocwatch.pipeline.build.graphs import build_graph
from blocwatch.pipeline.options import NO_TOPIC, parse_rule

# The families computed per subset: the cheap headline ones that read only the agreement and
# the graph (the standardised series has agreement, not votes).
SUBSET_FAMILIES = ("modularity", "crossgroup")
# Costly families computed per topic too (not standardised: they need votes or fit per call).
TOPIC_FAMILIES = ("separability", "louvain")
STANDARDISED = "agenda-standardised"
# The topics with enough ballots in a period must carry at least this share of the reference
# mix, else the period gets no standardised figure (it would stand for a few topics only).
MIN_REFERENCE_COVERAGE = 0.5
SUBSET_COLUMNS = ["subset", "metric", "value", "low", "high", "n_ballots", "note"]
OUTSIDE_NOTE = ("the estimate lies outside its bootstrap interval: resampled ballots shift this "
                "measure (ballots drawn twice add apparent structure), so read the interval as "
                "rough")
FLAT_NOTE = ("no spread: every resample of these ballots gave the same value, so the interval "
             "cannot show the uncertainty; read it as unknown")


def subset_metric_names(families=SUBSET_FAMILIES + TOPIC_FAMILIES) -> list[str]:
    return [m for f in families for m in FAMILIES[f].metrics]


def ballot_topics(topics: np.ndarray) -> np.ndarray:
    """Each ballot's topic as text, ballots without one as :data:`NO_TOPIC`."""
    out = np.asarray(topics, dtype=object).astype(str)
    out[(out == "") | (out == "None") | (out == "nan")] = NO_TOPIC
    return out


def subset_rows(vm, labels: np.ndarray, opts, seed: int,
                make_input: Callable[..., PeriodInput]) -> pd.DataFrame:
    """Rows (:data:`SUBSET_COLUMNS`) of the per-topic and standardised series of one period.

    ``vm`` is the filtered period (its ``topics`` set), ``make_input(votes, labels, opts, seed,
    weights=None, scales=None)`` builds the metric input of a vote matrix (the build's own
    agreement and graph rule), ``opts.topic_mix`` the reference mix (``()``: no standardised
    series, e.g. a build from partitions).
    """
    if vm.topics is None or vm.votes.shape[1] == 0:
        return pd.DataFrame(columns=SUBSET_COLUMNS)
    topics = ballot_topics(vm.topics)
    names = sorted(set(topics.tolist()))
    counts = {t: int((topics == t).sum()) for t in names}
    enough = [t for t in names if counts[t] >= opts.min_topic_ballots]
    metrics = subset_metric_names()
    cols = {t: np.flatnonzero(topics == t) for t in enough}

    def one(weights: np.ndarray | None, costly: bool = True) -> tuple[dict, dict]:
        """Values per topic and their agreement matrices, for one (re)weighting."""
        values, agreements = {}, {}
        families = list(SUBSET_FAMILIES + (TOPIC_FAMILIES if costly else ()))
        for t in enough:
            w = None if weights is None else weights[cols[t]]
            scales = None if vm.scales is None else vm.scales.subset(slice(None), cols[t])
            inp = make_input(vm.votes[:, cols[t]], labels, opts, seed, weights=w, scales=scales)
            values[t] = compute_all(inp, families=families)
            agreements[t] = inp.agreement
        return values, agreements

    reference = dict(opts.topic_mix)
    used = [t for t in enough if reference.get(t, 0) > 0]
    coverage = sum(reference[t] for t in used)
    if coverage < MIN_REFERENCE_COVERAGE:  # mostly not held fixed: no figure, a note
        used = []

    def standardised(agreements: dict) -> dict:
        if not used:
            return {}
        a = standardise_agreement(np.stack([agreements[t] for t in used]),
                                  np.array([reference[t] for t in used]))
        graph = build_graph(a, labels, parse_rule(opts.rule))
        inp = PeriodInput(agreement=a, shared=np.zeros(a.shape, dtype=np.int64), labels=labels,
                          weights=graph.weights, edges=graph.edges, votes=None, seed=seed)
        return compute_all(inp, families=list(SUBSET_FAMILIES))

    values, agreements = one(None)
    std = standardised(agreements)
    samples = {key: np.full((opts.bootstrap, len(metrics)), np.nan)
               for key in [*enough, STANDARDISED]}
    if opts.bootstrap > 0 and enough:
        w = stratified_ballot_weights(topics, opts.bootstrap, seed=seed)
        for r in range(opts.bootstrap):
            rep, rep_agreements = one(w[r], costly=r < opts.expensive_replicates)
            rep[STANDARDISED] = standardised(rep_agreements)
            for key, vals in rep.items():
                samples[key][r] = [vals[m].value if m in vals and vals[m].ok else np.nan
                                   for m in metrics]
    costly_metrics = set(subset_metric_names(TOPIC_FAMILIES))
    rows = []
    for t in names:
        for j, m in enumerate(metrics):
            if t not in values:
                rows.append([f"topic:{t}", m, np.nan, np.nan, np.nan, counts[t],
                             f"only {counts[t]} counted ballot(s) on this topic in this period "
                             f"(minimum {opts.min_topic_ballots}): no figure"])
                continue
            sample = samples[t][:, j]
            if m in costly_metrics:  # ran on the first expensive_replicates replicates only
                sample = sample[:opts.expensive_replicates]
            rows.append(_row(f"topic:{t}", m, values[t].get(m), sample, counts[t]))
    if reference:
        missing = sorted(t for t in reference if t not in used)
        why = (f"; topics of the reference mix without enough ballots here, their weight spread "
               f"over the others: {', '.join(missing)}") if missing and used else ""
        n_used = sum(counts[t] for t in used)
        for j, m in enumerate(metrics):
            if m in costly_metrics:
                continue  # standardised agreement has no votes to fit or resample
            if not used:
                rows.append([STANDARDISED, m, np.nan, np.nan, np.nan, 0, "the topics with "
                             f"{opts.min_topic_ballots}+ ballots here carry "
                             f"{coverage:.0%} of the reference mix (at least "
                             f"{MIN_REFERENCE_COVERAGE:.0%} needed): no figure"])
                continue
            row = _row(STANDARDISED, m, std.get(m), samples[STANDARDISED][:, j], n_used)
            row[-1] = ((row[-1] or "") + why).lstrip("; ") or None
            rows.append(row)
    return pd.DataFrame(rows, columns=SUBSET_COLUMNS)


def _row(subset: str, metric: str, value, sample: np.ndarray, n: int) -> list:
    ok = value is not None and value.ok
    low, high = percentile_interval(sample) if sample.size else (np.nan, np.nan)
    note = (value.note or None) if value is not None else "not computed"
    if ok and not low - 1e-12 <= value.value <= high + 1e-12:
        # Said, not hidden: a percentile interval of a biased statistic can miss its estimate.
        note = ((note + "; ") if note else "") + OUTSIDE_NOTE
    elif ok and high - low <= 1e-12:  # a flat interval is not certainty (issue 12)
        note = ((note + "; ") if note else "") + FLAT_NOTE
    return [subset, metric, value.value if ok else np.nan, low, high, n, note]
