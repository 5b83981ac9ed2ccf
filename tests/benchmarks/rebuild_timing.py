"""Time a no-change rebuild and a one-new-period rebuild against a full build, on the demo.

The invented demo assembly (25 years x 45 seats x 60 ballots) is split into one file per year.
Steps, each timed in this process (interpreter start-up of the CLI is timed separately):

1. first rebuild of the first 24 years (load + build everything);
2. one new year's file added: rebuild (load it, recompute that one period, trends);
3. nothing new: rebuild (hash the files, check every fingerprint, write nothing);
4. ``rebuild --full``: every one of the 25 periods recomputed.

    python tests/benchmarks/rebuild_timing.py [--bootstrap N] [--permutations N] [--report]
"""

from __future__ import annotations

import argparse
import shutil
import subprocess
import sys
import tempfile
import time
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
if __name__ == "__main__" and str(ROOT) not in sys.path:  # only when run as a script
    sys.path.insert(0, str(ROOT))

from blocwatch.pipeline.demo.assembly import FIRST_YEAR, LAST_YEAR  # noqa: E402
from tests.rebuild_util import cli_here, exe, make_project, write_year  # noqa: E402


def timed(label: str, *args, project: Path) -> float:
    t0 = time.perf_counter()
    out = cli_here(*args, project=project)
    seconds = time.perf_counter() - t0
    if out.returncode != 0:
        raise SystemExit(f"{label} failed ({out.returncode}): {out.stderr.strip()}")
    print(f"{label:38s} {seconds:8.2f} s   | {out.stdout.strip().splitlines()[-1]}")
    return seconds


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--bootstrap", type=int, default=None, help="default: build's default")
    parser.add_argument("--permutations", type=int, default=None)
    parser.add_argument("--report", action="store_true", help="also rewrite the report")
    args = parser.parse_args(argv)
    settings = {k: v for k, v in (("bootstrap", args.bootstrap),
                                  ("permutations", args.permutations)) if v is not None}
    extra = [] if args.report else ["--no-report"]
    work = Path(tempfile.mkdtemp(prefix="blocwatch-timing-"))
    try:
        years = LAST_YEAR - FIRST_YEAR + 1
        project = make_project(work / "p", years - 1, settings={**_defaults(), **settings})
        print(f"settings: {settings or 'build defaults'}; report: {args.report}")
        first = timed(f"first rebuild ({years - 1} periods)", "rebuild", *extra,
                      project=project)
        write_year(project, LAST_YEAR)
        one = timed("one new period", "rebuild", *extra, project=project)
        noop = timed("no change", "rebuild", *extra, project=project)
        full = timed(f"--full ({years} periods)", "rebuild", "--full", *extra, project=project)
        t0 = time.perf_counter()
        subprocess.run([*exe(), "--help"], capture_output=True, check=True)
        startup = time.perf_counter() - t0
        print(f"{'CLI start-up (blocwatch --help)':38s} {startup:8.2f} s")
        print(f"one new period = {one / full:.1%} of a full build; no change = "
              f"{noop / full:.1%} (first load + build {first:.1f} s)")
    finally:
        shutil.rmtree(work, ignore_errors=True)
    return 0


def _defaults() -> dict:
    from blocwatch.pipeline.options import DEFAULT_BOOTSTRAP, DEFAULT_PERMUTATIONS

    return {"bootstrap": DEFAULT_BOOTSTRAP, "permutations": DEFAULT_PERMUTATIONS}


if __name__ == "__main__":
    sys.exit(main())
