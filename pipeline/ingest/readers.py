"""Input files → one normalised, staged table per file (a temporary DuckDB table).

Every format and layout ends in the same shape: text columns named as the store names them
(``body, ballot_id, held_on, member_id, raw, group_name, name, title, item, topic`` for
votes; ``member_id, name, group_name, valid_from, valid_to`` for a roster; ``ballot_id,
held_on, title, item, topic`` for a ballots file), values trimmed, blanks as NULL, in file
order (``rid``).

Long files (one row per member per ballot) are read by DuckDB straight from disk — CSV,
Parquet, JSON lines — so they stream; ``.xlsx`` and the wide layout go through
:mod:`blocwatch.pipeline.ingest.wide`. Column names in a file are matched case-insensitively against
:data:`FIELDS`; ``--column FIELD=HEADER`` names one explicitly. Names from a file never reach SQL:
columns are addressed by position.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from pathlib import Path

from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.ingest import sniff
from blocwatch.pipeline.ingest.validate import Problem, Problems
from blocwatch.pipeline.safety import show
from blocwatch.pipeline.store.database import Store

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
    # One topic per ballot (policy area, committee, ...): per-topic and agenda-standardised
    # measures (blocwatch.metrics.change.agenda).
    "topic": ("topic", ("topic", "policy_area")),
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
                                             "topic", *SCALE_OPTIONAL), {}),
    "roster": (("member", "group"), ("body", "name", "valid_from", "valid_to"),
               {"member": ("id",)}),
    "ballots": (("ballot", "date"), ("body", "title", "item", "topic", *SCALE_OPTIONAL),
                {"ballot": ("id",)}),
    "wide": (("member",), ("body", "name", "group"), {}),  # the member columns of a wide sheet
}
FORMATS = {".csv": "csv", ".tsv": "csv", ".txt": "csv", ".parquet": "parquet",
           ".pq": "parquet", ".jsonl": "jsonl", ".ndjson": "jsonl", ".json": "jsonl",
           ".xlsx": "xlsx", ".xlsm": "xlsx"}
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
    rejected: int = 0  # rows the reader refused (not staged; each is a problem)

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
                    problems: Problems, strict: bool = True, where: str | None = None
                    ) -> dict[str, int] | None:
    """Map fields to column positions; record problems and return ``None`` if one is missing.

    ``strict``: a ``--column`` override must exist in this file (votes files); otherwise it is
    used only where the file has that column (roster and ballots files). ``where``: the header's
    place in a spreadsheet (``sheet 'Votes', row 3``); without it, line 1 of a delimited file.
    """
    at = {"line": 1} if where is None else {"where": where}
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
                                     "check the spelling of the column name", **at))
                ok = False
                continue
        aliases = FIELDS[opt][1] + extra.get(opt, ())
        hits = [i for i, n in enumerate(folded) if n in aliases]
        if len(hits) > 1:
            problems.add(Problem("header", file, f"columns {_list([names[i] for i in hits])} "
                                 f"could each be the {opt} column", f"rename all but one, or pass "
                                 f"--column {opt}=HEADER", **at, column=names[hits[1]]))
            ok = False
        elif hits:
            found[opt] = hits[0]
        elif opt in required:
            missing.append(opt)
    if missing:
        accepted = "; ".join(f"{opt}: {', '.join(FIELDS[opt][1] + extra.get(opt, ()))}"
                             for opt in missing)
        if len(names) == 1 and where is None:  # delimiter advice for delimited text only
            problems.add(Problem("header", file, f"has a single column {show(names[0], 40)}, so "
                                 f"its delimiter is not one of , ; tab |{_guess(names[0])}",
                                 "save the file as CSV with commas between the columns",
                                 **at, value=names[0]))
        else:
            problems.add(Problem("header", file, f"has no {' or '.join(missing)} column; its "
                                 f"columns are {_list(names)} (accepted names — {accepted})",
                                 f"rename the column, or pass --column {missing[0]}=HEADER",
                                 **at, value=names))
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


def stage_file(store: Store, path: Path, *, kind: str, table: str, body: str | None,
               overrides: dict[str, str], problems: Problems, layout: str = "long",
               scan_info: sniff.Scan | None = None, sheet: str | None = None,
               notes: list[str] | None = None) -> Staged | None:
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
        from blocwatch.pipeline.ingest import wide

        return wide.stage_grid(store, path, kind=kind, table=table, body=body, fmt=fmt,
                               layout=layout, overrides=overrides, problems=problems,
                               scan_info=scan_info, sheet=sheet, notes=notes)
    from blocwatch.pipeline.ingest import formats

    stager = {"csv": formats.stage_csv, "parquet": formats.stage_parquet,
              "jsonl": formats.stage_json}[fmt]
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
