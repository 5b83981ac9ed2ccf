"""The benchmark's documented command runs end to end at its tiny size (no timing assertions)."""

import json
import subprocess
import sys
from pathlib import Path

BENCH = Path(__file__).resolve().parents[1] / "benchmarks" / "bench.py"
STAGES = ("ingest", "matrices", "build", "rebuild", "report")


def test_bench_tiny_reports_every_stage_and_target(tmp_path):
    out = tmp_path / "bench.json"
    proc = subprocess.run([sys.executable, str(BENCH), "--size", "tiny", "--jobs", "1",
                           "--repeats", "1", "--workdir", str(tmp_path), "--json", str(out)],
                          capture_output=True, text=True, timeout=600)
    assert proc.returncode == 0, proc.stderr[-3000:]
    res = json.loads(out.read_text())
    # Every stage was timed with a positive duration.
    assert res["agreement"]["agreement"] > 0 and res["agreement"]["bare_product"] > 0
    assert res["agreement"]["pandas"] > 0
    assert all(res["national"][s] > 0 for s in STAGES)
    assert res["national"]["peak_bytes"] > 0
    assert any(k.startswith("metric:") for k in res["period"])
    assert any(k.startswith("bootstrap") for k in res["period"])
    assert set(res["ingest"]) == {"parquet", "csv"}
    # The printed target table names every target.
    names = [t["target"] for t in res["targets"]]
    assert len(names) == 9  # the demo's row only with --demo
    assert res["chamber"] > 0
    for word in ("one period", "bare product", "pandas", "ingest + build", "peak memory", "rebuild",
                 "Parquet", "CSV", "large chamber"):
        assert any(word in n for n in names), word
        assert word in proc.stdout
    # Temporary files and stores are gone.
    assert list(tmp_path.iterdir()) == [out]
