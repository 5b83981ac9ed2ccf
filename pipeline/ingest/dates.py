"""Dates in other spellings than ``YYYY-MM-DD``: a given format, or day-first detected safely.

Every date column of a staged file (``held_on``, ``valid_from``, ``valid_to``) is rewritten to
ISO text before the checks run, so the rest of the load only ever sees ``YYYY-MM-DD``:

- with ``--date-format FMT`` (a ``strptime`` form such as ``%d.%m.%Y``) every value is read in
  that form;
- without one, ISO dates are kept, and numeric dates like ``05.02.2023`` or ``2/5/2023`` are
  read day-first or month-first only when the file itself settles it: some value has a first
  part above 12 (``25.02.2023``: day-first) or a second part above 12 (month-first). When no
  value settles it, or values contradict each other, nothing is guessed: the check says so and
  names ``--date-format``. Whichever form was used is reported in the load's notes.

Values that still do not parse stay as they are, for :func:`validate.check_dates` to report.
"""

from __future__ import annotations

import datetime as dt
import re

from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.safety import show

# d.m.y / m.d.y with one separator used twice, a four-digit year.
_NUMERIC = re.compile(r"^(\d{1,2})([./-])(\d{1,2})\2(\d{4})$")
DAY_FIRST, MONTH_FIRST = "day-first", "month-first"


def check_format(fmt: str) -> str:
    """``fmt`` if it is a usable strptime form for dates (has a year, month and day)."""
    if not all(f in fmt for f in ("%Y", "%d")) or not any(f in fmt for f in ("%m", "%b", "%B")):
        raise UsageError(f"--date-format {fmt}", "needs a year (%Y), a month (%m, %b or %B) and "
                         "a day (%d)", "write the form of your dates, e.g. --date-format %d.%m.%Y")
    try:
        dt.datetime.strptime(dt.date(2023, 2, 25).strftime(fmt), fmt)
    except ValueError as exc:
        raise UsageError(f"--date-format {fmt}", f"is not a strptime form ({exc})",
                         "write the form of your dates, e.g. --date-format %d.%m.%Y") from None
    return fmt


def numeric_order(values: list[str]) -> tuple[str | None, str | None, str]:
    """Which order the numeric dates among ``values`` are in: ``(order, example, separator)``.

    ``order`` is :data:`DAY_FIRST`, :data:`MONTH_FIRST`, ``"ambiguous"`` (no value settles it),
    ``"mixed"`` (values settle it both ways) or ``None`` (no numeric dates); ``example`` is the
    value that settles it (or the first numeric one).

    >>> numeric_order(["05.02.2023", "25.02.2023"])
    ('day-first', '25.02.2023', '.')
    >>> numeric_order(["05/02/2023"])[0], numeric_order(["2023-02-05"])[0]
    ('ambiguous', None)
    """
    first = second = None
    example = sep = None
    for v in values:
        m = _NUMERIC.match(v)
        if not m:
            continue
        a, s, b = int(m.group(1)), m.group(2), int(m.group(3))
        if example is None:
            example, sep = v, s
        if a > 12 and first is None:
            first = v
        if b > 12 and second is None:
            second = v
    if example is None:
        return None, None, ""
    if first and second:
        return "mixed", f"{first} and {second}", sep or ""
    if first:
        return DAY_FIRST, first, sep or ""
    if second:
        return MONTH_FIRST, second, sep or ""
    return "ambiguous", example, sep or ""


def form_of(order: str, sep: str) -> str:
    return f"%d{sep}%m{sep}%Y" if order == DAY_FIRST else f"%m{sep}%d{sep}%Y"


def why_not(value: str, fmt: str | None) -> str:
    """Why ``value`` is not a date in ``fmt`` (ISO when ``None``): "no such day" when the parts
    are in place but the calendar has no such date (2024-02-30)."""
    text = str(value).strip()
    if fmt is None:
        m = re.match(r"^(\d{4})-(\d{1,2})-(\d{1,2})$", text)
        if m:
            return _no_such_day(int(m.group(1)), int(m.group(2)), int(m.group(3)))
        return "is not a date in the form YYYY-MM-DD"
    try:
        dt.datetime.strptime(text, fmt)
    except ValueError as exc:
        if "out of range" in str(exc) or "must be in" in str(exc):
            return "is no such day (the calendar has no such date)"
    return f"is not a date in the form {fmt} (--date-format)"


def _no_such_day(year: int, month: int, day: int) -> str:
    """Why a date with its parts in place is still not a date.

    >>> _no_such_day(2024, 2, 30), _no_such_day(2023, 13, 1)
    ('is no such day: 2024-02 has 29 days', 'is no such day: there is no month 13')
    """
    import calendar

    if not 1 <= month <= 12:
        return f"is no such day: there is no month {month}"
    last = calendar.monthrange(year, month)[1]
    if not 1 <= day <= last:
        return f"is no such day: {year:04d}-{month:02d} has {last} days"
    return "is not a date in the form YYYY-MM-DD"


def normalise_dates(store, staged, column: str, fmt: str | None, notes: list[str]) -> str | None:
    """Rewrite ``column`` of a staged file to ISO text; return the form used (or ``None``).

    A note says which form was used when it was not ISO. Values that do not parse are left
    alone. ``ambiguous`` or ``mixed`` numeric dates are left alone too, and returned as the
    form, so the date check can say why.
    """
    base = f"{staged.table}_t"
    if fmt is None:
        values = [r[0] for r in store.rows(
            f"SELECT DISTINCT {column} FROM {staged.table} WHERE {column} IS NOT NULL AND "
            f"TRY_CAST({column} AS DATE) IS NULL LIMIT 100000")]
        order, example, sep = numeric_order(values)
        if order is None:
            return None
        if order not in (DAY_FIRST, MONTH_FIRST):
            return order
        fmt = form_of(order, sep)
        notes.append(f"note: {staged.name}: dates in column {show(staged.headers.get(column))} "
                     f"read {order} ({fmt}), because {show(example)} can only be read that way; "
                     "pass --date-format to say otherwise")
    else:
        notes.append(f"note: {staged.name}: dates in column {show(staged.headers.get(column))} "
                     f"read as {fmt} (--date-format)")
    store.execute(f"UPDATE {base} SET {column} = strftime(CAST(try_strptime({column}, ?) AS "
                  f"DATE), '%Y-%m-%d') WHERE {column} IS NOT NULL AND "
                  f"try_strptime({column}, ?) IS NOT NULL", [fmt, fmt])
    return fmt
