"""Vote matrices: one body × period read from the store as a member × ballot int8 array.

A member's group in a period is the group in force on the dates of most of the ballots the
member cast in it (ties go to the alphabetically first group), and every member placed that
way is listed in ``placements`` with its ballots per group; members with no group on those
dates are left out, counted in ``dropped`` and listed in ``left_out`` (as are, later, members
below ``--min-share-cast``: :func:`blocwatch.pipeline.build.filters.filter_period`).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from blocwatch.metrics.registry import ABSTAIN, MISSING, NO, YES
from blocwatch.pipeline.build.scored import attach_scales
from blocwatch.pipeline.options import Period
from blocwatch.pipeline.store.ballots import period_votes
from blocwatch.pipeline.store.database import Store

CHOICE_CODES = {"yes": YES, "no": NO, "abstain": ABSTAIN, "absent": MISSING}


@dataclass(frozen=True)
class VoteMatrix:
    body: str
    period: Period
    member_ids: np.ndarray  # (n,) str
    names: np.ndarray  # (n,) str
    groups: np.ndarray  # (n,) str, group of each member in this period
    ballot_ids: np.ndarray  # (b,) str
    items: np.ndarray  # (b,) str agenda item or '' (for the block bootstrap)
    votes: np.ndarray  # (n, b) int8 codes
    dropped: int = 0  # members left out: no group, or (after filtering) too few votes
    # Scales and scored answers (blocwatch.pipeline.build.scored.ScaleMatrix); None when every
    # ballot of the period is yes/no.
    scales: object = None
    # (b,) str topic of each ballot or '' (per-topic and agenda-standardised series); None
    # when no ballot of the period has one.
    topics: np.ndarray | None = None
    # Who was left out and why: (member_id, group or "", ballots cast, ballots needed or 0,
    # reason "no_group" | "min_share_cast"), in the order the rules ran.
    left_out: tuple = ()
    # Members in more than one group during the period: (member_id, placed group,
    # ((group, ballots cast while in it), ...)); see module docstring for the rule.
    placements: tuple = ()

    @property
    def labels(self) -> np.ndarray:
        """Groups as 0..k−1 in alphabetical order of group name."""
        return np.unique(self.groups, return_inverse=True)[1].astype(np.int64)

    @property
    def group_names(self) -> list[str]:
        return [str(g) for g in np.unique(self.groups)]

    def subset(self, members: np.ndarray | None = None, ballots: np.ndarray | None = None,
               *, dropped: int = 0, left_out: tuple = ()) -> VoteMatrix:
        m = slice(None) if members is None else members
        b = slice(None) if ballots is None else ballots
        scales = None if self.scales is None else self.scales.subset(m, b)
        topics = None if self.topics is None else self.topics[b]
        return VoteMatrix(self.body, self.period, self.member_ids[m], self.names[m],
                          self.groups[m], self.ballot_ids[b], self.items[b],
                          self.votes[m][:, b], self.dropped + dropped, scales, topics,
                          self.left_out + tuple(left_out), self.placements)


def load_votes(store: Store, body: str, period: Period) -> VoteMatrix:
    """The period's vote matrix, every member with a group and at least one row in it."""
    votes, groups, names = period_votes(store, body, period.start, period.end)
    return attach_scales(store, _assemble(body, period, votes, groups, names))


def _assemble(body: str, period: Period, votes: pd.DataFrame, groups: pd.DataFrame,
              names: pd.DataFrame) -> VoteMatrix:
    ordered = groups.sort_values(["member_id", "n", "group_name"], ascending=[True, False, True])
    groups = ordered.drop_duplicates("member_id")
    several = ordered[ordered["member_id"].duplicated(keep=False)]
    placements = tuple(
        (str(mid), str(part["group_name"].iloc[0]),
         tuple((str(g), int(k)) for g, k in zip(part["group_name"], part["n"])))
        for mid, part in several.groupby("member_id", sort=True))
    all_members = votes["member_id"].unique()
    with_group = groups.set_index("member_id")["group_name"]
    keep = np.array([m in with_group.index for m in all_members], dtype=bool) \
        if len(all_members) else np.zeros(0, dtype=bool)
    members = np.sort(all_members[keep]).astype(object)
    dropped = int((~keep).sum())
    cast = votes[votes["choice"] != "absent"]["member_id"].value_counts()
    left_out = tuple((str(m), "", int(cast.get(m, 0)), 0, "no_group")
                     for m in sorted(all_members[~keep]))
    votes = votes[votes["member_id"].isin(set(members))]
    ballot_order = votes.drop_duplicates("ballot_id")[["ballot_id", "item", "topic"]
                                                      if "topic" in votes else
                                                      ["ballot_id", "item"]]
    ballots = ballot_order["ballot_id"].to_numpy(dtype=object)
    m_index = pd.Index(members).get_indexer(votes["member_id"])
    b_index = pd.Index(ballots).get_indexer(votes["ballot_id"])
    matrix = np.zeros((len(members), len(ballots)), dtype=np.int8)
    codes = votes["choice"].map(CHOICE_CODES).fillna(MISSING).to_numpy(dtype=np.int8)
    matrix[m_index, b_index] = codes
    name_map = names.set_index("member_id")["name"]
    member_names = np.array([str(name_map.get(m, m)) for m in members], dtype=object)
    topics = ballot_order["topic"].to_numpy(dtype=object) if "topic" in ballot_order else None
    return VoteMatrix(body, period, members, member_names,
                      with_group.reindex(members).to_numpy(dtype=object), ballots,
                      ballot_order["item"].to_numpy(dtype=object), matrix, dropped,
                      topics=topics if topics is not None and any(topics) else None,
                      left_out=left_out, placements=placements)
