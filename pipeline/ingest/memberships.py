"""A load's memberships: which spells it writes, and the checks that tie them to its votes.

The spells themselves (reading a roster, deriving spells from a group column, merging) are
computed by :mod:`blocwatch.pipeline.ingest.roster`; this module decides among them for one load.

Called by :mod:`blocwatch.pipeline.ingest.load` with a :class:`SpellInputs`: what of the load
in progress these checks read (its store, problems, staged files, bodies and options) and
where they write (problems, notes). Groups come from the roster when there is one (a group
column must then agree with it), else from a group column, else from the memberships already
stored. Once a body has groups, every member in the votes needs one, and every cast vote must
fall inside one of the member's spells.
"""

from __future__ import annotations

from dataclasses import dataclass, field

import pandas as pd

from blocwatch.pipeline.ingest import roster
from blocwatch.pipeline.ingest.readers import Staged
from blocwatch.pipeline.ingest.validate import (
    EXAMPLES,
    Problems,
    add_rest,
    add_row_problem,
    staged_unit,
)
from blocwatch.pipeline.safety import show
from blocwatch.pipeline.store.database import Store

_K = 1 << 40  # packs (file k, row) into one sortable BIGINT
MEMBER_DAY = "member-date"  # the unit of a group problem: one member on one date


@dataclass
class SpellInputs:
    """The part of a load the membership checks see: read ``store``, ``staged`` (file number
    -> staged file), ``bodies`` (every body the staged files name), ``bad_members`` (roster rows
    already refused: no follow-up complaints) and ``replace``; add to ``problems`` and
    ``notes``."""

    store: Store
    problems: Problems
    staged: dict[int, Staged]
    bodies: list[str]
    bad_members: set[str] = field(default_factory=set)
    replace: bool = False
    notes: list[str] = field(default_factory=list)

    def of(self, kind: str) -> dict[int, Staged]:
        """The staged files of one kind (votes, roster, ballots)."""
        return {k: s for k, s in self.staged.items() if s.kind == kind}


def check(load: SpellInputs, votes: dict[int, Staged], combined: str | None, bal: str):
    """The spells to write, and the (body, member) pairs whose stored spells they replace."""
    store, problems = load.store, load.problems
    rosters = load.of("roster")
    stored = roster.stored_spells(store, load.bodies)
    new_roster = pd.concat([roster.roster_spells(store, s, problems, load.bad_members)
                            .assign(k=k) for k, s in rosters.items()]) if rosters else None
    grouped = {k: s for k, s in votes.items() if "group_name" in s.headers}
    obs = _observations(load, grouped, bal) if grouped else None
    if new_roster is not None:
        if obs:
            _roster_agrees(load, obs, new_roster, grouped)
        merged = roster.merge(stored, new_roster, replace="all" if load.replace else None,
                              staged_by_k=load.staged, problems=problems)
        affected = new_roster[["body", "member_id"]].drop_duplicates()
    elif obs:
        derived = roster.derived_spells(store, obs)
        merged = roster.merge(stored, derived, replace="clip" if load.replace else None,
                              staged_by_k=load.staged, problems=problems)
        affected = derived[["body", "member_id"]].drop_duplicates()
    else:
        merged = pd.DataFrame(columns=roster.SPELL_COLUMNS)
        affected = pd.DataFrame(columns=["body", "member_id"])
    # Spells derived from a group column cover every vote that gave a group, by construction.
    covered = not rosters and len(grouped) == len(votes) and not any(
        s.nulls.get("group_name") for s in grouped.values())
    if combined:
        _coverage(load, stored, merged, affected, combined, bal, derived_only=covered)
    return merged, affected

def _observations(load, grouped: dict[int, Staged], bal: str) -> str | None:
    parts = [f"""SELECT t.body, t.member_id, b.held_on, t.group_name, min(t.rid) AS rid,
                        CAST({k} AS INTEGER) AS k FROM {s.table} t JOIN {bal} b
                 ON b.body = t.body AND b.ballot_id = t.ballot_id
                 WHERE t.group_name IS NOT NULL AND t.member_id IS NOT NULL
                       AND b.held_on IS NOT NULL GROUP BY ALL""" for k, s in grouped.items()]
    load.store.stage("_bw_obs_all", " UNION ALL ".join(parts))
    # Each member with two groups on one date is one problem, placed at the first row that
    # differs from the member's first group that day.
    load.store.stage("_bw_obs_bad", f"""
        WITH f AS (SELECT body, member_id, held_on, arg_min(group_name, k * {_K} + rid) AS g0
                   FROM _bw_obs_all GROUP BY body, member_id, held_on
                   HAVING min(group_name) <> max(group_name))
        SELECT o.body, o.member_id, o.held_on, any_value(f.g0) AS g0,
               arg_min(o.group_name, o.k * {_K} + o.rid) AS g, min(o.k * {_K} + o.rid) AS key
        FROM _bw_obs_all o JOIN f USING (body, member_id, held_on) WHERE o.group_name <> f.g0
        GROUP BY o.body, o.member_id, o.held_on""")
    fix = "give a member one group per date"
    shown = load.store.rows(f"SELECT key // {_K}, key % {_K}, member_id, held_on, g, g0 "
                            f"FROM _bw_obs_bad ORDER BY key LIMIT {EXAMPLES}")
    for k, rid, member, day, group, first in shown:
        add_row_problem(load.problems, load.staged[k], "member", rid, "group_name", group,
                        f"member {show(member)} is in group {show(group)} here but in "
                        f"{show(first)} elsewhere on the same date {day}", fix, unit=MEMBER_DAY)
    _rest(load, f"SELECT key // {_K} AS k FROM _bw_obs_bad", shown, MEMBER_DAY,
          "members with two groups on one date", fix)
    load.store.stage("_bw_obs", """SELECT body, member_id, held_on, min(group_name) AS
                     group_name, min(rid) AS rid, min(k) AS k FROM _bw_obs_all
                     GROUP BY body, member_id, held_on""")
    return "_bw_obs"

def _roster_agrees(load, obs: str, spells: pd.DataFrame, grouped: dict[int, Staged]) -> None:
    load.store.stage_frame("_bw_roster_spells", spells[roster.SPELL_COLUMNS])
    differ = f"""FROM {obs} o JOIN _bw_roster_spells s ON s.body = o.body
            AND s.member_id = o.member_id AND o.held_on BETWEEN CAST(s.valid_from AS DATE)
            AND CAST(s.valid_to AS DATE) WHERE s.group_name <> o.group_name"""
    fix = "make the votes file and the roster agree, or leave the group column out"
    shown = load.store.rows(f"SELECT o.k, o.rid, o.member_id, o.held_on, o.group_name, "
                            f"s.group_name {differ} ORDER BY o.k, o.rid LIMIT {EXAMPLES}")
    for k, rid, member, day, got, want in shown:
        add_row_problem(load.problems, grouped[k], "member", rid, "group_name", got,
                        f"member {show(member)} is in group {show(got)} on {day} here, but "
                        f"in {show(want)} in the roster", fix, unit=MEMBER_DAY)
    _rest(load, f"SELECT DISTINCT o.k, o.body, o.member_id, o.held_on {differ}", shown,
          MEMBER_DAY, "members whose group on a date differs from the roster's", fix)


def _rest(load, keys_sql: str, shown: list, unit: str, what: str, fix: str) -> None:
    """Count, per file, the problems ``keys_sql`` (one row per problem, ``k`` first) finds
    beyond the ``shown`` examples (rows with ``k`` first)."""
    ks = [r[0] for r in shown]
    for k, n in load.store.rows(f"SELECT k, count(*) FROM ({keys_sql}) GROUP BY k ORDER BY k"):
        add_rest(load.problems, load.staged[k], "member", n - ks.count(k), unit, what, fix)

def _coverage(load, stored, merged, affected, combined: str, bal: str, *,
              derived_only: bool) -> None:
    """Members without any group, and cast votes outside every spell (when groups exist)."""
    keep = stored.merge(affected, on=["body", "member_id"], how="left", indicator=True)
    keep = keep[keep["_merge"] == "left_only"].drop(columns="_merge")
    final = pd.concat([keep, merged], ignore_index=True)
    if final.empty:
        load.notes.append("note: no groups are known for this body yet — load a roster "
                          "with --members (or a group column) before 'blocwatch build'")
        return
    if derived_only:
        return
    frame = final[roster.SPELL_COLUMNS].copy()
    frame["valid_from"] = pd.to_datetime(frame["valid_from"].astype(str))
    frame["valid_to"] = pd.to_datetime(frame["valid_to"].astype(str), errors="coerce") \
        .fillna(pd.Timestamp("2262-04-11"))
    load.store.stage_frame("_bw_spells", frame)
    missing = load.store.rows(f"""
        SELECT n.k, min(n.rid), n.member_id, count(*) FROM {combined} n
        WHERE n.body IN (SELECT DISTINCT body FROM _bw_spells) AND NOT EXISTS (SELECT 1 FROM
          _bw_spells s WHERE s.body = n.body AND s.member_id = n.member_id)
          AND NOT list_contains(?, n.member_id)
        GROUP BY n.k, n.member_id ORDER BY n.k, min(n.rid)""", [sorted(load.bad_members)])
    fix = "add the member to the roster file (--members), or give the votes file a group column"
    for k, rid, member, n in missing[:EXAMPLES * 4]:
        add_row_problem(load.problems, load.staged[k], "member", rid, "member_id", member,
                        f"member {show(member)} is not in the roster (no group known)", fix,
                        count=n)
    for k in dict.fromkeys(r[0] for r in missing[EXAMPLES * 4:]):  # the rest, counted per file
        rest = [r for r in missing[EXAMPLES * 4:] if r[0] == k]
        add_rest(load.problems, load.staged[k], "member", sum(r[3] for r in rest),
                 staged_unit(load.staged[k]), f"{staged_unit(load.staged[k])}s of {len(rest)} "
                 "more members who are not in the roster", fix)
    # One row per member and date first (members x dates, not votes), then the spell test.
    uncovered = load.store.rows(f"""
        WITH d AS (SELECT n.body, n.member_id, b.held_on,
                          min(n.k * {_K} + n.rid) AS key, count(*) AS n
                   FROM {combined} n JOIN {bal} b
                   ON b.body = n.body AND b.ballot_id = n.ballot_id
                   WHERE n.choice <> 'absent' AND b.held_on IS NOT NULL
                   GROUP BY n.body, n.member_id, b.held_on)
        SELECT key // {_K}, key % {_K}, member_id, held_on, n FROM d
        WHERE NOT list_contains(?, member_id) AND EXISTS (SELECT 1 FROM _bw_spells s
          WHERE s.body = d.body AND s.member_id = d.member_id) AND NOT EXISTS (SELECT 1
          FROM _bw_spells s WHERE s.body = d.body AND s.member_id = d.member_id AND
          d.held_on BETWEEN CAST(s.valid_from AS DATE) AND CAST(s.valid_to AS DATE))
        ORDER BY key""", [sorted(load.bad_members)])
    fix = "extend the member's valid_from/valid_to in the roster"
    for k, rid, member, day, n in uncovered[:EXAMPLES]:
        add_row_problem(load.problems, load.staged[k], "member", rid, "member_id", member,
                        f"member {show(member)} votes on {day} but has no group on that "
                        "date", fix, count=n)
    for k in dict.fromkeys(r[0] for r in uncovered[EXAMPLES:]):  # the rest, counted per file
        rest = [r for r in uncovered[EXAMPLES:] if r[0] == k]
        add_rest(load.problems, load.staged[k], "member", sum(r[4] for r in rest),
                 staged_unit(load.staged[k]), f"{staged_unit(load.staged[k])}s of members voting "
                 f"on {len(rest)} more dates without a group on that date", fix)
