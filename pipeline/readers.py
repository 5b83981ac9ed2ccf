"""Input files → one normalised, staged table per file (a temporary DuckDB table).

Every format and layout ends in the same shape: text columns named as the store names them
(``body, ballot_id, held_on, member_id, raw, group_name, name, title, item`` for votes;
``member_id, name, group_name, valid_from, valid_to`` for a roster; ``ballot_id, held_on,
title, item`` for a ballots file), values trimmed, blanks as NULL, in file order (``rid``).

Long files (one row per member per ballot) are read by DuckDB straight from disk — CSV,
Parquet, JSON lines — so they stream; ``.xlsx`` and the wide layout go through
:mod:`blocwatch.pipeline.wide`. Column names in a file are matched case-insensitively against
:data:`FIELDS`; ``--column FIELD=HEADER`` names one explicitly. Names from a file never reach SQL:
columns are addressed by position.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

from blocwatch.pipeline import sniff
from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.safety import show
from blocwatch.pipeline.store import ReadError, Store
from blocwatch.pipeline.validate import Problem, Problems

# option name -> (stage column, header names accepted, case-insensitive)
FIELDS: dict[str, tuple[str, tuple[str, ...]]] = {
    "body": ("body", ("body",)),
    "ballot": ("ballot_id", ("ballot_id", "ballot", "ballot_no", "vote_id", "division",
                             "division_id", "roll_call", "rollcall")),
    "date": ("held_on", ("held_on", "date", "ballot_date", "vote_date")),
    "member": ("member_id", ("member_id", "member", "mp_id", "voter", "voter_id")),
    "vote": ("raw", ("vote", "choice", "raw", "code", "position", "vote_code", "score",
                     "answer")),
    "group": ("group_name", ("group_name", "group", "party", "faction", "caucus")),
    "name": ("name", ("name", "member_name", "full_name")),
    "title": ("title", ("title", "ballot_title", "motion")),
    "item": ("item", ("item", "agenda_item")),
    "valid_from": ("valid_from", ("valid_from", "from", "since", "start")),
    "valid_to": ("valid_to", ("valid_to", "to", "until", "end")),
    # Scale declarations (blocwatch.pipeline.scales): a spec, or a kind with range/options.
    "scale": ("scale", ("scale",)),
    "scale_min": ("scale_min", ("scale_min",)),
    "scale_max": ("scale_max", ("scale_max",)),
    "options": ("options", ("options",)),
}
SCALE_OPTIONAL = ("scale", "scale_min", "scale_max", "options")
# per kind of file: (required fields, optional fields, extra accepted names)
KINDS: dict[str, tuple[tuple[str, ...], tuple[str, ...], dict[str, tuple[str, ...]]]] = {
    "votes": (("ballot", "member", "vote"), ("body", "date", "group", "name", "title", "item",
                                             *SCALE_OPTIONAL), {}),
    "roster": (("member", "group"), ("body", "name", "valid_from", "valid_to"),
               {"member": ("id",)}),
    "ballots": (("ballot", "date"), ("body", "title", "item", *SCALE_OPTIONAL),
                {"ballot": ("id",)}),
    "wide": (("member",), ("body", "name", "group"), {}),  # the member columns of a wide sheet
}
FORMATS = {".csv": "csv", ".tsv": "csv", ".txt": "csv", ".parquet": "parquet",
           ".pq": "parquet", ".jsonl": "jsonl", ".ndjson": "jsonl", ".json": "jsonl",
           ".xlsx": "xlsx", ".xlsm": "xlsx"}
MAX_LINE_BYTES = 1 << 20

TEXT_TYPES = ("VARCHAR", "TINYINT", "SMALLINT", "INTEGER", "BIGINT", "HUGEINT", "UTINYINT",
              "USMALLINT", "UINTEGER", "UBIGINT", "UHUGEINT", "BOOLEAN")
DATE_TYPES = ("DATE", "TIMESTAMP", "TIMESTAMP_NS", "TIMESTAMP_MS", "TIMESTAMP_S",
              "TIMESTAMP WITH TIME ZONE", "VARCHAR")

Placer = Callable[[int, "str | None"], "tuple[int | None, str | None, str | None]"]


@dataclass
class Staged:
    """One input file staged as a temporary table, with a way back to its lines or cells."""

    path: Path
    name: str  # the file as the user named it, for messages
    kind: str  # votes | roster | ballots
    fmt: str
    layout: str
    table: str
    headers: dict[str, str]  # stage column -> the file's column name
    rows: int
    sha256: str
    placer: Placer = field(repr=False, default=lambda rid, col: (None, None, col))
    nulls: dict[str, int] = field(default_factory=dict)  # blank values per column (checks)

    def place(self, rid: int, column: str | None) -> tuple[int | None, str | None, str | None]:
        """(line, where, column header) of staged row ``rid`` for a message."""
        header = self.headers.get(column, column) if column else None
        line, where, override = self.placer(rid, column)
        return line, where, override or header


def parse_columns(pairs: dict[str, str] | None) -> dict[str, str]:
    """``{field or stage column: header}`` → ``{field: header}``; unknown fields are an error."""
    out: dict[str, str] = {}
    by_stage = {stage: opt for opt, (stage, _) in FIELDS.items()}
    for key, header in (pairs or {}).items():
        opt = key if key in FIELDS else by_stage.get(key)
        if opt is None or not str(header).strip():
            raise UsageError(f"--column {key}={header}", "names no field" if opt is None else
                             "gives no column name",
                             f"use FIELD=HEADER with FIELD one of {', '.join(FIELDS)}")
        out[opt] = str(header).strip()
    return out


def parse_column_options(items) -> dict[str, str]:
    """``["member=MP_ID", ...]`` (the repeatable ``--column`` option) → ``{field: header}``."""
    pairs: dict[str, str] = {}
    for item in items or ():
        key, sep, header = str(item).partition("=")
        if not sep:
            raise UsageError(f"--column {item}", "is not FIELD=HEADER",
                             "write e.g. --column member=MP_ID")
        pairs[key.strip()] = header
    return parse_columns(pairs)


def file_format(path: Path) -> str | None:
    return FORMATS.get(path.suffix.lower())


def resolve_columns(names: list[str], kind: str, overrides: dict[str, str], *, file: str,
                    problems: Problems, strict: bool = True) -> dict[str, int] | None:
    """Map fields to column positions; record problems and return ``None`` if one is missing.

    ``strict``: a ``--column`` override must exist in this file (votes files); otherwise it is
    used only where the file has that column (roster and ballots files).
    """
    required, optional, extra = KINDS[kind]
    folded = [n.strip().casefold() for n in names]
    found: dict[str, int] = {}
    missing: list[str] = []
    ok = True
    for opt in required + optional:
        want = overrides.get(opt)
        if want is not None:
            hits = [i for i, n in enumerate(names) if n.strip() == want] or \
                   [i for i, n in enumerate(folded) if n == want.casefold()]
            if hits:
                found[opt] = hits[0]
                continue
            if strict:
                problems.add(Problem("header", file, f"has no column {show(want)} (named with "
                                     f"--column {opt}={want}); its columns are {_list(names)}",
                                     "check the spelling of the column name", line=1))
                ok = False
                continue
        aliases = FIELDS[opt][1] + extra.get(opt, ())
        hits = [i for i, n in enumerate(folded) if n in aliases]
        if len(hits) > 1:
            problems.add(Problem("header", file, f"columns {_list([names[i] for i in hits])} "
                                 f"could each be the {opt} column", f"rename all but one, or pass "
                                 f"--column {opt}=HEADER", line=1, column=names[hits[1]]))
            ok = False
        elif hits:
            found[opt] = hits[0]
        elif opt in required:
            missing.append(opt)
    if missing:
        accepted = "; ".join(f"{opt}: {', '.join(FIELDS[opt][1] + extra.get(opt, ()))}"
                             for opt in missing)
        if len(names) == 1:
            problems.add(Problem("header", file, f"has a single column {show(names[0], 40)}, so "
                                 f"its delimiter is not one of , ; tab |{_guess(names[0])}",
                                 "save the file as CSV with commas between the columns",
                                 line=1, value=names[0]))
        else:
            problems.add(Problem("header", file, f"has no {' or '.join(missing)} column; its "
                                 f"columns are {_list(names)} (accepted names — {accepted})",
                                 f"rename the column, or pass --column {missing[0]}=HEADER",
                                 line=1, value=names))
        ok = False
    return found if ok else None


def _guess(header: str) -> str:
    """' (it looks like ':')' when one punctuation character clearly splits the header."""
    counts = {c: header.count(c) for c in set(header) if not c.isalnum() and c not in "_ -\"'"}
    if counts:
        best = max(counts, key=counts.get)
        if counts[best] >= 2:
            return f" (it looks like {show(best)})"
    return ""


def _list(names: list[str]) -> str:
    shown = ", ".join(show(n, 30) for n in names[:12])
    return shown + (f" and {len(names) - 12} more" if len(names) > 12 else "")


def _text(i: int) -> str:
    return f"NULLIF(trim(c{i}), '')"


def stage_file(store: Store, path: Path, *, kind: str, table: str, body: str | None,
               overrides: dict[str, str], problems: Problems, layout: str = "long",
               scan_info: sniff.Scan | None = None) -> Staged | None:
    """Stage one file; return ``None`` (with problems recorded) if it cannot be read at all."""
    name = str(path)
    fmt = file_format(path)
    if fmt is None:
        suffix = path.suffix or "(none)"
        hint = " (old Excel format)" if path.suffix.lower() == ".xls" else ""
        problems.add(Problem("file", name, f"has the extension {show(suffix)}{hint}, which "
                             "blocwatch does not read", "save it as .csv, .parquet, .jsonl or "
                             ".xlsx"))
        return None
    scan_info = scan_info or sniff.scan(path)
    if scan_info.size == 0 or (fmt != "parquet" and fmt != "xlsx" and not scan_info.head.strip(
            b" \t\r\n\xef\xbb\xbf")):
        problems.add(Problem("file", name, "is empty", "export the data again; the file holds "
                             "no header and no rows", line=1 if fmt in ("csv", "jsonl") else None))
        return None
    if fmt in ("csv", "jsonl") and not _text_file_ok(path, name, scan_info, problems):
        return None
    if layout == "wide" or fmt == "xlsx":
        from blocwatch.pipeline import wide

        return wide.stage_grid(store, path, kind=kind, table=table, body=body, fmt=fmt,
                               layout=layout, overrides=overrides, problems=problems,
                               scan_info=scan_info)
    stager = {"csv": _stage_csv, "parquet": _stage_parquet, "jsonl": _stage_json}[fmt]
    staged = stager(store, path, kind, table, body, overrides, problems, scan_info)
    if staged is not None and staged.rows == 0 and not problems_for(problems, name):
        problems.add(Problem("file", name, "has a header but no data rows",
                             "export the rows too, or leave the file out", line=2))
    return staged


def problems_for(problems: Problems, name: str) -> list[Problem]:
    return [p for p in problems.items if p.file == name]


def _text_file_ok(path: Path, name: str, scan_info: sniff.Scan, problems: Problems) -> bool:
    enc = sniff.bom_encoding(scan_info.head)
    if enc:
        problems.add(Problem("encoding", name, f"is encoded as {enc} (it starts with a {enc} "
                             "byte-order mark)", "save it as UTF-8 (in a spreadsheet: CSV UTF-8)",
                             line=1))
        return False
    if scan_info.nul_count:
        line = scan_info.line_at(path, scan_info.first_nul)
        hint = " — it may be UTF-16 text" if scan_info.nul_count * 4 > scan_info.size else ""
        problems.add(Problem("nul", name, f"contains {scan_info.nul_count} NUL byte"
                             f"{'s' if scan_info.nul_count > 1 else ''} (first on this line)"
                             f"{hint}", "save the file as plain UTF-8 text; NUL bytes come from "
                             "binary or UTF-16 exports", line=line, count=scan_info.nul_count))
        return False
    return True


def _stage_csv(store: Store, path: Path, kind: str, table: str, body: str | None,
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
    staged = Staged(path, name, kind, "csv", "long", table, headers, rows, scan_info.sha256)

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
    for pos, col, etype, csv_line, message in rows:
        kind, why, fix = _REJECT_KINDS.get(etype, ("shape", f"cannot be read ({message})",
                                                   "check the quoting and delimiters"))
        if etype in ("MISSING COLUMNS", "TOO MANY COLUMNS"):
            found = message.rsplit("Found:", 1)[-1].strip().split()[0] if "Found:" in message \
                else "?"
            why = f"has {found} fields, the header {len(names)}"
        shown[kind] = shown.get(kind, 0) + 1
        if shown[kind] > 20:  # enough examples; count the rest in the last one
            problems.items[-1] = _bump(problems.items[-1])
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


def _bump(p: Problem) -> Problem:
    return Problem(p.kind, p.file, p.why, p.fix, p.line, p.where, p.column, p.value, p.count + 1)


def _stage_parquet(store: Store, path: Path, kind: str, table: str, body: str | None,
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


def _stage_json(store: Store, path: Path, kind: str, table: str, body: str | None,
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
                if found <= 20:
                    text = raw.decode("utf-8", "replace")
                    problems.add(Problem("json", name, f"{why}: {show(text, 50)}",
                                         "write one complete JSON object per line",
                                         line=lineno, value=raw))
                else:
                    problems.items[-1] = _bump(problems.items[-1])
    if not found:
        problems.add(Problem("json", name, "cannot be read as JSON lines",
                             "write one JSON object per line, every line the same fields"))
