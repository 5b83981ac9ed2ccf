"""Long files, one stager per format: DuckDB reads the file straight into a staged table.

CSV goes through ``read_csv`` with the delimiter chosen from the header (see
:mod:`blocwatch.pipeline.ingest.sniff`), every column as text, strict quoting, and rejected
rows kept in a rejects table that becomes one problem per row (ragged, broken quotes, bad
bytes). Parquet
goes through ``read_parquet`` with column types checked first; JSON lines through
``read_json``, nested values refused. File column names never reach SQL: columns are
addressed by position (``c3`` or ``#4``).
"""

from __future__ import annotations

from collections.abc import Callable
from pathlib import Path

from blocwatch.pipeline.ingest import sniff
from blocwatch.pipeline.ingest.readers import FIELDS, KINDS, Staged, problems_for, resolve_columns
from blocwatch.pipeline.ingest.validate import KINDS as PROBLEM_KINDS
from blocwatch.pipeline.ingest.validate import Problem, Problems
from blocwatch.pipeline.safety import show
from blocwatch.pipeline.store.database import ReadError, Store

MAX_LINE_BYTES = 1 << 20
_SHOWN = 20  # malformed rows listed one by one per kind; the rest are counted

TEXT_TYPES = ("VARCHAR", "TINYINT", "SMALLINT", "INTEGER", "BIGINT", "HUGEINT", "UTINYINT",
              "USMALLINT", "UINTEGER", "UBIGINT", "UHUGEINT", "BOOLEAN")
DATE_TYPES = ("DATE", "TIMESTAMP", "TIMESTAMP_NS", "TIMESTAMP_MS", "TIMESTAMP_S",
              "TIMESTAMP WITH TIME ZONE", "VARCHAR")


def _text(i: int) -> str:
    return f"NULLIF(trim(c{i}), '')"


def stage_csv(store: Store, path: Path, kind: str, table: str, body: str | None,
               overrides: dict[str, str], problems: Problems,
               scan_info: sniff.Scan) -> Staged | None:
    name = str(path)
    header = sniff.text_header(scan_info.head, tab=path.suffix.lower() == ".tsv")
    if header.problem:
        problems.add(Problem("encoding" if "UTF-8" in header.problem else "header", name,
                             header.problem, "save the file as UTF-8 CSV with one header line",
                             line=1))
        return None
    cols = resolve_columns(header.names, kind, overrides, file=name, problems=problems,
                           strict=kind == "votes")
    if cols is None:
        return None
    select, extra, headers = _select(cols, header.names, kind, body, _text)
    rej, rejscan = f"{table}_rej", f"{table}_rejscan"
    params = dict(path=str(path), delim=header.delimiter, max_line=MAX_LINE_BYTES,
                  columns={f"c{i}": "VARCHAR" for i in range(len(header.names))})
    sql = (f"SELECT {select} FROM read_csv($path, delim=$delim, quote='\"', escape='\"', "
           f"header=true, columns=$columns, auto_detect=false, strict_mode=true, "
           f"max_line_size=$max_line, store_rejects=true, rejects_table='{rej}', "
           f"rejects_scan='{rejscan}')")
    try:
        rows = store.stage_rows(table, sql, params, **extra)
    except ReadError as exc:
        problems.add(Problem("file", name, f"cannot be read as CSV ({exc.reason})",
                             "check the delimiter, quoting and encoding (UTF-8)"))
        return None
    rejected = _rejects(store, path, name, rej, header.names, problems)
    staged = Staged(path, name, kind, "csv", "long", table, headers, rows, scan_info.sha256,
                    rejected=len(rejected))

    def placer(rid: int, column: str | None):
        lines = sniff.record_lines(path, [rid], scan_info=scan_info, rejected_lines=rejected)
        return lines.get(rid), None, None

    staged.placer = placer
    return staged


def _select(cols: dict[str, int], names: list[str], kind: str, body: str | None,
            expr: Callable[[int], str]) -> tuple[str, dict, dict[str, str]]:
    """The SELECT list mapping positions to stage columns, the view's extras, and headers.

    Only columns the file has are read; the others become NULL (and ``body`` the constant
    ``body``) in the view over the staged table, so a 10-million-row file does not carry
    10 million copies of the body name or of empty titles.
    """
    required, optional, _ = KINDS[kind]
    parts, headers, nulls = [], {}, []
    constants: dict = {}
    for opt in required + optional:
        stage = FIELDS[opt][0]
        if opt in cols:
            parts.append(f"{expr(cols[opt])} AS {stage}")
            headers[stage] = names[cols[opt]]
        elif opt == "body":
            constants["body"] = body
        else:
            nulls.append(stage)
    return ", ".join(parts), {"nulls": nulls, "constants": constants}, headers


_REJECT_KINDS = {
    "MISSING COLUMNS": ("shape", "has fewer fields than the header", "give every row as many "
                        "fields as the header has (empty fields are allowed)"),
    "TOO MANY COLUMNS": ("shape", "has more fields than the header", "remove the extra fields, "
                         "or quote values that contain the delimiter"),
    "UNQUOTED VALUE": ("quote", "has a quote in the middle of an unquoted value or after a "
                       "closing quote", "double every quote inside a quoted value (\"\")"),
    "INVALID UNICODE": ("encoding", "is not UTF-8 text", "save the file as UTF-8"),
    "INVALID ENCODING": ("encoding", "is not UTF-8 text", "save the file as UTF-8"),
    "LINE SIZE OVER MAXIMUM": ("long", f"is longer than {MAX_LINE_BYTES} bytes", "check for a "
                               "missing closing quote or line break"),
}


def _rejects(store: Store, path: Path, name: str, rej: str, names: list[str],
             problems: Problems) -> list[int]:
    """Turn DuckDB's rejected rows into problems; return their physical line numbers."""
    rows = store.rows(f"SELECT line_byte_position, column_idx, error_type, csv_line, "
                      f"error_message FROM {rej} ORDER BY line")
    if not rows:
        return []
    lines = sniff.lines_at_bytes(path, [r[0] for r in rows])
    shown: dict[str, int] = {}
    fixes: dict[str, str] = {}
    for pos, col, etype, csv_line, message in rows:
        kind, why, fix = _REJECT_KINDS.get(etype, ("shape", f"cannot be read ({message})",
                                                   "check the quoting and delimiters"))
        if etype in ("MISSING COLUMNS", "TOO MANY COLUMNS"):
            found = message.rsplit("Found:", 1)[-1].strip().split()[0] if "Found:" in message \
                else "?"
            why = f"has {found} fields, the header {len(names)}"
        shown[kind] = shown.get(kind, 0) + 1
        if shown[kind] > _SHOWN:  # enough examples; the rest are counted below
            continue
        column = names[col - 1] if etype.startswith("INVALID") and col and col <= len(names) \
            else None
        if kind == "encoding":  # show the bytes as they are, not DuckDB's replacement marks
            csv_line = _raw_line(path, pos)
        elif kind == "quote" and csv_line.count('"') % 2:
            why = "opens a quoted value that is never closed"
            fix = "close the quote, or double a quote that is part of the value (\"\")"
            csv_line = csv_line.split("\n", 1)[0]
        problems.add(Problem(kind, name, f"{why}: {show(csv_line, 50)}", fix,
                             line=lines[pos], column=column, value=csv_line))
        fixes[kind] = fix
    for kind, n in shown.items():
        if n > _SHOWN:
            problems.add(Problem(kind, name, f"{n - _SHOWN:,} more rows with {PROBLEM_KINDS[kind]}",
                                 fixes[kind], count=n - _SHOWN, rest=True))
    return sorted(lines.values())


def _raw_line(path: Path, pos: int) -> str:
    """The line starting at byte ``pos``, undecodable bytes shown as ``\\xNN``."""
    with open(path, "rb") as fh:  # DuckDB's position may fall inside the line
        start = max(0, pos - 400)
        fh.seek(start)
        window = fh.read(800)
    cut = pos - start
    head = window[:cut].rfind(b"\n") + 1
    raw = window[head:].split(b"\n", 1)[0].rstrip(b"\r")
    return raw.decode("utf-8", "backslashreplace")


def stage_parquet(store: Store, path: Path, kind: str, table: str, body: str | None,
                  overrides: dict[str, str], problems: Problems,
                  scan_info: sniff.Scan) -> Staged | None:
    name = str(path)
    try:
        desc = store.probe("SELECT column_name, column_type FROM (DESCRIBE SELECT * FROM "
                           "read_parquet($path))", {"path": str(path)})
    except ReadError as exc:
        problems.add(Problem("file", name, f"cannot be read as Parquet ({exc.reason})",
                             "check that the file is a complete Parquet file"))
        return None
    names, types = [d[0] for d in desc], [d[1] for d in desc]
    cols = resolve_columns(names, kind, overrides, file=name, problems=problems,
                           strict=kind == "votes")
    if cols is None:
        return None
    ok = True
    for opt, i in cols.items():
        allowed = DATE_TYPES if opt in ("date", "valid_from", "valid_to") else TEXT_TYPES
        if types[i] not in allowed:
            wanted = "dates or text" if allowed is DATE_TYPES else "text or whole numbers"
            problems.add(Problem("type", name, f"has the type {types[i]}; blocwatch reads "
                                 f"{wanted} here", "write this column as strings (or dates)",
                                 where="every row", column=names[i], value=types[i]))
            ok = False
    if not ok:
        return None

    def expr(i: int) -> str:
        if types[i] != "VARCHAR" and types[i] in DATE_TYPES:
            return f"CAST(CAST(#{i + 1} AS DATE) AS VARCHAR)"
        return f"NULLIF(trim(CAST(#{i + 1} AS VARCHAR)), '')"

    select, extra, headers = _select(cols, names, kind, body, expr)
    try:
        rows = store.stage_rows(table, f"SELECT {select} FROM read_parquet($path)",
                                {"path": str(path)}, **extra)
    except ReadError as exc:
        problems.add(Problem("file", name, f"cannot be read as Parquet ({exc.reason})",
                             "check that the file is a complete Parquet file"))
        return None
    staged = Staged(path, name, kind, "parquet", "long", table, headers, rows, scan_info.sha256)
    staged.placer = lambda rid, col: (None, f"row {rid + 1}", None)
    return staged


def stage_json(store: Store, path: Path, kind: str, table: str, body: str | None,
               overrides: dict[str, str], problems: Problems,
               scan_info: sniff.Scan) -> Staged | None:
    name = str(path)
    args = {"path": str(path)}
    try:
        desc = store.probe("SELECT column_name FROM (DESCRIBE SELECT * FROM read_json($path, "
                           "format='newline_delimited', records=true))", args)
    except ReadError:
        _broken_json(path, name, problems)
        return None
    names = [d[0] for d in desc]
    cols = resolve_columns(names, kind, overrides, file=name, problems=problems,
                           strict=kind == "votes")
    if cols is None:
        return None
    raw = f"{table}_json"
    args["columns"] = {names[i]: "JSON" for i in sorted(set(cols.values()))}
    try:
        store.stage_rows(raw, "SELECT * FROM read_json($path, format='newline_delimited', "
                         "records=true, columns=$columns)", args)
    except ReadError:
        _broken_json(path, name, problems)
        return None
    order = sorted(set(cols.values()))
    # file column -> position in the raw view, whose first column is rid
    position = {i: k + 2 for k, i in enumerate(order)}
    staged = Staged(path, name, kind, "jsonl", "long", table, {}, 0, scan_info.sha256)
    staged.placer = lambda rid, col: (sniff.json_lines(path, [rid]).get(rid), None, None)
    for opt, i in cols.items():
        n, rid = store.rows(f"SELECT count(*), min(rid) FROM {raw} WHERE "
                            f"json_type(#{position[i]}) IN ('OBJECT', 'ARRAY')")[0]
        if n:
            problems.add(Problem("type", name, "holds a nested object or list; blocwatch reads "
                                 "text or numbers here", "write a plain value in this field",
                                 line=sniff.json_lines(path, [rid]).get(rid), column=names[i],
                                 count=n))
    if problems_for(problems, name):
        return None
    select, extra, headers = _select(
        cols, names, kind, body,
        lambda i: f"NULLIF(trim(json_extract_string(#{position[i]}, '$')), '')")
    staged.rows = store.stage_rows(table, f"SELECT {select} FROM {raw} ORDER BY rid", **extra)
    staged.headers = headers
    return staged


def _broken_json(path: Path, name: str, problems: Problems) -> None:
    """Find the lines DuckDB could not read, with Python's parser (error path only)."""
    import json

    with open(path, "rb") as fh:
        if fh.read(4096).lstrip().startswith(b"["):
            problems.add(Problem("json", name, "holds one JSON array, not one object per line",
                                 "write JSON lines: one {…} object per line, no enclosing [ ]",
                                 line=1))
            return
    found = 0
    with open(path, "rb") as fh:
        for lineno, raw in enumerate(fh, start=1):
            if not raw.strip():
                continue
            try:
                value = json.loads(raw)
                why = None if isinstance(value, dict) else "is JSON but not an object {…}"
            except (ValueError, UnicodeDecodeError) as exc:
                why = f"is not valid JSON ({str(exc).split(':')[0]})"
            if why:
                found += 1
                if found <= _SHOWN:
                    text = raw.decode("utf-8", "replace")
                    problems.add(Problem("json", name, f"{why}: {show(text, 50)}",
                                         "write one complete JSON object per line",
                                         line=lineno, value=raw))
    if found > _SHOWN:
        problems.add(Problem("json", name, f"{found - _SHOWN:,} more lines that are not a JSON "
                             "object", "write one complete JSON object per line",
                             count=found - _SHOWN, rest=True))
    if not found:
        problems.add(Problem("json", name, "cannot be read as JSON lines",
                             "write one JSON object per line, every line the same fields"))
