"""Why a period's measures are empty, said once with the setting that caused it and its flag.

A metric only sees its input (an agreement matrix of NaN, a graph without edges) and would
name that symptom; the build knows the options that produced it. :func:`empty_cause` finds the
first cause in the order the filters run, and :func:`explain_missing` puts it on every empty
value whose own note names a symptom instead.
"""

from __future__ import annotations

import numpy as np

from blocwatch.metrics.registry import PeriodInput
from blocwatch.pipeline.options import parse_rule

__all__ = ["empty_cause", "explain_missing"]


def empty_cause(n_ballots_loaded: int, inp: PeriodInput, n_ballots_kept: int, opts) -> str:
    """The first reason, in filter order, that leaves the period without agreement values or
    edges; "" when the period has them (then each metric's own note stands).

    ``opts`` is the build's ``BuildOptions``; the flags named are the CLI's.
    """
    ag = opts.agreement
    if n_ballots_loaded > 0 and n_ballots_kept == 0:
        fix = ("--keep-unanimous keeps unanimous ballots" if ag.drop_unanimous else
               "lower --lopsided")
        return (f"all {n_ballots_loaded} ballots of the period were left out as unanimous or "
                f"lopsided (--lopsided {ag.lopsided:g}): {fix}")
    if n_ballots_kept > 0 and inp.n == 0:
        return (f"no member cast at least {ag.min_share_cast:g} of the period's "
                f"{n_ballots_kept} ballots (--min-share-cast {ag.min_share_cast:g}): lower "
                f"--min-share-cast")
    if inp.n < 2:
        return ""
    off = ~np.eye(inp.n, dtype=bool)
    if np.isnan(np.asarray(inp.agreement, dtype=float)[off]).all():
        most = int(np.asarray(inp.shared)[off].max())
        if most == 0:
            return "no two members cast a ballot in common in this period"
        return (f"no pair of members shared the minimum of {ag.min_shared} ballots "
                f"(--min-shared {ag.min_shared}); the most any pair shared was {most}: "
                f"--min-shared {most} gives pairs values")
    if not np.asarray(inp.edges)[off].any():
        rule = parse_rule(opts.rule)
        if rule.kind == "threshold":
            return (f"no pair agreed on at least {rule.level:g} of its shared ballots "
                    f"(--rule {opts.rule}): lower the threshold")
        if rule.kind == "backbone":
            return (f"the disparity filter kept no pair at significance {rule.level:g} "
                    f"(--rule {opts.rule}): agreement is spread too evenly over each member's "
                    "partners; raise ALPHA or use --rule equal-likelihood")
        return ("the equal-likelihood rule found no agreement level that separates "
                "same-group from cross-group pairs, so the edge set is empty: "
                "--rule threshold:X sets the level directly")
    return ""


# Notes of metrics that name a symptom of the causes above (graph, pairs), not a cause.
_SYMPTOMS = ("no edges", "shared a ballot", "known pair", "same-group pairs",
             "every group has one member")


def explain_missing(note: str | None, cause: str) -> str | None:
    """``cause`` in place of a note that only names its symptom; other notes stand.

    >>> explain_missing("the graph has no edges", "no pair shared 5 ballots")
    'no pair shared 5 ballots'
    >>> explain_missing("only one group: nothing to separate", "no pair shared 5 ballots")
    'only one group: nothing to separate'
    """
    if not cause:
        return note
    if not note or any(s in note for s in _SYMPTOMS):
        return cause
    return note
