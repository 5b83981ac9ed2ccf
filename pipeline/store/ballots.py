"""What the build reads of a body's stored ballots and votes.

One period's votes with each member's group counts and names, its scales and scored answers,
ballot dates and topic counts: the reads behind a vote matrix, kept here so that SQL outside
ingest staging lives in the store package. Each function returns plain frames or rows; the
build turns them into matrices.
"""

from __future__ import annotations

import pandas as pd

from blocwatch.pipeline.store.database import Store


def has_ballots(store: Store) -> bool:
    """Whether the store holds any ballot of any body."""
    return bool(store.scalar("SELECT count(*) FROM ballots"))


def ballot_date_range(store: Store, body: str) -> tuple | None:
    """(first, last) ballot date of a body, or None if it has none."""
    row = store.rows("SELECT min(held_on), max(held_on) FROM ballots WHERE body = ?", [body])
    return None if not row or row[0][0] is None else (row[0][0], row[0][1])


def ballot_dates(store: Store, body: str) -> dict:
    """Each ballot id of a body with its date."""
    return dict(store.rows("SELECT ballot_id, held_on FROM ballots WHERE body = ?", [body]))


def topic_counts(store: Store, body: str, start=None, end=None) -> list[tuple[str, int]]:
    """(topic, ballots) of a body, or of its ballots from ``start`` to ``end`` when given;
    ballots without a topic count under ``''``."""
    if start is None:
        return store.rows("SELECT coalesce(topic, ''), count(*) FROM ballots WHERE body = ? "
                          "GROUP BY 1", [body])
    return store.rows("SELECT coalesce(topic, ''), count(*) FROM ballots WHERE body = ? "
                      "AND held_on BETWEEN ? AND ? GROUP BY 1", [body, start, end])


def period_votes(store: Store, body: str, start, end) -> tuple[pd.DataFrame, ...]:
    """(votes, group counts, names) of the ballots held from ``start`` to ``end``.

    ``votes``: member_id, ballot_id, choice, item, topic, held_on in ballot order.
    ``group counts``: each member's cast (non-absent) votes per group whose spell covers the
    ballot's date — the build places a member by them. ``names``: every member of the body.
    """
    params = [body, start, end]
    votes = store.df(
        """SELECT v.member_id, v.ballot_id, v.choice, coalesce(b.item, '') AS item,
                  coalesce(b.topic, '') AS topic, b.held_on
           FROM votes v JOIN ballots b ON b.body = v.body AND b.ballot_id = v.ballot_id
           WHERE v.body = ? AND b.held_on BETWEEN ? AND ?
           ORDER BY b.held_on, v.ballot_id""", params)
    groups = store.df(
        """WITH cast_votes AS (
               SELECT v.member_id, b.held_on FROM votes v
               JOIN ballots b ON b.body = v.body AND b.ballot_id = v.ballot_id
               WHERE v.body = ? AND b.held_on BETWEEN ? AND ? AND v.choice <> 'absent'),
           counted AS (
               SELECT c.member_id, m.group_name, count(*) AS n FROM cast_votes c
               JOIN memberships m ON m.body = ? AND m.member_id = c.member_id
                    AND c.held_on BETWEEN m.valid_from AND m.valid_to
               GROUP BY ALL)
           SELECT * FROM counted""", params + [body])
    names = store.df("SELECT member_id, coalesce(name, member_id) AS name FROM members "
                     "WHERE body = ?", [body])
    return votes, groups, names


def period_scale_ballots(store: Store, body: str, start, end) -> pd.DataFrame:
    """ballot_id, scale, scale_min, scale_max, options of the ballots from ``start`` to ``end``."""
    return store.df(
        """SELECT ballot_id, scale, scale_min, scale_max, options FROM ballots
           WHERE body = ? AND held_on BETWEEN ? AND ?""", [body, start, end])


def period_scores(store: Store, body: str, start, end) -> tuple[pd.DataFrame, pd.DataFrame]:
    """(spread, answers) of the scored ballots from ``start`` to ``end``.

    ``spread``: the lowest and highest score given on each continuous ballot (its range where
    none was declared). ``answers``: every scored answer that is not an abstention or absence.
    """
    params = [body, start, end]
    spread = store.df(
        """SELECT v.ballot_id, min(v.score) AS lo, max(v.score) AS hi FROM votes v
           JOIN ballots b ON b.body = v.body AND b.ballot_id = v.ballot_id
           WHERE v.body = ? AND b.held_on BETWEEN ? AND ? AND b.scale = 'continuous'
             AND v.score IS NOT NULL GROUP BY v.ballot_id""", params)
    answers = store.df(
        """SELECT v.member_id, v.ballot_id, v.score FROM votes v
           JOIN ballots b ON b.body = v.body AND b.ballot_id = v.ballot_id
           WHERE v.body = ? AND b.held_on BETWEEN ? AND ? AND b.scale <> 'binary'
             AND v.score IS NOT NULL AND v.choice NOT IN ('abstain', 'absent')""", params)
    return spread, answers
