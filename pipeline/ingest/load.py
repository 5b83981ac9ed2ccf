"""Load ballot files into the store: stage, check everything, then write it all or nothing.

One call of :func:`ingest_files` writes in one transaction. Files are staged into temporary
tables by :mod:`~blocwatch.pipeline.ingest.readers`, every check of
:mod:`~blocwatch.pipeline.ingest.validate`, :mod:`~blocwatch.pipeline.ingest.conflicts` and
:mod:`~blocwatch.pipeline.ingest.roster` runs, and only if none found a problem does
:mod:`~blocwatch.pipeline.ingest.writer` insert, inside one transaction. On any error nothing
has been written (or the transaction rolls back), so the store is exactly as before. Staging
stays outside the transaction on purpose: DuckDB aborts a transaction on a failed read, and a
malformed file must become a message, not a dead transaction.

Decisions worth knowing:

- **Body.** ``body=`` names the body for every row; without it each file needs a ``body``
  column. There is no guessing from file names.
- **Absent rows are stored**, with ``choice = 'absent'`` and the original code in ``raw``
  (blank cells too, ``raw`` NULL). Readers treat a missing row the same way.
- **Same file twice** (same sha256 for the same body) is skipped and reported ``unchanged``;
  a workbook read with ``sheet=`` counts as the file plus the sheet named (see
  :func:`~blocwatch.pipeline.ingest.sniff.load_key`), so each sheet can be loaded once.
- **Conflicts.** A vote, ballot date or membership that differs from the stored one is an
  error unless ``replace=True``; then each ballot in the load replaces its stored version
  whole (see :mod:`~blocwatch.pipeline.ingest.writer`). Identical overlapping rows are fine.
- **Groups** come from the roster (``members=``), else from a ``group`` column of the votes
  file, else from memberships already stored. Once a body has any, every member in the votes
  must have one (roster row) and cast votes must fall inside a membership spell.
"""

from __future__ import annotations

import contextlib
from collections.abc import Iterator
from pathlib import Path

import pandas as pd

from blocwatch.pipeline.errors import BadInputError, UsageError
from blocwatch.pipeline.ingest import codes as vote_codes
from blocwatch.pipeline.ingest import conflicts, dates, memberships, scale_answers, sniff, writer
from blocwatch.pipeline.ingest.outcome import FileResult, IngestReport
from blocwatch.pipeline.ingest.readers import FIELDS, KINDS, Staged, parse_columns, stage_file
from blocwatch.pipeline.ingest.validate import (
    Problem,
    Problems,
    add_row_problem,
    check_bodies,
    check_dates,
    check_values,
    staged_unit,
)
from blocwatch.pipeline.options import LAYOUTS
from blocwatch.pipeline.safety import check_name, show
from blocwatch.pipeline.scales import parse_scale
from blocwatch.pipeline.store.database import Store


def ingest_files(store: Store, paths, *, body: str | None, members=None, layout: str = "long",
                 codes=None, replace: bool = False, columns: dict[str, str] | None = None,
                 ballots=None, check_only: bool = False, scale=None,
                 codes_via: str | None = None, date_format: str | None = None,
                 sheet: str | None = None) -> IngestReport:
    """Load vote files (plus an optional roster and ballots file) into ``store`` atomically.

    Parameters
    ----------
    store : Store
    paths : iterable of path
        Vote files: ``.csv``/``.tsv``, ``.parquet``, ``.jsonl`` (long layout) or ``.csv``,
        ``.xlsx`` (wide layout; ``.xlsx`` also long).
    body : str or None
        Body of every row; ``None`` requires a ``body`` column.
    members : path, optional
        Roster: ``member_id, name, group[, valid_from, valid_to]``.
    layout : {'long', 'wide'}
    codes : path or dict, optional
        Extra vote codes, ``raw,choice`` CSV (or ``{raw: choice}``).
    replace : bool
        Overwrite stored ballots, votes and memberships that the load contradicts.
    columns : dict, optional
        ``{field: header}`` for columns with other names (fields: ``readers.FIELDS``).
    ballots : path, optional
        Ballot dates and titles: ``ballot_id, held_on[, title, item, topic]``.
    check_only : bool
        Check everything, write nothing; problems are returned in the report, not raised.
    scale : str, optional
        Scale of the load's ballots that declare none (``ordinal:1..9``, …; see
        :mod:`blocwatch.pipeline.scales`), also stored as the body's default.
    date_format : str, optional
        The form of the files' dates (strptime, e.g. ``%d.%m.%Y``); default ISO, with
        unambiguous day-first or month-first numeric dates detected (see
        :mod:`~blocwatch.pipeline.ingest.dates`).
    sheet : str, optional
        Which sheet of an ``.xlsx`` workbook: a name, a number from 1, or ``all`` (every sheet,
        stacked); default the first.
    codes_via : str, optional
        Where this caller's user maps a vote code (e.g. ``[bodies."X"] of blocwatch.toml`` for a
        rebuild), for the message; default: the ``--codes`` flag or the body's config table.

    Returns
    -------
    IngestReport

    Raises
    ------
    BadInputError
        On the first problem of a load (nothing is written); exit code 65 in the CLI.
    UsageError
        For a bad option or a missing file.
    """
    if layout not in LAYOUTS:
        raise UsageError(f"layout {layout!r}", "is not long or wide", "pass --layout long|wide")
    if body is not None:
        check_name(body)
    overrides = parse_columns(columns)
    mapping = _mapping(codes)
    inputs = [(Path(p), "votes") for p in paths]
    if members:
        inputs.append((Path(members), "roster"))
    if ballots:
        inputs.append((Path(ballots), "ballots"))
    if not inputs:
        raise UsageError("ingest", "was given no files", "name one or more vote files")
    for path, kind in inputs:
        if not path.is_file():
            raise UsageError(f"{kind} file {path}", "does not exist or is not a file",
                             "check the path")
    load = _Load(store, body=body, layout=layout, mapping=mapping, replace=replace,
                 overrides=overrides, check_only=check_only)
    load.scale = None if scale is None else parse_scale(scale)
    load.problems.codes_via = codes_via
    load.date_format = None if date_format is None else dates.check_format(date_format)
    load.sheet = sheet
    try:  # staging and checks run outside the transaction: a DuckDB read error would abort it
        report = load.run(inputs)
        if report.problems and not check_only:
            raise report.problems.first_error()
    finally:
        store.drop_staged()
    return report


@contextlib.contextmanager
def ingest_store(store_path: str | Path, *, check_only: bool = False) -> Iterator[Store]:
    """The store a load goes into: locked for writing; for a check, opened read-only (an empty
    in-memory store if the file does not exist yet, so a check never creates one).

    A first load that fails leaves no files behind: the store file it created (and DuckDB's
    write-ahead log) and a lock file that did not exist before are removed while the lock is
    still held, so no other run can have opened that store in between.
    """
    path = Path(store_path)
    if check_only:
        exists = path.exists()
        with Store(path if exists else ":memory:", read_only=exists) as store:
            yield store
        return
    from blocwatch.pipeline.ops.lock import lock_path, store_lock

    fresh = str(store_path) != ":memory:" and not path.exists()
    lock = lock_path(path) if fresh else None
    lock_is_new = lock is not None and not lock.exists()
    with store_lock(path, "ingest"):
        try:
            with Store(path) as store:
                yield store
        except BaseException:
            if fresh:
                for leftover in (path, Path(f"{path}.wal")) + ((lock,) if lock_is_new else ()):
                    leftover.unlink(missing_ok=True)
            raise


def _mapping(codes) -> dict[str, str] | None:
    if codes is None:
        return None
    if isinstance(codes, dict):
        bad = {k: v for k, v in codes.items() if vote_codes.normalise(v) not in
               vote_codes.CHOICES}
        if bad:
            raise UsageError(f"codes {bad}", "map to something other than a choice",
                             f"use one of {', '.join(vote_codes.CHOICES)}")
        return {vote_codes.normalise(k): vote_codes.normalise(v) for k, v in codes.items()}
    return vote_codes.load_mapping(codes)


class _Load:
    def __init__(self, store: Store, *, body, layout, mapping, replace, overrides, check_only):
        self.store, self.body, self.layout, self.mapping = store, body, layout, mapping
        self.replace, self.overrides, self.check_only = replace, overrides, check_only
        self.problems = Problems()
        self.results: list[FileResult] = []
        self.staged: dict[int, Staged] = {}
        self.notes: list[str] = []
        self.bad_members: set[str] = set()  # roster rows refused: no follow-up complaints
        self.scale = None  # --scale: the load's default ballot scale
        self.date_format: str | None = None  # --date-format
        self.sheet: str | None = None  # --sheet

    # -- stage every file ---------------------------------------------------------------------
    def run(self, inputs) -> IngestReport:
        seen: set[str] = set()
        for path, kind in inputs:
            info = sniff.scan(path)
            sheet = self.sheet if kind == "votes" else None
            sha = sniff.load_key(path, info.sha256, sheet)  # a sheet of a workbook: its own key
            if sha in seen or self._known(sha):
                self.results.append(FileResult(str(path), sha, 0, "unchanged", kind))
                continue
            seen.add(sha)
            k = len(self.results)
            staged = stage_file(self.store, path, kind=kind, table=f"_bw_s{k}", body=self.body,
                                overrides=self.overrides, problems=self.problems,
                                layout=self.layout if kind == "votes" else "long",
                                scan_info=info, sheet=sheet, notes=self.notes)
            if staged is not None:
                staged.sha256 = sha
            read = staged.rows + staged.rejected if staged else 0  # refused rows were read too
            self.results.append(FileResult(str(path), sha, read,
                                           "checked" if self.check_only else "loaded", kind))
            if staged is not None:
                self.results[-1].unit = staged_unit(staged)
                if self.body is None and "body" not in staged.headers:
                    self.problems.add(Problem("header", staged.name, "has no body column and no "
                                              "body was named", "pass --body NAME", line=1))
                    continue
                self.staged[k] = staged
        report = IngestReport(self.results, self.problems, self.check_only, notes=self.notes)
        if self.staged:
            self._check_and_write(report)
        return report

    def _known(self, sha: str) -> bool:
        if self.body is not None:
            return bool(self.store.scalar("SELECT count(*) FROM ingests WHERE sha256 = ? AND "
                                          "body = ?", [sha, self.body]))
        return bool(self.store.scalar("SELECT count(*) FROM ingests WHERE sha256 = ?", [sha]))

    def of(self, kind: str) -> dict[int, Staged]:
        return {k: s for k, s in self.staged.items() if s.kind == kind}

    # -- check --------------------------------------------------------------------------------
    def _check_and_write(self, report: IngestReport) -> None:
        store, problems = self.store, self.problems
        for k, s in self.staged.items():
            req, _, _ = KINDS[s.kind]
            required = tuple(FIELDS[o][0] for o in req if o != "vote") + ("body",)  # blank = absent
            check_values(store, s, required=required, problems=problems)
            bodies = check_bodies(store, s, problems)
            self.results[k].bodies = tuple(bodies)
            for col in ("held_on", "valid_from", "valid_to"):
                if col in s.headers:
                    form = dates.normalise_dates(store, s, col, self.date_format, self.notes)
                    check_dates(store, s, col, problems, future_ok=s.kind == "roster",
                                fmt=form)
        votes = self.of("votes")
        scale_answers.stage_scales(store, self.staged, default=self.scale, replace=self.replace,
                                mapping=self.mapping, problems=problems)
        self._codes(votes)
        # One file being written: leave repeated keys to the votes primary key, searched only
        # if the insert trips it (see write() below). Without such a key, search up front.
        # Inside a caller's transaction (a rebuild's scan) a tripped key would abort it all.
        self.deferred = len(votes) == 1 and not self.check_only \
            and not store.in_transaction and bool(store.scalar(
                "SELECT count(*) FROM duckdb_constraints() WHERE table_name = 'votes' "
                "AND constraint_type = 'PRIMARY KEY'"))
        vote_tables = [conflicts.reduce_votes(store, s, k, problems,
                                              find_duplicates=not self.deferred)
                       for k, s in votes.items()]
        ballot_tables = [conflicts.reduce_ballots(store, s, k, problems) for k, s in
                         self.of("votes").items()]
        file_ballots = [conflicts.reduce_ballots(store, s, k, problems) for k, s in
                        self.of("ballots").items()]
        combined = conflicts.combine_votes(store, vote_tables, self.staged,
                                           replace=self.replace, problems=problems) \
            if vote_tables else None
        bal = conflicts.resolve_ballots(store, ballot_tables, file_ballots[0] if file_ballots
                                        else None, self.staged, replace=self.replace,
                                        problems=problems)
        inputs = memberships.SpellInputs(
            store, problems, self.staged,
            sorted({b for k in self.staged for b in self.results[k].bodies}),
            self.bad_members, self.replace, self.notes)
        spells, spell_members = memberships.check(inputs, votes, combined, bal)
        if combined and not self.replace and self._stored_votes():
            conflicts.store_conflicts(store, combined, self.staged, problems)
        self._counts(votes, bal)
        if problems:
            return
        if self.check_only:
            return
        members = self._members(votes)
        bodies = sorted({b for r in self.results for b in r.bodies} | set(
            spells["body"].unique() if not spells.empty else []))
        ingests = self._ingest_rows()
        if combined == "_bw_votes":  # several files were combined into one table: free them
            for s in self.of("votes").values():
                store.drop_stage(s.table)
        def write() -> None:
            with store.transaction():  # every write of the load: all or nothing
                report.votes_written = writer.write_load(
                    store, votes=combined, ballots=bal, members=members, spells=spells,
                    spell_members=spell_members, ingests=ingests, bodies=bodies,
                    replace=self.replace)
                scale_answers.write_scales(store, default=self.scale, bodies=bodies)

        try:
            write()
        except BadInputError:
            if not self.deferred:
                raise
            # The insert failed (rolled back): most likely a key given twice. Search now;
            # contradicting repeats become problems, identical ones keep their first row.
            (k, s), = votes.items()
            conflicts.reduce_votes(store, s, k, problems)
            if problems or not store.scalar(f"SELECT count(*) FROM _bw_d{k}"):
                if problems:
                    return
                raise
            write()

    def _stored_votes(self) -> bool:
        """Whether the store holds votes of any body in this load (else nothing can clash)."""
        bodies = sorted({b for r in self.results for b in r.bodies})
        return bool(self.store.scalar("SELECT count(*) FROM (SELECT 1 FROM votes WHERE "
                                      "list_contains(?, body) LIMIT 1)", [bodies]))

    def _codes(self, votes: dict[int, Staged]) -> None:
        """Map every distinct raw code; keep each file's tally for its summary line."""
        table: dict[object, str] = {"": "absent"}
        for k, s in votes.items():
            rows = self.store.rows(f"SELECT raw, count(*), min(rid) FROM {s.table} t WHERE NOT "
                                   "EXISTS (SELECT 1 FROM _bw_scales x WHERE x.body = t.body "
                                   "AND x.ballot_id = t.ballot_id AND x.scale <> 'binary') "
                                   "GROUP BY raw ORDER BY min(rid) LIMIT 100001")
            known, unknown = vote_codes.resolve([r[0] for r in rows], self.mapping)
            table.update({k: v for k, v in known.items() if k is not None})
            self.results[k].codes = [(raw, known.get(raw), int(n)) for raw, n, _ in rows]
            info = {r[0]: r for r in rows}
            fix = self.problems.code_fix(unknown[0]) if unknown else ""
            for raw in unknown:
                _, n, rid = info[raw]
                reason = vote_codes.ambiguity(raw)
                why = (f"{show(raw)} is refused until mapped: {reason}" if reason else
                       f"{show(raw)} is not a known vote code")
                add_row_problem(self.problems, s, "code", rid, "raw", raw, why, fix, count=n)
        self.store.stage_frame("_bw_codes", pd.DataFrame(
            {"raw": pd.Series(list(table), dtype=object).astype(str),
             "choice": pd.Series(list(table.values()), dtype=object)}))

    def _members(self, votes: dict[int, Staged]) -> str | None:
        parts = [f"SELECT body, member_id, name, rid, 0 AS src FROM {s.table} "
                 "WHERE member_id IS NOT NULL" for s in votes.values()]
        parts += [f"SELECT body, member_id, name, rid, 1 AS src FROM {s.table} "
                  "WHERE member_id IS NOT NULL" for s in self.of("roster").values()]
        if not parts:
            return None
        self.store.stage("_bw_members", f"""
            SELECT body, member_id, arg_max(name, src * 1e12 + rid) FILTER (WHERE name IS NOT
                   NULL) AS name FROM ({' UNION ALL '.join(parts)}) GROUP BY body, member_id""")
        return "_bw_members"

    def _counts(self, votes: dict[int, Staged], bal: str) -> None:
        for k, s in self.staged.items():
            r = self.results[k]
            if s.kind in ("votes", "ballots"):  # from the small per-ballot table
                r.ballots = int(self.store.scalar(f"SELECT count(DISTINCT (body, ballot_id)) "
                                                  f"FROM _bw_b{k}"))
            if s.kind in ("votes", "roster"):
                r.members = int(self.store.scalar(f"SELECT count(DISTINCT (body, member_id)) "
                                                  f"FROM {s.table}"))

    def _ingest_rows(self) -> list[tuple]:
        rows = []
        for k, s in self.staged.items():
            for body, n in self.store.rows(f"SELECT body, count(*) FROM {s.table} GROUP BY body"):
                rows.append((s.sha256, body, str(s.path.resolve()), int(n)))
        return rows
