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

import json
from collections import Counter
from dataclasses import dataclass, field, replace

from blocwatch.pipeline.errors import BadInputError
from blocwatch.pipeline.ingest.codes import ambiguity
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
    "code": "vote codes without a mapping",
    "duplicate": "the same vote given twice, differently",
    "ballot": "ballots described two ways",
    "roster": "roster problems",
    "member": "members without one clear group",
    "conflict": "conflicts with the store or another file",
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
    count: int = 1  # how many share this problem, in ``unit``s
    unit: str = "row"  # row (of a long file), cell (of a wide sheet), ballot, member, …
    rest: bool = False  # stands for the problems of its kind not shown one by one

    def place(self) -> str:
        """``file:line``, ``file, where`` or just the file."""
        return f"{self.file}:{self.line}" if self.line else (
            f"{self.file}, {self.where}" if self.where else self.file)

    def location(self) -> str:
        place = self.place()
        return f"{place}, column {show(self.column)}" if self.column else place

    def text(self) -> str:
        more = f" ({amount(self.count, self.unit)} like this)" if self.count > 1 and \
            not self.rest else ""
        return f"{self.location()}: {self.why}{more}"


def amount(n: int, unit: str) -> str:
    """``1 row``, ``9,000 rows``, ``96 cells``."""
    return f"{n:,} {unit}{'' if n == 1 else 's'}"


def amounts(problems: list[Problem]) -> str:
    """The counts of some problems, added up per unit: ``12 ballots, 3 rows``."""
    totals: dict[str, int] = {}
    for p in problems:
        totals[p.unit] = totals.get(p.unit, 0) + p.count
    return ", ".join(amount(n, unit) for unit, n in totals.items())


@dataclass
class Problems:
    """Problems collected over one load, in the order found."""

    items: list[Problem] = field(default_factory=list)
    # Where this run's user maps a vote code: a flag or config key (see ingest_files).
    codes_via: str | None = None

    def code_fix(self, code: object = "-") -> str:
        """How to map ``code``, as fits the command that was run."""
        example = f"{{ {json.dumps(str(code), ensure_ascii=False)} = \"yes|no|abstain|absent\" }}"
        if self.codes_via:
            return (f"map each to yes, no, abstain or absent: set codes = {example} in "
                    f"{self.codes_via}")
        return ("map each to yes, no, abstain or absent: pass --codes FILE (a CSV with the "
                f"columns raw,choice) or set codes = {example} in the body's [bodies.\"NAME\"] "
                "table of blocwatch.toml")

    def add(self, problem: Problem) -> None:
        self.items.append(problem)

    def __bool__(self) -> bool:
        return bool(self.items)

    def __len__(self) -> int:
        return len(self.items)

    def ordered(self) -> list[Problem]:
        rank = {k: i for i, k in enumerate(KINDS)}
        # within a kind, examples before the counted rest (the rest has no place to name)
        return sorted(self.items, key=lambda p: (rank.get(p.kind, len(rank)), p.rest))

    def first_error(self) -> BadInputError:
        """One error for the whole load: the first problem, or every unknown code at once."""
        ordered = self.ordered()
        first = ordered[0]
        same = [p for p in ordered[1:] if p.kind == first.kind]
        if first.kind == "code":
            err = unknown_codes_error([first, *same], self.code_fix(first.value))
            same = []  # the message lists every code already
        else:
            err = BadInputError(first.location(), first.why, first.fix)
        if first.count > 1 and first.kind != "code":  # the rows (cells, …) it stands for
            same.insert(0, replace(first, count=first.count - 1))
        # Counted as --check counts them: per kind and unit, never added across kinds.
        others = len({p.kind for p in ordered if p.kind != first.kind})
        more = ([f"{amounts(same)} more like this"] if same else []) + (
            [f"{others} other kind{'s' if others > 1 else ''} of problem"] if others else [])
        if more:
            err.fix += (f"; also {' and '.join(more)} — run 'blocwatch ingest --check' on the "
                        "same files to list them all")
            err.args = (err.line(),)
        return err

    def raise_first(self) -> None:
        if self.items:
            raise self.first_error()

    def report(self, read: dict[str, str] | None = None) -> list[str]:
        """Lines of the ``--check`` report: per file, per kind, counted, with examples.

        Counts are kept per kind and unit (rows of a long file, cells of a wide sheet, ballots,
        members) and never added across kinds: a row with two problems is one row in each
        kind's count, not two rows of the file. ``read``: file -> what was read (``9,000
        rows``), shown on the file's line.
        """
        if not self.items:
            return ["no problems found"]
        lines: list[str] = []
        by_file: dict[str, list[Problem]] = {p.file: [] for p in self.items}  # files in order
        for p in self.ordered():
            by_file[p.file].append(p)
        for file, problems in by_file.items():
            kinds = Counter(p.kind for p in problems)
            got = f"{read[file]} read; " if read and file in read else ""
            lines.append(f"{file}: {got}{len(kinds)} kind{'s' if len(kinds) > 1 else ''} of "
                         "problem (each counted on its own; a row can have several)")
            for kind in kinds:
                group = [p for p in problems if p.kind == kind]
                codes = f"{amount(len({str(p.value) for p in group}), 'code')} in " \
                    if kind == "code" else ""
                lines.append(f"  {KINDS.get(kind, kind)}: {codes}{amounts(group)}")
                shown = [p for p in group if not p.rest][:EXAMPLES * 4]
                for p in shown:
                    lines.append(f"    {p.text()}")
                rest = [p for p in group if p not in shown]  # counted, so the kind adds up
                if rest:
                    lines.append(f"    … and more like these: {amounts(rest)}")
                fixes = dict.fromkeys(p.fix for p in group)
                for fix in fixes:
                    lines.append(f"    what to do: {fix}")
        return lines


def unknown_codes_error(codes: list[Problem], fix: str) -> BadInputError:
    """The one message for every unknown or ambiguous vote code of a load: code, count, first
    file:line (or sheet and cell), and for an ambiguous symbol why it is refused."""
    merged: dict[object, list] = {}
    for p in codes:  # the same code in several files: add counts, keep the first place
        entry = merged.setdefault(p.value, [0, p.place()])
        entry[0] += p.count
    parts = [f"{show(code)} ×{n} (first at {loc}" + (f"; refused until mapped: {why})" if (
        why := ambiguity(code)) else ")") for code, (n, loc) in list(merged.items())[:20]]
    if len(merged) > 20:
        left = [p for p in codes if p.value not in list(merged)[:20]]
        parts.append(f"and {len(merged) - 20} more codes in {amounts(left)}")
    columns = dict.fromkeys(f"{p.file}, column {show(p.column)}" for p in codes)
    what = "; ".join(columns)
    n = len(merged)
    label = "without a mapping" if any(ambiguity(c) for c in merged) else None
    head = (f"{n} vote code{'s' if n > 1 else ''} {label}" if label else
            f"{n} unknown vote code{'s' if n > 1 else ''}")
    return BadInputError(what, f"{head}: " + ", ".join(parts), fix)


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
                future_ok: bool = False, fmt: str | None = None) -> None:
    """Dates that do not parse, lie before 1800 or (unless ``future_ok``) after today.

    Distinct values are grouped first, so each different spelling is parsed once. ``fmt``: the
    form the dates were read in (see :mod:`blocwatch.pipeline.ingest.dates`) — a strptime form,
    or ``"ambiguous"``/``"mixed"`` when numeric dates could not be read safely.
    """
    from blocwatch.pipeline.ingest.dates import why_not

    rows = store.rows(
        f"""WITH d AS (SELECT {column} AS v, count(*) AS n, min(rid) AS r FROM {staged.table}
                       WHERE {column} IS NOT NULL GROUP BY {column}),
                 p AS (SELECT v, n, r, TRY_CAST(v AS DATE) AS day FROM d)
            SELECT v, n, r, CASE WHEN day IS NULL THEN 'parse'
                                 WHEN day < DATE '{EARLIEST}' THEN 'early' ELSE 'future' END
            FROM p WHERE day IS NULL OR day < DATE '{EARLIEST}'
                         OR (NOT ? AND day > current_date)
            ORDER BY r""", [future_ok])
    shown = rest = 0
    for value, n, rid, why in rows:
        if why == "parse" and fmt in ("ambiguous", "mixed"):
            text = ("could be read day-first or month-first, and no date in the file settles "
                    "which" if fmt == "ambiguous" else "is one of dates written both day-first "
                    "and month-first in this file")
            fix = "pass --date-format with the form, e.g. %d.%m.%Y (day-first) or %m/%d/%Y"
        else:
            text = {"parse": why_not(value, None if fmt in ("ambiguous", "mixed") else fmt),
                    "early": "lies before 1800", "future": "lies in the future"}[why]
            fix = {"parse": "write dates as YYYY-MM-DD (e.g. 2021-03-09), or pass "
                            "--date-format with their form (e.g. %d.%m.%Y)",
                   "early": "check the year; blocwatch accepts dates from 1800 on",
                   "future": "check the year; ballots cannot be held after today"}[why]
            if why == "parse" and "no such day" in text:
                fix = "check the day and month; the calendar has no such date"
        shown += 1
        if shown <= EXAMPLES * 4:
            add_row_problem(problems, staged, "date", rid, column, value, f"{show(value)} {text}",
                            fix, count=n)
        else:
            rest += n
    if rest:
        add_rest(problems, staged, "date", rest, staged_unit(staged),
                 f"{staged_unit(staged)}s with other dates that cannot be used", fix)


def staged_unit(staged) -> str:
    """What one staged row is in the file: a row, or a cell of a wide sheet."""
    return "cell" if staged.layout == "wide" and staged.kind == "votes" else "row"


def add_row_problem(problems: Problems, staged, kind: str, rid: int, column: str | None,
                    value: object, why: str, fix: str, *, count: int = 1,
                    unit: str | None = None) -> None:
    """Add a problem located at staged row ``rid`` (the file's line, row or cell); ``count``
    is in ``unit``s (default: the staged file's rows or cells)."""
    line, where, header = staged.place(rid, column)
    problems.add(Problem(kind, staged.name, why, fix, line=line, where=where,
                         column=header, value=value, count=count,
                         unit=unit or staged_unit(staged)))


def add_rest(problems: Problems, staged, kind: str, n: int, unit: str, what: str,
             fix: str) -> None:
    """After the examples: one problem for the ``n`` not shown, so the kind's count adds up."""
    if n > 0:
        problems.add(Problem(kind, staged.name, f"{n:,} more {what}", fix, count=n, unit=unit,
                             rest=True))
