"""Problems found in input files, the checks that find them, and the ``--check`` report.

Every check adds :class:`Problem` records instead of raising, so one pass finds everything. A
normal load then stops on the first problem (:meth:`Problems.raise_first`) with one message —
file, line or cell, column, bad value, what to do — and a count of the rest; ``ingest --check``
prints them all, grouped by kind and counted (:meth:`Problems.report`).

Checks run as SQL over the staged file (a temporary DuckDB table), so a ten-million-row file
costs a few scans, not a Python loop; only the handful of example rows shown in a message are
fetched into Python.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field

from blocwatch.pipeline.errors import BadInputError
from blocwatch.pipeline.safety import name_problem, show

MAX_FIELD_CHARS = 1000  # ids, codes, group names, titles: anything longer is not a clerk's entry
EXAMPLES = 5  # example rows kept per problem kind and file
EARLIEST = "1800-01-01"

# Kinds in the order a clerk should fix them; a load reports the first one.
KINDS = {
    "file": "file cannot be read",
    "header": "header problem",
    "encoding": "text that is not UTF-8",
    "nul": "NUL bytes",
    "shape": "rows that do not fit the header",
    "quote": "broken quoting",
    "json": "broken JSON lines",
    "type": "column of the wrong type",
    "sheet": "spreadsheet cells that cannot be read",
    "empty": "missing values",
    "long": "over-long values",
    "name": "unusable body names",
    "date": "dates that cannot be used",
    "code": "unknown vote codes",
    "duplicate": "the same vote given twice, differently",
    "ballot": "ballots described two ways",
    "roster": "roster problems",
    "member": "members without a group",
    "conflict": "conflicts with stored data",
    "scale": "answers outside a ballot's scale",
}


@dataclass(frozen=True)
class Problem:
    """One thing wrong with one input, located as precisely as the format allows."""

    kind: str  # a key of KINDS
    file: str
    why: str  # what is wrong, quoting the bad value via safety.show
    fix: str
    line: int | None = None  # physical line in a text file (header is line 1)
    where: str | None = None  # other formats: "row 7", "sheet 'Votes', cell D7"
    column: str | None = None  # the column as the file names it
    value: object = None  # the bad value itself (for tests and reports)
    count: int = 1  # rows that share this problem

    def place(self) -> str:
        """``file:line``, ``file, where`` or just the file."""
        return f"{self.file}:{self.line}" if self.line else (
            f"{self.file}, {self.where}" if self.where else self.file)

    def location(self) -> str:
        place = self.place()
        return f"{place}, column {show(self.column)}" if self.column else place

    def text(self) -> str:
        more = f" ({self.count} rows like this)" if self.count > 1 else ""
        return f"{self.location()}: {self.why}{more}"


@dataclass
class Problems:
    """Problems collected over one load, in the order found."""

    items: list[Problem] = field(default_factory=list)

    def add(self, problem: Problem) -> None:
        self.items.append(problem)

    def __bool__(self) -> bool:
        return bool(self.items)

    def __len__(self) -> int:
        return len(self.items)

    def total_rows(self) -> int:
        return sum(p.count for p in self.items)

    def ordered(self) -> list[Problem]:
        rank = {k: i for i, k in enumerate(KINDS)}
        return sorted(self.items, key=lambda p: rank.get(p.kind, len(rank)))

    def first_error(self) -> BadInputError:
        """One error for the whole load: the first problem, or every unknown code at once."""
        ordered = self.ordered()
        first = ordered[0]
        rest = len(ordered) - 1
        if first.kind == "code":
            codes = [p for p in ordered if p.kind == "code"]
            rest -= len(codes) - 1
            err = unknown_codes_error(codes)
        else:
            err = BadInputError(first.location(), first.why, first.fix)
        if rest > 0:
            err.fix += (f"; {rest} more problem{'s' if rest > 1 else ''} found — run "
                        "'blocwatch ingest --check' on the same files to list them all")
            err.args = (err.line(),)
        return err

    def raise_first(self) -> None:
        if self.items:
            raise self.first_error()

    def report(self) -> list[str]:
        """Lines of the ``--check`` report: per file, per kind, counted, with examples."""
        if not self.items:
            return ["no problems found"]
        lines: list[str] = []
        by_file: dict[str, list[Problem]] = {p.file: [] for p in self.items}  # files in order
        for p in self.ordered():
            by_file[p.file].append(p)
        for file, problems in by_file.items():
            kinds = Counter(p.kind for p in problems)
            rows = sum(p.count for p in problems)
            lines.append(f"{file}: {len(kinds)} kind{'s' if len(kinds) > 1 else ''} of problem, "
                         f"{rows} row{'s' if rows != 1 else ''} affected")
            for kind in kinds:
                group = [p for p in problems if p.kind == kind]
                n = sum(p.count for p in group)
                lines.append(f"  {KINDS.get(kind, kind)}: {n} row{'s' if n != 1 else ''}")
                for p in group[:EXAMPLES * 4]:
                    lines.append(f"    {p.text()}")
                if len(group) > EXAMPLES * 4:
                    lines.append(f"    … and {len(group) - EXAMPLES * 4} more")
                fixes = dict.fromkeys(p.fix for p in group)
                for fix in fixes:
                    lines.append(f"    what to do: {fix}")
        return lines


def unknown_codes_error(codes: list[Problem]) -> BadInputError:
    """The one message for every unknown vote code of a load: code, count, first file:line."""
    merged: dict[object, list] = {}
    for p in codes:  # the same code in several files: add counts, keep the first place
        entry = merged.setdefault(p.value, [0, p.place()])
        entry[0] += p.count
    parts = [f"{show(code)} ×{n} (first at {loc})" for code, (n, loc) in list(merged.items())[:20]]
    if len(merged) > 20:
        parts.append(f"and {len(merged) - 20} more")
    columns = dict.fromkeys(f"{p.file}, column {show(p.column)}" for p in codes)
    what = "; ".join(columns)
    n = len(merged)
    return BadInputError(what, f"{n} unknown vote code{'s' if n > 1 else ''}: " + ", ".join(parts),
                         "map each to yes, no, abstain or absent in a CSV file with the columns "
                         "raw,choice and pass it with --codes FILE")


# -- checks over a staged table ---------------------------------------------------------------

def check_values(store, staged, *, required: tuple[str, ...], problems: Problems) -> None:
    """Missing required values and over-long values, one scan for all columns."""
    cols = list(staged.headers)
    if not cols:
        return
    exprs = []
    for c in cols:  # c is a stage column name chosen by readers, never text from the file
        exprs.append(f"count(*) FILTER (WHERE length({c}) > {MAX_FIELD_CHARS})")
        exprs.append(f"min(rid) FILTER (WHERE length({c}) > {MAX_FIELD_CHARS})")
        exprs.append(f"count(*) FILTER (WHERE {c} IS NULL)")
        exprs.append(f"min(rid) FILTER (WHERE {c} IS NULL)")
    row = store.rows(f"SELECT {', '.join(exprs)} FROM {staged.table}")[0]
    for i, c in enumerate(cols):
        n_long, r_long, n_null, r_null = row[4 * i: 4 * i + 4]
        staged.nulls[c] = n_null
        if n_long:
            value = store.scalar(f"SELECT {c} FROM {staged.table} WHERE rid = ?", [r_long])
            add_row_problem(problems, staged, "long", r_long, c, value,
                            f"value {show(value, 40)} is longer than {MAX_FIELD_CHARS} characters",
                            "shorten it, or check that the columns are separated correctly",
                            count=n_long)
        if n_null and c in required:
            add_row_problem(problems, staged, "empty", r_null, c, None,
                            f"the {FIELD_WORDS.get(c, c)} is empty",
                            f"fill in the {FIELD_WORDS.get(c, c)} on every row", count=n_null)


FIELD_WORDS = {"body": "body name", "ballot_id": "ballot id", "held_on": "date",
               "member_id": "member id", "raw": "vote code", "group_name": "group",
               "name": "name", "title": "title", "item": "agenda item", "topic": "topic",
               "valid_from": "valid_from date", "valid_to": "valid_to date"}


def check_bodies(store, staged, problems: Problems) -> list[str]:
    """Body names from a ``body`` column must be usable as names; return the distinct bodies."""
    rows = store.rows(f"SELECT body, count(*), min(rid) FROM {staged.table} "
                      "WHERE body IS NOT NULL GROUP BY body ORDER BY min(rid) LIMIT 1001")
    for body, n, rid in rows:
        why = name_problem(body)
        if why and "body" in staged.headers:
            add_row_problem(problems, staged, "name", rid, "body", body,
                            f"body name {show(body)} {why}",
                            "use letters, digits, spaces and - _ . , ( ) & ' only", count=n)
    return [r[0] for r in rows]


def check_dates(store, staged, column: str, problems: Problems, *,
                future_ok: bool = False) -> None:
    """Dates that do not parse, lie before 1800 or (unless ``future_ok``) after today.

    Distinct values are grouped first, so each different spelling is parsed once.
    """
    rows = store.rows(
        f"""WITH d AS (SELECT {column} AS v, count(*) AS n, min(rid) AS r FROM {staged.table}
                       WHERE {column} IS NOT NULL GROUP BY {column}),
                 p AS (SELECT v, n, r, TRY_CAST(v AS DATE) AS day FROM d)
            SELECT v, n, r, CASE WHEN day IS NULL THEN 'parse'
                                 WHEN day < DATE '{EARLIEST}' THEN 'early' ELSE 'future' END
            FROM p WHERE day IS NULL OR day < DATE '{EARLIEST}'
                         OR (NOT ? AND day > current_date)
            ORDER BY r LIMIT {EXAMPLES * 4}""", [future_ok])
    for value, n, rid, why in rows:
        text = {"parse": "is not a date in the form YYYY-MM-DD",
                "early": "lies before 1800", "future": "lies in the future"}[why]
        fix = {"parse": "write dates as YYYY-MM-DD (e.g. 2021-03-09)",
               "early": "check the year; blocwatch accepts dates from 1800 on",
               "future": "check the year; ballots cannot be held after today"}[why]
        add_row_problem(problems, staged, "date", rid, column, value, f"{show(value)} {text}",
                        fix, count=n)


def add_row_problem(problems: Problems, staged, kind: str, rid: int, column: str | None,
                    value: object, why: str, fix: str, *, count: int = 1) -> None:
    """Add a problem located at staged row ``rid`` (the file's line, row or cell)."""
    line, where, header = staged.place(rid, column)
    problems.add(Problem(kind, staged.name, why, fix, line=line, where=where,
                         column=header, value=value, count=count))
