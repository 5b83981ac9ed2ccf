"""Checks across rows, files and the store, in SQL over the staged tables.

Each staged votes file ``k`` is reduced to ``_bw_v{k}``: one row per body, ballot and member with
the canonical choice (a join against the code table), the number of different choices given and
the first row. That one aggregate finds duplicates and is also what gets inserted, so a big file
is grouped once. Ballots are reduced to ``_bw_b{k}`` (one row per ballot and distinct date/title).
"""

from __future__ import annotations

from blocwatch.pipeline.ingest.codes import normalise
from blocwatch.pipeline.ingest.validate import (
    EXAMPLES,
    Problems,
    add_rest,
    add_row_problem,
    staged_unit,
)
from blocwatch.pipeline.safety import show
from blocwatch.pipeline.store.database import Store

PAIR = "member-ballot pair"  # the unit of a vote given twice: one member on one ballot


def reduce_votes(store: Store, staged, k: int, problems: Problems, *,
                 find_duplicates: bool = True) -> str:
    """``_bw_v{k}``: the file's votes, one row per key; contradicting duplicates are problems.

    Only keys given more than once are grouped into a table (``_bw_d{k}``, usually empty); the
    votes themselves stay a view over the staged file that keeps each key's first row, so a big
    file is neither copied nor held in a hash table of all its keys. Without
    ``find_duplicates`` the search is skipped and the view keeps every row: the store's primary
    key then catches a repeated key on insert, and the caller searches after all.
    """
    table = f"_bw_v{k}"
    # Scored answers (ingest.scale_answers) take precedence over the code table; a binary-only
    # load skips that join.
    scored = bool(store.scalar("SELECT count(*) FROM (SELECT 1 FROM _bw_answers LIMIT 1)"))
    choice = "coalesce(a.choice, c.choice)" if scored else "c.choice"
    answers = """LEFT JOIN _bw_answers a ON a.body = t.body AND a.ballot_id = t.ballot_id
             AND a.raw = coalesce(t.raw, '')
        LEFT JOIN _bw_codes c ON c.raw = coalesce(t.raw, '') AND a.choice IS NULL""" if scored \
        else "JOIN _bw_codes c ON c.raw = coalesce(t.raw, '')"
    source = f"""FROM {staged.table} t {answers}
        WHERE t.body IS NOT NULL AND t.ballot_id IS NOT NULL AND t.member_id IS NOT NULL
              AND {choice} IS NOT NULL"""
    # With one body for the whole file (--body), grouping on two keys instead of three is cheaper.
    keys = ["ballot_id", "member_id"] if "body" not in staged.headers else \
        ["body", "ballot_id", "member_id"]
    dups = f"_bw_d{k}"
    if not find_duplicates:
        store.stage_view(table, f"""
            SELECT t.body, t.ballot_id, t.member_id, t.raw, {choice} AS choice, 1 AS n_choices,
                   t.rid, CAST({k} AS INTEGER) AS k {source}""")
        return table
    store.stage(dups, f"""
        SELECT {', '.join('t.' + c for c in keys)}, min(t.rid) AS first_rid,
               min({choice}) <> max({choice}) AS differ
        {source} GROUP BY {', '.join('t.' + c for c in keys)} HAVING count(*) > 1""")
    repeated = bool(store.scalar(f"SELECT count(*) FROM {dups}"))
    keep = (f"AND NOT EXISTS (SELECT 1 FROM {dups} d WHERE "
            + " AND ".join(f"d.{c} = t.{c}" for c in keys) + " AND d.first_rid <> t.rid)") \
        if repeated else ""
    store.stage_view(table, f"""
        SELECT t.body, t.ballot_id, t.member_id, t.raw, {choice} AS choice, 1 AS n_choices,
               t.rid, CAST({k} AS INTEGER) AS k
        {source} {keep}""")
    n = store.scalar(f"SELECT count(*) FROM {dups} WHERE differ") if repeated else 0
    if n:
        examples = store.rows(f"SELECT {', '.join(keys)} FROM {dups} WHERE differ "
                              f"ORDER BY first_rid LIMIT {EXAMPLES}")
        for key in examples:
            match = " AND ".join(f"t.{c} = ?" for c in keys)
            hits = store.rows(f"SELECT t.rid, t.raw, {choice} {source} AND {match} "
                              "ORDER BY t.rid LIMIT 100", list(key))
            (r1, v1, c1), = hits[:1]
            r2, v2, _ = next(h for h in hits if h[2] != c1)
            first = staged.place(r1, "raw")
            at = f"line {first[0]}" if first[0] else first[1]
            ballot, member = key[-2], key[-1]
            add_row_problem(problems, staged, "duplicate", r2, "raw", v2,
                            f"member {show(member)} votes {show(v2)} on ballot {show(ballot)} "
                            f"here and {show(v1)} at {at}",
                            "keep one row per member and ballot", count=1, unit=PAIR)
        add_rest(problems, staged, "duplicate", n - len(examples), PAIR,
                 f"{PAIR}s given twice with different votes", "keep one row per member and "
                 "ballot")
    return table


def reduce_ballots(store: Store, staged, k: int, problems: Problems) -> str:
    """``_bw_b{k}``: distinct ballots of a staged votes or ballots file; two dates are a problem."""
    table = f"_bw_b{k}"
    store.stage(table, f"""
        SELECT body, ballot_id, held_on, TRY_CAST(held_on AS DATE) AS day, title, item, topic,
               min(rid) AS rid, count(*) AS n, CAST({k} AS INTEGER) AS k
        FROM {staged.table} WHERE body IS NOT NULL AND ballot_id IS NOT NULL
        GROUP BY body, ballot_id, held_on, title, item, topic""")
    # Dates compare as dates (2020-2-3 = 2020-02-03); unparseable ones were reported already.
    for col, key, word in (("held_on", "day", "dates"), ("title", "title", "titles"),
                           ("item", "item", "agenda items"), ("topic", "topic", "topics")):
        two = f"FROM {table} GROUP BY body, ballot_id HAVING count(DISTINCT {key}) > 1"
        n = store.scalar(f"SELECT count(*) FROM (SELECT 1 {two})")
        if not n:
            continue
        fix = (f"give every row of a ballot the same {word[:-1]}, or give different ballots "
               "different ids")
        rows = store.rows(f"""
            SELECT ballot_id, list({col} ORDER BY rid) FILTER (WHERE {key} IS NOT NULL),
                   list({key} ORDER BY rid) FILTER (WHERE {key} IS NOT NULL),
                   list(rid ORDER BY rid) FILTER (WHERE {key} IS NOT NULL)
            {two} ORDER BY min(rid) LIMIT {EXAMPLES}""")
        for ballot, values, keys, rids in rows:
            later = next(i for i, v in enumerate(keys) if v != keys[0])
            first = staged.place(rids[0], col)
            at = f"line {first[0]}" if first[0] else first[1]
            add_row_problem(problems, staged, "ballot", rids[later], col, values[later],
                            f"ballot {show(ballot)} has two {word}: {show(values[later])} here "
                            f"and {show(values[0])} at {at}", fix, unit="ballot")
        add_rest(problems, staged, "ballot", n - len(rows), "ballot", f"ballots with two {word}",
                 fix)
    return table


def combine_votes(store: Store, tables: list[str], staged_by_k: dict, *, replace: bool,
                  problems: Problems) -> str:
    """``_bw_votes``: all files' votes; a later file wins with ``replace``, else a clash is a
    problem."""
    if len(tables) == 1:
        return tables[0]
    union = " UNION ALL ".join(f"SELECT * FROM {t}" for t in tables)
    store.stage("_bw_votes", f"""
        SELECT body, ballot_id, member_id, arg_max(raw, k) AS raw, arg_max(choice, k) AS choice,
               max(n_choices) AS n_choices, arg_max(rid, k) AS rid, max(k) AS k,
               count(DISTINCT choice) AS n_files_choices, min(k) AS k_first
        FROM ({union}) GROUP BY body, ballot_id, member_id""")
    if not replace:
        fix = "load the corrected file alone with --replace, or fix one of the two"
        rows = store.rows(f"""SELECT ballot_id, member_id, k_first, k, rid, raw, choice
                              FROM _bw_votes WHERE n_files_choices > 1
                              ORDER BY k, rid LIMIT {EXAMPLES}""")
        for ballot, member, k1, k2, rid, raw, choice in rows:
            add_row_problem(problems, staged_by_k[k2], "conflict", rid, "raw", raw,
                            f"member {show(member)} votes {_vote(raw, choice)} on ballot "
                            f"{show(ballot)} here, but differently in {staged_by_k[k1].name}",
                            fix)
        rest_by_file(store, problems, staged_by_k, "conflict", "SELECT k FROM _bw_votes WHERE "
                     "n_files_choices > 1", [r[3] for r in rows], None,
                     "votes that differ from another file's", fix)
    return "_bw_votes"


def rest_by_file(store: Store, problems: Problems, staged_by_k: dict, kind: str,
                 keys_sql: str, shown: list[int], unit: str | None, what: str, fix: str,
                 params: list | None = None) -> None:
    """Count what the examples did not show, per file: ``keys_sql`` yields one ``k`` (the
    staged file) per problem; ``shown`` holds the ``k`` of each example. ``unit`` None: the
    file's rows (cells of a wide sheet)."""
    for k, n in store.rows(f"SELECT k, count(*) FROM ({keys_sql}) GROUP BY k ORDER BY k",
                           params or []):
        s = staged_by_k[k]
        u = unit or staged_unit(s)
        add_rest(problems, s, kind, n - shown.count(k), u, what, fix)


def store_conflicts(store: Store, votes: str, staged_by_k: dict, problems: Problems) -> None:
    """Votes whose stored choice differs from the new one (only when not replacing)."""
    n, = store.rows(f"""SELECT count(*) FROM {votes} n JOIN votes v ON v.body = n.body
                        AND v.ballot_id = n.ballot_id AND v.member_id = n.member_id
                        WHERE v.choice <> n.choice""")[0]
    if not n:
        return
    rows = store.rows(f"""SELECT n.k, n.rid, n.ballot_id, n.member_id, v.choice, n.choice, n.raw
                          FROM {votes} n JOIN votes v ON v.body = n.body
                          AND v.ballot_id = n.ballot_id AND v.member_id = n.member_id
                          WHERE v.choice <> n.choice ORDER BY n.k, n.rid LIMIT {EXAMPLES}""")
    fix = ("pass --replace to overwrite the stored votes of the ballots in this file, or "
           "correct the file")
    for k, rid, ballot, member, old, new, raw in rows:
        add_row_problem(problems, staged_by_k[k], "conflict", rid, "raw", raw,
                        f"member {show(member)} votes {_vote(raw, new)} on ballot {show(ballot)} "
                        f"here, but the store holds {old}", fix)
    rest_by_file(store, problems, staged_by_k, "conflict", f"""SELECT n.k FROM {votes} n
                 JOIN votes v ON v.body = n.body AND v.ballot_id = n.ballot_id
                 AND v.member_id = n.member_id WHERE v.choice <> n.choice""",
                 [r[0] for r in rows], None, "votes that differ from the stored ones", fix)


def _vote(raw, choice: str) -> str:
    """``'Aye' (yes)``, or just ``'no'`` when the code is the choice itself."""
    return show(raw) if normalise(raw) == choice else f"{show(raw)} ({choice})"


def resolve_ballots(store: Store, vote_ballots: list[str], file_ballots: str | None,
                    staged_by_k: dict, *, replace: bool, problems: Problems) -> str:
    """``_bw_bal``: one row per new ballot with its date from the votes file, the ballots file
    or the store; a ballot with two dates or none is a problem."""
    parts = [f"SELECT *, 0 AS src FROM {t}" for t in vote_ballots]
    if file_ballots:
        parts.append(f"SELECT *, 1 AS src FROM {file_ballots}")
    if not parts:
        store.stage("_bw_bal", "SELECT CAST(NULL AS VARCHAR) AS body, CAST(NULL AS VARCHAR) AS "
                    "ballot_id, CAST(NULL AS DATE) AS held_on, CAST(NULL AS VARCHAR) AS title, "
                    "CAST(NULL AS VARCHAR) AS item, CAST(NULL AS VARCHAR) AS topic, 0 AS k, "
                    "CAST(0 AS BIGINT) AS rid, "
                    "CAST(NULL AS DATE) AS stored_on, CAST(NULL AS VARCHAR) AS stored_topic, "
                    "false AS bad_date WHERE false")
        return "_bw_bal"
    store.stage("_bw_ball", " UNION ALL ".join(parts))
    # A date given in the votes files and a different one in the ballots file.
    clash = """FROM _bw_ball a JOIN _bw_ball b ON a.body = b.body AND a.ballot_id = b.ballot_id
        WHERE a.src = 0 AND b.src = 1 AND a.day IS NOT NULL AND b.day IS NOT NULL
              AND a.day <> b.day"""
    rows = store.rows(f"""
        SELECT DISTINCT ON (b.k, b.rid) a.ballot_id, a.held_on, a.k, a.rid, b.held_on, b.k,
               b.rid {clash} ORDER BY b.k, b.rid, a.k, a.rid LIMIT {EXAMPLES}""")
    fix = "make the two files agree on the date"
    for ballot, d1, k1, r1, d2, k2, r2 in rows:
        add_row_problem(problems, staged_by_k[k2], "ballot", r2, "held_on", d2,
                        f"ballot {show(ballot)} is dated {show(d2)} here but {show(d1)} in "
                        f"{staged_by_k[k1].name}", fix, unit="ballot")
    rest_by_file(store, problems, staged_by_k, "ballot", f"SELECT DISTINCT b.k, b.body, "
                 f"b.ballot_id {clash}", [r[5] for r in rows], "ballot",
                 "ballots dated differently in the votes and the ballots file", fix)
    store.stage("_bw_bal", """
        WITH g AS (SELECT body, ballot_id, min(day) AS day, arg_min(title, src * 1e12 + rid)
                   FILTER (WHERE title IS NOT NULL) AS title, arg_min(item, src * 1e12 + rid)
                   FILTER (WHERE item IS NOT NULL) AS item, arg_min(topic, src * 1e12 + rid)
                   FILTER (WHERE topic IS NOT NULL) AS topic, arg_min(k, src * 1e12 + rid) AS k,
                   arg_min(rid, src * 1e12 + rid) AS rid,
                   bool_or(held_on IS NOT NULL AND day IS NULL) AS bad_date
                   FROM _bw_ball GROUP BY body, ballot_id)
        SELECT g.body, g.ballot_id, coalesce(g.day, s.held_on) AS held_on,
               coalesce(g.title, s.title) AS title, coalesce(g.item, s.item) AS item,
               coalesce(g.topic, s.topic) AS topic, g.k, g.rid, s.held_on AS stored_on,
               s.topic AS stored_topic, g.bad_date
        FROM g LEFT JOIN ballots s ON s.body = g.body AND s.ballot_id = g.ballot_id""")
    n, = store.rows("SELECT count(*) FROM _bw_bal WHERE held_on IS NULL AND NOT bad_date")[0]
    if n:
        fix = ("add a date column (or a date row under the header of a wide sheet), or pass "
               "--ballots FILE with ballot_id,held_on")
        cells = " + ".join(  # the votes of the undated ballots, per file (cells of a wide sheet)
            f"(SELECT count(*) FROM {s.table} t JOIN _bw_bal b ON b.body = t.body AND "
            f"b.ballot_id = t.ballot_id WHERE b.held_on IS NULL AND NOT b.bad_date)"
            for s in staged_by_k.values() if s.kind == "votes")
        touched = int(store.scalar(f"SELECT {cells}")) if cells else 0
        units = {staged_unit(s) for s in staged_by_k.values() if s.kind == "votes"}
        votes = f"{touched:,} {'cells' if units == {'cell'} else 'votes'}"
        undated = store.rows(f"SELECT k, rid, ballot_id FROM _bw_bal WHERE held_on IS NULL "
                             f"AND NOT bad_date ORDER BY k, rid LIMIT {EXAMPLES}")
        for i, (k, rid, ballot) in enumerate(undated):
            whole = f" ({n:,} ballots without a date hold {votes})" if i == 0 and n > 1 else ""
            add_row_problem(problems, staged_by_k[k], "date", rid, "ballot_id", ballot,
                            f"ballot {show(ballot)} has no date{whole}", fix, unit="ballot")
        rest_by_file(store, problems, staged_by_k, "date", "SELECT k FROM _bw_bal WHERE "
                     "held_on IS NULL AND NOT bad_date", [r[0] for r in undated], "ballot",
                     "ballots without a date", fix)
    if not replace:
        # A stored topic is changed only on purpose (it moves the ballot's periods' numbers).
        for col, stored, what, word in (("held_on", "stored_on", "is dated {new} here but {old}",
                                         "date"),
                                        ("topic", "stored_topic", "has the topic {new} here but "
                                         "{old}", "topic")):
            where = f"FROM _bw_bal WHERE {stored} IS NOT NULL AND {col} <> {stored}"
            fix = f"pass --replace to overwrite the stored ballot, or fix the {word}"
            rows = store.rows(f"SELECT k, rid, ballot_id, {col}, {stored} {where} "
                              f"ORDER BY k, rid LIMIT {EXAMPLES}")
            for k, rid, ballot, new, old in rows:
                value = str(new) if word == "date" else new
                said = (str(new), str(old)) if word == "date" else (show(new), show(old))
                add_row_problem(problems, staged_by_k[k], "conflict", rid, col, value,
                                f"ballot {show(ballot)} " + what.format(new=said[0], old=said[1])
                                + " in the store", fix, unit="ballot")
            rest_by_file(store, problems, staged_by_k, "conflict", f"SELECT k {where}",
                         [r[0] for r in rows], "ballot",
                         f"ballots whose {word} differs from the stored one", fix)
    return "_bw_bal"
