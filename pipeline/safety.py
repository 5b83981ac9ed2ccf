"""Hostile strings: spreadsheet formulas in exports, names that escape folders, bytes in messages.

Ballot files come from scrapers and other systems, so any text in them may be crafted. Three
rules keep such text harmless:

- a cell written to a CSV export never starts a formula (:func:`neutralise_cell`, after the OWASP
  "CSV injection" rule: prefix ``= + - @`` tab and CR with a single quote);
- a body name never names a path (:func:`check_name`), and output files stay inside their folder
  (:func:`inside`);
- a value quoted in a message shows control characters escaped and is cut to a readable length
  (:func:`show`), so a terminal never interprets it.
"""

from __future__ import annotations

import re
from pathlib import Path

import pandas as pd

from blocwatch.pipeline.errors import BadInputError

# OWASP CSV injection: characters that make a spreadsheet treat the cell as a formula.
FORMULA_PREFIXES = ("=", "+", "-", "@", "\t", "\r")

MAX_NAME_CHARS = 100
_FORBIDDEN_IN_NAMES = re.compile(r'[/\\:*?"<>|\x00-\x1f\x7f]')
# Control, zero-width and bidi-override characters: escaped in messages so terminals stay inert.
_CONTROL = re.compile("[\x00-\x1f\x7f-\x9f\u200b-\u200f\u2028-\u202e\u2066-\u2069]")
_RESERVED = {"con", "prn", "aux", "nul", *(f"com{i}" for i in range(10)),
             *(f"lpt{i}" for i in range(10))}


def neutralise_cell(value: object) -> object:
    """Return ``value`` made safe for a CSV cell: text starting a formula gets a leading ``'``.

    Only text is changed; numbers, dates and missing values pass through as they are.

    >>> neutralise_cell("=HYPERLINK(\\"http://x\\")")
    '\\'=HYPERLINK("http://x")'
    >>> neutralise_cell("Ann Example"), neutralise_cell(-3)
    ('Ann Example', -3)
    """
    if isinstance(value, str) and value.startswith(FORMULA_PREFIXES):
        return "'" + value
    return value


def neutralise_frame(frame: pd.DataFrame) -> pd.DataFrame:
    """A copy of ``frame`` with :func:`neutralise_cell` applied to every text column."""
    out = frame.copy()
    for col in out.columns:
        if out[col].dtype == object or pd.api.types.is_string_dtype(out[col]):
            out[col] = out[col].map(neutralise_cell)
    return out


def show(value: object, limit: int = 60) -> str:
    r"""``value`` quoted for a one-line message: control characters escaped, long text cut.

    >>> print(show("a\x00b"))
    'a\x00b'
    >>> print(show("x" * 100, limit=5))
    'xxxxx…' (100 characters)
    """
    if value is None:
        return "(empty)"
    text = str(value)
    cut = _CONTROL.sub(_escape, text[:limit])
    if len(text) > limit:
        return f"'{cut}…' ({len(text)} characters)"
    return f"'{cut}'"


def _escape(match: re.Match) -> str:
    code = ord(match.group())
    return f"\\x{code:02x}" if code < 256 else f"\\u{code:04x}"


def name_problem(name: object) -> str | None:
    """Why ``name`` cannot be a body name, or ``None`` if it can."""
    if not isinstance(name, str) or not name.strip():
        return "is empty"
    if name != name.strip():
        return "starts or ends with a space"
    if len(name) > MAX_NAME_CHARS:
        return f"is {len(name)} characters long (at most {MAX_NAME_CHARS})"
    if _FORBIDDEN_IN_NAMES.search(name):
        return 'contains a path separator or one of : * ? " < > | or a control character'
    if name.startswith("."):
        return "starts with a dot (it could name a hidden file or a parent folder)"
    if name.lower().split(".")[0] in _RESERVED:
        return "is a reserved device name on Windows"
    return None


def check_name(name: object, *, what: str = "body name") -> str:
    """Return ``name`` if it is safe as a body name (it may become part of a file name)."""
    why = name_problem(name)
    if why:
        raise BadInputError(f"{what} {show(name)}", why,
                            "use letters, digits, spaces and - _ . , ( ) & ' only")
    return name  # type: ignore[return-value]


def inside(root: str | Path, path: str | Path) -> Path:
    """``path`` resolved, if it lies inside the folder ``root``; else :class:`BadInputError`."""
    base = Path(root).resolve()
    target = (base / path).resolve()
    if target != base and base not in target.parents:
        raise BadInputError(f"output path {show(str(path))}", f"leaves the folder {base}",
                            "use a plain file name without '..' or a leading '/'")
    return target
