"""Who is counted in each period: the members left out and why, and where a switcher is placed.

Read from the stored results only: ``n_members`` and ``n_dropped`` per period (metrics table),
the build's ``min_share_cast`` (provenance parameters), and, where the members table holds them,
the member rows ``left_out`` (value = ballots the member cast; ``note`` = why) and ``placement``
(value = share of the member's cast ballots that fell in the group they were placed in; ``note``
= the ballots per group and the rule).
"""

from __future__ import annotations

import pandas as pd

from blocwatch.dashboards.charts.periods import period_table
from blocwatch.dashboards.pages.html import numbers_table
from blocwatch.dashboards.pages.safe import esc
from blocwatch.dashboards.prose import numbers

SWITCHER_RULE = (
    "A member who changed group during a period is counted, for that whole period, in the "
    "group in force on the dates of most of the ballots they cast in it; a tie goes to the "
    "group whose name comes first alphabetically. A member with no group on those dates is "
    "left out of the period.")

LEFT_OUT_COLUMNS = {"period": "Period", "n_members": "Members counted",
                    "n_dropped": "Members left out"}


def _threshold(provenance: dict) -> float | None:
    params = provenance.get("parameters") if isinstance(provenance, dict) else None
    agreement = params.get("agreement", {}) if isinstance(params, dict) else {}
    value = agreement.get("min_share_cast") if isinstance(agreement, dict) else None
    return float(value) if isinstance(value, (int, float)) else None


def rule_text(provenance: dict) -> str:
    """The left-out rule with the value the build used (or its flag when unknown)."""
    share = _threshold(provenance)
    cut = (f"{share:.0%}".replace("%", " %") if share is not None
           else "the share set by --min-share-cast")
    return (f"Members who cast fewer than {cut} of a period's counted ballots (unanimous and "
            "lopsided ballots are not counted) are left out of that period, because too few "
            "shared ballots make their agreement with others unreliable; --min-share-cast "
            "changes the share.")


def counted_table(metrics: pd.DataFrame) -> pd.DataFrame:
    """One row per period: members counted and members left out (as stored)."""
    cols = ["period", "n_members", "n_dropped"]
    if metrics.empty or "n_dropped" not in metrics.columns:
        return pd.DataFrame(columns=cols)
    order = period_table(metrics)[["period"]]
    per = metrics.drop_duplicates("period")[cols]
    return order.merge(per, on="period", how="left")[cols]


def counted_html(metrics: pd.DataFrame, members: pd.DataFrame, provenance: dict) -> str:
    """The page's "Who is counted" section."""
    parts = ["<section id='counted'><h2>Who is counted</h2>",
             f"<p>{esc(rule_text(provenance))}</p>", f"<p>{esc(SWITCHER_RULE)}</p>"]
    table = counted_table(metrics)
    dropped = table["n_dropped"].fillna(0)
    if table.empty:
        parts.append("<p class='bw-muted'>The results do not say how many members were left "
                     "out.</p>")
    elif (dropped == 0).all():
        parts.append(f"<p>No member was left out in any of the "
                     f"{numbers.plural(len(table), 'period')}.</p>")
    else:
        total = int(dropped.sum())
        parts.append(f"<p>{numbers.plural(total, 'member')} left out over "
                     f"{numbers.plural(int((dropped > 0).sum()), 'period')} (a member left "
                     "out of several periods counts once in each).</p>"
                     + numbers_table(table, LEFT_OUT_COLUMNS))
    parts += [_named(members, "left_out", "Members left out, by period",
                     {"n_cast": "Ballots cast", "note": "Why"}),
              _named(members, "placement", "Members who changed group, and where they are "
                     "counted", {"value": "Share in that group", "note": "How"})]
    return "".join(parts) + "</section>"


def _named(members: pd.DataFrame, metric: str, title: str, columns: dict[str, str]) -> str:
    rows = members[members["metric"] == metric] if len(members) else members
    if rows.empty:
        return ""
    shown = {"period": "Period", "name": "Member", "group_name": "Group", **columns}
    rows = rows.assign(name=rows["name"].fillna(rows["member_id"]), n_cast=rows["value"])
    return (f"<details><summary>{esc(title)} ({len(rows)})</summary>"
            f"{numbers_table(rows, shown)}</details>")
