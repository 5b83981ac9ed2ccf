"""Synthetic roll calls for the benchmark: an invented body of any size, written in chunks.

Members sit on one ideological axis around their group's centre; each ballot cuts the axis at a
random point, and a member votes yes on the side the ballot favours (plus noise). A share of
members is absent or abstains on each ballot. Nothing describes a real body or person. Files are
written one period at a time (pyarrow), so 22.5 million rows never sit in memory as objects.
"""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date, timedelta
from pathlib import Path

import numpy as np
import pyarrow as pa
import pyarrow.csv as pacsv
import pyarrow.parquet as pq

GROUPS = ("Heron Bloc", "Quarry Union", "Sable Front", "Meadow List")
GROUP_SHARES = (0.40, 0.33, 0.17, 0.10)
CENTRES = (-1.0, 1.0, 0.1, 0.4)
CODES = np.array(["absent", "yes", "no", "abstain"])  # index = vote code (MISSING=0 …)


@dataclass(frozen=True)
class Size:
    periods: int
    members: int
    ballots: int  # per period

    @property
    def rows(self) -> int:
        return self.periods * self.members * self.ballots


@dataclass(frozen=True)
class SynthFiles:
    votes: Path
    roster: Path
    rows: int


def vote_matrix(members: int, ballots: int, *, seed: int, separation: float = 1.0,
                absent: float = 0.08, abstain: float = 0.03) -> tuple[np.ndarray, np.ndarray]:
    """(labels (n,), votes (n, b) int8 codes) of one synthetic period."""
    rng = np.random.default_rng(seed)
    labels = rng.choice(len(GROUPS), size=members, p=GROUP_SHARES)
    x = separation * np.asarray(CENTRES)[labels] + rng.normal(0, 0.5, members)
    return labels, period_votes(rng, x, ballots, absent=absent, abstain=abstain)


def period_votes(rng: np.random.Generator, x: np.ndarray, ballots: int, *, absent: float,
                 abstain: float) -> np.ndarray:
    cut = rng.normal(0, 0.6, ballots)
    direction = np.where(rng.random(ballots) < 0.5, 1.0, -1.0)
    utility = direction * (x[:, None] - cut) + rng.normal(0, 0.6, (x.size, ballots))
    votes = np.where(utility > 0, 1, 2).astype(np.int8)
    roll = rng.random(votes.shape)
    votes[roll < abstain] = 3
    votes[(roll >= abstain) & (roll < abstain + absent)] = 0
    return votes


def _ids(prefix: str, n: int) -> np.ndarray:
    return np.char.add(prefix, np.char.zfill(np.arange(1, n + 1).astype(str), 4))


def period_table(year: int, ids: np.ndarray, votes: np.ndarray, rng) -> pa.Table:
    """Long rows (ballot_id, date, title, member_id, vote) of one year."""
    n, b = votes.shape
    days = np.sort(rng.integers(0, 360, b))
    dates = np.array([date(year, 1, 1) + timedelta(days=int(d)) for d in days])
    ballot_ids = np.char.add(f"{year}-", np.char.zfill(np.arange(1, b + 1).astype(str), 4))
    # Column-major over (member, ballot) so each ballot's rows are together.
    return pa.table({
        "ballot_id": pa.array(np.repeat(ballot_ids, n)),
        "date": pa.array(np.repeat(dates, n), type=pa.date32()),
        "title": pa.array(np.repeat(np.char.add("Motion ", ballot_ids), n)),
        "member_id": pa.array(np.tile(ids, b)),
        "vote": pa.array(CODES[votes.T.ravel()]),
    })


def write_body(out_dir: str | Path, size: Size, *, fmt: str = "parquet", seed: int = 11,
               first_year: int = 1971) -> SynthFiles:
    """Write ``votes.<fmt>`` (long layout) and ``roster.csv`` for ``size`` into ``out_dir``.

    The same members sit in every period; the groups drift apart over the years.
    """
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    rng = np.random.default_rng(seed)
    labels = rng.choice(len(GROUPS), size=size.members, p=GROUP_SHARES)
    offset = rng.normal(0, 0.5, size.members)
    ids = _ids("S", size.members)
    roster = pa.table({"member_id": pa.array(ids),
                       "name": pa.array(np.char.add("Seat ", ids)),
                       "group": pa.array(np.asarray(GROUPS)[labels])})
    roster_path = out / "roster.csv"
    pacsv.write_csv(roster, roster_path)
    votes_path = out / f"votes.{fmt}"
    writer = None
    try:
        for p in range(size.periods):
            separation = 0.6 + 1.2 * p / max(1, size.periods - 1)
            x = separation * np.asarray(CENTRES)[labels] + offset
            votes = period_votes(rng, x, size.ballots, absent=0.08, abstain=0.03)
            table = period_table(first_year + p, ids, votes, rng)
            if writer is None:
                writer = pq.ParquetWriter(votes_path, table.schema) if fmt == "parquet" \
                    else pacsv.CSVWriter(votes_path, table.schema)
            writer.write_table(table)
    finally:
        if writer is not None:
            writer.close()
    return SynthFiles(votes_path, roster_path, size.rows)


def append_period(files: SynthFiles, size: Size, *, year: int, seed: int,
                  fmt: str = "parquet") -> Path:
    """Write one more year for the same members to ``votes_<year>.<fmt>`` (for rebuilds)."""
    rng = np.random.default_rng(seed)
    roster = pacsv.read_csv(files.roster)
    ids = np.asarray(roster["member_id"].to_pylist())
    labels = np.array([GROUPS.index(g) for g in roster["group"].to_pylist()])
    x = 1.8 * np.asarray(CENTRES)[labels] + rng.normal(0, 0.5, ids.size)
    votes = period_votes(rng, x, size.ballots, absent=0.08, abstain=0.03)
    table = period_table(year, ids, votes, rng)
    path = files.votes.with_name(f"votes_{year}.{fmt}")
    if fmt == "parquet":
        pq.write_table(table, path)
    else:
        pacsv.write_csv(table, path)
    return path
