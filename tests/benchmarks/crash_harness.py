"""Kill -9 a rebuild or an ingest at a random moment, check the store, finish, compare.

Each trial starts from a project whose store holds the first years already built, adds the
remaining years' files, starts ``blocwatch rebuild`` (or ``blocwatch ingest``, or a rebuild
under another setting that recomputes every period) in a subprocess,
waits until it holds the store's lock, sleeps a random part of that command's measured running
time and sends SIGKILL to its whole process group. Then it checks that

- the lock is free again (the kernel released it) and the store opens;
- no period is partial: every ``periods`` row has its metric, member and group rows, all
  written by the run that wrote the period, and no result row lacks its period;
- no load is partial: each year's file is in the store whole (all its votes and its ``ingests``
  row) or not at all;
- a killed run's row is still ``running`` and ``blocwatch status`` calls it ``interrupted``;

and finally runs ``blocwatch rebuild`` to completion and compares every data and result table
with an uninterrupted run on the same files (provenance columns aside).

    python tests/benchmarks/crash_harness.py --trials 20 [--seed 1] [--keep DIR]
        [--bootstrap N --permutations N]

``tests/e2e/test_crash.py`` runs three trials of the same code in CI.
"""

from __future__ import annotations

import argparse
import os
import random
import shutil
import signal
import sys
import tempfile
import time
from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parents[2]
# Run as a script from anywhere: make ``tests`` importable. Never under pytest, where the repo
# root on sys.path would make the bare folder names importable (tests/meta forbids that).
if __name__ == "__main__" and str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from blocwatch.pipeline.demo.assembly import BODY, FIRST_YEAR  # noqa: E402
from blocwatch.pipeline.ops.lock import lock_holder  # noqa: E402
from blocwatch.pipeline.store.database import Store  # noqa: E402
from tests.rebuild_util import (  # noqa: E402
    assert_same,
    cli_here,
    contents,
    make_project,
    popen,
    write_year,
)

BASE_YEARS, ALL_YEARS = 2, 4
RESULTS = ("period_metrics", "member_metrics", "group_agreement")


@dataclass
class Trial:
    kind: str  # one of KINDS
    delay: float  # seconds after the lock was taken
    killed: bool  # False when the command finished before the kill
    state: dict  # what the killed command had committed: years loaded, periods, runs

    def phase(self) -> str:
        s = self.state
        return (f"years loaded {s['years']}/{ALL_YEARS}, periods from the killed run "
                f"{s['new_periods']}, interrupted runs {s['interrupted']}")


# "resettle": a rebuild under another setting, so every period is recomputed (a longer build
# phase to land in), and the finishing rebuild must find those periods stale again.
KINDS = ("rebuild", "ingest", "resettle")


def _command(kind: str, project: Path) -> list[str]:
    if kind == "rebuild":
        return ["rebuild", "--no-report"]
    if kind == "resettle":
        return ["rebuild", "--no-report", "--min-shared", "6"]
    files = [project / "data" / f"votes-{FIRST_YEAR + k}.csv" for k in range(ALL_YEARS)]
    return ["ingest", *files, "--body", BODY, "--members", project / "data" / "roster.csv"]


def prepare(base: Path, settings: dict | None = None) -> None:
    """The starting point: the first years built, then the later years' files added."""
    make_project(base, BASE_YEARS, settings=settings)
    out = cli_here("rebuild", "--no-report", project=base)
    assert out.returncode == 0, out.stderr
    for k in range(BASE_YEARS, ALL_YEARS):
        write_year(base, FIRST_YEAR + k)


def reference(folder: Path, settings: dict | None = None) -> dict:
    """The tables of an uninterrupted run over all the years."""
    make_project(folder, ALL_YEARS, settings=settings)
    out = cli_here("rebuild", "--no-report", project=folder)
    assert out.returncode == 0, out.stderr
    return contents(folder / "blocwatch.duckdb")


def _wait_for_lock(proc, store: Path, timeout: float = 120) -> bool:
    """True once ``proc`` holds the lock; False if it ended first."""
    deadline = time.monotonic() + timeout
    while time.monotonic() < deadline:
        holder = lock_holder(store)
        if holder and holder.get("pid") == proc.pid:
            return True
        if proc.poll() is not None:
            return False
        time.sleep(0.01)
    raise AssertionError("the command never took the store's lock")


def measure(base: Path, kind: str, work: Path) -> float:
    """Seconds ``kind`` holds the lock when not interrupted (for the kill delays)."""
    project = work / f"measure-{kind}"
    shutil.copytree(base, project)
    proc = popen(*_command(kind, project), cwd=project)
    _wait_for_lock(proc, project / "blocwatch.duckdb")
    t0 = time.monotonic()
    _, err = proc.communicate(timeout=600)
    assert proc.returncode == 0, f"{kind} failed when not interrupted: {err}"
    return time.monotonic() - t0


def check_consistent(store: Path) -> dict:
    """The invariants after a kill; returns what the killed command had committed."""
    assert lock_holder(store) is None, "the lock is still held after its holder was killed"
    with Store(store, read_only=True) as s:
        for table in RESULTS:
            orphans = s.scalar(f"SELECT count(*) FROM {table} r WHERE NOT EXISTS (SELECT 1 FROM "
                               "periods p WHERE p.body = r.body AND p.period = r.period)")
            assert orphans == 0, f"{table} has rows of a period that is not in periods"
            mixed = s.scalar(f"SELECT count(*) FROM {table} r JOIN periods p USING (body, period)"
                             " WHERE r.run_id <> p.run_id")
            assert mixed == 0, f"{table} mixes rows of two runs within one period"
        for table in ("period_metrics", "member_metrics", "group_agreement"):
            empty = s.scalar(f"SELECT count(*) FROM periods p WHERE NOT EXISTS (SELECT 1 FROM "
                             f"{table} r WHERE r.body = p.body AND r.period = p.period)")
            assert empty == 0, f"a period has no {table} rows (half written)"
        years = 0
        for k in range(ALL_YEARS):
            year = str(FIRST_YEAR + k)
            n_votes = s.scalar("SELECT count(*) FROM votes v JOIN ballots b USING (body, "
                               "ballot_id) WHERE year(b.held_on) = ?", [int(year)])
            logged = s.scalar("SELECT count(*) FROM ingests WHERE file LIKE ?",
                              [f"%votes-{year}.csv"])
            lines = sum(1 for _ in open(_year_file(store, year))) - 1
            assert (n_votes, logged) in ((0, 0), (lines, 1)), \
                f"year {year} is half loaded: {n_votes} of {lines} votes, {logged} log rows"
            years += bool(logged)
        running = s.scalar("SELECT count(*) FROM runs WHERE status = 'running'")
        new_periods = s.scalar("SELECT count(*) FROM periods WHERE run_id IN (SELECT run_id "
                               "FROM runs WHERE status = 'running')")
    out = cli_here("status", project=store.parent)
    assert out.returncode == 0, out.stderr
    if running:
        assert "interrupted" in out.stdout, out.stdout
    return {"years": years, "new_periods": int(new_periods), "interrupted": int(running)}


def _year_file(store: Path, year: str) -> Path:
    return store.parent / "data" / f"votes-{year}.csv"


def run_trial(base: Path, kind: str, delay: float, work: Path, expected: dict,
              n: int) -> Trial:
    project = work / f"trial-{n:03d}-{kind}"
    shutil.copytree(base, project)
    store = project / "blocwatch.duckdb"
    proc = popen(*_command(kind, project), cwd=project)
    proc_group = proc.pid  # popen starts a new session: the command leads its group
    killed = False
    if _wait_for_lock(proc, store):
        time.sleep(delay)
        if proc.poll() is None:
            os.killpg(proc_group, signal.SIGKILL)
            killed = True
    proc.communicate(timeout=600)
    state = check_consistent(store)
    out = cli_here("rebuild", "--no-report", project=project)
    assert out.returncode == 0, out.stderr
    assert_same(expected, contents(store))
    again = cli_here("rebuild", "--no-report", project=project)
    assert again.stdout.startswith("nothing to do"), again.stdout
    shutil.rmtree(project)
    return Trial(kind, delay, killed, state)


def run_trials(trials: int, *, seed: int = 1, work: Path | None = None, log=print,
               spans: dict[str, float] | None = None,
               settings: dict | None = None) -> list[Trial]:
    """``trials`` kills, cycling through :data:`KINDS`; ``spans`` (seconds each holds the lock
    when not interrupted) is measured unless given."""
    rng = random.Random(seed)
    own = work is None
    work = Path(tempfile.mkdtemp(prefix="blocwatch-crash-")) if own else Path(work)
    try:
        base = work / "base"
        prepare(base, settings)
        expected = reference(work / "reference", settings)
        spans = spans or {kind: measure(base, kind, work) for kind in KINDS}
        log("uninterrupted lock hold: " + ", ".join(f"{k} {v:.2f}s" for k, v in spans.items()))
        done = []
        for n in range(trials):
            kind = KINDS[n % len(KINDS)]
            delay = rng.uniform(0, spans[kind])
            t = run_trial(base, kind, delay, work, expected, n)
            log(f"trial {n + 1:2d}: {kind:7s} kill at {delay:.3f}s "
                f"{'' if t.killed else '(finished first) '}— {t.phase()}; consistent, and "
                "equal to the uninterrupted run after the next rebuild")
            done.append(t)
        return done
    finally:
        if own:
            shutil.rmtree(work, ignore_errors=True)


def main(argv: list[str] | None = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--trials", type=int, default=20)
    parser.add_argument("--seed", type=int, default=1)
    parser.add_argument("--keep", type=Path, default=None,
                        help="work in this folder and keep it (default: a temporary one)")
    parser.add_argument("--bootstrap", type=int, default=0,
                        help="replicates per period (0: fastest; >0 also checks the seeded "
                             "random steps come out equal)")
    parser.add_argument("--permutations", type=int, default=0)
    args = parser.parse_args(argv)
    t0 = time.monotonic()
    settings = {"bootstrap": args.bootstrap, "permutations": args.permutations}
    print(f"settings: {settings}")
    done = run_trials(args.trials, seed=args.seed, work=args.keep, settings=settings)
    killed = sum(t.killed for t in done)
    print(f"{len(done)} trials ({killed} killed mid-run), all consistent and equal to the "
          f"uninterrupted run, in {time.monotonic() - t0:.0f}s")
    return 0


if __name__ == "__main__":
    sys.exit(main())
