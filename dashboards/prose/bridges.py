"""The bridges table: which members' ties reach across groups, listed only where that means
something.

Rules (each one keeps the list from naming a person on a score that means nothing):

- A member alone in their group in a period is never ranked: all of a lone member's ties go to
  other groups by construction, so any bridge score of theirs is trivially high. The page says
  how many were left out.
- Nobody is listed with a score of zero (or below), or with a score that the results mark as
  not above the shuffled-group null (a member score ``<score>_null_p`` above ``NULL_ALPHA``
  where the build stored one). When nobody is left, the page says nobody stands out.
- Ties are ties: ranks are computed on the score as printed (two decimals), members with the
  same printed score share a rank ("1, 1, 3"), and everyone tied at the last rank shown is
  shown.
- Where two members of the body share a name, the member id is added to the name.
"""

from __future__ import annotations

import pandas as pd

from blocwatch.dashboards.charts.network import bridge_metric, member_scores
from blocwatch.dashboards.prose import labels, numbers

NULL_ALPHA = 0.05
COLUMNS = ("period", "rank", "name", "group", "score")


def display_names(members: pd.DataFrame) -> dict[str, str]:
    """member_id → the name shown; "Name (id)" where two member ids share a name.

    >>> m = pd.DataFrame({"member_id": ["a1", "a2", "b"], "name": ["Ann Lee", "Ann Lee", "Bo"]})
    >>> display_names(m)
    {'a1': 'Ann Lee (a1)', 'a2': 'Ann Lee (a2)', 'b': 'Bo'}
    """
    who = members[["member_id", "name"]].drop_duplicates("member_id").copy()
    who["name"] = who["name"].fillna(who["member_id"])
    shared = who["name"].duplicated(keep=False)
    shown = who["name"].where(~shared, who["name"] + " (" + who["member_id"] + ")")
    return dict(zip(who["member_id"], shown))


def _group_sizes(scores: pd.DataFrame) -> pd.Series:
    """Members per group in the period (a member without a group counts as alone)."""
    groups = scores["group_name"]
    sizes = groups.map(groups.value_counts())
    return sizes.where(groups.notna(), 1).astype(int)


def rank_period(scores: pd.DataFrame, metric: str, *, n: int = 3) -> tuple[pd.DataFrame, dict]:
    """The ranked rows of one period and what was left out (``lone``, ``zero``, ``null``).

    ``scores`` is ``network.member_scores`` of one period. Returns rows with ``member_id, name,
    group_name, score, rank`` (rank 1 = highest, ties share a rank) and counts of the members
    left out by each rule (``unscored``: the build gave them no score, e.g. a group too small).
    """
    unscored = int(scores[metric].isna().sum())
    have = scores[scores[metric].notna()].copy()
    lone = _group_sizes(have) < 2
    positive = have[metric] > 0
    null_col = f"{metric}_null_p"
    if null_col in have.columns:
        chance = have[null_col].notna() & (have[null_col] > NULL_ALPHA)
    else:
        chance = pd.Series(False, index=have.index)
    left = {"lone": int(lone.sum()), "zero": int((~lone & ~positive).sum()),
            "null": int((~lone & positive & chance).sum()), "unscored": unscored}
    keep = have[~lone & positive & ~chance].copy()
    integer = metric in labels.INTEGER_MEMBER_METRICS
    # Rank on the printed value: two members shown with the same score share a rank.
    keep["_shown"] = keep[metric].map(lambda v: round(float(v), 0 if integer else 2))
    keep["rank"] = keep["_shown"].rank(method="min", ascending=False).astype(int)
    keep = keep.sort_values(["rank", "name", "member_id"])
    if len(keep) > n:
        keep = keep[keep["rank"] <= keep["rank"].iloc[n - 1]]
    out = keep.rename(columns={metric: "score"})
    return out[["member_id", "name", "group_name", "score", "rank"]], left


def top_bridges(members: pd.DataFrame, body: str, periods: list[str], *, n: int = 3,
                metric: str | None = None) -> tuple[pd.DataFrame, str | None, dict]:
    """The members with the highest bridge score per period, by the rules above.

    Returns the table (``period, rank, name, group, score``), the score's metric name and the
    counts left out per rule, summed over the periods.
    """
    frames, used = [], metric
    left = {"lone": 0, "zero": 0, "null": 0, "unscored": 0}
    body_members = members[members["body"] == body]
    shown = display_names(body_members) if not body_members.empty else {}
    for period in periods:
        scores = member_scores(members, body, period)
        m = bridge_metric(scores, metric)
        if m is None:
            continue
        used = used or m
        rows, out = rank_period(scores, m, n=n)
        left = {k: left[k] + out[k] for k in left}
        frames.append(pd.DataFrame({
            "period": period, "rank": rows["rank"].to_numpy(),
            "name": rows["member_id"].map(shown).fillna(rows["name"]).to_numpy(),
            "group": rows["group_name"].to_numpy(), "score": rows["score"].to_numpy()}))
    if not frames:
        return pd.DataFrame(columns=list(COLUMNS)), None, left
    return pd.concat(frames, ignore_index=True), used, left


def left_out_note(left: dict, n_periods: int) -> str:
    """One sentence on who the rules kept off the list, or "" when nobody.

    >>> print(left_out_note({"lone": 1, "zero": 4, "null": 0}, 2))
    ... # doctest: +NORMALIZE_WHITESPACE
    Not ranked, over 2 periods: 1 member alone in their group (all of their ties cross groups
    by construction) and 4 members with a score of zero.
    """
    parts = []
    if left.get("lone"):
        parts.append(f"{numbers.plural(left['lone'], 'member')} alone in their group (all of "
                     "their ties cross groups by construction)")
    if left.get("zero"):
        parts.append(f"{numbers.plural(left['zero'], 'member')} with a score of zero")
    if left.get("unscored"):
        parts.append(f"{numbers.plural(left['unscored'], 'member')} without a score (for "
                     "example in a group too small for it; the member notes say why)")
    if left.get("null"):
        parts.append(f"{numbers.plural(left['null'], 'member')} whose score is not above what "
                     "shuffled groups give")
    if not parts:
        return ""
    text = parts[0] if len(parts) == 1 else ", ".join(parts[:-1]) + " and " + parts[-1]
    return f"Not ranked, over {numbers.plural(n_periods, 'period')}: {text}."

