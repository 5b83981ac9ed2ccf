"""What each entry point loads at run time, not only what modules import directly: the real
CLI in a fresh interpreter on a real stored build, then a look at ``sys.modules``.

``report``, ``export`` and ``--help`` read what a build stored; they must not load the
agreement kernel, period computation, model fits (the metrics package) or scikit-learn.
``status`` reads the votes to fingerprint each period (is it stale?), so it may load the vote
matrix, the planner and the metric registry's vote codes, but no agreement kernel, period
computation, metric family, scikit-learn, igraph or scipy.optimize.
"""

import json
import subprocess
import sys

import pytest

from blocwatch.pipeline.build.builder import build
from blocwatch.pipeline.ingest.load import ingest_files
from blocwatch.pipeline.options import AgreementOptions, BuildOptions
from blocwatch.pipeline.store.database import Store
from tests import toy_rollcall as toy

COMPUTE_STACK = ("blocwatch.pipeline.build", "blocwatch.metrics", "sklearn", "scipy",
                 "igraph", "leidenalg")
DATA_STACK = ("numpy", "pandas", "duckdb", "plotly", "networkx")
# What status may not load: the computing parts of build/ and every metrics module but the
# registry (vote codes, PeriodInput) and the methods reference.
STATUS_BANNED = ("blocwatch.pipeline.build.compute", "blocwatch.pipeline.build.agreement",
                 "blocwatch.pipeline.build.builder", "blocwatch.pipeline.build.graphs",
                 "blocwatch.pipeline.build.topics", "blocwatch.pipeline.build.scored_agreement",
                 "blocwatch.metrics.", "sklearn", "scipy.optimize", "igraph", "leidenalg")
STATUS_ALLOWED = ("blocwatch.metrics.registry", "blocwatch.metrics.reference")

RUN = """
import json, sys
from blocwatch.pipeline.cli.main import main
try:
    main(json.loads(sys.argv[1]))
except SystemExit as exc:
    code = exc.code
else:
    code = 0
with open(sys.argv[2], "w") as fh:
    json.dump({"code": code, "modules": sorted(sys.modules)}, fh)
"""


@pytest.fixture(scope="module")
def store(tmp_path_factory):
    folder = tmp_path_factory.mktemp("entry")
    path = folder / "toy.duckdb"
    with Store(path) as s:
        ingest_files(s, [toy.write_csv(folder / "toy.csv")], body="Toy")
        build(s, options=BuildOptions(bootstrap=0, permutations=0, agreement=AgreementOptions(
            min_shared=1, drop_unanimous=False)))
    return path


def _loaded(args, tmp_path, cwd) -> tuple[int, list[str]]:
    out = tmp_path / "modules.json"
    subprocess.run([sys.executable, "-c", RUN, json.dumps(args), str(out)], cwd=cwd,
                   check=True, capture_output=True, timeout=300)
    found = json.loads(out.read_text())
    return found["code"], found["modules"]


def _hits(modules, banned, allowed=()):
    """Loaded modules named in ``banned`` or below one (a name ending in "." bans only what
    is below it), leaving out ``allowed``."""
    return sorted(m for m in modules if m not in allowed and any(
        m.startswith(b) if b.endswith(".") else m == b or m.startswith(b + ".") for b in banned))


@pytest.mark.parametrize("args,banned", [
    (["--help"], COMPUTE_STACK + DATA_STACK),
    (["report", "--help"], COMPUTE_STACK + DATA_STACK),
    (["status", "--help"], COMPUTE_STACK + DATA_STACK),
    (["export", "--help"], COMPUTE_STACK + DATA_STACK),
    (["report", "--store", "{store}", "--out", "{tmp}/report"], COMPUTE_STACK),
    (["export", "--store", "{store}", "--table", "metrics", "--out", "{tmp}/m.csv"],
     COMPUTE_STACK + ("plotly", "networkx")),
], ids=lambda v: " ".join(v[:2]) if isinstance(v, list) else None)
def test_entry_point_loads_no_compute_stack(args, banned, store, tmp_path):
    args = [a.format(store=store, tmp=tmp_path) for a in args]
    code, modules = _loaded(args, tmp_path, tmp_path)
    assert code == 0
    assert _hits(modules, banned) == []


def test_status_loads_no_computing_part(store, tmp_path):
    code, modules = _loaded(["status", "--store", str(store), "--min-shared", "1",
                             "--bootstrap", "0", "--permutations", "0", "--keep-unanimous"],
                            tmp_path, tmp_path)
    assert code == 0
    assert _hits(modules, STATUS_BANNED, STATUS_ALLOWED) == []
    assert "blocwatch.pipeline.build.planner" in modules  # it did judge the periods


def test_negative_control_build_loads_the_compute_stack(store, tmp_path):
    """The checks see the stack where it belongs (so the tests above can fail)."""
    code, modules = _loaded(["build", "--store", str(store), "--bootstrap", "0",
                             "--permutations", "0", "--min-shared", "1"], tmp_path, tmp_path)
    assert code == 0
    assert _hits(modules, ("blocwatch.metrics", "sklearn", "blocwatch.pipeline.build.compute"))
    found = _hits(modules, STATUS_BANNED, STATUS_ALLOWED)
    assert {"blocwatch.pipeline.build.compute", "blocwatch.metrics.graph.modularity"} <= set(found)
    assert not set(STATUS_ALLOWED) & set(found)
