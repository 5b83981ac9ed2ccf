"""Child process of the benchmark: ingest, or a national-scale ingest + build + rebuild + report.

``python national.py JOB_JSON`` prints one JSON line of timings. The parent samples this
process tree's memory, so nothing else of the benchmark is resident here.
"""

from __future__ import annotations

import json
import os
import sys
import threading
import time
from pathlib import Path

import numpy as np

sys.path.insert(0, str(Path(__file__).resolve().parent))

import synth  # noqa: E402

BODY = "Synthetic Chamber"


def tree_rss(pid: int) -> int:
    """Resident bytes of ``pid`` and all its descendants (Linux /proc)."""
    total, todo = 0, [pid]
    while todo:
        p = todo.pop()
        try:
            status = Path(f"/proc/{p}/status").read_text()
            total += int(status.split("VmRSS:")[1].split()[0]) * 1024
            for task in Path(f"/proc/{p}/task").iterdir():
                todo += [int(c) for c in (task / "children").read_text().split()]
        except (OSError, IndexError, ValueError):
            continue
    return total


class PhasePeaks:
    """Samples this process tree's memory every 0.1 s; peak bytes per named phase."""

    def __init__(self):
        self.phase, self.peaks = "start", {}
        threading.Thread(target=self._run, daemon=True).start()

    def _run(self):
        while True:
            rss = tree_rss(os.getpid())
            self.peaks[self.phase] = max(self.peaks.get(self.phase, 0), rss)
            time.sleep(0.1)


def _ingest(store, votes: str | Path, roster: str | Path) -> float:
    from blocwatch.pipeline.ingest.load import ingest_files

    t0 = time.perf_counter()
    ingest_files(store, [Path(votes)], body=BODY, members=Path(roster))
    return time.perf_counter() - t0


def _terms(path: Path, years: list[int]) -> str:
    lines = ["name,start,end"] + [f"{y},{y}-01-01,{y}-12-31" for y in years]
    path.write_text("\n".join(lines) + "\n", encoding="utf-8")
    return f"terms:{path}"


def national(job: dict) -> dict:
    from blocwatch.pipeline.build.builder import build
    from blocwatch.pipeline.build.executors import ExecutorSpec, make_executor
    from blocwatch.pipeline.build.matrices import load_votes
    from blocwatch.pipeline.build.planner import body_periods
    from blocwatch.pipeline.options import BuildOptions
    from blocwatch.pipeline.store.database import Store

    work = Path(job["work"])
    size = synth.Size(job["periods"], job["members"], job["ballots"])
    k = min(job["build_periods"], size.periods)
    first_year = 1971
    years = list(range(first_year, first_year + k))
    spec = "year" if k == size.periods else _terms(work / "terms.csv", years)
    opts = BuildOptions(period=spec, bootstrap=job["bootstrap"],
                        permutations=job["permutations"])
    out: dict = {"built_periods": k}
    peaks = PhasePeaks()
    with Store(job["store"]) as store:
        peaks.phase = "ingest"
        out["ingest"] = _ingest(store, job["votes"], job["roster"])
        peaks.phase = "build"
        periods = body_periods(store, BODY, "year")
        sample = periods[:: max(1, len(periods) // 3)][:3]
        t0 = time.perf_counter()
        for _ in range(job["repeats"]):
            for period in sample:
                load_votes(store, BODY, period)
        out["matrices"] = (time.perf_counter() - t0) / (job["repeats"] * len(sample))
        with make_executor(ExecutorSpec("local", jobs=job["jobs"])) as pool:
            t0 = time.perf_counter()
            build(store, options=opts, executor=pool)
            out["build"] = time.perf_counter() - t0
            peaks.phase = "rebuild"
            out["build_full"] = out["build"] * size.periods / k
            # One new year arrives: load it, then rebuild only what changed.
            files = synth.SynthFiles(Path(job["votes"]), Path(job["roster"]), size.rows)
            new_year = first_year + size.periods
            extra = synth.append_period(files, size, year=new_year, seed=99)
            out["ingest_new_period"] = _ingest(store, extra, job["roster"])
            if k < size.periods:
                opts_new = BuildOptions(period=_terms(work / "terms.csv", years + [new_year]),
                                        bootstrap=job["bootstrap"],
                                        permutations=job["permutations"])
            else:
                opts_new = opts
            t0 = time.perf_counter()
            report = build(store, options=opts_new, executor=pool, only_changed=True,
                           command="rebuild")
            out["rebuild"] = time.perf_counter() - t0
        assert len(report.periods) == 1, report.periods
        # Projection: a full-size rebuild also fingerprints the periods not built here.
        out["rebuild_full"] = out["rebuild"] + (size.periods - k) * out["matrices"]
        peaks.phase = "report"
        out["report"] = _report(store, work / "report")
    out.update({f"peak_{k}": v for k, v in peaks.peaks.items()})
    return out


def _report(store, out_dir: Path) -> float:
    from blocwatch.dashboards import ReportTables, write_report
    from blocwatch.pipeline.report.frames import report_frames

    t0 = time.perf_counter()
    frames = report_frames(store)
    write_report(out_dir, ReportTables(**frames), images=False)
    return time.perf_counter() - t0


def run_child(job: dict) -> dict:
    from blocwatch.pipeline.store.database import Store

    if job["kind"] == "ingest":
        with Store(job["store"]) as store:
            return {"seconds": _ingest(store, job["votes"], job["roster"])}
    return national(job)


if __name__ == "__main__":
    result = run_child(json.loads(sys.argv[1]))
    print(json.dumps({k: (float(v) if isinstance(v, np.floating) else v)
                      for k, v in result.items()}))
