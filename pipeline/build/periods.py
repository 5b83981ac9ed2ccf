"""Cutting a body's ballot dates into the periods of a spec (the grammar is in
:mod:`blocwatch.pipeline.options`).

Periods cover the range of the body's ballot dates; periods holding no ballot are dropped by the
build.
"""

from __future__ import annotations

from datetime import date, timedelta

from blocwatch.pipeline.options import Period, period_spec


def _month_add(d: date, months: int) -> date:
    total = d.year * 12 + (d.month - 1) + months
    return date(total // 12, total % 12 + 1, 1)


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
    """Windows of ``length`` months every ``step`` months that end at the data: every window
    that fits before the end of the last ballot's month, then — if ballots come after the last
    full window — one window cut short at that month, named ``… (partial)`` so that it is
    never read as a full window (it holds fewer months of ballots)."""
    data_end = _month_add(date(last.year, last.month, 1), 1) - timedelta(days=1)
    out = []
    start = date(first.year, first.month, 1)
    while (end := _month_add(start, length) - timedelta(days=1)) <= data_end:
        out.append(Period(start, end, f"{start:%Y-%m}..{end:%Y-%m}"))
        start = _month_add(start, step)
    if not out or out[-1].end < last:  # ``start`` is a step after the last full window
        out.append(Period(start, data_end, f"{start:%Y-%m}..{data_end:%Y-%m} (partial)"))
    return out


def make_periods(spec: str, first: date, last: date) -> list[Period]:
    """The periods of ``spec`` covering ``first``..``last`` (ballot dates, inclusive).

    >>> [p.name for p in make_periods("year", date(2001, 5, 1), date(2002, 2, 1))]
    ['2001', '2002']
    >>> make_periods("year:09", date(2001, 5, 1), date(2001, 10, 1))[-1].name
    '2001/02'
    """
    parsed = period_spec(spec)
    if parsed.kind == "year":
        return _years(first, last, parsed.month)
    if parsed.kind == "terms":
        return [t for t in parsed.terms if t.end >= first and t.start <= last]
    return _rolling(first, last, parsed.length, parsed.step)
