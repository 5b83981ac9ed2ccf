"""Coverage of the stored 95 % intervals against a planted truth, per headline metric.

A body of members at fixed positions (two groups, ``tests/spatial_sim.py``) votes on a fresh
agenda of ``--ballots`` ballots in every repetition; the build's own ``compute_period`` gives each
metric's estimate and interval. The truth is the metric's large-sample value: the same members
on ``--truth-ballots`` ballots (the mean of ``--truth-draws`` such draws). The table says how
often the interval covered it, how often the estimate lay outside its own interval, and the
median interval width. Run from the repository root::

    python tests/benchmarks/coverage.py                     # 100 repetitions, ~1 h on 2 cores
    python tests/benchmarks/coverage.py --reps 20 --bootstrap 100 --cheap   # a few minutes

``--cheap`` leaves out the expensive families (Louvain, separability, ideal points), as the
unit test does. ``--methods stored percentile basic bc`` compares interval methods on the same
replicates ("stored" = the family's registered method, as the build stores it).
"""

from __future__ import annotations

import argparse
import sys
import time
from datetime import date
from pathlib import Path

import numpy as np
import pandas as pd

ROOT = Path(__file__).resolve().parents[2]
if __name__ == "__main__":  # as a script: make ``tests`` importable (pytest already does)
    sys.path.insert(0, str(ROOT))

from blocwatch.metrics import registry  # noqa: E402
from blocwatch.metrics.uncertainty.resampling import INTERVAL_METHODS, bootstrap_interval  # noqa: E402
from blocwatch.pipeline.build.compute import BuildOptions, compute_period  # noqa: E402
from blocwatch.pipeline.build.matrices import VoteMatrix  # noqa: E402
from blocwatch.pipeline.build.periods import Period  # noqa: E402
from tests.spatial_sim import ballots_for  # noqa: E402

HEADLINE = ("group_modularity", "cross_group_share", "cross_group_ratio", "ei_index",
            "separability", "silhouette", "rice_mean", "agreement_index_mean",
            "group_line_share", "mean_loyalty", "ideal_median_gap", "mds_median_gap")
CHEAP = tuple(m for m in HEADLINE if not any(m in f.metrics and f.expensive
                                             for f in registry.FAMILIES.values()))


def planted_body(n: int, *, separation: float, spread: float, seed: int = 0):
    """Fixed member positions and groups of the planted body."""
    rng = np.random.default_rng(seed)
    groups = np.repeat([0, 1], n // 2)
    x = rng.normal(np.where(groups == 0, -separation / 2, separation / 2), spread)
    return x, groups


def vote_matrix(votes: np.ndarray, groups: np.ndarray) -> VoteMatrix:
    n, b = votes.shape
    ids = np.array([f"m{i:03d}" for i in range(n)], dtype=object)
    return VoteMatrix("Planted Council", Period(date(2030, 1, 1), date(2030, 12, 31), "2030"),
                      ids, ids, np.array([f"g{g}" for g in groups], dtype=object),
                      np.array([f"b{j}" for j in range(b)], dtype=object),
                      np.array([""] * b, dtype=object), votes)


def truth(x, groups, metrics, *, ballots: int, draws: int) -> dict[str, float]:
    """Large-sample value of each metric: the mean over ``draws`` agendas of ``ballots``."""
    opts = BuildOptions(bootstrap=0, permutations=0)
    values = []
    for d in range(draws):
        votes = ballots_for(x, ballots, rng=np.random.default_rng(10_000 + d))
        rows = compute_period(vote_matrix(votes, groups), opts, "coverage").metrics
        values.append(rows.set_index("metric")["value"].reindex(list(metrics)))
    return pd.concat(values, axis=1).mean(axis=1).to_dict()


def coverage(*, metrics=HEADLINE, reps: int = 100, bootstrap: int = 200, members: int = 60,
             ballots: int = 150, truth_ballots: int = 20_000, truth_draws: int = 1,
             expensive_replicates: int = 40, separation: float = 2.0, spread: float = 0.6,
             level: float = 0.95, methods=("stored",), progress: bool = False
             ) -> pd.DataFrame:
    """One row per metric and interval method: nominal, observed coverage of the truth,
    repetitions, estimates outside their own interval without a note saying why, median
    width. Method "stored" is what the build stores (the family's method, with its notes);
    the others are :func:`bootstrap_interval` on the same replicates."""
    x, groups = planted_body(members, separation=separation, spread=spread)
    families = [f.name for f in registry.FAMILIES.values() if set(f.metrics) & set(metrics)]
    target = truth(x, groups, metrics, ballots=truth_ballots, draws=truth_draws)
    hits = {(m, k): [] for m in metrics for k in methods}
    for r in range(reps):
        if progress:
            print(f"repetition {r + 1}/{reps}", file=sys.stderr, flush=True)
        votes = ballots_for(x, ballots, rng=np.random.default_rng(r))
        opts = BuildOptions(seed=r, bootstrap=bootstrap, permutations=0,
                            expensive_replicates=expensive_replicates)
        res = compute_period(vote_matrix(votes, groups), opts, "coverage", families=families,
                             keep_replicates=True)
        rows = res.metrics.set_index("metric")
        for m in metrics:
            v, lo, hi, note = rows.loc[m, ["value", "low", "high", "note"]]
            for k in methods:
                if k != "stored":
                    fam = next(f for f in registry.FAMILIES.values() if m in f.metrics)
                    lo, hi = bootstrap_interval(v, res.replicates[m], method=k, level=level,
                                                bounds=fam.bounds.get(m))
                    note = None
                if not (np.isfinite(lo) and np.isfinite(hi)):
                    continue
                outside = not (lo <= v <= hi) and not note
                hits[(m, k)].append((lo <= target[m] <= hi, outside, hi - lo))
    out = []
    for (m, k), h in hits.items():
        h = np.array(h, dtype=float).reshape(-1, 3)
        method = k if k != "stored" else f"{_stored_method(m)} (stored)"
        out.append({"metric": m, "method": method, "nominal": level,
                    "observed": h[:, 0].mean() if len(h) else np.nan,
                    "repetitions": len(h), "outside_own": int(h[:, 1].sum()),
                    "median_width": float(np.median(h[:, 2])) if len(h) else np.nan,
                    "truth": target[m]})
    return pd.DataFrame(out)


def _stored_method(metric: str) -> str:
    return next(f.interval for f in registry.FAMILIES.values() if metric in f.metrics)


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--reps", type=int, default=100)
    ap.add_argument("--bootstrap", type=int, default=200)
    ap.add_argument("--members", type=int, default=60)
    ap.add_argument("--ballots", type=int, default=150)
    ap.add_argument("--truth-ballots", type=int, default=20_000)
    ap.add_argument("--truth-draws", type=int, default=1)
    ap.add_argument("--expensive-replicates", type=int, default=40)
    ap.add_argument("--cheap", action="store_true", help="leave out the expensive families")
    ap.add_argument("--metrics", nargs="*", help="metric names (default: the headline set)")
    ap.add_argument("--methods", nargs="*", default=["stored"],
                    help=f"stored and/or any of {INTERVAL_METHODS} on the same replicates")
    args = ap.parse_args(argv)
    metrics = tuple(args.metrics or (CHEAP if args.cheap else HEADLINE))
    start = time.perf_counter()
    table = coverage(metrics=metrics, reps=args.reps, bootstrap=args.bootstrap,
                     members=args.members, ballots=args.ballots,
                     truth_ballots=args.truth_ballots, truth_draws=args.truth_draws,
                     expensive_replicates=args.expensive_replicates,
                     methods=tuple(args.methods), progress=True)
    print(f"planted body: {args.members} members, {args.ballots} ballots, bootstrap "
          f"{args.bootstrap}, truth from {args.truth_ballots} ballots × {args.truth_draws}")
    print(table.to_string(index=False, float_format=lambda v: f"{v:.3f}"))
    print(f"({time.perf_counter() - start:.0f} s)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
