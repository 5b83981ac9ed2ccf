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
The first sheet of a workbook is read, or the one ``--sheet NAME|N`` names, or every sheet with
``--sheet all`` (stacked: a sheet per year is common; sheets without a header are skipped, and
the load says so). The header may sit below a few rows of notes (it is looked for in the top
:data:`HEADER_SEARCH` rows; the load says which row it used). Merged cells and formulas are
refused (their values are not what a clerk sees); blank cells mean absent.

Spreadsheets are small next to long files, so they are read in Python and staged as a frame.
"""

from __future__ import annotations

import csv
import io
import re
from pathlib import Path

import numpy as np
import pandas as pd

from blocwatch.pipeline.ingest import sniff
from blocwatch.pipeline.ingest.readers import FIELDS, KINDS, Staged, resolve_columns
from blocwatch.pipeline.ingest.sheets import (
    HEADER_SEARCH,
    Grid,
    find_header,
    header_place,
    letter,
    read_xlsx,
)
from blocwatch.pipeline.ingest.validate import Problem, Problems
from blocwatch.pipeline.safety import show
from blocwatch.pipeline.store.database import Store

STAGE_COLUMNS = {kind: tuple(FIELDS[o][0] for o in req + opt)
                 for kind, (req, opt, _) in KINDS.items()}
META_ROWS = {"date": "held_on", "held_on": "held_on", "title": "title", "item": "item",
             "topic": "topic",
             "scale": "scale", "scale_min": "scale_min", "scale_max": "scale_max",
             "options": "options"}


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
               scan_info: sniff.Scan, sheet: str | None = None,
               notes: list[str] | None = None) -> Staged | None:
    """Stage .xlsx sheets (long or wide; several sheets are stacked) or a wide CSV file."""
    if fmt == "xlsx":
        read = read_xlsx(path, problems, sheet)
        if read is None:
            return None
        grids, titles = read
        every = sheet is not None and sheet.strip().casefold() == "all"
        what = "wide" if layout == "wide" and kind == "votes" else kind
        found = []
        for g in grids:
            trial = Problems() if every else problems
            got = find_header(g, what, overrides, str(path), trial, notes,
                              others=[] if every or len(titles) == 1 else titles)
            if got is None and every and notes is not None:
                notes.append(f"note: {path}: sheet {show(g.sheet)} skipped: "
                             f"{trial.items[0].why.removeprefix('has ')}")
            found.append(got)
        if every:
            found = [g for g in found if g is not None] or [None]
            if found == [None]:
                problems.add(Problem("header", str(path), "has no sheet with a header row in "
                                     f"its first {HEADER_SEARCH} rows", "put the header row "
                                     "(e.g. member_id, ballot_id, vote) at the top of a sheet"))
        if any(g is None for g in found):
            return None
        grids = found
    else:
        grid = read_csv_grid(path, scan_info, problems)
        if grid is None:
            return None
        grids = [grid]
    frames, parts = [], []
    for g, grid in enumerate(grids):
        if layout == "wide" and kind == "votes":
            frame, headers = _wide_frame(grid, str(path), body, overrides, problems)
        else:
            frame, headers = _long_frame(grid, str(path), kind, body, overrides, problems)
        if frame is None:
            return None
        frame["_g"] = g
        frames.append(frame)
        parts.append(headers)
    frame = pd.concat(frames, ignore_index=True) if len(frames) > 1 else frames[0]
    headers = parts[0]
    store.stage_frame(f"{table}_frame", frame)
    text = ", ".join(f"CAST({c} AS VARCHAR) AS {c}" for c in STAGE_COLUMNS[kind if layout != "wide"
                                                                        else "votes"])
    rows = store.stage_rows(table, f"SELECT {text}, _row, _j FROM {table}_frame ORDER BY rowid")
    staged = Staged(path, str(path), kind, fmt, layout, table, headers, rows, scan_info.sha256)
    positions = frame[["_row", "_j", "_g"]].to_numpy()
    stage_cols = [{FIELDS[opt][0]: j for opt, j in h.pop("_cols").items()} for h in parts]
    date_rows = [h.pop("_date_row", None) for h in parts]

    def placer(rid: int, column: str | None):
        row, j, g = (int(v) for v in positions[rid])
        grid, date_row = grids[g], date_rows[g]
        if column == "raw" and layout == "wide":
            return grid.where(row, j, grid.rows[0][j])
        if column == "ballot_id" and layout == "wide":
            return grid.where(0, j, grid.rows[0][j])
        if column == "held_on" and date_row is not None:
            return grid.where(date_row, j, grid.rows[0][j])
        col = stage_cols[g].get(column)
        if col is None:
            return grid.row_where(row)
        return grid.where(row, col, None)

    staged.placer = placer
    if rows == 0:
        problems.add(Problem("file", str(path), "has a header but no data rows",
                             "add one row per member", line=2 if fmt != "xlsx" else None))
    return staged


def _long_frame(grid: Grid, name: str, kind: str, body: str | None, overrides: dict,
                problems: Problems):
    header = [h or "" for h in grid.rows[0]]
    cols = resolve_columns(header, kind, overrides, file=name, problems=problems,
                           strict=kind == "votes", where=header_place(grid))
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
    cols = resolve_columns(header, "wide", overrides, file=name, problems=problems,
                           where=header_place(grid))
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
                problems.add(Problem("header", name, f"column {letter(j)} holds votes but has no "
                                     "header", "write the ballot id in its header cell",
                                     line=grid.where(0, j, None)[0],
                                     where=grid.where(0, j, None)[1], column=None, value=""))
                ok = False
            continue
        if h in seen:
            line, where, _ = grid.where(0, j, None)
            problems.add(Problem("header", name, f"ballot {show(h)} has two columns (the first "
                                 f"is column {letter(seen[h])})", "merge the two columns or "
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
