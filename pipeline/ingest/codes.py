"""Vote codes: how a clerk's spelling of a vote becomes one of the four canonical choices.

A raw code is first *normalised* — surrounding and repeated whitespace removed, case folded — and
then looked up, first in the user's mapping (``--codes FILE`` or the body's ``codes`` table in
``blocwatch.toml``), then in :data:`BUILTIN`. A blank or missing code means the member was absent
(the one rule for empty cells; every load's summary counts them). Symbols in :data:`AMBIGUOUS`
mean different things to different clerks, so they are refused until the user maps them.
Anything else is an unknown code: the load stops and lists them all (see
:mod:`blocwatch.pipeline.ingest.validate`).

The mapping file is a UTF-8 CSV with the columns ``raw,choice``, for example::

    raw,choice
    ja,yes
    nein,no
    enthaltung,abstain

Matching is on the normalised form, so ``JA`` and ``ja`` are the same code. A mapping entry wins
over the built-in table (a body where ``present`` means "voted yes" can say so).
"""

from __future__ import annotations

import csv
import io
import re
from collections.abc import Iterable
from pathlib import Path

from blocwatch.pipeline.errors import BadInputError, UsageError
from blocwatch.pipeline.safety import show

CHOICES = ("yes", "no", "abstain", "absent")

_SPELLINGS = {
    "yes": ("yes", "aye", "yea", "for", "y", "1", "+"),
    "no": ("no", "nay", "against", "n"),
    "abstain": ("abstain", "abstention", "present"),
    "absent": ("absent", "not voting", "excused", ""),
}
# Normalised code -> choice. The empty string stands for a blank cell.
BUILTIN: dict[str, str] = {code: choice for choice, codes in _SPELLINGS.items() for code in codes}
# Symbols whose meaning differs between clerks: refused until mapped, whatever the file says.
AMBIGUOUS: dict[str, str] = {
    "-": "clerks write it for 'no', for 'did not vote' and for 'not a member'",
    "0": "it stands for 'no' in some files and for 'not a member' or 'did not vote' in others",
}

_SPACES = re.compile(r"\s+")


def normalise(code: object) -> str:
    """The lookup form of a raw code: trimmed, inner whitespace collapsed, case folded.

    >>> normalise("  Not   Voting "), normalise(None)
    ('not voting', '')
    """
    if code is None or (isinstance(code, float) and code != code):  # None or NaN: blank cell
        return ""
    return _SPACES.sub(" ", str(code)).strip().casefold()


def choice_of(code: object, mapping: dict[str, str] | None = None) -> str | None:
    """The canonical choice for ``code``, or ``None`` if neither table knows it.

    An :data:`AMBIGUOUS` symbol is ``None`` unless ``mapping`` names it.

    >>> choice_of("AYE"), choice_of(" - "), choice_of(""), choice_of("maybe")
    ('yes', None, 'absent', None)
    >>> choice_of("-", {"-": "absent"})
    'absent'
    """
    key = normalise(code)
    if mapping and key in mapping:
        return mapping[key]
    return BUILTIN.get(key)


def ambiguity(code: object) -> str | None:
    """Why ``code`` is refused until mapped (see :data:`AMBIGUOUS`), or ``None``."""
    return AMBIGUOUS.get(normalise(code))


def resolve(raws: Iterable[object], mapping: dict[str, str] | None = None
            ) -> tuple[dict[object, str], list[object]]:
    """Map distinct raw codes: ``({raw: choice}, [unknown raw codes in input order])``."""
    known: dict[object, str] = {}
    unknown: list[object] = []
    for raw in raws:
        choice = choice_of(raw, mapping)
        if choice is None:
            unknown.append(raw)
        else:
            known[raw] = choice
    return known, unknown


def load_mapping(path: str | Path) -> dict[str, str]:
    """Read a ``raw,choice`` mapping file into ``{normalised code: choice}``.

    Every problem names the file and line: a missing column, a choice that is not one of
    :data:`CHOICES`, or one code mapped to two different choices.
    """
    path = Path(path)
    if not path.is_file():
        raise UsageError(f"mapping file {path}", "does not exist", "check the path after --codes")
    try:
        text = path.read_bytes().decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = path.read_bytes()[: exc.start].count(b"\n") + 1
        raise BadInputError(f"{path}:{line}", "is not UTF-8 text",
                            "save the mapping file as UTF-8 CSV") from exc
    if "\x00" in text:
        line = text[: text.index("\x00")].count("\n") + 1
        raise BadInputError(f"{path}:{line}", "contains a NUL byte",
                            "save the mapping file as plain UTF-8 CSV")
    reader = csv.reader(io.StringIO(text, newline=""))
    try:
        header_row = next(reader, None)
    except csv.Error as exc:
        raise BadInputError(f"{path}:1", f"cannot be split into fields ({exc})",
                            "write a plain header line raw,choice") from exc
    if header_row is None:
        raise BadInputError(str(path), "is empty", "write a header raw,choice and one row per code")
    header = [h.strip().casefold() for h in header_row]
    if "raw" not in header or "choice" not in header:
        raise BadInputError(f"{path}:1", f"header {show(','.join(header_row))} lacks the columns "
                            "raw and choice", "start the file with the line raw,choice")
    i_raw, i_choice = header.index("raw"), header.index("choice")
    mapping: dict[str, str] = {}
    first_line: dict[str, int] = {}
    line = reader.line_num  # last line read so far
    while True:
        try:
            row = next(reader, None)
        except csv.Error as exc:
            raise BadInputError(f"{path}:{reader.line_num}", f"cannot be split into fields "
                                f"({exc})", "close every quoted value") from exc
        if row is None:
            break
        line, end = line + 1, reader.line_num
        if not any(cell.strip() for cell in row):
            line = end
            continue
        if len(row) != len(header):
            raise BadInputError(f"{path}:{line}", f"has {len(row)} fields, the header "
                                f"{len(header)}", "give each row a raw code and a choice")
        key, choice = normalise(row[i_raw]), normalise(row[i_choice])
        if choice not in CHOICES:
            raise BadInputError(f"{path}:{line}, column 'choice'", f"{show(row[i_choice])} is not "
                                "a choice", f"use one of {', '.join(CHOICES)}")
        if key in mapping and mapping[key] != choice:
            raise BadInputError(f"{path}:{line}, column 'raw'",
                                f"code {show(row[i_raw])} maps to {choice} here and to "
                                f"{mapping[key]} on line {first_line[key]}",
                                "keep one row per code")
        mapping[key] = choice
        first_line.setdefault(key, line)
        line = end
    return mapping
