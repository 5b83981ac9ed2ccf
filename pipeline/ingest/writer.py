"""Write one checked load into the store's tables (inside the caller's transaction).

Everything arrives as staged tables (``_bw_*``) or small frames, and moves with
``INSERT … SELECT`` so votes never pass through Python. Values are bound parameters.

``replace`` semantics: every ballot that has votes in the load is replaced whole — its row in
``ballots`` and all its stored votes — by the load's version; memberships of the members the
load describes are replaced as :func:`blocwatch.pipeline.ingest.roster.merge` decided.
"""

from __future__ import annotations

from datetime import datetime, timezone

import pandas as pd

from blocwatch.pipeline.store.database import Store


def write_load(store: Store, *, votes: str | None, ballots: str, members: str | None,
               spells: pd.DataFrame, spell_members: pd.DataFrame, ingests: list[tuple],
               bodies: list[str], replace: bool) -> int:
    """Insert the load; return the number of vote rows written."""
    for body in bodies:
        store.execute("INSERT INTO bodies (body) SELECT ? WHERE NOT EXISTS "
                      "(SELECT 1 FROM bodies WHERE body = ?)", [body, body])
    _write_ballots(store, ballots, replace=replace)
    written = _write_votes(store, votes, bodies, replace=replace) if votes else 0
    if members:
        store.execute(f"""INSERT INTO members (body, member_id, name)
                          SELECT body, member_id, name FROM {members}
                          ON CONFLICT (body, member_id) DO UPDATE
                          SET name = coalesce(excluded.name, members.name)""")
    if not spell_members.empty:
        store.stage_frame("_bw_spell_members", spell_members[["body", "member_id"]])
        store.execute("""DELETE FROM memberships m WHERE EXISTS (SELECT 1 FROM _bw_spell_members
                         s WHERE s.body = m.body AND s.member_id = m.member_id)""")
        if not spells.empty:
            store.stage_frame("_bw_spells_new", spells)
            store.execute("""INSERT INTO memberships (body, member_id, group_name, valid_from,
                             valid_to) SELECT body, member_id, group_name, CAST(valid_from AS
                             DATE), CAST(valid_to AS DATE) FROM _bw_spells_new""")
    now = datetime.now(timezone.utc).replace(tzinfo=None)
    for sha, body, file, rows in ingests:
        store.execute("INSERT INTO ingests (sha256, body, file, rows, loaded_at) "
                      "VALUES (?, ?, ?, ?, ?)", [sha, body, file, rows, now])
    return written


def _write_ballots(store: Store, ballots: str, *, replace: bool) -> None:
    if replace:
        store.execute(f"""INSERT OR REPLACE INTO ballots (body, ballot_id, held_on, title, item,
                          topic) SELECT body, ballot_id, held_on, title, item, topic
                          FROM {ballots} WHERE held_on IS NOT NULL""")
        return
    store.execute(f"""INSERT INTO ballots (body, ballot_id, held_on, title, item, topic)
                      SELECT body, ballot_id, held_on, title, item, topic FROM {ballots}
                      WHERE stored_on IS NULL AND held_on IS NOT NULL""")
    # Stored ballots without a title, item or topic get the load's (nothing stored is
    # overwritten; a different topic was refused as a conflict).
    store.execute(f"""UPDATE ballots SET title = coalesce(ballots.title, b.title),
                      item = coalesce(ballots.item, b.item),
                      topic = coalesce(ballots.topic, b.topic)
                      FROM {ballots} b WHERE b.stored_on IS NOT NULL AND ballots.body = b.body
                      AND ballots.ballot_id = b.ballot_id AND ((ballots.title IS NULL AND
                      b.title IS NOT NULL) OR (ballots.item IS NULL AND b.item IS NOT NULL)
                      OR (ballots.topic IS NULL AND b.topic IS NOT NULL))""")


def _write_votes(store: Store, votes: str, bodies: list[str], *, replace: bool) -> int:
    before = store.scalar("SELECT count(*) FROM votes")
    has_stored = bool(store.scalar("SELECT count(*) FROM (SELECT 1 FROM votes WHERE "
                                   "list_contains(?, body) LIMIT 1)", [bodies]))
    if replace and has_stored:
        store.stage("_bw_vote_ballots", f"SELECT DISTINCT body, ballot_id FROM {votes}")
        store.execute("""DELETE FROM votes v WHERE EXISTS (SELECT 1 FROM _bw_vote_ballots b
                         WHERE b.body = v.body AND b.ballot_id = v.ballot_id)""")
    if has_stored and not replace:  # identical stored votes are skipped, conflicts were refused
        store.execute(f"""INSERT INTO votes (body, ballot_id, member_id, raw, choice)
                          SELECT n.body, n.ballot_id, n.member_id, n.raw, n.choice FROM {votes} n
                          WHERE NOT EXISTS (SELECT 1 FROM votes v WHERE v.body = n.body AND
                          v.ballot_id = n.ballot_id AND v.member_id = n.member_id)""")
    else:
        store.execute(f"""INSERT INTO votes (body, ballot_id, member_id, raw, choice)
                          SELECT body, ballot_id, member_id, raw, choice FROM {votes}""")
    return int(store.scalar("SELECT count(*) FROM votes") - before) if not replace else \
        int(store.scalar(f"SELECT count(*) FROM {votes}"))
