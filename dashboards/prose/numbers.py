"""Numbers typeset for reading: minus signs, intervals, counts and the honesty of an interval.

Every figure on a page goes through this module, so one place decides how a number looks:
two decimals (whole numbers for counts), a real minus sign (U+2212), intervals written
"0.18 to 0.24", "1 period" but "2 periods", and no "±0" change.

An interval is only printed beside its estimate when it can be read as one (``interval_state``):
an estimate outside its own interval, or an interval with no width at the precision shown,
is never printed as "x (a to b)"; the page says what is wrong instead.
"""

from __future__ import annotations

import math

MINUS = "\u2212"
MISSING = "–"

# What each interval state means, in words a reader can quote (the page's cautions use them).
INTERVAL_WORDS = {
    "degenerate": "no spread across resamples, so the data cannot show its uncertainty",
    "outside": "interval withheld: it does not contain the estimate",
}


def _number(value) -> float | None:
    if value is None:
        return None
    try:
        v = float(value)
    except (TypeError, ValueError):
        return None
    return None if math.isnan(v) else v


def fmt(value, *, integer: bool = False) -> str:
    """A number for text: two decimals (whole for counts), real minus sign, en dash if missing.

    >>> fmt(0.2049), fmt(-0.5), fmt(3.0, integer=True), fmt(float("nan")), fmt(-0.001)
    ('0.20', '−0.50', '3', '–', '0.00')
    >>> fmt(12345.6)
    '12,346'
    """
    v = _number(value)
    if v is None:
        return MISSING
    if integer:
        text = f"{v:.0f}"
    elif abs(v) >= 100:
        text = f"{v:,.0f}"
    else:
        text = f"{v:.2f}"
    if text.startswith("-"):
        text = text[1:]
        # A value that rounds to zero carries no sign ("−0.00" would claim a direction).
        if text.strip("0.,") != "":
            text = MINUS + text
    return text


def plural(count, word: str, words: str | None = None) -> str:
    """``"1 period"``, ``"3 periods"`` (``words`` for irregular plurals).

    >>> plural(1, "period"), plural(2, "period"), plural(0, "body", "bodies")
    ('1 period', '2 periods', '0 bodies')
    """
    n = int(count)
    return f"{n} {word if n == 1 else (words or word + 's')}"


def interval_state(value, low, high, *, integer: bool = False) -> str:
    """How an interval may be shown beside its estimate.

    ``"none"``: no interval stored; ``"outside"``: the estimate lies outside it (never print
    the pair); ``"degenerate"``: low and high are the same at the precision shown, so the
    resampling could not show any uncertainty; ``"ok"``: print it.

    >>> interval_state(0.5, 0.4, 0.6), interval_state(0.02, 0.03, 0.13)
    ('ok', 'outside')
    >>> interval_state(1.0, 0.999, 1.0), interval_state(0.5, None, 0.6)
    ('degenerate', 'none')
    >>> interval_state(1, 2, 2, integer=True)  # a count outside a flat interval
    'outside'
    """
    v, lo, hi = _number(value), _number(low), _number(high)
    if v is None or lo is None or hi is None:
        return "none"
    # A tiny tolerance: an estimate equal to an end up to float noise is inside.
    slack = 1e-9 * max(1.0, abs(lo), abs(hi))
    if not lo - slack <= v <= hi + slack:
        return "outside"  # checked first: a flat interval can leave out its estimate too
    if fmt(lo, integer=integer) == fmt(hi, integer=integer):
        return "degenerate"
    return "ok"


def fmt_range(low, high, *, integer: bool = False) -> str:
    """``"0.18 to 0.24"`` (words, not a dash, so negative ends stay readable).

    >>> fmt_range(-0.58, -0.02)
    '−0.58 to −0.02'
    """
    return f"{fmt(low, integer=integer)} to {fmt(high, integer=integer)}"


def fmt_estimate(value, low, high, *, integer: bool = False, first: bool = False) -> str:
    """An estimate with its interval as the page prints it.

    ``first=True`` names the interval ("95 % interval") for the first mention on a page.

    >>> fmt_estimate(0.21, 0.18, 0.24)
    '0.21 (0.18 to 0.24)'
    >>> fmt_estimate(0.21, 0.18, 0.24, first=True)
    '0.21 (95 % interval 0.18 to 0.24)'
    >>> fmt_estimate(1.0, 1.0, 1.0)
    '1.00 (no spread across resamples, so the data cannot show its uncertainty)'
    >>> fmt_estimate(2, 2, 2, integer=True), fmt_estimate(0.4, None, None)
    ('2', '0.40')
    """
    text = fmt(value, integer=integer)
    state = interval_state(value, low, high, integer=integer)
    if state == "ok":
        name = "95 % interval " if first else ""
        return f"{text} ({name}{fmt_range(low, high, integer=integer)})"
    # A count that every resample reproduced is simply the count: no caution needed.
    if state == "none" or (state == "degenerate" and integer):
        return text
    return f"{text} ({INTERVAL_WORDS[state]})"


def fmt_change(delta, *, integer: bool = False) -> str | None:
    """A signed change (``"+0.08"``, ``"−0.08"``), or None when it shows as zero.

    >>> fmt_change(0.081), fmt_change(-0.08), fmt_change(0.001)
    ('+0.08', '−0.08', None)
    """
    v = _number(delta)
    if v is None:
        return None
    shown = fmt(abs(v), integer=integer)
    if shown.strip("0.,") == "":
        return None
    return ("+" if v > 0 else MINUS) + shown


def fmt_p(p) -> str:
    """A p-value: three decimals, ``"< 0.001"`` below that.

    >>> fmt_p(0.0004), fmt_p(0.0312)
    ('< 0.001', '0.031')
    """
    v = _number(p)
    if v is None:
        return MISSING
    return "< 0.001" if v < 0.001 else f"{v:.3f}"
