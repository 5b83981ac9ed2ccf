"""Bodies and periods a command names: checked against the store, with a close match.

A misspelt body must not quietly export an empty table or start a second body: every command
that takes ``--body`` checks the name here, and the message lists what the store holds and
suggests the nearest name (``difflib``'s ratio, cutoff 0.75: one or two letters apart in a
typical body name). :func:`remove_body` takes a body and every row about it out of the store in
one transaction.
"""

from __future__ import annotations

import difflib

from blocwatch.pipeline.errors import StoreError, UsageError
from blocwatch.pipeline.store.database import Store

CLOSE = 0.75  # difflib ratio at or above which two names are "close"
# Tables with a body column, children first (the order rows are removed in).
BODY_TABLES = ("subset_trends", "subset_metrics", "trends", "group_agreement", "member_metrics",
               "period_metrics", "period_edges", "periods",
               "ingests", "votes", "ballots", "memberships", "members", "bodies")


def close_matches(name: str, names: list[str], n: int = 3) -> list[str]:
    """Names in ``names`` close to ``name`` (case ignored), nearest first."""
    lower = {x.lower(): x for x in names}
    found = difflib.get_close_matches(name.lower(), list(lower), n=n, cutoff=CLOSE)
    return [lower[x] for x in found if lower[x] != name]


def _listing(names: list[str], limit: int = 8) -> str:
    shown = ", ".join(repr(n) for n in names[:limit])
    return shown + (f" and {len(names) - limit} more" if len(names) > limit else "")


def stored_bodies(store: Store) -> list[str]:
    return [r[0] for r in store.rows("SELECT body FROM bodies ORDER BY body")]


def loaded_files(store: Store, body: str) -> list[tuple[str, str]]:
    """(load key, file path) of every file loaded for ``body`` (the store's load log)."""
    return store.rows("SELECT sha256, file FROM ingests WHERE body = ?", [body])


def require_body(store: Store, body: str | None) -> list[str]:
    """The bodies a reader works on: ``[body]`` if the store holds it, else every body.

    Raises :class:`UsageError` for a name the store does not hold (exit 2), naming the close
    match and what exists, and :class:`StoreError` when the store holds no body at all.
    """
    known = stored_bodies(store)
    if not known:
        raise StoreError("store", "holds no ballots yet",
                         "load files with 'blocwatch ingest FILE --body NAME' (or 'blocwatch "
                         "rebuild' with a blocwatch.toml), then 'blocwatch build'")
    if body is None:
        return known
    if body in known:
        return [body]
    near = close_matches(body, known)
    hint = f"did you mean {near[0]!r}? " if near else ""
    raise UsageError(f"body {body!r}", "is not in the store",
                     f"{hint}the store holds {_listing(known)}")


def new_body_warnings(store: Store, body: str | None) -> list[str]:
    """A new body whose name is close to a stored one is most likely a typo: say so."""
    if body is None:
        return []
    known = stored_bodies(store)
    if body in known:
        return []
    near = close_matches(body, known)
    if not near:
        return []
    return [f"body {body!r} is new, but the store holds {near[0]!r}: if that is the same body, "
            f"load with --body \"{near[0]}\" (or remove this one later with 'blocwatch "
            f"remove-body \"{body}\" --yes')"]


def require_results(store: Store, bodies: list[str]) -> None:
    """Raise :class:`StoreError` unless some period of ``bodies`` has stored results."""
    built = store.scalar("SELECT count(*) FROM periods WHERE list_contains(?, body)", [bodies])
    if not built:
        which = "the store" if len(bodies) != 1 else f"body {bodies[0]!r}"
        raise StoreError(which, "has ballots but no results yet",
                         "run 'blocwatch build' (or 'blocwatch rebuild') first")


def require_periods(store: Store, bodies: list[str], periods: list[str], spec: str) -> None:
    """Raise :class:`UsageError` for a named period no body in ``bodies`` has results for
    under the period spec ``spec``."""
    known = [r[0] for r in store.rows(
        "SELECT DISTINCT period FROM periods WHERE list_contains(?, body) AND spec = ? "
        "ORDER BY period", [bodies, spec])]
    for period in periods:
        if period not in known:
            near = close_matches(period, known, n=1)
            hint = f"did you mean {near[0]!r}? " if near else ""
            span = f"{known[0]} to {known[-1]}" if len(known) > 8 else _listing(known)
            raise UsageError(f"period {period!r}", f"has no stored results of period spec "
                             f"{spec!r}", f"{hint}built periods: {span}")


def body_rows(store: Store, body: str) -> dict[str, int]:
    """Rows about ``body`` in each table (what :func:`remove_body` would delete)."""
    require_body(store, body)
    return {t: int(store.scalar(f"SELECT count(*) FROM {t} WHERE body = ?", [body]))
            for t in BODY_TABLES}


def body_counts(store: Store, body: str) -> tuple[int, int, object, object]:
    """(members, ballots, first ballot date, last ballot date) of a body as stored."""
    members = int(store.scalar("SELECT count(*) FROM members WHERE body = ?", [body]))
    n, first, last = store.rows("SELECT count(*), min(held_on), max(held_on) FROM ballots "
                                "WHERE body = ?", [body])[0]
    return members, int(n), first, last


def last_load(store: Store, body: str):
    """``file, rows, loaded_at`` of the body's newest load: one load writes all its files with
    one time stamp, so this is that load whole."""
    return store.df("SELECT file, rows, loaded_at FROM ingests WHERE body = ? AND "
                    "loaded_at = (SELECT max(loaded_at) FROM ingests WHERE body = ?) "
                    "ORDER BY file", [body, body])


def remove_body(store: Store, body: str) -> dict[str, int]:
    """Delete ``body`` and every row about it (one transaction); return rows removed per
    table. Runs and their parameters stay: they record what was done, not what is stored."""
    removed = body_rows(store, body)
    with store.transaction():
        for table in BODY_TABLES:
            store.execute(f"DELETE FROM {table} WHERE body = ?", [body])
    return removed

