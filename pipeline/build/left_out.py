"""Member rows that say who was left out of a period and how a member in two groups was placed.

Stored in the members table beside the scores (metric ``left_out``: ballots the member cast;
metric ``placement``: the share of its cast ballots that fell in the group it was placed in),
each with a note in words, so the page and the members export can show them.
"""

from __future__ import annotations

import pandas as pd

from blocwatch.pipeline.build.matrices import VoteMatrix

__all__ = ["left_out_rows", "PLACEMENT_RULE"]

PLACEMENT_RULE = ("a member goes to the group of most of the ballots they cast in the period "
                  "(a tie goes to the alphabetically first group)")

COLUMNS = ["member_id", "group_name", "metric", "value", "note"]


def _left_out_note(cast: int, needed: int, reason: str, n_ballots: int, share: float) -> str:
    if reason == "no_group":
        return (f"left out of this period: no group membership on the dates of the {cast} "
                f"ballots they cast")
    return (f"left out of this period: cast {cast} of its {n_ballots} ballots, fewer than the "
            f"{needed} that --min-share-cast {share:g} requires")


def left_out_rows(vm: VoteMatrix, min_share_cast: float) -> pd.DataFrame:
    """Rows for ``vm.left_out`` and ``vm.placements`` (``vm`` after the period's filters).

    >>> from datetime import date
    >>> import numpy as np
    >>> from blocwatch.pipeline.build.periods import Period
    >>> e = np.array([], dtype=object)
    >>> vm = VoteMatrix("B", Period(date(2020, 1, 1), date(2020, 12, 31), "2020"), e, e, e,
    ...                 np.array(["b1"] * 40, dtype=object), np.array([""] * 40, dtype=object),
    ...                 np.zeros((0, 40), dtype=np.int8),
    ...                 left_out=(("m7", "North", 3, 10, "min_share_cast"),),
    ...                 placements=(("m2", "South", (("South", 12), ("North", 8))),))
    >>> rows = left_out_rows(vm, 0.25)
    >>> rows["note"][0].split(", ")[0]
    'left out of this period: cast 3 of its 40 ballots'
    >>> rows["note"][0].split(", ")[1]
    'fewer than the 10 that --min-share-cast 0.25 requires'
    >>> float(rows["value"][1]), rows["note"][1].split(";")[0]
    (0.6, 'placed in South: South for 12 cast ballots, North for 8')
    """
    n_ballots = int(vm.votes.shape[1])
    rows = [[mid, group or None, "left_out", float(cast),
             _left_out_note(cast, needed, reason, n_ballots, min_share_cast)]
            for mid, group, cast, needed, reason in vm.left_out]
    for mid, placed, counts in vm.placements:
        total = sum(k for _, k in counts)
        spread = ", ".join(f"{g} for {k} cast ballot{'s' if k != 1 else ''}" if i == 0
                           else f"{g} for {k}" for i, (g, k) in enumerate(counts))
        share = dict(counts)[placed] / total if total else float("nan")
        rows.append([mid, placed, "placement", share,
                     f"placed in {placed}: {spread}; {PLACEMENT_RULE}"])
    return pd.DataFrame(rows, columns=COLUMNS)
