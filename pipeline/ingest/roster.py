"""Spells, the data: read from a roster, derived from a group column, and the arithmetic on them.

A spell is (member, group, valid_from, valid_to). This module reads and derives spells and
computes with them (overlaps, joining adjacent spells, merging a load's spells into the stored
ones); it decides nothing about a load. Which spells a load writes, and the checks that tie them
to its votes, are in :mod:`blocwatch.pipeline.ingest.memberships`.

A roster (``--members FILE``) has one row per spell: ``member_id, name, group`` and optional
``valid_from`` / ``valid_to`` (inclusive ISO dates; blank means open-ended). A member who switched
groups has one row per group. A ``group`` column in the votes file gives spells too: each run of
ballots a member cast in the same group becomes one spell, from the run's first ballot date to
the day before the next run's first ballot (the last run ends at its last ballot date).

Spells are few next to votes (members × group changes), so they are checked and merged here in
pandas after SQL has reduced the votes to one row per member, date and group.
"""

from __future__ import annotations

from datetime import date, timedelta

import pandas as pd

from blocwatch.pipeline.ingest.validate import Problems, add_rest, add_row_problem, staged_unit
from blocwatch.pipeline.safety import show
from blocwatch.pipeline.store.database import Store
from blocwatch.pipeline.store.schema import OPEN_FROM, OPEN_TO

SPELL_COLUMNS = ["body", "member_id", "group_name", "valid_from", "valid_to"]
_SHOWN = 20  # roster problems listed one by one; the rest are counted
_OPEN_FROM, _OPEN_TO = date.fromisoformat(OPEN_FROM), date.fromisoformat(OPEN_TO)


def roster_spells(store: Store, staged, problems: Problems, refused: set) -> pd.DataFrame:
    """Valid spells of a staged roster (with ``rid``); bad rows become problems and their
    members are added to ``refused``."""
    frame = store.df(
        f"""SELECT rid, body, member_id, name, group_name,
                   TRY_CAST(valid_from AS DATE) AS valid_from, TRY_CAST(valid_to AS DATE) AS
                   valid_to, valid_from IS NOT NULL AND TRY_CAST(valid_from AS DATE) IS NULL OR
                   valid_to IS NOT NULL AND TRY_CAST(valid_to AS DATE) IS NULL AS bad_date
            FROM {staged.table}
            ORDER BY rid""")
    bad = frame["bad_date"].astype(bool) | frame["member_id"].isna() | frame["group_name"].isna() \
        | frame["body"].isna()
    refused.update(frame.loc[bad, "member_id"].dropna())
    frame = frame[~bad].drop(columns="bad_date")
    frame["valid_from"] = [d if isinstance(d, date) else _OPEN_FROM for d in
                           _as_dates(frame["valid_from"])]
    frame["valid_to"] = [d if isinstance(d, date) else _OPEN_TO for d in
                         _as_dates(frame["valid_to"])]
    backwards = frame["valid_to"] < frame["valid_from"]
    refused.update(frame.loc[backwards, "member_id"])
    fix = "swap the two dates, or correct the year"
    for row in frame[backwards].head(_SHOWN).itertuples():
        add_row_problem(problems, staged, "roster", row.rid, "valid_to", row.valid_to,
                        f"valid_to {row.valid_to} is before valid_from {row.valid_from}", fix)
    add_rest(problems, staged, "roster", int(backwards.sum()) - _SHOWN, "row",
             "rows whose valid_to is before their valid_from", fix)
    frame = frame[~backwards]
    overlaps = find_overlaps(frame)
    fix = "end one membership the day before the next begins"
    for a, b in overlaps[:_SHOWN]:
        ra, rb = frame.loc[a], frame.loc[b]
        line_a = _where_text(staged, int(ra.rid))
        add_row_problem(problems, staged, "roster", int(rb.rid), "group_name", rb.group_name,
                        f"member {show(rb.member_id)} is in group {show(rb.group_name)} from "
                        f"{rb.valid_from} to {rb.valid_to}, which overlaps group "
                        f"{show(ra.group_name)} from {ra.valid_from} to {ra.valid_to} "
                        f"({line_a})", fix)
    add_rest(problems, staged, "roster", len(overlaps) - _SHOWN, "row",
             "rows whose membership overlaps another group's", fix)
    return frame


def _where_text(staged, rid: int) -> str:
    line, where, _ = staged.place(rid, None)
    return f"line {line}" if line else (where or f"row {rid + 1}")


def _as_dates(series: pd.Series) -> list:
    out = []
    for v in series:
        if v is None or (isinstance(v, float) and v != v) or v is pd.NaT:
            out.append(None)
        elif isinstance(v, pd.Timestamp):
            out.append(v.date())
        else:
            out.append(v)
    return out


def find_overlaps(spells: pd.DataFrame) -> list[tuple]:
    """Index pairs (earlier, later) of spells of one member in different groups that overlap."""
    pairs = []
    ordered = spells.sort_values(["body", "member_id", "valid_from", "valid_to"])
    key = None
    active: list = []  # (end, index, group) of earlier spells of this member
    for idx, body, member, group, start, end in zip(
            ordered.index, ordered["body"], ordered["member_id"], ordered["group_name"],
            ordered["valid_from"], ordered["valid_to"]):
        if (body, member) != key:
            key, active = (body, member), []
        active = [a for a in active if a[0] >= start]
        for _, j, g in active:
            if g != group:
                pairs.append((j, idx))
                break
        active.append((end, idx, group))
    return pairs


def coalesce(spells: pd.DataFrame) -> pd.DataFrame:
    """Join spells of the same member and group that overlap or touch (end + 1 day = start)."""
    out: list[list] = []
    ordered = spells.sort_values(["body", "member_id", "valid_from", "valid_to"])
    for body, member, group, start, end in zip(
            ordered["body"], ordered["member_id"], ordered["group_name"],
            ordered["valid_from"], ordered["valid_to"]):
        last = out[-1] if out else None
        if last and last[0] == body and last[1] == member and last[2] == group and \
                start <= _next_day(last[4]):
            last[4] = max(last[4], end)
        else:
            out.append([body, member, group, start, end])
    return pd.DataFrame(out, columns=SPELL_COLUMNS)


def _next_day(d: date) -> date:
    return d if d >= _OPEN_TO else d + timedelta(days=1)


def derived_spells(store: Store, obs_table: str) -> pd.DataFrame:
    """Spells from ``obs_table`` (body, member_id, held_on DATE, group_name), one row per
    member, date and group: runs of the same group, each ending the day before the next."""
    return store.df(
        f"""WITH o AS (SELECT body, member_id, held_on, group_name, rid, k,
                   CASE WHEN group_name IS DISTINCT FROM lag(group_name) OVER w THEN 1 ELSE 0
                   END AS change FROM {obs_table} WINDOW w AS (PARTITION BY body, member_id
                   ORDER BY held_on)),
                 r AS (SELECT *, sum(change) OVER (PARTITION BY body, member_id ORDER BY held_on
                   ROWS UNBOUNDED PRECEDING) AS run FROM o),
                 s AS (SELECT body, member_id, group_name, min(held_on) AS valid_from,
                   max(held_on) AS last_seen, arg_min(rid, held_on) AS first_rid,
                   arg_min(k, held_on) AS first_k FROM r GROUP BY body, member_id, group_name,
                   run)
            SELECT body, member_id, group_name, valid_from, first_rid AS rid, first_k AS k,
                   coalesce(CAST(lead(valid_from) OVER (PARTITION BY body, member_id ORDER BY
                   valid_from) - INTERVAL 1 DAY AS DATE), last_seen) AS valid_to
            FROM s ORDER BY body, member_id, valid_from""").pipe(_with_dates)


def _with_dates(frame: pd.DataFrame) -> pd.DataFrame:
    """``valid_from`` / ``valid_to`` as ``datetime.date`` (DuckDB hands back Timestamps)."""
    frame = frame.copy()
    for col in ("valid_from", "valid_to"):
        frame[col] = pd.Series(_as_dates(frame[col]), index=frame.index, dtype=object)
    return frame


def merge(stored: pd.DataFrame, new: pd.DataFrame, *, replace: str | None,
          staged_by_k: dict, problems: Problems) -> pd.DataFrame:
    """Spells of the members in ``new`` after adding them to the ``stored`` ones.

    ``replace``: ``None`` keeps stored spells and reports overlaps in another group as
    conflicts; ``"all"`` drops the members' stored spells (a roster is the full list);
    ``"clip"`` cuts stored spells where new ones cover the dates (a votes file covers a stretch).
    ``new`` carries ``k`` and ``rid``: the staged file and row each spell comes from.
    """
    if new.empty:
        return new.reindex(columns=SPELL_COLUMNS)
    new = _with_dates(new[SPELL_COLUMNS + ["k", "rid"]])
    stored = _with_dates(stored[SPELL_COLUMNS])
    keys = new[["body", "member_id"]].drop_duplicates()
    old = stored.merge(keys, on=["body", "member_id"])[SPELL_COLUMNS]
    if replace == "all":
        old = old.iloc[0:0]
    elif replace == "clip":
        old = _clip(old, new)
    both = pd.concat([old.assign(_src="stored", k=-1, rid=-1), new.assign(_src="new")],
                     ignore_index=True)
    fix = "pass --replace to overwrite the stored membership, or correct the dates"
    # within one source an overlap is reported by that source's own checks
    clashes = [(a, b) for a, b in find_overlaps(both) if both.loc[a, "_src"] !=
               both.loc[b, "_src"]]
    news = [int((both.loc[b] if both.loc[b, "_src"] == "new" else both.loc[a]).k)
            for a, b in clashes]
    for a, b in clashes[:_SHOWN]:
        ra, rb = both.loc[a], both.loc[b]
        s, n = (ra, rb) if ra._src == "stored" else (rb, ra)
        add_row_problem(problems, staged_by_k[int(n.k)], "conflict", int(n.rid), "group_name",
                        n.group_name, f"member {show(n.member_id)} is in group "
                        f"{show(n.group_name)} from {n.valid_from} to {n.valid_to} here, but the "
                        f"store has them in {show(s.group_name)} from {s.valid_from} to "
                        f"{s.valid_to}", fix)
    for k in dict.fromkeys(news[_SHOWN:]):  # the rest, counted per file
        unit = staged_unit(staged_by_k[k])
        add_rest(problems, staged_by_k[k], "conflict", news[_SHOWN:].count(k), unit,
                 f"{unit}s whose membership overlaps a stored one in another group", fix)
    return coalesce(both[SPELL_COLUMNS])


def _clip(old: pd.DataFrame, new: pd.DataFrame) -> pd.DataFrame:
    """``old`` spells minus the date ranges of ``new`` spells of the same member."""
    out = []
    cover = {k: list(zip(g.valid_from, g.valid_to)) for k, g in
             new.groupby(["body", "member_id"])}
    for row in old.itertuples(index=False):
        pieces = [(row.valid_from, row.valid_to)]
        for f, t in cover.get((row.body, row.member_id), []):
            nxt = []
            for a, b in pieces:
                if t < a or f > b:
                    nxt.append((a, b))
                    continue
                if a < f:
                    nxt.append((a, f - timedelta(days=1)))
                if t < b:
                    nxt.append((t + timedelta(days=1), b))
            pieces = nxt
        out.extend([row.body, row.member_id, row.group_name, a, b] for a, b in pieces)
    return pd.DataFrame(out, columns=SPELL_COLUMNS)


def stored_spells(store: Store, bodies: list[str]) -> pd.DataFrame:
    if not bodies:
        return pd.DataFrame(columns=SPELL_COLUMNS)
    frame = store.df("SELECT body, member_id, group_name, valid_from, valid_to FROM memberships "
                     "WHERE list_contains(?, body)", [bodies])
    for col in ("valid_from", "valid_to"):
        frame[col] = _as_dates(frame[col])
    return frame[SPELL_COLUMNS]
