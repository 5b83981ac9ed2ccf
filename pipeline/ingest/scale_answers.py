"""Scales during a load: which ballots of the load are scored, and what each answer means.

Called by :mod:`blocwatch.pipeline.ingest.load` between staging and the vote-code checks:

1. :func:`stage_scales` resolves every ballot's scale — the files' declarations (``scale``,
   ``scale_min``, ``scale_max``, ``options`` columns of a votes or ballots file, or the same
   rows of a wide sheet), else the stored ballot's, else ``--scale``, else the body's stored
   scale, else yes/no — into ``_bw_scales``, and reads each distinct answer of a scored ballot
   into ``_bw_answers`` (``body, ballot_id, raw, choice, score``). An answer outside the range
   or the options is a problem of kind ``scale``; so is a declaration that does not parse. A
   ballot declared two ways is a ``ballot`` problem; one stored under another scale is a
   ``conflict`` unless ``--replace``.
2. The vote-code check skips scored ballots, and the votes reduction takes each scored row's
   choice from ``_bw_answers`` (:func:`blocwatch.pipeline.ingest.conflicts.reduce_votes`).
3. :func:`write_scales` stores the scales and scores after the load's rows are written.

Yes/no loads that declare nothing take the fast path: two empty tables and no Python work.
"""

from __future__ import annotations

import pandas as pd

from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.ingest.validate import add_row_problem
from blocwatch.pipeline.safety import show
from blocwatch.pipeline.scales import (
    Scale,
    parse_scale,
    read_answer,
    scale_from_cells,
    scale_from_store,
)

SCALE_COLUMNS = ("scale", "scale_min", "scale_max", "options")
_SCALES = "_bw_scales"
_ANSWERS = "_bw_answers"
_EMPTY_SCALES = ("SELECT CAST(NULL AS VARCHAR) AS body, CAST(NULL AS VARCHAR) AS ballot_id, "
                 "CAST(NULL AS VARCHAR) AS scale, CAST(NULL AS DOUBLE) AS scale_min, "
                 "CAST(NULL AS DOUBLE) AS scale_max, CAST(NULL AS VARCHAR) AS options "
                 "WHERE false")
_EMPTY_ANSWERS = ("SELECT CAST(NULL AS VARCHAR) AS body, CAST(NULL AS VARCHAR) AS ballot_id, "
                  "CAST(NULL AS VARCHAR) AS raw, CAST(NULL AS VARCHAR) AS choice, "
                  "CAST(NULL AS DOUBLE) AS score WHERE false")


def _declarations(store, staged: dict, problems) -> dict[tuple[str, str], tuple[Scale, object,
                                                                                  int]]:
    """``{(body, ballot): (scale, staged file, row)}`` from the files' scale columns."""
    out: dict = {}
    for s in staged.values():
        if s.kind not in ("votes", "ballots"):
            continue
        filled = " OR ".join(f"{c} IS NOT NULL" for c in SCALE_COLUMNS)
        if not store.scalar(f"SELECT count(*) FROM (SELECT 1 FROM {s.table} WHERE {filled} "
                            "LIMIT 1)"):  # the file declares nothing (or has no such columns)
            continue
        rows = store.rows(f"""SELECT body, ballot_id, scale, scale_min, scale_max, options,
                                     min(rid) FROM {s.table} WHERE body IS NOT NULL
                              AND ballot_id IS NOT NULL GROUP BY ALL ORDER BY min(rid)""")
        for body, ballot, scale, low, high, options, rid in rows:
            try:
                sc = scale_from_cells(scale, low, high, options, where="scale")
            except UsageError as exc:
                add_row_problem(problems, s, "scale", rid, "scale", scale,
                                f"ballot {show(ballot)}: {exc.why}", exc.fix, unit="ballot")
                continue
            if sc is None:
                continue
            seen = out.setdefault((body, ballot), (sc, s, rid))
            if seen[0] != sc:
                add_row_problem(problems, s, "ballot", rid, "scale", sc.spec,
                                f"ballot {show(ballot)} is declared {show(sc.spec)} here and "
                                f"{show(seen[0].spec)} in {seen[1].name}",
                                "give every row of a ballot the same scale", unit="ballot")
    return out


def _stored(store, keys: pd.DataFrame) -> tuple[dict, dict]:
    """Stored scales of the load's ballots (non-binary ones) and the bodies' scales."""
    store.stage_frame("_bw_scale_keys", keys)
    rows = store.rows("""SELECT b.body, b.ballot_id, b.scale, b.scale_min, b.scale_max,
                                b.options FROM ballots b JOIN _bw_scale_keys k
                         ON k.body = b.body AND k.ballot_id = b.ballot_id""")
    ballots = {(body, ballot): scale_from_store(scale, low, high, options)
               for body, ballot, scale, low, high, options in rows}
    bodies = {b: parse_scale(spec, where=f"stored scale of body {show(b)}")
              for b, spec in store.rows("SELECT body, scale FROM bodies")}
    return ballots, bodies


def stage_scales(store, staged: dict, *, default: Scale | None = None, replace: bool = False,
                 mapping: dict | None = None, problems) -> bool:
    """Stage ``_bw_scales`` and ``_bw_answers`` for the load; True if any ballot is scored."""
    votes = {k: s for k, s in staged.items() if s.kind == "votes"}
    declared = _declarations(store, staged, problems)
    union = " UNION ".join(f"SELECT DISTINCT body, ballot_id, CAST({k} AS INTEGER) AS k "
                           f"FROM {s.table} WHERE body IS NOT NULL AND ballot_id IS NOT NULL"
                           for k, s in staged.items() if s.kind in ("votes", "ballots"))
    keys = store.df(f"SELECT body, ballot_id, min(k) AS k FROM ({union}) GROUP BY ALL") \
        if union else pd.DataFrame(columns=["body", "ballot_id", "k"])
    stored, body_scale = _stored(store, keys[["body", "ballot_id"]])
    quick = not declared and default is None and not any(
        sc.scored for sc in stored.values()) and not any(
        body_scale.get(b, Scale()).scored for b in keys["body"].unique())
    if quick:
        store.stage(_SCALES, _EMPTY_SCALES)
        store.stage(_ANSWERS, _EMPTY_ANSWERS)
        return False
    rows = []
    for body, ballot, k in keys.itertuples(index=False):  # one per ballot of the load
        key = (body, ballot)
        old = stored.get(key)
        if key in declared:
            sc, s, rid = declared[key]
            if old is not None and old != sc and not replace:
                add_row_problem(problems, s, "conflict", rid, "scale", sc.spec,
                                f"ballot {show(ballot)} is declared {show(sc.spec)} here but "
                                f"stored as {show(old.spec)}", "pass --replace to re-declare "
                                "the stored ballot, or correct the declaration", unit="ballot")
        elif old is not None and not (replace and default is not None):
            sc = old
        else:
            sc = default or body_scale.get(body, Scale())
        rows.append({"body": body, "ballot_id": ballot, **sc.store_row()})
    frame = pd.DataFrame(rows, columns=["body", "ballot_id", *SCALE_COLUMNS])
    store.stage_frame(_SCALES, frame.astype({"scale_min": "float64", "scale_max": "float64"}))
    scales = {(r.body, r.ballot_id): scale_from_store(r.scale, r.scale_min, r.scale_max,
                                                      r.options)
              for r in frame.itertuples(index=False) if r.scale != "binary"}
    _stage_answers(store, votes, scales, mapping, problems)
    return bool(scales)


def _stage_answers(store, votes: dict, scales: dict, mapping, problems) -> None:
    """Read each distinct answer of a scored ballot once; refused ones become problems."""
    if not scales:
        store.stage(_ANSWERS, _EMPTY_ANSWERS)
        return
    out, seen = [], set()
    for s in votes.values():
        pairs = store.rows(f"""SELECT t.body, t.ballot_id, coalesce(t.raw, '') AS raw, count(*),
                                      min(t.rid) FROM {s.table} t JOIN {_SCALES} x
                               ON x.body = t.body AND x.ballot_id = t.ballot_id
                               WHERE x.scale <> 'binary' GROUP BY ALL ORDER BY min(t.rid)""")
        for body, ballot, raw, n, rid in pairs:
            try:
                got = read_answer(raw, scales[(body, ballot)], mapping)
            except ValueError as refused:
                add_row_problem(problems, s, "scale", rid, "raw", raw,
                                f"ballot {show(ballot)}: {refused}",
                                "correct the answer, or the ballot's declared scale (--scale, "
                                "or the scale/scale_min/scale_max/options columns)", count=n)
                continue
            if (body, ballot, raw) not in seen:
                seen.add((body, ballot, raw))
                out.append((body, ballot, raw, got[0], got[1]))
    frame = pd.DataFrame(out, columns=["body", "ballot_id", "raw", "choice", "score"])
    store.stage_frame(_ANSWERS, frame.astype({"score": "float64"}))


def write_scales(store, *, default: Scale | None = None, bodies=()) -> None:
    """Store the load's scales and scores (after its ballots and votes are written)."""
    store.execute(f"""UPDATE ballots SET scale = s.scale, scale_min = s.scale_min,
                      scale_max = s.scale_max, options = s.options FROM {_SCALES} s
                      WHERE ballots.body = s.body AND ballots.ballot_id = s.ballot_id""")
    store.execute(f"""UPDATE votes SET score = a.score FROM {_ANSWERS} a
                      WHERE votes.body = a.body AND votes.ballot_id = a.ballot_id
                      AND coalesce(votes.raw, '') = a.raw""")
    if default is not None:
        for body in bodies:
            store.execute("UPDATE bodies SET scale = ? WHERE body = ?", [default.spec, body])
