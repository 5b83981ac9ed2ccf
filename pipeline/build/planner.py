"""The period planner: which body × period pairs exist, which are stale, which are gone.

One place answers these for ``build`` (what to compute, what to skip, what to drop),
``rebuild`` (what to recompute) and ``status`` (what is stale), so the three cannot disagree.

A body's periods are those the period spec produces over the range of its ballot dates
(:func:`~blocwatch.pipeline.build.periods.make_periods`); a period holding no vote is passed
over. A period is

* ``new`` when the store holds no results for it,
* ``changed`` when its fingerprint (its votes, the groups in force, the build options and the
  tool version; :func:`~blocwatch.pipeline.build.fingerprint.fingerprint`) differs from the stored
  one, and
* ``removed`` when the store holds results for it under the same spec but the spec no longer
  produces it (results of other specs live beside them and are not judged here).

A body's trends are stale when they are older than its newest period (a run killed between
its last period and its trends).
"""

from __future__ import annotations

import dataclasses
from collections.abc import Iterator
from dataclasses import dataclass, field

from blocwatch.pipeline.build.fingerprint import fingerprint
from blocwatch.pipeline.build.matrices import VoteMatrix, load_votes
from blocwatch.pipeline.build.periods import make_periods
from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.options import NO_TOPIC, BuildOptions, Period
from blocwatch.pipeline.store.ballots import ballot_date_range, topic_counts
from blocwatch.pipeline.store.bodies import stored_bodies
from blocwatch.pipeline.store.database import Store
from blocwatch.pipeline.store.results import result_runs, stored_fingerprints
from blocwatch.pipeline.store.runs import tool_version


@dataclass(frozen=True)
class Stale:
    body: str
    period: str | None  # None: the body's trends
    reason: str  # "new", "changed", "removed", "trends"


@dataclass
class BodyPlan:
    """One body's periods under a spec, beside the fingerprints the store holds for it."""

    body: str
    periods: list[Period]
    stored: dict[str, str] = field(default_factory=dict)  # period name → stored fingerprint

    @property
    def removed(self) -> list[str]:
        """Stored periods the spec no longer produces (their results are to be dropped)."""
        names = {p.name for p in self.periods}
        return sorted(p for p in self.stored if p not in names)

    def state(self, vm: VoteMatrix, options: BuildOptions, version: str) -> str | None:
        """``"new"``, ``"changed"`` or None (stored results are current) for a loaded period."""
        stored = self.stored.get(vm.period.name)
        if stored is None:
            return "new"
        return None if stored == fingerprint(vm, options, version) else "changed"

    def matrices(self, store: Store, only: set[str] | None = None) -> Iterator[VoteMatrix]:
        """Each period's vote matrix (limited to the names in ``only``), read when asked for;
        periods holding no vote are passed over."""
        for period in self.periods:
            if only is not None and period.name not in only:
                continue
            vm = load_votes(store, self.body, period)
            if vm.votes.size:
                yield vm


def body_periods(store: Store, body: str, spec: str) -> list[Period]:
    """The periods of ``spec`` over the body's ballot dates (none for a body without ballots)."""
    span = ballot_date_range(store, body)
    return [] if span is None else make_periods(spec, span[0], span[1])


def body_options(store: Store, body: str, opts: BuildOptions) -> BuildOptions:
    """``opts`` with the body's reference topic mix filled in (``()`` without topics).

    The mix is each topic's share of the body's stored ballots (``pooled``) or of one period's
    (``topic_reference`` = that period's name); ballots without a topic count as ``(none)``.
    The mix decides the standardised series, so it is part of every period's fingerprint.
    """
    rows = topic_counts(store, body)
    if not any(t for t, _ in rows):
        return dataclasses.replace(opts, topic_mix=())
    if opts.topic_reference != "pooled":
        periods = {p.name: p for p in body_periods(store, body, opts.period)}
        chosen = periods.get(opts.topic_reference)
        if chosen is None:
            raise UsageError(f"topic reference {opts.topic_reference!r}",
                             f"is not a {opts.period} period of {body}",
                             f"use pooled or one of: {', '.join(list(periods)[:10])}")
        rows = topic_counts(store, body, chosen.start, chosen.end)
    return dataclasses.replace(opts, topic_mix=topic_mix(rows))


def topic_mix(counts) -> tuple:
    """Each topic's share of ``counts`` ((topic, ballots) pairs; ``''`` = no topic), sorted.

    ``()`` when no ballot has a topic, so bodies without topics keep their fingerprints.
    """
    counts = [(t, n) for t, n in counts if n]
    if not any(t for t, _ in counts):
        return ()
    total = sum(n for _, n in counts)
    return tuple(sorted((t or NO_TOPIC, round(n / total, 12)) for t, n in counts))


def plan_body(store: Store, body: str, spec: str) -> BodyPlan:
    """``body``'s periods under ``spec`` beside the results stored for that spec (results of
    other specs are neither stale nor removed by it: they live side by side)."""
    stored = stored_fingerprints(store, body, spec)
    return BodyPlan(body, body_periods(store, body, spec), stored)


def trends_stale(store: Store, body: str, spec: str) -> bool:
    """Trends are written after a run's last period, so they must be as new as every period."""
    newest_period, oldest_trend = result_runs(store, body, spec)
    return newest_period is not None and (oldest_trend is None or oldest_trend < newest_period)


def stale_periods(store: Store, options: BuildOptions, body: str | None = None) -> list[Stale]:
    """The body × period pairs a rebuild would recompute (or remove), without writing."""
    version = tool_version()
    known = stored_bodies(store)
    out = []
    for b in (k for k in known if body is None or k == body):
        plan = plan_body(store, b, options.period)
        body_opts = body_options(store, b, options)
        found = [Stale(b, vm.period.name, state) for vm in plan.matrices(store)
                 if (state := plan.state(vm, body_opts, version)) is not None]
        found += [Stale(b, p, "removed") for p in plan.removed]
        if not found and trends_stale(store, b, options.period):
            found.append(Stale(b, None, "trends"))
        out += found
    return out
