"""The two yardsticks the benchmark measures blocwatch against (kept here, never in the package).

* hardware: the bare numpy product of the one-hot arrays, ``X @ X.T`` with X = [Y | N] the
  member × (yes ballots, no ballots) float32 array built beforehand: the same-choice counts with
  nothing else (no conversion, no shared counts, no division);
* what a user would write: a pandas self-merge of the long votes on ballot id, then a group-by
  over member pairs. The merge has one row per pair per ballot (n² b rows: a billion for 500
  members × 5,000 ballots, more than memory), so it is timed on a slice of the ballots and scaled
  linearly in the ballot count, which is how its cost grows.
"""

from __future__ import annotations

import time

import numpy as np
import pandas as pd

YES, NO = 1, 2
MERGE_ROWS = 15_000_000  # merged rows per pandas slice (about 1.5 GB at peak)


def one_hot(votes: np.ndarray) -> np.ndarray:
    """[Y | N] as float32 (n × 2b)."""
    return np.hstack([(votes == YES), (votes == NO)]).astype(np.float32)


def bare_product(x: np.ndarray) -> np.ndarray:
    return x @ x.T


def long_votes(votes: np.ndarray) -> pd.DataFrame:
    """Cast yes/no votes as long rows (ballot, member, choice), integer coded."""
    member, ballot = np.nonzero((votes == YES) | (votes == NO))
    return pd.DataFrame({"ballot": ballot.astype(np.int32), "member": member.astype(np.int32),
                         "choice": votes[member, ballot]})


def pandas_agreement(long: pd.DataFrame) -> pd.DataFrame:
    """Share of shared ballots on which each ordered member pair chose alike."""
    pairs = long.merge(long, on="ballot", suffixes=("_a", "_b"))
    pairs["same"] = pairs["choice_a"] == pairs["choice_b"]
    out = pairs.groupby(["member_a", "member_b"])["same"].agg(["sum", "count"])
    out["agreement"] = out["sum"] / out["count"]
    return out


def pandas_seconds(votes: np.ndarray, *, repeats: int = 1) -> tuple[float, int]:
    """Median seconds of the pandas route on all ballots (scaled from a slice), slice size."""
    n, b = votes.shape
    width = int(max(1, min(b, MERGE_ROWS // max(1, n * n))))
    long = long_votes(votes[:, :width])
    times = []
    for _ in range(repeats):
        t0 = time.perf_counter()
        pandas_agreement(long)
        times.append(time.perf_counter() - t0)
    return float(np.median(times)) * b / width, width
