"""Period specs: how a body's ballots are cut into the periods a series is made of.

Spec strings (``--period``):

``year`` (default)
    calendar years, named ``2001``.
``year:MM``
    years starting on the first of month ``MM``, named ``2001/02`` (for ``year:09``, September
    2001 to August 2002).
``terms:FILE``
    named terms from a CSV file with columns ``name,start,end`` (dates inclusive, ISO format);
    terms must not overlap.
``rolling:LEN:STEP``
    windows of ``LEN`` months moved ``STEP`` months at a time, e.g. ``rolling:24m:12m``
    (units ``m`` months or ``y`` years), starting on the first of the month of the first ballot;
    named ``2001-01..2002-12``.

Periods cover the range of the body's ballot dates; periods holding no ballot are dropped.
"""

from __future__ import annotations

import csv
import re
from dataclasses import dataclass
from datetime import date, timedelta
from pathlib import Path

from blocwatch.pipeline.options import DEFAULT_PERIOD  # noqa: F401
from blocwatch.pipeline.errors import BadInputError, UsageError


@dataclass(frozen=True, order=True)
class Period:
    start: date
    end: date  # inclusive
    name: str


def _month_add(d: date, months: int) -> date:
    total = d.year * 12 + (d.month - 1) + months
    return date(total // 12, total % 12 + 1, 1)


def _months(token: str, spec: str) -> int:
    m = re.fullmatch(r"(\d+)([my])", token.strip().lower())
    if not m or int(m.group(1)) == 0:
        raise UsageError(f"period spec {spec!r}", f"{token!r} is not a length like 12m or 2y",
                         "write rolling:LEN:STEP, e.g. rolling:24m:12m")
    n = int(m.group(1))
    return n * 12 if m.group(2) == "y" else n


def _years(first: date, last: date, month: int) -> list[Period]:
    start_year = first.year if first.month >= month else first.year - 1
    out = []
    start = date(start_year, month, 1)
    while start <= last:
        end = _month_add(start, 12) - timedelta(days=1)
        name = str(start.year) if month == 1 else f"{start.year}/{(start.year + 1) % 100:02d}"
        out.append(Period(start, end, name))
        start = _month_add(start, 12)
    return out


def _rolling(first: date, last: date, length: int, step: int) -> list[Period]:
    out = []
    start = date(first.year, first.month, 1)
    while start <= last:
        end = _month_add(start, length) - timedelta(days=1)
        out.append(Period(start, end, f"{start:%Y-%m}..{end:%Y-%m}"))
        start = _month_add(start, step)
    return out


def read_terms(path: str | Path) -> list[Period]:
    """Named terms from a ``name,start,end`` CSV; overlapping or reversed terms are an error."""
    path = Path(path)
    if not path.exists():
        raise UsageError(f"terms file {path}", "does not exist", "check the path in terms:FILE")
    terms: list[Period] = []
    lines: dict[str, int] = {}
    with path.open(newline="", encoding="utf-8-sig") as fh:
        reader = csv.DictReader(fh)
        missing = {"name", "start", "end"} - set(reader.fieldnames or [])
        if missing:
            raise BadInputError(f"{path}:1", f"missing column(s) {', '.join(sorted(missing))}",
                                "the header must be name,start,end")
        for line, row in enumerate(reader, start=2):
            try:
                start, end = date.fromisoformat(row["start"]), date.fromisoformat(row["end"])
            except (TypeError, ValueError):
                raise BadInputError(f"{path}:{line}", f"dates {row['start']!r}, {row['end']!r} "
                                    "do not parse", "write dates as YYYY-MM-DD") from None
            if end < start:
                raise BadInputError(f"{path}:{line}", f"term {row['name']!r} ends before it "
                                    "starts", "swap start and end")
            terms.append(Period(start, end, row["name"].strip()))
            lines.setdefault(row["name"].strip(), line)
    if not terms:
        raise BadInputError(str(path), "holds no terms", "add one row per term")
    terms.sort()
    for a, b in zip(terms, terms[1:]):
        if b.start <= a.end:
            raise BadInputError(f"{path}:{lines[b.name]}", f"terms {a.name!r} and {b.name!r} "
                                f"overlap ({b.name!r} starts {b.start}, before {a.name!r} on "
                                f"line {lines[a.name]} ends {a.end})",
                                "make each term end before the next starts")
    names = [t.name for t in terms]
    if len(set(names)) != len(names):
        raise BadInputError(str(path), "repeats a term name", "give each term its own name")
    return terms


def make_periods(spec: str, first: date, last: date) -> list[Period]:
    """The periods of ``spec`` covering ``first``..``last`` (ballot dates, inclusive).

    >>> [p.name for p in make_periods("year", date(2001, 5, 1), date(2002, 2, 1))]
    ['2001', '2002']
    >>> make_periods("year:09", date(2001, 5, 1), date(2001, 10, 1))[-1].name
    '2001/02'
    """
    kind, _, rest = spec.partition(":")
    if kind == "year":
        if not rest:
            return _years(first, last, 1)
        if not re.fullmatch(r"\d{1,2}", rest) or not 1 <= int(rest) <= 12:
            raise UsageError(f"period spec {spec!r}", f"month {rest!r} is not 01..12",
                             "write year:MM, e.g. year:09")
        return _years(first, last, int(rest))
    if kind == "terms" and rest:
        return [t for t in read_terms(rest) if t.end >= first and t.start <= last]
    if kind == "rolling":
        parts = rest.split(":")
        if len(parts) != 2:
            raise UsageError(f"period spec {spec!r}", "needs a length and a step",
                             "write rolling:LEN:STEP, e.g. rolling:24m:12m")
        return _rolling(first, last, _months(parts[0], spec), _months(parts[1], spec))
    raise UsageError(f"period spec {spec!r}", "is not one of year, year:MM, terms:FILE, "
                     "rolling:LEN:STEP", "e.g. --period year or --period rolling:24m:12m")


def parse_period_spec(spec: str) -> str:
    """Check a spec's form early (before any work); return it unchanged."""
    make_periods(spec, date(2000, 1, 1), date(2000, 1, 2)) if not spec.startswith("terms:") \
        else read_terms(spec.partition(":")[2])
    return spec
