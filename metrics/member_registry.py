"""The registry of per-member metrics: one length-n array per metric and period.

Like :mod:`blocwatch.metrics.registry`, but each family returns arrays aligned with the
period's members (NaN where a member's score is undefined). Importing this module registers
the built-in member families below; :func:`compute_members` never raises for degenerate
input: a family that raises ``ValueError`` gets all-NaN arrays and a note.

These scores describe voting patterns, not people: they must not be used to single anyone
out.

Metric names are part of the export contract: add names, never rename them.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass

import numpy as np

from blocwatch.metrics.agreement.cohesion import loyalty
from blocwatch.metrics.graph.bridges import (
    cross_tie_share,
    leave_one_out_delta_q,
    participation_coefficient,
    super_cooperators,
)
from blocwatch.metrics.graph.bridging import (
    BRIDGE_ALPHA,
    bridge_ranks,
    bridging_null,
    bridging_null_p,
    bridging_ratio,
)
from blocwatch.metrics.registry import PeriodInput
from blocwatch.metrics.space.mds import agreement_distances, classical_mds
from blocwatch.metrics.space.positions import period_ideal_points

__all__ = ["MEMBER_FAMILIES", "MemberFamily", "register_member", "member_metric_names",
           "compute_members"]


@dataclass(frozen=True)
class MemberFamily:
    name: str
    metrics: tuple[str, ...]
    func: Callable[[PeriodInput], dict[str, np.ndarray]]


MEMBER_FAMILIES: dict[str, MemberFamily] = {}


def register_member(name: str, metrics: tuple[str, ...]):
    """Decorator: add a member-level family to :data:`MEMBER_FAMILIES`.

    The function takes a :class:`PeriodInput` and returns one length-n array per metric.

    >>> @register_member("doc_example", ("doc_zero",))
    ... def _zero(inp):
    ...     return {"doc_zero": np.zeros(inp.n)}
    >>> "doc_zero" in member_metric_names()
    True
    >>> del MEMBER_FAMILIES["doc_example"]
    """

    def deco(func: Callable[[PeriodInput], dict[str, np.ndarray]]):
        if name in MEMBER_FAMILIES:
            raise ValueError(f"member metric family {name!r} is registered twice")
        MEMBER_FAMILIES[name] = MemberFamily(name, metrics, func)
        return func

    return deco


def member_metric_names() -> list[str]:
    """Every member metric name, in registration order.

    >>> member_metric_names()[:2]
    ['cross_tie_share', 'participation']
    """
    return [m for fam in MEMBER_FAMILIES.values() for m in fam.metrics]


def compute_members(inp: PeriodInput, *, families: list[str] | None = None,
                    notes: dict[str, str] | None = None) -> dict[str, np.ndarray]:
    """Run every (or the named) member families on one period.

    Returns one float array of length n per metric. A family raising ``ValueError`` yields
    NaN arrays; its message goes into ``notes`` (metric → note) when a dict is passed.

    >>> a = np.array([[1, .9, .2, .3], [.9, 1, .1, .2], [.2, .1, 1, .8], [.3, .2, .8, 1]])
    >>> w = a - np.eye(4)
    >>> inp = PeriodInput(agreement=a, shared=np.full((4, 4), 10), labels=np.array([0, 0, 1, 1]),
    ...                   weights=w, edges=w > 0.25)
    >>> notes = {}
    >>> out = compute_members(inp, notes=notes)
    >>> out["cross_tie_share"].tolist(), out["cross_partners"].tolist()
    ([0.5, 0.0, 0.0, 0.5], [0.0, 0.0, 0.0, 0.0])
    >>> notes["loyalty"]
    'needs the vote matrix, which was not available'
    """
    out: dict[str, np.ndarray] = {}
    n = inp.n
    for fam in MEMBER_FAMILIES.values():
        if families is not None and fam.name not in families:
            continue
        try:
            values = fam.func(inp)
            why = ""
        except ValueError as exc:
            values, why = {}, str(exc)
        for m in fam.metrics:
            arr = np.asarray(values.get(m, np.full(n, np.nan)), dtype=np.float64)
            if arr.shape != (n,):
                raise RuntimeError(f"member family {fam.name!r} returned shape {arr.shape} for "
                                   f"{m!r}, expected ({n},)")
            out[m] = arr
            if notes is not None and (why or m not in values):
                notes[m] = why or "not computed"
    return out


def _need_votes(inp: PeriodInput) -> np.ndarray:
    if inp.votes is None:
        raise ValueError("needs the vote matrix, which was not available")
    return np.asarray(inp.votes)


@register_member("cross_ties", ("cross_tie_share",))
def _cross_ties(inp: PeriodInput) -> dict[str, np.ndarray]:
    """Share of the member's edges (the period's thresholded graph) that cross groups."""
    return {"cross_tie_share": cross_tie_share(inp.edges, inp.labels)}


@register_member("participation", ("participation",))
def _participation(inp: PeriodInput) -> dict[str, np.ndarray]:
    """Participation coefficient on the weighted graph."""
    return {"participation": participation_coefficient(inp.weights, inp.labels)}


@register_member("cross_partners", ("cross_partners",))
def _cross_partners(inp: PeriodInput) -> dict[str, np.ndarray]:
    """Other-group members agreed with at least as often as the median same-group pair."""
    return {"cross_partners": super_cooperators(inp.agreement, inp.labels)}


@register_member("delta_q", ("delta_q",))
def _delta_q(inp: PeriodInput) -> dict[str, np.ndarray]:
    """Change in group modularity (weighted graph) when the member is left out."""
    return {"delta_q": leave_one_out_delta_q(inp.weights, inp.labels)}


@register_member("loyalty", ("loyalty",))
def _loyalty(inp: PeriodInput) -> dict[str, np.ndarray]:
    """Share of group-line ballots voted with the own group's line; none for a member alone
    in its group (its "group line" is its own vote, so it would always be 1)."""
    values = loyalty(_need_votes(inp), inp.labels)
    codes = np.unique(np.asarray(inp.labels), return_inverse=True)[1]
    return {"loyalty": np.where(np.bincount(codes)[codes] > 1, values, np.nan)}


@register_member("ideal", ("ideal_point",))
def _ideal(inp: PeriodInput) -> dict[str, np.ndarray]:
    """Standardised 1-D probit ideal point (positive = votes yes more often)."""
    _need_votes(inp)
    return {"ideal_point": np.array(period_ideal_points(inp).x)}


@register_member("mds", ("mds_1", "mds_2"))
def _mds(inp: PeriodInput) -> dict[str, np.ndarray]:
    """First two classical-MDS coordinates of 1 − agreement (sign rule of ``classical_mds``)."""
    coords = classical_mds(agreement_distances(inp.agreement), 2)
    return {"mds_1": coords[:, 0], "mds_2": coords[:, 1]}


@register_member("bridging", ("bridging", "bridge_rank", "bridging_null_p"))
def _bridging(inp: PeriodInput) -> dict[str, np.ndarray]:
    """Agreement with other groups over agreement within the own group; its random-groups p;
    the rank of members with p ≤ BRIDGE_ALPHA (ties share a rank; nobody else is ranked)."""
    score = bridging_ratio(inp.agreement, inp.labels)
    p = bridging_null_p(score, bridging_null(inp.agreement, inp.labels, seed=inp.seed))
    ranked = np.where(p <= BRIDGE_ALPHA, score, np.nan)
    return {"bridging": score, "bridge_rank": bridge_ranks(ranked, -np.inf),
            "bridging_null_p": p}

