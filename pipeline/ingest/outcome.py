"""What a load did, file by file: the summary lines ``ingest`` prints and ``--check`` adds to.

Each votes file gets one line of counts and one line saying what each raw vote code became
(blank cells included, as absent), so an analyst can vouch for every mapping.
"""

from __future__ import annotations

from dataclasses import dataclass, field

from blocwatch.pipeline.ingest.validate import Problems
from blocwatch.pipeline.safety import show

CODES_SHOWN = 30  # raw codes listed per file in the summary; the rest are counted

@dataclass
class FileResult:
    """What happened to one input file."""

    path: str
    sha256: str
    rows: int
    status: str  # 'loaded' | 'unchanged' | 'checked' | 'failed'
    kind: str = "votes"  # votes | roster | ballots
    bodies: tuple[str, ...] = ()
    ballots: int = 0
    members: int = 0
    codes: list[tuple] = field(default_factory=list)  # (raw code, choice or None, cells)
    unit: str = "row"  # what one of ``rows`` is: a row, or a cell of a wide sheet

    def code_line(self) -> str | None:
        """What each raw code of the file became, with counts (blank cells included)."""
        if not self.codes:
            return None
        parts = [f"{'(blank)' if raw is None else show(raw)} → {choice or 'not mapped'} "
                 f"×{n:,}" for raw, choice, n in self.codes[:CODES_SHOWN]]
        rest = self.codes[CODES_SHOWN:]
        if rest:
            parts.append(f"and {len(rest):,} more codes in {sum(n for *_, n in rest):,} cells")
        return f"  codes in {self.path}: " + ", ".join(parts)

    def summary(self) -> str:
        short = self.sha256[:12]
        if self.status == "unchanged":
            return (f"unchanged {self.path}: already loaded (sha256 {short}…), nothing written")
        body = ", ".join(self.bodies)
        rows, ballots, members = (_n(self.rows, self.unit), _n(self.ballots, "ballot"),
                                  _n(self.members, "member"))
        what = {"votes": f"{rows}, {ballots}, {members}",
                "roster": f"{_n(self.rows, 'roster row')}, {members}",
                "ballots": f"{rows}, {ballots}"}[self.kind]
        return f"{self.status} {self.path}: {what}" + (f" (body {body})" if body else "") + \
            f", sha256 {short}…"


def _n(count: int, word: str) -> str:
    return f"{count:,} {word}{'' if count == 1 else 's'}"


@dataclass
class IngestReport:
    """The result of one :func:`ingest_files` call."""

    files: list[FileResult]
    problems: Problems = field(default_factory=Problems)
    check_only: bool = False
    votes_written: int = 0
    notes: list[str] = field(default_factory=list)

    @property
    def rows(self) -> int:
        return sum(f.rows for f in self.files if f.status == "loaded")

    @property
    def loaded(self) -> int:
        return sum(f.status == "loaded" for f in self.files)

    @property
    def unchanged(self) -> int:
        return sum(f.status == "unchanged" for f in self.files)

    def lines(self) -> list[str]:
        """One summary line per file (then the check report in check mode)."""
        out = []
        for f in self.files:
            if not (self.check_only and f.status == "checked" and self.problems):
                out.append(f.summary())
            if f.code_line():
                out.append(f.code_line())
        if self.check_only:
            out += self.problems.report({f.path: _n(f.rows, f.unit) for f in self.files
                                         if f.status == "checked" and f.rows})
        return out + self.notes
