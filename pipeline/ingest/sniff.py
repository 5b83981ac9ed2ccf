"""Byte-level look at an input file before DuckDB reads it, and line numbers for messages.

:func:`scan` reads the file once in blocks — its sha256, size, NUL bytes, whether it holds
quotes or blank lines — without keeping it in memory. :func:`text_header` decodes and splits the
header line of a delimited file and picks the delimiter. :func:`record_lines` turns DuckDB's row
order back into physical line numbers; it is only called when a message needs a line, and takes
the fast path (row + 2) when nothing in the file can shift lines.
"""

from __future__ import annotations

import bisect
import csv
import hashlib
from collections.abc import Iterable
from dataclasses import dataclass
from pathlib import Path

BLOCK = 1 << 22  # 4 MiB
HEAD = 1 << 20  # the header line must fit in the first MiB
DELIMITERS = (",", ";", "\t", "|")
BOMS = (  # (bom, encoding name); UTF-32 first because its LE BOM starts with UTF-16's
    (b"\xff\xfe\x00\x00", "UTF-32"), (b"\x00\x00\xfe\xff", "UTF-32"),
    (b"\xff\xfe", "UTF-16"), (b"\xfe\xff", "UTF-16"),
)


@dataclass(frozen=True)
class Scan:
    sha256: str
    size: int
    head: bytes  # the first MiB
    nul_count: int
    first_nul: int | None  # byte offset
    has_quote: bool
    has_blank_line: bool

    def line_at(self, path: Path, offset: int) -> int:
        """Physical line (1-based) holding byte ``offset``."""
        return lines_at_bytes(path, [offset])[offset]


def scan(path: str | Path) -> Scan:
    """Hash and inspect ``path`` in 4 MiB blocks."""
    sha = hashlib.sha256()
    size = nul_count = 0
    first_nul = None
    has_quote = has_blank = False
    head = b""
    tail = b""
    with open(path, "rb") as fh:
        while block := fh.read(BLOCK):
            sha.update(block)
            if len(head) < HEAD:
                head += block[: HEAD - len(head)]
            n = block.count(b"\x00")
            if n and first_nul is None:
                first_nul = size + block.index(b"\x00")
            nul_count += n
            has_quote = has_quote or b'"' in block
            joined = tail + block
            has_blank = has_blank or b"\n\n" in joined or b"\n\r\n" in joined
            tail = block[-2:]
            size += len(block)
    return Scan(sha.hexdigest(), size, head, nul_count, first_nul, has_quote, has_blank)


def load_key(path: str | Path, sha256: str, sheet: str | None) -> str:
    """The key a load is remembered by: the file's sha256, or for a workbook read with a
    ``--sheet`` choice, the sha256 of the file's sha256 and that choice (``all`` included), so
    loading sheet 2 after sheet 1 is not mistaken for loading the same data twice."""
    if sheet is None or Path(path).suffix.lower() not in (".xlsx", ".xlsm"):
        return sha256
    return hashlib.sha256(f"{sha256}\nsheet={sheet.strip()}".encode()).hexdigest()


def lines_at_bytes(path: str | Path, offsets: Iterable[int]) -> dict[int, int]:
    """Physical line number (1-based) of each byte offset, in one streaming pass."""
    wanted = sorted(set(offsets))
    out: dict[int, int] = {}
    if not wanted:
        return out
    newlines = pos = 0
    i = 0
    with open(path, "rb") as fh:
        while i < len(wanted) and (block := fh.read(BLOCK)):
            while i < len(wanted) and wanted[i] < pos + len(block):
                out[wanted[i]] = newlines + block.count(b"\n", 0, wanted[i] - pos) + 1
                i += 1
            newlines += block.count(b"\n")
            pos += len(block)
    for off in wanted[i:]:
        out[off] = newlines + 1
    return out


def bom_encoding(head: bytes) -> str | None:
    """'UTF-16' or 'UTF-32' if the file starts with such a byte-order mark."""
    for bom, name in BOMS:
        if head.startswith(bom):
            return name
    return None


@dataclass(frozen=True)
class Header:
    names: list[str]
    delimiter: str
    problem: str | None = None  # why the header line cannot be used


def text_header(head: bytes, *, tab: bool = False) -> Header:
    """Decode the first line of ``head`` (UTF-8, BOM allowed) and split it into column names.

    The delimiter is tab for ``tab``, else whichever of ``, ; TAB |`` splits the header into the
    most fields (comma on a tie).
    """
    if head.startswith(b"\xef\xbb\xbf"):
        head = head[3:]
    end = head.find(b"\n")
    line = head if end < 0 else head[:end]
    if end < 0 and len(head) >= HEAD - 3:
        return Header([], ",", f"has a header line longer than {HEAD} bytes")
    try:
        text = line.rstrip(b"\r").decode("utf-8")
    except UnicodeDecodeError:
        return Header([], ",", "has a header line that is not UTF-8 text")
    candidates = ("\t",) if tab else DELIMITERS
    best, best_names = ",", _split(text, ",")
    for delim in candidates:
        names = _split(text, delim)
        if len(names) > len(best_names) or (tab and delim == "\t"):
            best, best_names = delim, names
    return Header([n.strip() for n in best_names], best)


def _split(line: str, delim: str) -> list[str]:
    try:
        return next(csv.reader([line], delimiter=delim, quotechar='"'), [])
    except csv.Error:
        return [line]


def record_lines(path: str | Path, rows: Iterable[int], *, scan_info: Scan,
                 rejected_lines: Iterable[int] = ()) -> dict[int, int]:
    """Physical line where each staged row (0-based, in file order) starts.

    DuckDB skips blank lines and rejected rows and joins quoted line breaks, so when the file has
    any of these the file is walked once, tracking quotes; otherwise the line is ``row + 2``.
    """
    wanted = sorted(set(rows))
    rejected = sorted(set(rejected_lines))
    if not wanted:
        return {}
    if not (scan_info.has_quote or scan_info.has_blank_line or rejected):
        return {r: r + 2 for r in wanted}
    out: dict[int, int] = {}
    row = -1
    in_quote = False
    i = 0
    rejected_set = set(rejected)
    with open(path, "rb") as fh:
        for lineno, raw in enumerate(fh, start=1):
            starts_record = not in_quote
            in_quote ^= raw.count(b'"') % 2 == 1
            if lineno == 1 or not starts_record or not raw.strip(b"\r\n"):
                continue
            if lineno in rejected_set:
                continue
            row += 1
            if row == wanted[i]:
                out[row] = lineno
                i += 1
                if i == len(wanted):
                    break
    for r in wanted[i:]:  # past the end (should not happen): best guess
        out[r] = r + 2 + bisect.bisect_right(rejected, r + 2)
    return out


def json_lines(path: str | Path, rows: Iterable[int]) -> dict[int, int]:
    """Physical line of each JSON-lines row (0-based, blank lines skipped as DuckDB does)."""
    wanted = sorted(set(rows))
    out: dict[int, int] = {}
    row = -1
    i = 0
    if not wanted:
        return out
    with open(path, "rb") as fh:
        for lineno, raw in enumerate(fh, start=1):
            if not raw.strip():
                continue
            row += 1
            if row == wanted[i]:
                out[row] = lineno
                i += 1
                if i == len(wanted):
                    break
    return out
