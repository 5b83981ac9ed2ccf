"""Spreadsheet-shaped inputs: ``.xlsx`` sheets, and the wide layout from CSV or ``.xlsx``.

The wide layout keeps one row per member and one column per ballot::

    member_id, name,  group, 2021-001,   2021-002
    date,      ,      ,      2021-01-12, 2021-01-19     <- optional rows: date, title, item, topic
    M01,       Ann E, Left,  Y,          N

Columns named as a member, name, group or body field (see ``readers.FIELDS``) describe the
member; every other column with a header is a ballot. Rows right below the header whose member
cell reads ``date`` (or ``held_on``), ``title``, ``item`` or ``topic`` give each ballot's
attributes; without a date row, a ballot header that starts with an ISO date (``2021-01-12`` or
``2021-01-12 #2``) dates its ballot, and other dates come from ``--ballots FILE`` or from
ballots already stored.
Only the first sheet of a workbook is read. Merged cells and formulas are refused (their values
are not what a clerk sees); blank cells mean absent.

Spreadsheets are small next to long files, so they are read in Python and staged as a frame.
"""

from __future__ import annotations

import csv
import datetime as dt
import io
import re
from dataclasses import dataclass
from pathlib import Path

import numpy as np
import pandas as pd

from blocwatch.pipeline.ingest import sniff
from blocwatch.pipeline.ingest.readers import FIELDS, KINDS, Staged, resolve_columns
from blocwatch.pipeline.ingest.validate import Problem, Problems
from blocwatch.pipeline.safety import show
from blocwatch.pipeline.store.database import Store

STAGE_COLUMNS = {kind: tuple(FIELDS[o][0] for o in req + opt)
                 for kind, (req, opt, _) in KINDS.items()}
META_ROWS = {"date": "held_on", "held_on": "held_on", "title": "title", "item": "item",
             "topic": "topic",
             "scale": "scale", "scale_min": "scale_min", "scale_max": "scale_max",
             "options": "options"}


@dataclass
class Grid:
    rows: list[list[str | None]]
    lines: list[int]  # line (CSV) or sheet row number (xlsx) of each row
    sheet: str | None  # None for CSV

    def where(self, row: int, col: int, header: str | None) -> tuple[int | None, str | None,
                                                                     str | None]:
        if self.sheet is None:
            return self.lines[row], None, header
        return None, f"sheet {show(self.sheet)}, cell {_letter(col)}{self.lines[row]}", header

    def row_where(self, row: int) -> tuple[int | None, str | None, None]:
        if self.sheet is None:
            return self.lines[row], None, None
        return None, f"sheet {show(self.sheet)}, row {self.lines[row]}", None


def _letter(col: int) -> str:
    out = ""
    col += 1
    while col:
        col, rem = divmod(col - 1, 26)
        out = chr(65 + rem) + out
    return out


def _cell_text(value: object) -> str | None:
    if value is None:
        return None
    if isinstance(value, dt.datetime):
        return value.date().isoformat() if value.time() == dt.time() else value.isoformat()
    if isinstance(value, dt.date):
        return value.isoformat()
    if isinstance(value, bool):
        return "true" if value else "false"
    if isinstance(value, float) and value.is_integer():
        return str(int(value))
    text = str(value).strip()
    return text or None


def read_xlsx(path: Path, problems: Problems) -> Grid | None:
    import zipfile

    from openpyxl import load_workbook

    name = str(path)
    try:
        book = load_workbook(path, data_only=False)
    except (zipfile.BadZipFile, KeyError, OSError, ValueError, TypeError) as exc:
        problems.add(Problem("file", name, f"cannot be read as an .xlsx workbook ({exc})",
                             "open it in a spreadsheet program and save it as .xlsx again"))
        return None
    sheet = book.worksheets[0]
    ok = True
    for rng in list(sheet.merged_cells.ranges)[:20]:
        problems.add(Problem("sheet", name, f"cells {rng.coord} are merged", "unmerge them and "
                             "write the value in every cell", where=f"sheet {show(sheet.title)}, "
                             f"cell {rng.coord.split(':')[0]}", value=rng.coord))
        ok = False
    rows, lines = [], []
    formulas = 0
    for r, row in enumerate(sheet.iter_rows(), start=1):
        values = []
        for c in row:
            if c.data_type == "f":
                formulas += 1
                if formulas <= 20:
                    problems.add(Problem("sheet", name, f"holds the formula {show(c.value, 40)}",
                                         "replace formulas by their values (copy, then paste "
                                         "values only)", where=f"sheet {show(sheet.title)}, cell "
                                         f"{c.coordinate}", value=c.value))
                ok = False
            values.append(_cell_text(c.value))
        if any(v is not None for v in values):
            rows.append(values)
            lines.append(r)
    if not ok:
        return None
    if not rows:
        problems.add(Problem("file", name, f"sheet {show(sheet.title)} is empty",
                             "put the data on the first sheet, header in row 1"))
        return None
    width = max(len(r) for r in rows)
    rows = [r + [None] * (width - len(r)) for r in rows]
    return Grid(rows, lines, sheet.title)


def read_csv_grid(path: Path, scan_info: sniff.Scan, problems: Problems) -> Grid | None:
    name = str(path)
    try:
        text = path.read_bytes().decode("utf-8-sig")
    except UnicodeDecodeError as exc:
        line = sniff.lines_at_bytes(path, [exc.start])[exc.start]
        problems.add(Problem("encoding", name, "is not UTF-8 text", "save the file as UTF-8",
                             line=line))
        return None
    header = sniff.text_header(scan_info.head, tab=path.suffix.lower() == ".tsv")
    reader = csv.reader(io.StringIO(text, newline=""), delimiter=header.delimiter)
    rows, lines = [], []
    last = 0
    try:
        for row in reader:
            start, last = last + 1, reader.line_num
            cells = [c.strip() or None for c in row]
            if any(v is not None for v in cells):
                rows.append(cells)
                lines.append(start)
    except csv.Error as exc:
        problems.add(Problem("quote", name, f"cannot be split into fields ({exc})",
                             "close every quoted value", line=reader.line_num))
        return None
    width = len(rows[0])
    for row, line in zip(rows, lines):
        extra = row[width:]
        if len(row) < width or any(v is not None for v in extra):
            problems.add(Problem("shape", name, f"has {len(row)} fields, the header {width}",
                                 "give every row as many fields as the header has", line=line))
    if problems.items and any(p.file == name and p.kind == "shape" for p in problems.items):
        return None
    return Grid([r[:width] for r in rows], lines, None)


def stage_grid(store: Store, path: Path, *, kind: str, table: str, body: str | None, fmt: str,
               layout: str, overrides: dict[str, str], problems: Problems,
               scan_info: sniff.Scan) -> Staged | None:
    """Stage an .xlsx sheet (long or wide) or a wide CSV file."""
    grid = read_xlsx(path, problems) if fmt == "xlsx" else read_csv_grid(path, scan_info,
                                                                          problems)
    if grid is None:
        return None
    if layout == "wide" and kind == "votes":
        frame, headers = _wide_frame(grid, str(path), body, overrides, problems)
    else:
        frame, headers = _long_frame(grid, str(path), kind, body, overrides, problems)
    if frame is None:
        return None
    store.stage_frame(f"{table}_frame", frame)
    text = ", ".join(f"CAST({c} AS VARCHAR) AS {c}" for c in STAGE_COLUMNS[kind if layout != "wide"
                                                                        else "votes"])
    rows = store.stage_rows(table, f"SELECT {text}, _row, _j FROM {table}_frame ORDER BY rowid")
    staged = Staged(path, str(path), kind, fmt, layout, table, headers, rows, scan_info.sha256)
    positions = frame[["_row", "_j"]].to_numpy()
    stage_cols = {FIELDS[opt][0]: j for opt, j in headers.pop("_cols").items()}
    date_row = headers.pop("_date_row", None)

    def placer(rid: int, column: str | None):
        row, j = int(positions[rid][0]), int(positions[rid][1])
        if column == "raw" and layout == "wide":
            return grid.where(row, j, grid.rows[0][j])
        if column == "ballot_id" and layout == "wide":
            return grid.where(0, j, grid.rows[0][j])
        if column == "held_on" and date_row is not None:
            return grid.where(date_row, j, grid.rows[0][j])
        col = stage_cols.get(column)
        if col is None:
            return grid.row_where(row)
        return grid.where(row, col, None)

    staged.placer = placer
    if rows == 0:
        problems.add(Problem("file", str(path), "has a header but no data rows",
                             "add one row per member", line=2 if grid.sheet is None else None))
    return staged


def _long_frame(grid: Grid, name: str, kind: str, body: str | None, overrides: dict,
                problems: Problems):
    header = [h or "" for h in grid.rows[0]]
    cols = resolve_columns(header, kind, overrides, file=name, problems=problems,
                           strict=kind == "votes")
    if cols is None:
        return None, {}
    required, optional, _ = KINDS[kind]
    data = grid.rows[1:]
    frame = pd.DataFrame({FIELDS[o][0]: [r[cols[o]] for r in data] if o in cols else
                          ([body] * len(data) if o == "body" else [None] * len(data))
                          for o in required + optional}, dtype=object)
    frame["_row"] = np.arange(1, len(grid.rows), dtype=np.int64)
    frame["_j"] = np.zeros(len(data), dtype=np.int64)
    headers = {FIELDS[o][0]: header[cols[o]] for o in cols}
    headers["_cols"] = cols
    return frame, headers


def _wide_frame(grid: Grid, name: str, body: str | None, overrides: dict, problems: Problems):
    header = [h or "" for h in grid.rows[0]]
    cols = resolve_columns(header, "wide", overrides, file=name, problems=problems)
    if cols is None:
        return None, {}
    used = set(cols.values())
    ballots, seen = [], {}
    ok = True
    for j, h in enumerate(header):
        if j in used:
            continue
        if not h:
            if any(r[j] is not None for r in grid.rows[1:]):
                problems.add(Problem("header", name, f"column {_letter(j)} holds votes but has no "
                                     "header", "write the ballot id in its header cell",
                                     line=grid.where(0, j, None)[0],
                                     where=grid.where(0, j, None)[1], column=None, value=""))
                ok = False
            continue
        if h in seen:
            line, where, _ = grid.where(0, j, None)
            problems.add(Problem("header", name, f"ballot {show(h)} has two columns (the first "
                                 f"is column {_letter(seen[h])})", "merge the two columns or "
                                 "give each ballot its own id", line=line, where=where,
                                 column=h, value=h))
            ok = False
            continue
        seen[h] = j
        ballots.append(j)
    if not ok:
        return None, {}
    member_col = cols["member"]
    meta: dict[str, int] = {}
    first = 1
    while first < len(grid.rows) and (grid.rows[first][member_col] or "").casefold() in META_ROWS:
        meta.setdefault(META_ROWS[grid.rows[first][member_col].casefold()], first)
        first += 1
    members = list(range(first, len(grid.rows)))
    m, b = len(members), len(ballots)
    cells = np.array([[grid.rows[r][j] for j in ballots] for r in members], dtype=object)
    frame = pd.DataFrame({
        "body": [body] * (m * b) if "body" not in cols else
        np.repeat([grid.rows[r][cols["body"]] for r in members], b),
        "ballot_id": np.tile(np.array([header[j] for j in ballots], dtype=object), m),
        "held_on": np.tile(np.array([grid.rows[meta["held_on"]][j] if "held_on" in meta else
                                     _header_date(header[j]) for j in ballots], dtype=object),
                           m),
        "member_id": np.repeat(np.array([grid.rows[r][member_col] for r in members],
                                        dtype=object), b),
        "raw": cells.reshape(-1) if m and b else np.array([], dtype=object),
        "group_name": _member_col(grid, members, cols.get("group"), b),
        "name": _member_col(grid, members, cols.get("name"), b),
        "title": _meta_row(grid, meta.get("title"), ballots, m),
        "item": _meta_row(grid, meta.get("item"), ballots, m),
        "topic": _meta_row(grid, meta.get("topic"), ballots, m),
        **{c: _meta_row(grid, meta.get(c), ballots, m)
           for c in ("scale", "scale_min", "scale_max", "options")},
    })
    frame["_row"] = np.repeat(np.array(members, dtype=np.int64), b)
    frame["_j"] = np.tile(np.array(ballots, dtype=np.int64), m)
    headers = {FIELDS[o][0]: header[cols[o]] for o in cols}
    headers.update(ballot_id="(header row)", raw="(ballot columns)")
    if "held_on" in meta:
        headers["held_on"] = "(date row)"
    headers["_cols"] = cols
    headers["_date_row"] = meta.get("held_on")
    return frame, headers


_HEADER_DATE = re.compile(r"^(\d{4}-\d{2}-\d{2})(?:$|[ _/#.-])")


def _header_date(header: str) -> str | None:
    """The ISO date a ballot header starts with ('2021-01-12 #2' -> '2021-01-12'), if any."""
    match = _HEADER_DATE.match(header)
    return match.group(1) if match else None


def _member_col(grid: Grid, members: list[int], col: int | None, b: int) -> np.ndarray:
    if col is None:
        return np.full(len(members) * b, None, dtype=object)
    return np.repeat(np.array([grid.rows[r][col] for r in members], dtype=object), b)


def _meta_row(grid: Grid, row: int | None, ballots: list[int], m: int) -> np.ndarray:
    if row is None:
        return np.full(len(ballots) * m, None, dtype=object)
    return np.tile(np.array([grid.rows[row][j] for j in ballots], dtype=object), m)
