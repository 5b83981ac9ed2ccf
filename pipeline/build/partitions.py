"""Hive-partitioned Parquet: period inputs that workers read directly, results they write back.

Layout (``root`` is any folder a worker can read, e.g. a shared file system)::

    root/body=<body>/period=<period>/votes.parquet      one period's votes, long
    results/body=<body>/period=<period>/{metrics,members,groups,subsets,edges}.parquet + period.json

Names are percent-encoded in folder names (``body=Assembly%20of%20X``). ``votes.parquet`` holds
one row per member × ballot with the columns ``member_id, name, group, ballot_id, item, held_on,
choice`` (choice: yes/no/abstain/absent; ``group``: the member's group in this period) and
optionally ``topic`` (the ballot's topic); an optional ``period.json`` gives ``start``, ``end``
(else the first and last ballot dates) and ``dropped``. :func:`write_vote_partitions` writes
both from a store; any tool can. Yes/no ballots only: scored ballots are built from the store.

A worker turns its partition into the vote matrix, runs
:func:`~blocwatch.pipeline.build.compute.compute_period` and writes the result partition; the one
process that holds the store merges each result in as it returns (:func:`build_partitions`),
so no worker ever opens the store. This module reads Parquet with pyarrow, never DuckDB.
"""

from __future__ import annotations

import json
import time
from dataclasses import dataclass
from datetime import date
from pathlib import Path
from urllib.parse import quote, unquote

import numpy as np
import pandas as pd

from blocwatch.pipeline.build.matrices import CHOICE_CODES, VoteMatrix
from blocwatch.pipeline.errors import BadInputError, UsageError
from blocwatch.pipeline.options import Period

VOTE_COLUMNS = ["member_id", "name", "group", "ballot_id", "item", "held_on", "choice"]
_CHOICES = {code: choice for choice, code in CHOICE_CODES.items()}

RESULT_FRAMES = ("metrics", "members", "groups", "subsets", "edges")  # one Parquet file each


def partition_dir(root: str | Path, body: str, period: str) -> Path:
    return Path(root) / f"body={quote(body, safe='')}" / f"period={quote(period, safe='')}"


def list_partitions(root: str | Path) -> list[tuple[str, str, Path]]:
    """(body, period, folder) of every ``body=…/period=…`` folder holding votes.parquet."""
    root = Path(root)
    if not root.is_dir():
        raise UsageError(f"partition folder {root}", "does not exist",
                         "pass the folder that holds the body=…/period=… folders")
    found = []
    for path in sorted(root.glob("body=*/period=*/votes.parquet")):
        body = unquote(path.parent.parent.name.partition("=")[2])
        period = unquote(path.parent.name.partition("=")[2])
        found.append((body, period, path.parent))
    return found


def matrix_frame(vm: VoteMatrix, held_on) -> pd.DataFrame:
    """The long rows of a vote matrix (every member × ballot, absences included);
    ``held_on`` gives each ballot's date."""
    n, b = vm.votes.shape
    return pd.DataFrame({
        "member_id": np.repeat(vm.member_ids, b), "name": np.repeat(vm.names, b),
        "group": np.repeat(vm.groups, b), "ballot_id": np.tile(vm.ballot_ids, n),
        "item": np.tile(vm.items, n), "held_on": np.tile(np.asarray(held_on), n),
        "choice": pd.Series(vm.votes.ravel()).map(_CHOICES).to_numpy(object),
        **({} if vm.topics is None else {"topic": np.tile(vm.topics, n)})})


def write_vote_partitions(store, root: str | Path, *, period_spec: str = "year",
                          body: str | None = None) -> list[Path]:
    """Write each body × period of ``store`` as a vote partition under ``root`` (plus
    ``period.json`` with the period's bounds and the members left out for want of a group)."""
    from blocwatch.pipeline.build.planner import plan_body
    from blocwatch.pipeline.store.ballots import ballot_dates
    from blocwatch.pipeline.store.bodies import require_body

    written = []
    for b in require_body(store, body):
        dates = ballot_dates(store, b)
        for vm in plan_body(store, b, period_spec).matrices(store):
            period = vm.period
            folder = partition_dir(root, b, period.name)
            folder.mkdir(parents=True, exist_ok=True)
            frame = matrix_frame(vm, [dates[x] for x in vm.ballot_ids])
            frame.to_parquet(folder / "votes.parquet", index=False)
            meta = {"start": str(period.start), "end": str(period.end), "dropped": vm.dropped}
            (folder / "period.json").write_text(json.dumps(meta), encoding="utf-8")
            written.append(folder)
    return written


def read_partition(folder: str | Path, body: str, period_name: str) -> VoteMatrix:
    """A vote partition as the period's vote matrix (members and ballots in store order)."""
    path = Path(folder) / "votes.parquet"
    try:
        frame = pd.read_parquet(path)
    except (OSError, ValueError) as exc:
        raise BadInputError(f"partition {path}", f"cannot be read ({exc})",
                            "check that it is a Parquet file written as documented") from exc
    missing = set(VOTE_COLUMNS) - set(frame.columns)
    if missing:
        raise BadInputError(f"partition {path}", f"lacks column(s) {sorted(missing)}",
                            f"write the columns {', '.join(VOTE_COLUMNS)}")
    frame["held_on"] = pd.to_datetime(frame["held_on"]).dt.date
    frame["item"] = frame["item"].fillna("").astype(str)
    # An optional topic column (ballot topics) rides along with the ballots.
    frame["topic"] = frame["topic"].fillna("").astype(str) if "topic" in frame else ""
    ballots = (frame.drop_duplicates("ballot_id")[["ballot_id", "item", "topic", "held_on"]]
               .sort_values(["held_on", "ballot_id"], kind="stable"))
    members = frame.drop_duplicates("member_id").sort_values("member_id")
    m_index = pd.Index(members["member_id"]).get_indexer(frame["member_id"])
    b_index = pd.Index(ballots["ballot_id"]).get_indexer(frame["ballot_id"])
    votes = np.zeros((len(members), len(ballots)), dtype=np.int8)
    votes[m_index, b_index] = frame["choice"].map(CHOICE_CODES).fillna(0).to_numpy(np.int8)
    # The period's bounds and members left out, when the writer recorded them.
    meta_path = Path(folder) / "period.json"
    meta = json.loads(meta_path.read_text(encoding="utf-8")) if meta_path.exists() else {}
    start = date.fromisoformat(meta["start"]) if "start" in meta else min(ballots["held_on"])
    end = date.fromisoformat(meta["end"]) if "end" in meta else max(ballots["held_on"])
    return VoteMatrix(body, Period(start, end, period_name),
                      members["member_id"].to_numpy(object),
                      members["name"].astype(str).to_numpy(object),
                      members["group"].astype(str).to_numpy(object),
                      ballots["ballot_id"].to_numpy(object), ballots["item"].to_numpy(object),
                      votes, int(meta.get("dropped", 0)),
                      topics=ballots["topic"].to_numpy(object) if any(ballots["topic"])
                      else None)


def write_result(res, folder: str | Path) -> Path:
    """One period's results as a result partition (four Parquet tables and period.json)."""
    folder = Path(folder)
    folder.mkdir(parents=True, exist_ok=True)
    for name in RESULT_FRAMES:
        getattr(res, name).to_parquet(folder / f"{name}.parquet", index=False)
    meta = {k: getattr(res, k) for k in ("body", "period_name", "n_members", "n_ballots",
                                         "n_dropped", "fingerprint", "n_pairs")}
    meta.update(period_start=str(res.period_start), period_end=str(res.period_end))
    (folder / "period.json").write_text(json.dumps(meta), encoding="utf-8")
    return folder


def read_result(folder: str | Path):
    from blocwatch.pipeline.build.compute import PeriodResult

    folder = Path(folder)
    meta = json.loads((folder / "period.json").read_text(encoding="utf-8"))
    frames = {name: pd.read_parquet(folder / f"{name}.parquet") for name in RESULT_FRAMES
              if (folder / f"{name}.parquet").exists()}  # subsets, edges: absent in older ones
    return PeriodResult(meta["body"], meta["period_name"],
                        date.fromisoformat(meta["period_start"]),
                        date.fromisoformat(meta["period_end"]), meta["n_members"],
                        meta["n_ballots"], meta["n_dropped"], meta["fingerprint"],
                        n_pairs=meta["n_pairs"], **frames)


@dataclass(frozen=True)
class PartitionJob:
    """Worker side: read one vote partition, compute it, write its result partition."""

    options: object  # BuildOptions
    version: str
    results: str

    def __call__(self, task: tuple[str, str, str]) -> tuple[str, float]:
        from blocwatch.pipeline.build.compute import compute_period

        body, period, folder = task
        t0 = time.perf_counter()
        res = compute_period(read_partition(folder, body, period), self.options, self.version)
        out = write_result(res, partition_dir(self.results, body, period))
        return str(out), time.perf_counter() - t0


def build_partitions(store, root: str | Path, results: str | Path, *, body: str | None = None,
                     options=None, executor=None, progress=None):
    """Compute every vote partition under ``root`` (only ``body``'s, when given) on
    ``executor`` and merge the results (written under ``results``) into ``store``; returns the
    build report.

    As in a normal build, the partitions are a body's periods: stored results of a period
    that has no partition are dropped, and the body's trends are rewritten.
    """
    from blocwatch.pipeline.build.builder import (
        recorded_run,
        store_result,
        write_trends,
    )
    from blocwatch.pipeline.options import BuildOptions
    from blocwatch.pipeline.store.results import drop_periods_except
    from blocwatch.pipeline.store.runs import tool_version

    opts = options or BuildOptions()
    found = list_partitions(root)
    tasks = [(b, p, str(f)) for b, p, f in found if body is None or b == body]
    if not tasks:
        what = "holds no body=…/period=…/votes.parquet" if not found else \
            f"holds no partition of body {body!r}"
        there = sorted({b for b, _, _ in found})
        raise UsageError(f"partition folder {root}", what,
                         f"use one of: {', '.join(there)}" if there else
                         "write the partitions first (see blocwatch.pipeline.build.partitions)")
    with recorded_run(store, "build", {"partitions": str(root), "body": body, **opts.params()},
                      executor) as (report, pool):
        for b in sorted({b for b, _, _ in tasks}):
            # The body's reference topic mix is part of every period's fingerprint, as in a
            # normal build, so both ways of building store the same rows.
            mine = [t for t in tasks if t[0] == b]
            job = PartitionJob(_partition_options(mine, opts), tool_version(), str(results))
            for folder, seconds in pool.map(job, mine):
                store_result(store, report, read_result(folder), seconds, progress,
                             opts.period)
            drop_periods_except(store, b, opts.period, [p for bb, p, _ in tasks if bb == b])
            write_trends(store, report.run_id, b, opts.period)
    return report


def _partition_options(tasks: list[tuple[str, str, str]], opts):
    """``opts`` with the body's reference topic mix worked out from its vote partitions (the
    results store holds no ballots), exactly as :func:`~blocwatch.pipeline.build.planner.
    body_options` does from a store: pooled over every period, or one named period's."""
    import dataclasses

    from blocwatch.pipeline.build.planner import topic_mix

    chosen = [t for t in tasks if opts.topic_reference in ("pooled", t[1])]
    if opts.topic_reference != "pooled" and not chosen:
        raise UsageError(f"topic reference {opts.topic_reference!r}",
                         "is not a period of the partitions",
                         f"use pooled or one of: {', '.join(p for _, p, _ in tasks[:10])}")
    counts: dict[str, int] = {}
    for _, _, folder in chosen:
        frame = pd.read_parquet(Path(folder) / "votes.parquet")
        topics = (frame.drop_duplicates("ballot_id")["topic"].fillna("").astype(str)
                  if "topic" in frame else pd.Series("", index=range(frame["ballot_id"].nunique())))
        for topic, n in topics.value_counts().items():
            counts[topic] = counts.get(topic, 0) + int(n)
    return dataclasses.replace(opts, topic_mix=topic_mix(counts.items()))
