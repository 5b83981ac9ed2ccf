"""The DuckDB store: the only module that imports ``duckdb``.

One file (``./blocwatch.duckdb`` by default, ``:memory:`` for tests) holds the loaded ballots and
the computed results. Any DuckDB client can open it. The tables and their migrations are in
:mod:`blocwatch.pipeline.store.schema`; what the build writes and the report reads goes through
:mod:`blocwatch.pipeline.store.results`.

Values always travel as bound parameters or registered data frames, never by string formatting;
table and column names that reach SQL are checked against :data:`TABLES` first.
"""

from __future__ import annotations

import contextlib
import hashlib
import re
from collections.abc import Iterator, Sequence
from pathlib import Path
from typing import Any

import duckdb
import pandas as pd

from blocwatch.pipeline.errors import EXIT_LOCKED, BadInputError, StoreError
from blocwatch.pipeline.options import DEFAULT_STORE
from blocwatch.pipeline.store.schema import (
    SCHEMA_VERSION,
    TABLES,
    check_table,
    check_version,
    migrate,
)


class Store:
    """An open blocwatch store. Use as a context manager, or call :meth:`close`."""

    def __init__(self, path: str | Path = DEFAULT_STORE, *, read_only: bool = False,
                 create: bool = True):
        self.path = str(path)
        if self.path != ":memory:" and not Path(self.path).exists():
            if not create or read_only:
                raise StoreError(f"store {self.path}", "does not exist",
                                 "run 'blocwatch ingest' first, or pass --store PATH")
            Path(self.path).parent.mkdir(parents=True, exist_ok=True)
        try:
            self.con = duckdb.connect(self.path, read_only=read_only)
        except duckdb.IOException as exc:
            if "lock" not in str(exc).lower():
                raise StoreError(f"store {self.path}", f"cannot be opened ({_first_line(exc)})",
                                 "check the path and the file's permissions") from exc
            # DuckDB's file lock: another process has the store open for writing
            raise StoreBusyError(f"store {self.path}", "another program has it open for "
                                 "writing", "wait for it to finish and try again") from exc
        except duckdb.Error as exc:  # not a DuckDB file, ...
            raise StoreError(f"store {self.path}", f"cannot be opened ({exc})",
                             "check the path, and that no other program holds it open") from exc
        self._depth = 0
        if not read_only:
            migrate(self.con)
        elif 0 < (version := check_version(self.con)) < SCHEMA_VERSION:
            # a reader cannot migrate (read-only), and older tables would fail its queries
            self.con.close()
            raise StoreError(f"store {self.path}", f"has schema version {version}, older than "
                             f"this blocwatch ({SCHEMA_VERSION})",
                             "run a command that writes it once (e.g. 'blocwatch build' or "
                             "'blocwatch rebuild'), which upgrades it in place")

    # -- lifecycle -------------------------------------------------------------------------
    def close(self) -> None:
        self.con.close()

    def __enter__(self) -> Store:
        return self

    def __exit__(self, *exc: object) -> None:
        self.close()

    @property
    def in_transaction(self) -> bool:
        """Whether a :meth:`transaction` is open (a failed statement would abort all of it)."""
        return self._depth > 0

    @contextlib.contextmanager
    def transaction(self) -> Iterator[Store]:
        """All statements inside commit together or not at all (nested calls join the outer)."""
        if self._depth:
            self._depth += 1
            try:
                yield self
            finally:
                self._depth -= 1
            return
        self.con.execute("BEGIN TRANSACTION")
        self._depth = 1
        try:
            yield self
        except BaseException:
            self.con.execute("ROLLBACK")
            raise
        else:
            self.con.execute("COMMIT")
        finally:
            self._depth = 0

    # -- queries ---------------------------------------------------------------------------
    def execute(self, sql: str, params: Sequence[Any] | dict | None = None) -> None:
        try:
            self.con.execute(sql, params or [])
        except duckdb.ConstraintException as exc:
            raise BadInputError("store", f"a key or check constraint failed ({exc})",
                                "fix the input so each key appears once") from exc

    def df(self, sql: str, params: Sequence[Any] | dict | None = None) -> pd.DataFrame:
        """Run a query and return its rows as a data frame."""
        return self.con.execute(sql, params or []).df()

    def rows(self, sql: str, params: Sequence[Any] | dict | None = None) -> list[tuple]:
        return self.con.execute(sql, params or []).fetchall()

    def scalar(self, sql: str, params: Sequence[Any] | dict | None = None) -> Any:
        rows = self.con.execute(sql, params or []).fetchall()  # fetchone leaves the result open
        return rows[0][0] if rows else None

    def insert_frame(self, table: str, frame: pd.DataFrame, *, replace_keys: bool = False) -> int:
        """Append ``frame`` (columns named as the table's) to ``table``; return rows written.

        With ``replace_keys`` rows whose primary key exists are overwritten (``INSERT OR
        REPLACE``). A key collision otherwise raises :class:`BadInputError`.
        """
        check_table(table)
        if frame.empty:
            return 0
        cols = ", ".join(f'"{c}"' for c in frame.columns)
        verb = "INSERT OR REPLACE INTO" if replace_keys else "INSERT INTO"
        self.con.register("_bw_frame", frame)
        try:
            self.execute(f"{verb} {table} ({cols}) SELECT {cols} FROM _bw_frame")
        finally:
            self._quiet_unregister("_bw_frame")
        return len(frame)

    def _quiet_unregister(self, name: str) -> None:
        """Unregister, even inside an aborted transaction (keep the original error visible)."""
        with contextlib.suppress(duckdb.Error):
            self.con.unregister(name)

    def register(self, name: str, frame: pd.DataFrame) -> None:
        """Make ``frame`` queryable as the view ``name`` on this connection."""
        self.con.register(name, frame)

    def unregister(self, name: str) -> None:
        self.con.unregister(name)

    def table(self, name: str) -> pd.DataFrame:
        """The whole of one table, ordered by all its columns (for comparisons and exports)."""
        check_table(name)
        return self.df(f"SELECT * FROM {name} ORDER BY ALL")

    def content_hash(self, tables: Sequence[str] = TABLES) -> dict[str, str]:
        """sha256 of each table's sorted contents: equal hashes mean equal tables."""
        out = {}
        for name in tables:
            frame = self.table(name)
            digest = hashlib.sha256(frame.to_csv(index=False).encode()).hexdigest()
            out[name] = digest
        return out

    def read_csv(self, path: str | Path, **options: Any) -> pd.DataFrame:
        """Read a delimited text file through DuckDB's reader, every column as text."""
        try:
            rel = self.con.read_csv(str(path), all_varchar=True, **options)
            return rel.df()
        except duckdb.Error as exc:
            raise BadInputError(f"file {path}", f"cannot be read as CSV ({_first_line(exc)})",
                                "check the delimiter, quoting and encoding (UTF-8)") from exc

    def read_parquet(self, path: str | Path) -> pd.DataFrame:
        try:
            return self.con.read_parquet(str(path)).df()
        except duckdb.Error as exc:
            raise BadInputError(f"file {path}", f"cannot be read as Parquet ({_first_line(exc)})",
                                "check that the file is a Parquet file") from exc


    # -- staging for ingest: temporary tables named _bw_*, dropped after each load ---------
    def stage(self, name: str, sql: str, params: Sequence[Any] | dict | None = None) -> int:
        """Create the temporary table ``name`` as the result of ``sql``; return its row count.

        DuckDB reads the input file itself (``read_csv``, ``read_parquet``, ``read_json``), so a
        large file streams into the table without passing through Python. A DuckDB error (a
        malformed file) becomes :class:`ReadError` carrying DuckDB's message.
        """
        check_stage(name)
        try:
            self.con.execute(f"CREATE OR REPLACE TEMP TABLE {name} AS {sql}", params or [])
        except duckdb.Error as exc:
            raise ReadError(exc) from exc
        return int(self.con.execute(f"SELECT count(*) FROM {name}").fetchall()[0][0])

    def stage_rows(self, name: str, sql: str, params: Sequence[Any] | dict | None = None, *,
                   nulls: Sequence[str] = (), constants: dict[str, Any] | None = None) -> int:
        """Like :meth:`stage`, with a column ``rid``: 0, 1, … in the order ``sql`` yields rows.

        The data lives in ``{name}_t``; ``name`` is a view adding ``rid`` from DuckDB's row ids
        (dense and in insertion order, but offset inside a transaction, hence the base), text
        columns ``nulls`` that are always NULL, and ``constants`` (same value on every row,
        kept once in ``{name}_c``) — so columns a file does not have cost no memory.
        """
        check_stage(name)
        rows = self.stage(f"{name}_t", sql, params)
        base = self.con.execute(f"SELECT coalesce(min(rowid), 0) FROM {name}_t").fetchall()[0][0]
        extra = [f"CAST(NULL AS VARCHAR) AS {_column(c)}" for c in nulls]
        source = f"{name}_t t"
        if constants:
            cols = [_column(c) for c in constants]
            self.stage(f"{name}_c", "SELECT " + ", ".join(f"CAST(? AS VARCHAR) AS {c}"
                                                          for c in cols), list(constants.values()))
            extra += [f"c.{c}" for c in cols]
            source += f", {name}_c c"
        self.con.execute(f"CREATE OR REPLACE TEMP VIEW {name} AS SELECT t.rowid - {int(base)} "
                         f"AS rid, t.*{''.join(', ' + e for e in extra)} FROM {source}")
        return rows

    def stage_view(self, name: str, sql: str) -> None:
        """The temporary view ``name`` over staged tables (no parameters: views keep none)."""
        check_stage(name)
        self.con.execute(f"CREATE OR REPLACE TEMP VIEW {name} AS {sql}")

    def stage_frame(self, name: str, frame: pd.DataFrame) -> int:
        """Copy ``frame`` into the temporary table ``name``; return its row count."""
        check_stage(name)
        self.con.register("_bw_frame", frame)
        try:
            self.con.execute(f"CREATE OR REPLACE TEMP TABLE {name} AS SELECT * FROM _bw_frame")
        finally:
            self.con.unregister("_bw_frame")
        return len(frame)

    def probe(self, sql: str, params: Sequence[Any] | dict | None = None) -> list[tuple]:
        """Rows of a query that reads an input file; DuckDB errors become :class:`ReadError`."""
        try:
            return self.con.execute(sql, params or []).fetchall()
        except duckdb.Error as exc:
            raise ReadError(exc) from exc

    def drop_stage(self, name: str) -> None:
        """Drop one staged table (and the row-numbered view over it, if any)."""
        check_stage(name)
        self.con.execute(f"DROP VIEW IF EXISTS {name}")
        self.con.execute(f"DROP TABLE IF EXISTS {name}_t")
        self.con.execute(f"DROP TABLE IF EXISTS {name}")

    def drop_staged(self) -> None:
        """Drop every temporary ``_bw_*`` table and view of this connection."""
        views = self.con.execute(
            "SELECT view_name FROM duckdb_views() WHERE temporary "
            "AND starts_with(view_name, '_bw_')").fetchall()
        for (name,) in views:
            if _STAGE_NAME.match(name):
                self.con.execute(f"DROP VIEW IF EXISTS {name}")
        names = self.con.execute(
            "SELECT table_name FROM duckdb_tables() WHERE temporary "
            "AND starts_with(table_name, '_bw_')").fetchall()
        for (name,) in names:
            if _STAGE_NAME.match(name):
                self.con.execute(f"DROP TABLE IF EXISTS {name}")


_STAGE_NAME = re.compile(r"^_bw_[a-z0-9_]{1,40}$")


def _column(name: str) -> str:
    if not re.fullmatch(r"[a-z_][a-z0-9_]{0,40}", name):
        raise StoreError(f"column {name!r}", "is not a plain lower-case name",
                         "use letters, digits and _")
    return name


def check_stage(name: str) -> str:
    """Return ``name`` if it is a valid staging table name (``_bw_`` + lower-case word)."""
    if not _STAGE_NAME.match(name):
        raise StoreError(f"staging table {name!r}", "is not a _bw_ name",
                         "use _bw_ followed by lower-case letters, digits and _")
    return name


class StoreBusyError(StoreError):
    """Another process holds DuckDB's lock on the store file (exit 75, like our own lock)."""

    exit_code = EXIT_LOCKED


class ReadError(BadInputError):
    """DuckDB could not read an input file; ``detail`` holds DuckDB's full message."""

    def __init__(self, exc: BaseException):
        self.detail = str(exc)
        self.reason = re.sub(r"^[A-Za-z ]*Error: ", "", _first_line(exc))
        super().__init__("input file", f"cannot be read ({self.reason})",
                         "check the file's format")


def _first_line(exc: BaseException) -> str:
    return str(exc).strip().splitlines()[0] if str(exc).strip() else type(exc).__name__
