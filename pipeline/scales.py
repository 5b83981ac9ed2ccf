"""Ballot scales: what kind of answer a ballot holds, declared per ballot or per body.

A declaration is one short spec (``--scale``, a ``scale`` column, or a ``scale`` row of a wide
sheet):

``binary`` (the default)
    yes / no (/ abstain), read through the vote codes.
``categorical:OPT|OPT|…``
    one of several named options; options only match or differ.
``ordinal:LOW..HIGH``
    ordered scores (or ranks) within the stated range, e.g. ``ordinal:1..9``.
``continuous:LOW..HIGH`` or ``continuous`` (same as ``continuous:spread``)
    amounts; distances are scaled by the stated range, or by the ballot's own spread
    (largest minus smallest answer) when no range is given.

Files may instead give the kind in a ``scale`` column with ``scale_min``, ``scale_max`` and
``options`` (``|``-separated) beside it. In the store (``ballots``) the kind goes in ``scale``,
the range in ``scale_min``/``scale_max`` and the options as a JSON list in ``options``. Vote
rows of a scored ballot keep the clerk's text in ``raw``; ``choice`` holds the canonical answer
— the option as declared (categorical) or the number written plainly (``7``, ``2.5``) — or
``abstain``/``absent``, so comparing choices finds changed answers as it does changed votes;
``score`` holds the option's index or the number.

How distance follows from the kind, and how a body mixing kinds combines them, is in
:mod:`blocwatch.pipeline.build.scored`; how a load resolves and checks scales, in
:mod:`blocwatch.pipeline.ingest.scale_answers`.
"""

from __future__ import annotations

import json
import math
import re
from collections.abc import Mapping
from dataclasses import dataclass

import pandas as pd

from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.ingest.codes import choice_of, normalise
from blocwatch.pipeline.safety import show

KINDS = ("binary", "categorical", "ordinal", "continuous")
# Level of measurement for Krippendorff's alpha, per kind.
ALPHA_LEVEL = {"binary": "nominal", "categorical": "nominal", "ordinal": "ordinal",
               "continuous": "interval"}
_RANGE = re.compile(r"^\s*([-+]?\d+(?:\.\d+)?(?:[eE][-+]?\d+)?)\s*\.\.\s*"
                    r"([-+]?\d+(?:\.\d+)?(?:[eE][-+]?\d+)?)\s*$")
EXAMPLE = "binary, categorical:for|against|defer, ordinal:1..9, continuous:0..1000, continuous"


@dataclass(frozen=True)
class Scale:
    """One ballot's (or body's) scale. ``low``/``high`` None on a continuous scale: spread."""

    kind: str = "binary"
    low: float | None = None
    high: float | None = None
    options: tuple[str, ...] = ()

    @property
    def scored(self) -> bool:
        return self.kind != "binary"

    @property
    def spec(self) -> str:
        """The canonical declaration text.

        >>> parse_scale("ordinal: 1 .. 9").spec, parse_scale("continuous").spec
        ('ordinal:1..9', 'continuous')
        """
        if self.kind == "categorical":
            return "categorical:" + "|".join(self.options)
        if self.low is not None:
            return f"{self.kind}:{self.low:g}..{self.high:g}"
        return self.kind

    def store_row(self) -> dict:
        """The ``ballots`` columns of this scale."""
        return {"scale": self.kind, "scale_min": self.low, "scale_max": self.high,
                "options": json.dumps(list(self.options)) if self.options else None}


BINARY = Scale()


def scale_from_store(kind: object, low: object = None, high: object = None,
                     options: object = None) -> Scale:
    """The :class:`Scale` of a ``ballots`` row (options as a JSON list).

    >>> scale_from_store("categorical", None, None, '["a", "b"]').spec
    'categorical:a|b'
    """
    def num(v):
        return None if _blank(v) else float(v)

    opts = tuple(json.loads(options)) if isinstance(options, str) and options else ()
    return Scale(str(kind or "binary"), num(low), num(high), opts)


def _bad(where: str, why: str) -> UsageError:
    return UsageError(where, why, f"declare one of: {EXAMPLE}")


def _range(text: str, where: str, kind: str) -> tuple[float, float]:
    m = _RANGE.match(text)
    if not m:
        raise _bad(where, f"range {show(text)} of a {kind} scale is not LOW..HIGH")
    low, high = float(m.group(1)), float(m.group(2))
    if not (math.isfinite(low) and math.isfinite(high)) or high <= low:
        raise _bad(where, f"range {show(text)} must run from a lower to a higher number")
    return low, high


def _options(items: list[str], where: str) -> tuple[str, ...]:
    opts = tuple(o.strip() for o in items if o.strip())
    if len(opts) < 2:
        raise _bad(where, "a categorical scale needs at least two options")
    keys = [normalise(o) for o in opts]
    if len(set(keys)) != len(keys):
        raise _bad(where, f"options {show('|'.join(opts))} repeat one (case and spaces are "
                   "ignored)")
    return opts


def parse_scale(text: object, *, where: str = "--scale") -> Scale:
    """Parse a declaration such as ``ordinal:1..9`` or ``categorical:A|B|C``.

    >>> parse_scale("categorical:for|against|defer").options
    ('for', 'against', 'defer')
    >>> parse_scale("ordinal:1..9")
    Scale(kind='ordinal', low=1.0, high=9.0, options=())
    """
    raw = "" if text is None else str(text).strip()
    kind, _, rest = raw.partition(":")
    kind = kind.strip().casefold() or "binary"
    rest = rest.strip()
    if kind == "binary" and not rest:
        return BINARY
    if kind == "categorical":
        return Scale(kind, options=_options(rest.split("|"), where))
    if kind == "ordinal":
        if not rest:
            raise _bad(where, "an ordinal scale needs its range, e.g. ordinal:1..9")
        return Scale(kind, *_range(rest, where, kind))
    if kind == "continuous":
        if rest in ("", "spread"):
            return Scale(kind)
        return Scale(kind, *_range(rest, where, kind))
    raise _bad(where, f"{show(raw)} is not a scale")


def _blank(value: object) -> bool:
    return value is None or (isinstance(value, float) and math.isnan(value)) or \
        (isinstance(value, str) and not value.strip()) or value is pd.NA


def scale_from_cells(scale: object, low: object = None, high: object = None,
                     options: object = None, *, where: str = "scale") -> Scale | None:
    """A scale from a file's ``scale``, ``scale_min``, ``scale_max`` and ``options`` cells;
    None when all are blank (the ballot takes the body's or the load's default).

    >>> scale_from_cells("ordinal", "1", "5").spec
    'ordinal:1..5'
    >>> scale_from_cells("categorical", options="A | B").spec
    'categorical:A|B'
    """
    if all(_blank(v) for v in (scale, low, high, options)):
        return None
    text = "" if _blank(scale) else str(scale).strip()
    if ":" not in text:
        if not _blank(low) or not _blank(high):
            lo, hi = ("" if _blank(v) else str(v).strip() for v in (low, high))
            text = f"{text or 'ordinal'}:{lo}..{hi}"
        elif not _blank(options):
            text = f"{text or 'categorical'}:{options}"
    return parse_scale(text, where=where)


def number_text(value: float) -> str:
    """A number as ``votes.choice`` holds it: integers without a decimal point, others exact.

    >>> number_text(7.0), number_text(2.5), number_text(1234567.0)
    ('7', '2.5', '1234567')
    """
    return str(int(value)) if float(value).is_integer() and abs(value) < 2**53 else repr(value)


def read_answer(raw: object, scale: Scale, mapping: Mapping[str, str] | None = None
                ) -> tuple[str, float | None]:
    """``(choice, score)`` for one answer on a scored ballot; a refused answer raises
    :class:`ValueError` whose message says why.

    Blank means absent; an option (categorical) or a number in range (ordinal, continuous)
    is an answer; otherwise the vote codes may still say abstain or absent.

    >>> s = parse_scale("ordinal:1..9")
    >>> read_answer("4.0", s), read_answer("", s), read_answer("abstain", s)
    (('4', 4.0), ('absent', None), ('abstain', None))
    >>> read_answer("11", s)
    Traceback (most recent call last):
    ValueError: '11' is outside the range 1..9 of this ordinal ballot
    """
    key = normalise(raw)
    if key == "":
        return "absent", None
    if scale.kind == "categorical":
        for i, opt in enumerate(scale.options):
            if normalise(opt) == key:
                return opt, float(i)
    else:
        try:
            value = float(key)
        except ValueError:
            value = None
        if value is not None:
            if not math.isfinite(value):
                raise ValueError(f"{show(raw)} is not a finite number")
            if scale.low is not None and not scale.low <= value <= scale.high:
                raise ValueError(f"{show(raw)} is outside the range {scale.low:g}.."
                                 f"{scale.high:g} of this {scale.kind} ballot")
            return number_text(value), value
    coded = choice_of(raw, dict(mapping) if mapping else None)
    if coded in ("abstain", "absent"):
        return coded, None
    if scale.kind == "categorical":
        raise ValueError(f"{show(raw)} is not one of the options "
                         f"{show('|'.join(scale.options))}")
    raise ValueError(f"{show(raw)} is not a number (nor abstain/absent)")
