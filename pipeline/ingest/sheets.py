"""Workbook sheets as grids of text cells: which sheets, where the header is, what each cell says.

``--sheet`` picks the first sheet (default), one by name or number from 1, or every sheet
(``all``). Merged cells and formulas are refused (their values are not what a clerk sees). The
header is looked for in the top :data:`HEADER_SEARCH` rows, because clerks often put a title or
notes above it; the rows above are skipped and the load says so.
"""

from __future__ import annotations

import datetime as dt
from dataclasses import dataclass
from pathlib import Path

from blocwatch.pipeline.ingest.readers import resolve_columns
from blocwatch.pipeline.ingest.validate import Problem, Problems
from blocwatch.pipeline.safety import show


@dataclass
class Grid:
    rows: list[list[str | None]]
    lines: list[int]  # line (CSV) or sheet row number (xlsx) of each row
    sheet: str | None  # None for CSV

    def where(self, row: int, col: int, header: str | None) -> tuple[int | None, str | None,
                                                                     str | None]:
        if self.sheet is None:
            return self.lines[row], None, header
        return None, f"sheet {show(self.sheet)}, cell {letter(col)}{self.lines[row]}", header

    def row_where(self, row: int) -> tuple[int | None, str | None, None]:
        if self.sheet is None:
            return self.lines[row], None, None
        return None, f"sheet {show(self.sheet)}, row {self.lines[row]}", None


def letter(col: int) -> str:
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


def read_xlsx(path: Path, problems: Problems, sheet: str | None = None
              ) -> tuple[list[Grid], list[str]] | None:
    """The chosen sheets of a workbook as grids: the first (default), one by name or number
    from 1, or every sheet (``all``; empty sheets are left out); and every sheet's title."""
    import zipfile

    from openpyxl import load_workbook

    name = str(path)
    try:
        book = load_workbook(path, data_only=False)
    except (zipfile.BadZipFile, KeyError, OSError, ValueError, TypeError) as exc:
        problems.add(Problem("file", name, f"cannot be read as an .xlsx workbook ({exc})",
                             "open it in a spreadsheet program and save it as .xlsx again"))
        return None
    chosen = pick_sheets(book.worksheets, sheet, name, problems)
    if chosen is None:
        return None
    grids = [_sheet_grid(ws, name, problems) for ws in chosen]
    if any(g is False for g in grids):
        return None
    grids = [g for g in grids if g is not None]
    if not grids:
        problems.add(Problem("file", name, f"sheet {show(chosen[0].title)} is empty" if
                             len(chosen) == 1 else "every sheet is empty",
                             "put the data on a sheet, header in its first row"))
        return None
    return grids, [ws.title for ws in book.worksheets]


def pick_sheets(sheets: list, sheet: str | None, name: str, problems: Problems) -> list | None:
    """The worksheets ``--sheet`` names (see :func:`read_xlsx`), or ``None`` with a problem."""
    if sheet is None:
        return sheets[:1]
    if sheet.strip().casefold() == "all":
        return list(sheets)
    titles = [ws.title for ws in sheets]
    if sheet.strip().isdigit():
        i = int(sheet)
        if 1 <= i <= len(sheets):
            return [sheets[i - 1]]
    else:
        hits = [ws for ws in sheets if ws.title == sheet] or \
               [ws for ws in sheets if ws.title.strip().casefold() == sheet.strip().casefold()]
        if hits:
            return hits[:1]
    problems.add(Problem("file", name, f"has no sheet {show(sheet)}; its sheets are "
                         f"{', '.join(f'{i}: {show(t)}' for i, t in enumerate(titles, 1))}",
                         "pass --sheet with one of these names or numbers, or --sheet all"))
    return None


def _sheet_grid(sheet, name: str, problems: Problems) -> Grid | None | bool:
    """One worksheet as a grid; ``None`` if it is empty, ``False`` if it cannot be used."""
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
        return False
    if not rows:
        return None
    width = max(len(r) for r in rows)
    rows = [r + [None] * (width - len(r)) for r in rows]
    return Grid(rows, lines, sheet.title)


HEADER_SEARCH = 10  # rows of a sheet searched for the header (notes often sit above it)


def find_header(grid: Grid, kind: str, overrides: dict, name: str, problems: Problems,
                notes: list[str] | None, *, others: list[str]) -> Grid | None:
    """The grid from its header row on: the first of the top rows that names the columns.

    Rows above it are notes (said in ``notes``). No such row: a problem naming the first row
    and, when the workbook has other sheets, ``--sheet``.
    """
    for i in range(min(HEADER_SEARCH, len(grid.rows))):
        trial = Problems()
        header = [h or "" for h in grid.rows[i]]
        if resolve_columns(header, kind, overrides, file=name, problems=trial,
                           where="") is not None:
            if i == 0:
                return grid
            if notes is not None:
                notes.append(f"note: {name}: sheet {show(grid.sheet)}: header found on row "
                             f"{grid.lines[i]}; the {i} non-empty row"
                             f"{'s' if i > 1 else ''} above it {'were' if i > 1 else 'was'} read "
                             "as notes and skipped")
            return Grid(grid.rows[i:], grid.lines[i:], grid.sheet)
    first = [v for v in grid.rows[0] if v]
    if len(first) > 1 and not others:  # a header with a wrong name: the column check says which
        return grid
    hint = (f"pass --sheet with the sheet that holds the votes (this workbook's sheets: "
            f"{', '.join(f'{i}: {show(t)}' for i, t in enumerate(others, 1))}), or --sheet all"
            if others else "put the header row (e.g. member_id, ballot_id, vote) at the top of "
            "the sheet")
    problems.add(Problem("header", name, f"has no header row in the first {HEADER_SEARCH} rows "
                         f"of sheet {show(grid.sheet)} (its first row holds "
                         f"{show(' '.join(first), 50)})", hint,
                         where=f"sheet {show(grid.sheet)}, row {grid.lines[0]}",
                         value=" ".join(first)))
    return None


def header_place(grid: Grid) -> str | None:
    return None if grid.sheet is None else f"sheet {show(grid.sheet)}, row {grid.lines[0]}"


