"""blocwatch benchmark: synthetic ballots at a given size, every stage timed, targets checked.

Run from the repository root::

    python tests/benchmarks/bench.py --size small            # a few minutes
    python tests/benchmarks/bench.py --size target           # the sizes of the targets
    python tests/benchmarks/bench.py --size target --build-periods 5   # project the build
    python tests/benchmarks/bench.py --size tiny             # seconds (the CI smoke test)
    python tests/benchmarks/bench.py --size small --demo      # also time ``blocwatch demo``

Each stage is the median of ``--repeats`` runs after one warm-up. Ratios are against two
baselines measured in the same run (see ``baselines.py``): the bare numpy product of the same
one-hot arrays, and a pandas self-merge + group-by. The national-scale build runs in a child
process whose whole process tree is sampled for resident memory (workers included).

``--build-periods K`` builds only the first K periods (a ``terms:`` period spec) and projects
the full build linearly in periods; the table then says "projected". Numbers on a shared or
throttled machine are noisy: compare ratios, and rerun before reading much into one figure.
"""

from __future__ import annotations

import argparse
import json
import os
import subprocess
import sys
import tempfile
import time
from dataclasses import replace
from pathlib import Path

import numpy as np

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

import baselines  # noqa: E402
import synth  # noqa: E402
from national import tree_rss  # noqa: E402

SIZES = {
    # agreement: members × ballots of the kernel test; national: the body built end to end.
    # chamber: one large period (members, ballots) built with the same resampling.
    "tiny": dict(agreement=(40, 200), national=synth.Size(3, 30, 60), chamber=(40, 120),
                 bootstrap=8, permutations=8, repeats=2),
    "small": dict(agreement=(200, 1000), national=synth.Size(8, 150, 300), chamber=(250, 1500),
                  bootstrap=50, permutations=50, repeats=3),
    "target": dict(agreement=(500, 5000), national=synth.Size(50, 450, 1000),
                   chamber=(750, 5000), bootstrap=200, permutations=200, repeats=5),
}
TARGETS = {"agreement_vs_bare": 2.0, "pandas_vs_agreement": 50.0, "build_seconds": 120.0,
           "period_vs_point": 5.0, "chamber_seconds": 60.0, "demo_seconds": 15.0,
           "build_peak_gb": 4.0, "rebuild_share": 0.10, "parquet_rows_per_s": 2e6,
           "csv_rows_per_s": 1e6}


def median_time(fn, repeats: int, *, min_sample: float = 0.05) -> float:
    """Median seconds per call over ``repeats`` samples; a sample loops a fast call until it
    lasts ``min_sample`` s, so timer resolution and one-off stalls do not decide the figure."""
    t0 = time.perf_counter()
    fn()  # warm-up: first-call imports and allocations
    first = time.perf_counter() - t0
    if first > 2.0:  # a slow stage: its first run counts, warm-up costs are negligible
        return float(np.median([first] + [_once(fn) for _ in range(repeats - 1)]))
    loops = max(1, int(min_sample / max(first, 1e-7)))
    times = []
    for _ in range(max(3, repeats)):
        t0 = time.perf_counter()
        for _ in range(loops):
            fn()
        times.append((time.perf_counter() - t0) / loops)
    return float(np.median(times))


def _once(fn) -> float:
    t0 = time.perf_counter()
    fn()
    return time.perf_counter() - t0


def blas_info() -> str:
    try:
        from threadpoolctl import threadpool_info

        libs = [f"{i.get('internal_api')} {i.get('version')} {i.get('architecture')} "
                f"x{i.get('num_threads')}" for i in threadpool_info()]
        return "; ".join(libs) or "unknown"
    except ImportError:
        return "unknown"


# -- in-process stages --------------------------------------------------------------------

def agreement_stages(n: int, b: int, repeats: int) -> dict:
    from blocwatch.pipeline.build.agreement import agreement_counts, agreement_matrix

    _, votes = synth.vote_matrix(n, b, seed=5)
    x = baselines.one_hot(votes)

    def kernel():
        same, both = agreement_counts(votes)
        return agreement_matrix(same, both, min_shared=5)

    out = {"agreement": median_time(kernel, repeats),
           "bare_product": median_time(lambda: baselines.bare_product(x), repeats)}
    out["pandas"], out["pandas_slice"] = baselines.pandas_seconds(votes)
    # The baseline must compute the same numbers (checked on its slice).
    w = out["pandas_slice"]
    ref = baselines.pandas_agreement(baselines.long_votes(votes[:, :w]))
    same, both = agreement_counts(votes[:, :w])
    a = agreement_matrix(same, both)
    i = ref.index.get_level_values(0).to_numpy()
    j = ref.index.get_level_values(1).to_numpy()
    assert np.allclose(a[i, j], ref["agreement"].to_numpy()), "pandas baseline disagrees"
    return out


def synthetic_period(members: int, ballots: int, seed: int = 6):
    """One synthetic period as the build hands it to ``compute_period``."""
    from datetime import date

    from blocwatch.pipeline.build.matrices import VoteMatrix
    from blocwatch.pipeline.options import Period

    labels, votes = synth.vote_matrix(members, ballots, seed=seed)
    n, b = votes.shape
    ids = np.array([f"S{i:04d}" for i in range(n)], dtype=object)
    return VoteMatrix("bench", Period(date(2001, 1, 1), date(2001, 12, 31), "2001"), ids, ids,
                      np.asarray(synth.GROUPS, dtype=object)[labels],
                      np.array([f"B{j}" for j in range(b)], dtype=object),
                      np.full(b, "", dtype=object), votes)


def chamber_seconds(members: int, ballots: int, bootstrap: int, permutations: int,
                    jobs: int) -> float:
    """One large period with the resampling of the build (one run: it is the slow stage)."""
    from threadpoolctl import threadpool_limits

    from blocwatch.pipeline.build.compute import compute_period
    from blocwatch.pipeline.options import BuildOptions

    threadpool_limits(max(1, (os.cpu_count() or 1) // jobs))
    vm = synthetic_period(members, ballots, seed=7)
    opts = BuildOptions(bootstrap=bootstrap, permutations=permutations)
    return _once(lambda: compute_period(vm, opts, "bench"))


def demo_seconds(work: Path) -> float:
    """Wall time of ``blocwatch demo`` (every default) in a fresh interpreter."""
    code = "import sys; from blocwatch.pipeline.cli.main import main; sys.exit(main())"
    t0 = time.perf_counter()
    subprocess.run([sys.executable, "-c", code, "demo", "--out", str(work / "demo")],
                   check=True, stdout=subprocess.DEVNULL)
    return time.perf_counter() - t0


def period_stages(size: synth.Size, bootstrap: int, permutations: int, repeats: int,
                  jobs: int) -> dict:
    """Graph, every metric family, bootstrap and nulls on one national-size period, with the
    BLAS threads one of ``jobs`` build workers gets (run after the agreement stage)."""
    from threadpoolctl import threadpool_limits

    from blocwatch.metrics import registry
    from blocwatch.pipeline.build.compute import compute_period, period_input
    from blocwatch.pipeline.build.filters import filter_period
    from blocwatch.pipeline.build.graphs import build_graph
    from blocwatch.pipeline.options import BuildOptions, parse_rule

    # As in a build's worker: BLAS threads shared out between the workers.
    threadpool_limits(max(1, (os.cpu_count() or 1) // jobs))
    vm = synthetic_period(size.members, size.ballots)
    base = BuildOptions(bootstrap=0, permutations=0)
    fvm = filter_period(vm, base.agreement)
    inp = period_input(fvm.votes, fvm.labels, base, 1)
    out = {"graphs": median_time(
        lambda: build_graph(inp.agreement, inp.labels, parse_rule(base.rule)), repeats)}
    for name, fam in registry.FAMILIES.items():
        out[f"metric:{name}"] = median_time(lambda f=fam: f.func(inp), max(1, repeats // 2))
    once = max(1, repeats // 3)
    plain = median_time(lambda: compute_period(vm, base, "bench"), once)
    boot = median_time(lambda: compute_period(vm, replace(base, bootstrap=bootstrap), "bench"),
                       once)
    null = median_time(lambda: compute_period(vm, replace(base, permutations=permutations),
                                              "bench"), once)
    out.update({"period (no resampling)": plain, f"bootstrap B={bootstrap}": boot - plain,
                f"nulls P={permutations}": null - plain})
    return out


# -- child processes (memory is sampled over the whole tree) ------------------------------

def in_child(job: dict) -> dict:
    """Run ``national.run_child(job)`` in a fresh interpreter; add its peak tree memory."""
    proc = subprocess.Popen([sys.executable, str(HERE / "national.py"), json.dumps(job)],
                            stdout=subprocess.PIPE, text=True)
    peak = 0
    while proc.poll() is None:
        peak = max(peak, tree_rss(proc.pid))
        time.sleep(0.1)
    out, _ = proc.communicate()
    if proc.returncode:
        raise SystemExit(f"benchmark child failed ({proc.returncode}): {job['kind']}")
    result = json.loads(out.strip().splitlines()[-1])
    result["peak_bytes"] = peak
    return result


# -- output -------------------------------------------------------------------------------

def _fmt(seconds: float) -> str:
    return f"{seconds * 1000:9.1f} ms" if seconds < 1 else f"{seconds:9.2f} s "


def print_tables(res: dict, cfg: dict, args) -> None:
    ag, bare = res["agreement"], res["agreement"]["bare_product"]
    n, b = cfg["agreement"]
    print(f"\nblocwatch benchmark, size {args.size} ({os.cpu_count()} cores; BLAS: "
          f"{blas_info()})")
    print(f"\n{'stage':34} {'median':>12} {'× bare product':>15}")
    print(f"{f'agreement {n}×{b}':34} {_fmt(ag['agreement'])} {ag['agreement'] / bare:15.2f}")
    print(f"{'  baseline: bare X·Xᵀ':34} {_fmt(bare)} {1.0:15.2f}")
    print(f"{'  baseline: pandas merge+groupby':34} {_fmt(ag['pandas'])} "
          f"{ag['pandas'] / bare:15.1f}   (from {ag['pandas_slice']} ballots, scaled)")
    nat = cfg["national"]
    print(f"\none period {nat.members}×{nat.ballots}:")
    for stage, seconds in res["period"].items():
        print(f"  {stage:32} {_fmt(seconds)}")
    e2e = res["national"]
    members, ballots = cfg["chamber"]
    print(f"\nlarge chamber, one period {members}×{ballots}: {_fmt(res['chamber'])}")
    if "demo" in res:
        print(f"blocwatch demo (every default):     {_fmt(res['demo'])}")
    print(f"\nnational body {nat.periods} periods × {nat.members} × {nat.ballots} "
          f"({nat.rows:,} votes), jobs={args.jobs}:")
    for stage in ("ingest", "matrices", "build", "rebuild", "report"):
        print(f"  {stage:32} {_fmt(e2e[stage])}")
    print(f"  {'peak memory (process tree)':32} {e2e['peak_bytes'] / 2**30:9.2f} GB")
    for phase in ("ingest", "build", "rebuild", "report"):
        if f"peak_{phase}" in e2e:
            print(f"  {'  during ' + phase:32} {e2e[f'peak_{phase}'] / 2**30:9.2f} GB")
    print_targets(res, cfg)


def target_rows(res: dict, cfg: dict) -> list[tuple[str, str, str, str, bool]]:
    ag, e2e = res["agreement"], res["national"]
    n, b = cfg["agreement"]
    nat = cfg["national"]
    vs_bare = ag["agreement"] / ag["bare_product"]
    vs_pandas = ag["pandas"] / ag["agreement"]
    proj = "" if e2e["built_periods"] == nat.periods else \
        f" (projected from {e2e['built_periods']}/{nat.periods} periods)"
    total = e2e["ingest"] + e2e["build_full"]
    share = e2e["rebuild_full"] / e2e["build_full"]
    peak = e2e["peak_bytes"] / 2**30
    build_peak = e2e.get("peak_build", 0) / 2**30
    t = TARGETS
    # One period with the resampling the build uses, against its point estimates alone.
    per = res["period"]
    plain = per["period (no resampling)"]
    resampled = plain + sum(v for k, v in per.items() if k.startswith(("bootstrap", "nulls")))
    vs_point = resampled / plain
    members, ballots = cfg["chamber"]
    rows = [
        (f"one period {nat.members}×{nat.ballots}, B={cfg['bootstrap']}, "
         f"P={cfg['permutations']}", f"{resampled:.1f} s (point {plain:.1f} s)",
         f"{vs_point:.1f}× point", f"≤ {t['period_vs_point']:g}×",
         vs_point <= t["period_vs_point"]),
        (f"agreement {n}×{b} vs bare product", f"{_fmt(ag['agreement']).strip()}",
         f"{vs_bare:.2f}×", f"≤ {t['agreement_vs_bare']:g}×", vs_bare <= t["agreement_vs_bare"]),
        (f"agreement {n}×{b} vs pandas", f"{_fmt(ag['pandas']).strip()} pandas",
         f"{vs_pandas:,.0f}× faster", f"≥ {t['pandas_vs_agreement']:g}×",
         vs_pandas >= t["pandas_vs_agreement"]),
        (f"ingest + build, {nat.periods}×{nat.members}×{nat.ballots}, B={cfg['bootstrap']}",
         f"{total:.1f} s{proj}", f"{total / t['build_seconds']:.2f}× budget",
         f"≤ {t['build_seconds']:g} s", total <= t["build_seconds"]),
        ("peak memory of that ingest + build", f"{peak:.2f} GB (build alone {build_peak:.2f})",
         f"{peak / t['build_peak_gb']:.2f}× budget", f"≤ {t['build_peak_gb']:g} GB",
         peak <= t["build_peak_gb"]),
        ("rebuild after one new period", f"{e2e['rebuild_full']:.1f} s{proj}",
         f"{share:.1%} of full", f"≤ {t['rebuild_share']:.0%}", share <= t["rebuild_share"]),
        ("ingest Parquet", f"{res['ingest']['parquet']:,.0f} rows/s",
         f"{res['ingest']['parquet'] / t['parquet_rows_per_s']:.2f}× target", "≥ 2,000,000/s",
         res["ingest"]["parquet"] >= t["parquet_rows_per_s"]),
        ("ingest CSV", f"{res['ingest']['csv']:,.0f} rows/s",
         f"{res['ingest']['csv'] / t['csv_rows_per_s']:.2f}× target", "≥ 1,000,000/s",
         res["ingest"]["csv"] >= t["csv_rows_per_s"]),
        (f"large chamber: one period {members}×{ballots}, B={cfg['bootstrap']}, "
         f"P={cfg['permutations']}", f"{res['chamber']:.1f} s",
         f"{res['chamber'] / t['chamber_seconds']:.2f}× budget",
         f"≤ {t['chamber_seconds']:g} s", res["chamber"] <= t["chamber_seconds"]),
    ]
    if "demo" in res:
        rows.append(("demo (blocwatch demo, defaults)", f"{res['demo']:.1f} s",
                     f"{res['demo'] / t['demo_seconds']:.2f}× budget",
                     f"≤ {t['demo_seconds']:g} s", res["demo"] <= t["demo_seconds"]))
    return rows


def print_targets(res: dict, cfg: dict) -> None:
    rows = target_rows(res, cfg)
    widths = [max(len(r[i]) for r in rows) for i in range(4)]
    head = ("target", "measured", "ratio", "goal")
    print("\n" + "  ".join(h.ljust(w) for h, w in zip(head, widths)) + "  met")
    for row in rows:
        print("  ".join(c.ljust(w) for c, w in zip(row[:4], widths)) + "  " +
              ("yes" if row[4] else "NO"))


def main(argv: list[str] | None = None) -> dict:
    p = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    p.add_argument("--size", choices=SIZES, default="small")
    p.add_argument("--repeats", type=int, default=None, help="runs per stage (median)")
    p.add_argument("--jobs", type=int, default=os.cpu_count() or 1,
                   help="worker processes of the national build (default: all cores)")
    p.add_argument("--build-periods", type=int, default=None,
                   help="build only the first K periods and project the full build")
    p.add_argument("--workdir", default=None, help="folder for the files and stores")
    p.add_argument("--json", default=None, help="also write the results to this file")
    p.add_argument("--demo", action="store_true",
                   help="also time 'blocwatch demo' with every default (minutes)")
    args = p.parse_args(argv)
    cfg = dict(SIZES[args.size])
    repeats = args.repeats or cfg["repeats"]
    nat: synth.Size = cfg["national"]
    res: dict = {"size": args.size, "jobs": args.jobs, "blas": blas_info()}
    with tempfile.TemporaryDirectory(dir=args.workdir) as tmp:
        work = Path(tmp)
        print(f"writing {nat.rows:,} synthetic votes ...", file=sys.stderr)
        files = {fmt: synth.write_body(work / fmt, nat, fmt=fmt) for fmt in ("parquet", "csv")}
        res["agreement"] = agreement_stages(*cfg["agreement"], repeats)
        print("agreement done", file=sys.stderr)
        res["period"] = period_stages(nat, cfg["bootstrap"], cfg["permutations"], repeats,
                                      args.jobs)
        print("period stages done", file=sys.stderr)
        res["chamber"] = chamber_seconds(*cfg["chamber"], cfg["bootstrap"],
                                         cfg["permutations"], args.jobs)
        print("large chamber done", file=sys.stderr)
        if args.demo:
            res["demo"] = demo_seconds(work)
            print("demo done", file=sys.stderr)
        ingest_repeats = 1 if nat.rows > 5_000_000 else repeats
        res["ingest"] = {}
        for fmt, f in files.items():
            times = [in_child({"kind": "ingest", "votes": str(f.votes), "roster": str(f.roster),
                               "store": str(work / f"ingest_{fmt}_{r}.duckdb")})["seconds"]
                     for r in range(ingest_repeats)]
            res["ingest"][fmt] = nat.rows / float(np.median(times))
        print("ingest done", file=sys.stderr)
        job = {"kind": "national", "votes": str(files["parquet"].votes),
               "roster": str(files["parquet"].roster), "store": str(work / "national.duckdb"),
               "work": str(work), "periods": nat.periods, "members": nat.members,
               "ballots": nat.ballots, "build_periods": args.build_periods or nat.periods,
               "bootstrap": cfg["bootstrap"], "permutations": cfg["permutations"],
               "jobs": args.jobs, "repeats": repeats}
        res["national"] = in_child(job)
    print_tables(res, cfg, args)
    res["targets"] = [dict(zip(("target", "measured", "ratio", "goal", "met"), r))
                      for r in target_rows(res, cfg)]
    if args.json:
        Path(args.json).write_text(json.dumps(res, indent=2, default=str), encoding="utf-8")
    return res


if __name__ == "__main__":
    main()
