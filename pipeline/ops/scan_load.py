"""Load a rebuild's scan — every new or changed source file — as one transaction.

Two passes over the pending files, body by body, changed files first (they replace what they
said before), then new ones:

1. **check**: each group is loaded with ``check_only`` outside any transaction. DuckDB aborts
   a transaction when a read fails, so a file it cannot read must fail here, where its message
   (file, line, column, value) can still be worked out. Nothing is written.
2. **load**: every group inside one store transaction. A problem only the combination shows (a
   new file contradicting a corrected one) rolls back the whole scan.

Either way the error names the file that stopped the rest and says that nothing of the scan was
loaded. Ingest's messages speak in ``ingest`` flags; a rebuild takes those settings from the
body's table in ``blocwatch.toml``, so :func:`config_fix` rewrites the suggestion into the key
to set there.
"""

from __future__ import annotations

import re
from dataclasses import dataclass
from pathlib import Path

from blocwatch.pipeline.config import Config, body_ingest_options
from blocwatch.pipeline.errors import BlocwatchError
from blocwatch.pipeline.store.database import Store

# ingest flag (with the placeholder it is shown with) -> the body key that sets it
_FLAG_KEYS = [
    (r"--replace\b", lambda m: "replace = true"),
    (r"--codes(?: FILE)?\b", lambda m: "codes = { \"RAW\" = \"yes\" } (or a raw,choice file)"),
    (r"--column ([a-z_]+)=(\S+?)(?=[,;)]?(?:\s|$))",
     lambda m: f"columns = {{ {m.group(1)} = \"{m.group(2)}\" }}"),
    (r"--column(?: FIELD=HEADER)?\b", lambda m: "columns = { FIELD = \"HEADER\" }"),
    (r"--members(?: FILE)?\b", lambda m: "members = \"FILE\""),
    (r"--ballots(?: FILE)?\b", lambda m: "ballots = \"FILE\""),
    (r"--layout (long|wide|long\|wide)\b", lambda m: f"layout = \"{m.group(1)}\""),
    (r"--scale(?: SPEC)?\b", lambda m: "scale = \"SPEC\""),
    (r"--date-format(?: with (?:the|their) form)?", lambda m: "date_format = \"FORM\""),
    (r"--sheet(?: with the sheet that holds the votes)?", lambda m: "sheet = \"NAME\""),
    (r"--sheet all\b", lambda m: "sheet = \"all\""),
]
_QUOTED = re.compile(r"'blocwatch [^']*'")


def config_fix(text: str, body: str, cfg: Config) -> str:
    """``text`` with each ingest flag outside a quoted command turned into its config key."""
    table = f"[bodies.\"{body}\"] of {cfg.path or 'blocwatch.toml'}"
    parts = re.split(f"({_QUOTED.pattern})", text)
    for i, part in enumerate(parts):
        if _QUOTED.fullmatch(part):
            continue  # a whole command to run, e.g. 'blocwatch ingest --check': valid as is
        for pattern, key in _FLAG_KEYS:
            part = re.sub(r"(?:pass |with |add )?" + pattern,
                          lambda m, key=key: f"set {key(m)} in {table}", part)
        parts[i] = part
    return "".join(parts)


@dataclass(frozen=True)
class Group:
    body: str
    state: str  # "changed" or "new"
    replace: bool
    sources: tuple  # SourceFile


def _groups(cfg: Config, pending: list) -> list[Group]:
    out = []
    for name in dict.fromkeys(s.body for s in pending):
        replace_new = bool(cfg.bodies.get(name, {}).get("replace", False))
        for state, replace in (("changed", True), ("new", replace_new)):
            files = tuple(s for s in pending if s.body == name and s.state == state)
            if files:
                out.append(Group(name, state, replace, files))
    return out


def _load(store: Store, cfg: Config, group: Group, *, check_only: bool):
    from blocwatch.pipeline.ingest.load import ingest_files

    return ingest_files(store, [s.path for s in group.sources if s.kind == "votes"],
                        body=group.body, replace=group.replace, check_only=check_only,
                        codes_via=f"[bodies.\"{group.body}\"] of {cfg.path or 'blocwatch.toml'}",
                        **body_ingest_options(group.body, cfg))


def _stopped(exc: BlocwatchError, group: Group, cfg: Config, pending: list) -> BlocwatchError:
    """The same error, its fix in config keys, saying the scan was loaded not at all."""
    others = len(pending) - 1
    files = ", ".join(Path(s.path).name for s in group.sources)
    rest = (f"; nothing of this rebuild's {len(pending)} new or changed file(s) was loaded "
            f"(stopped by {group.state} {files})" if others else
            "; nothing was loaded")
    fix = config_fix(exc.fix, group.body, cfg) if exc.fix else "fix the file"
    new = type(exc).__new__(type(exc))  # same class and exit code, without its constructor
    new.__dict__.update(exc.__dict__)
    new.why, new.fix = config_fix(exc.why, group.body, cfg), fix + rest
    new.args = (new.line(),)
    return new


def load_scan(store: Store, cfg: Config, pending: list) -> tuple[list, dict[str, str]]:
    """Load every pending file of the scan, or none of them.

    Returns the files loaded and, by path, each votes file's line saying what its raw codes
    became (as ``ingest`` prints it), so a rebuild's loads can be vouched for as well.
    """
    groups = _groups(cfg, pending)
    changed_before = set()
    for group in groups:
        try:
            report = _load(store, cfg, group, check_only=True)
        except BlocwatchError as exc:
            raise _stopped(exc, group, cfg, pending) from exc
        problems = getattr(report, "problems", None)
        # Against the store as it stands a new file may contradict what a changed file of
        # the same body is about to correct: the load pass below judges that case.
        only_conflicts = problems and all(p.kind == "conflict" for p in problems.items)
        if problems and not (only_conflicts and group.body in changed_before):
            raise _stopped(problems.first_error(), group, cfg, pending)
        if group.state == "changed":
            changed_before.add(group.body)
    done, code_lines = [], {}
    current = groups[0] if groups else None
    try:
        with store.transaction():
            for current in groups:
                report = _load(store, cfg, current, check_only=False)
                done += current.sources
                code_lines |= {f.path: f.code_line() for f in report.files if f.code_line()}
    except BlocwatchError as exc:
        raise _stopped(exc, current, cfg, pending) from exc
    return done, code_lines
