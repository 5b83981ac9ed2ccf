"""``status`` names each build setting that differs from the last build, with both values.

Real CLI in a subprocess: a project from tests/rebuild_util.py (its blocwatch.toml sets
bootstrap = 0 and permutations = 0), rebuilt once with other values given as flags.
"""

from blocwatch.pipeline.ops.settings import settings_changes
from blocwatch.pipeline.options import AgreementOptions, BuildOptions
from blocwatch.pipeline.store.database import Store
from tests.rebuild_util import cli, make_project


def test_plain_status_after_a_rebuild_with_flags_names_the_settings(tmp_path):
    project = make_project(tmp_path / "p", 2)
    config = project / "blocwatch.toml"
    proc = cli("rebuild", "--no-report", "--bootstrap", "2", "--permutations", "3", cwd=project)
    assert proc.returncode == 0, proc.stderr
    with Store(project / "blocwatch.duckdb", read_only=True) as s:
        before = s.content_hash()

    out = cli("status", cwd=project)
    assert out.returncode == 0, out.stderr
    line = next(x for x in out.stdout.splitlines() if x.startswith("settings:"))
    assert line.startswith("settings: differ from run 1 (rebuild), which computed the stored "
                           "results — ")
    assert f"bootstrap 2 then, 0 now (from {config.resolve()})" in line
    assert f"permutations 3 then, 0 now (from {config.resolve()})" in line
    assert "seed" not in line and "period" not in line  # only what differs

    # with the same values given again nothing is stale and nothing is named
    same = cli("status", "--bootstrap", "2", "--permutations", "3", cwd=project)
    assert "stale: none (up to date)" in same.stdout and "settings:" not in same.stdout
    # a flag of its own is named as such
    other = cli("status", "--bootstrap", "2", "--permutations", "3", "--min-shared", "7",
                cwd=project)
    assert "min_shared 5 then, 7 now (from the command line)" in other.stdout
    with Store(project / "blocwatch.duckdb", read_only=True) as s:
        assert s.content_hash() == before  # status only reads


def test_keep_unanimous_is_named_as_the_flag_not_the_stored_field():
    then = BuildOptions().params()
    now = BuildOptions(agreement=AgreementOptions(drop_unanimous=False))
    (change,) = settings_changes(then, now, {"keep_unanimous": "from the command line"})
    assert change.text() == "keep_unanimous false then, true now (from the command line)"
    assert settings_changes(then, BuildOptions()) == []
