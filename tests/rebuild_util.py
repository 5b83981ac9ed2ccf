"""Helpers shared by the rebuild, crash and benchmark scripts: a small project made from the
invented demo assembly (one votes file per year), the real CLI, and store contents without the
provenance columns (run ids, load times) that differ between two equal runs."""

from __future__ import annotations

import csv
import shutil
import subprocess
import sys
from functools import lru_cache
from pathlib import Path

import pandas as pd

from blocwatch.pipeline.demo.assembly import BODY, FIRST_YEAR, generate
from blocwatch.pipeline.store.database import Store

# Fast settings for tests; the benchmark passes its own.
FAST = {"bootstrap": 0, "permutations": 0}
# Data tables, then result tables; provenance columns are left out of comparisons.
COMPARED = ("bodies", "members", "memberships", "ballots", "votes", "periods", "period_metrics",
            "member_metrics", "group_agreement", "trends")
PROVENANCE = {"run_id", "loaded_at"}


def exe() -> list[str]:
    found = shutil.which("blocwatch")
    return [found] if found else [sys.executable, "-c",
                                  "from blocwatch.pipeline.cli.main import main; main()"]


@lru_cache(maxsize=1)
def _demo_rows(cache: str) -> tuple[list[str], list[list[str]], Path]:
    files = generate(Path(cache), seed=7)
    with files.votes.open(newline="", encoding="utf-8") as fh:
        rows = list(csv.reader(fh))
    return rows[0], rows[1:], files.roster


def demo_cache() -> str:
    path = Path(__file__).resolve().parent / "artifacts" / "demo-seed7"
    return str(path)


def write_year(project: Path, year: int, cache: str | None = None) -> Path:
    """Write ``data/votes-YEAR.csv`` (that year's ballots of the demo assembly)."""
    header, rows, _ = _demo_rows(cache or demo_cache())
    path = project / "data" / f"votes-{year}.csv"
    path.parent.mkdir(parents=True, exist_ok=True)
    with path.open("w", newline="", encoding="utf-8") as fh:
        w = csv.writer(fh)
        w.writerow(header)
        w.writerows(r for r in rows if r[1].startswith(str(year)))
    return path


def make_project(project: Path, years: int, *, settings: dict | None = None,
                 cache: str | None = None) -> Path:
    """A project folder with blocwatch.toml, the roster and the first ``years`` years."""
    _, _, roster = _demo_rows(cache or demo_cache())
    (project / "data").mkdir(parents=True, exist_ok=True)
    shutil.copy(roster, project / "data" / "roster.csv")
    for year in range(FIRST_YEAR, FIRST_YEAR + years):
        write_year(project, year, cache)
    build = "\n".join(f"{k} = {v}" for k, v in {**FAST, **(settings or {})}.items())
    (project / "blocwatch.toml").write_text(
        f'store = "blocwatch.duckdb"\noutput = "report"\n\n[build]\n{build}\n\n'
        f'[bodies."{BODY}"]\nsources = ["data/votes-*.csv"]\nmembers = "data/roster.csv"\n',
        encoding="utf-8")
    return project


def cli(*args, cwd: Path, timeout: float = 600) -> subprocess.CompletedProcess:
    return subprocess.run([*exe(), *map(str, args)], cwd=cwd, capture_output=True, text=True,
                          timeout=timeout)


def cli_here(*args, project: Path):
    """The same command line run in this process (click's runner): no interpreter start-up.
    The project's config is passed with --config, so the working folder does not matter."""
    from click.testing import CliRunner

    from blocwatch.pipeline.cli.main import cli as root

    result = CliRunner().invoke(root, ["--config", str(project / "blocwatch.toml"),
                                       *map(str, args)])
    if result.exception and not isinstance(result.exception, SystemExit):
        raise result.exception
    return subprocess.CompletedProcess(args, result.exit_code, result.stdout, result.stderr)


def popen(*args, cwd: Path) -> subprocess.Popen:
    """Start the CLI in its own session (so a test can kill its whole process group)."""
    return subprocess.Popen([*exe(), *map(str, args)], cwd=cwd, stdout=subprocess.PIPE,
                            stderr=subprocess.PIPE, text=True, start_new_session=True)


def contents(store_path: Path) -> dict[str, pd.DataFrame]:
    """Every compared table, sorted, without provenance columns."""
    out = {}
    with Store(store_path, read_only=True) as store:
        for table in COMPARED:
            frame = store.table(table)
            frame = frame.drop(columns=[c for c in frame.columns if c in PROVENANCE])
            out[table] = frame.sort_values(list(frame.columns)).reset_index(drop=True)
    return out


def assert_same(a: dict[str, pd.DataFrame], b: dict[str, pd.DataFrame]) -> None:
    assert a.keys() == b.keys()
    for table in a:
        pd.testing.assert_frame_equal(a[table], b[table], check_exact=True, obj=table)


def runs(store_path: Path) -> pd.DataFrame:
    with Store(store_path, read_only=True) as store:
        return store.df("SELECT * FROM runs ORDER BY run_id")
