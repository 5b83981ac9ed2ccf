"""ops/rebuild.py in-process on a real DuckDB file: source states, what a rebuild recomputes,
and the staged swap of the output folder. Inputs: the toy roll call, one file per year
(tests/toy_rollcall.py). Expected values follow the module's documented rules: a file whose
sha256 the load log holds is "loaded", another file at a path loaded before is "changed", any
other is "new"; a rebuild recomputes exactly the planner's stale periods.
"""

import json

import pytest

from blocwatch.pipeline.config import Config
from blocwatch.pipeline.ops.rebuild import (
    MARKER,
    outputs_current,
    rebuild,
    rebuild_with_report,
    swap_outputs,
)
from blocwatch.pipeline.ops.sources import file_sha256, scan_sources
from blocwatch.pipeline.store.database import Store
from tests import toy_rollcall as toy


@pytest.fixture
def project(tmp_path):
    data = tmp_path / "data"
    data.mkdir()
    toy.write_years(data, (2019,))
    cfg = Config(tmp_path / "blocwatch.toml", {"bodies": {"Toy": {"sources": ["data/*.csv"]}}})
    return tmp_path, cfg


def _rebuild(tmp_path, cfg, **kw):
    return rebuild(tmp_path / "s.duckdb", options=toy.fast_options(), config=cfg, **kw)


def test_sources_are_new_then_loaded_then_changed(project):
    tmp_path, cfg = project
    (src,) = scan_sources(None, cfg)
    assert (src.body, src.state, src.kind) == ("Toy", "new", "votes")
    assert src.sha256 == file_sha256(src.path)
    _rebuild(tmp_path, cfg)
    with Store(tmp_path / "s.duckdb") as store:
        assert [s.state for s in scan_sources(store, cfg)] == ["loaded"]
    # the same path with other content: one vote changed
    text = src.path.read_text(encoding="utf-8").replace("2019-v4,2019-03-23,B3,N",
                                                        "2019-v4,2019-03-23,B3,Y")
    src.path.write_text(text, encoding="utf-8")
    with Store(tmp_path / "s.duckdb") as store:
        assert [s.state for s in scan_sources(store, cfg)] == ["changed"]


def test_a_missing_configured_file_is_a_usage_error(project):
    tmp_path, _ = project
    cfg = Config(tmp_path / "blocwatch.toml",
                 {"bodies": {"Toy": {"sources": ["data/*.csv"], "members": "nowhere.csv"}}})
    with pytest.raises(Exception, match="does not exist"):
        scan_sources(None, cfg)


def test_rebuild_loads_builds_then_has_nothing_to_do(project):
    tmp_path, cfg = project
    first = _rebuild(tmp_path, cfg)
    assert [s.state for s in first.ingested] == ["new"]
    assert [(s.period, s.reason) for s in first.stale] == [("2019", "new")]
    assert first.build.periods == [("Toy", "2019")]
    again = _rebuild(tmp_path, cfg)
    assert again.nothing_to_do and again.stale == [] and again.build is None
    assert again.summary().startswith("nothing to do")


def test_a_new_years_file_recomputes_only_that_period(project):
    tmp_path, cfg = project
    _rebuild(tmp_path, cfg)
    toy.write_years(tmp_path / "data", (2020,))
    report = _rebuild(tmp_path, cfg)
    assert [s.path.name for s in report.ingested] == ["toy-2020.csv"]
    assert [(s.period, s.reason) for s in report.stale] == [("2020", "new")]
    assert report.build.periods == [("Toy", "2020")] and report.build.skipped == [("Toy", "2019")]


def test_outputs_are_swapped_in_whole_with_the_run_they_show(tmp_path):
    out = tmp_path / "report"
    out.mkdir()
    (out / "old.html").write_text("old", encoding="utf-8")

    def write(folder):
        folder.mkdir(parents=True)
        (folder / "page.html").write_text("new", encoding="utf-8")
        return [folder / "page.html"]

    paths = swap_outputs(out, write, 7)
    assert paths == [out / "page.html"] and not (out / "old.html").exists()
    assert json.loads((out / MARKER).read_text(encoding="utf-8")) == {"run": 7}
    assert outputs_current(out, 7) and not outputs_current(out, 8)
    assert list(tmp_path.glob(".report.*")) == []  # no staging folder left behind


def test_rebuild_with_report_writes_the_report_once_per_new_result(project):
    """The library call behind 'blocwatch rebuild': the report lands in the config's output
    folder (relative to blocwatch.toml) with the run it shows, and is not rewritten while the
    store holds nothing newer."""
    tmp_path, cfg = project
    cfg = Config(cfg.path, {**cfg.data, "output": "site"})
    first = rebuild_with_report(tmp_path / "s.duckdb", options=toy.fast_options(), config=cfg)
    out = tmp_path / "site"
    pages = [p for p in first.outputs if p.suffix == ".html" and p.parent == out]
    assert pages and all(p.is_file() for p in pages)
    assert json.loads((out / MARKER).read_text(encoding="utf-8")) == {"run": first.build.run_id}
    again = rebuild_with_report(tmp_path / "s.duckdb", options=toy.fast_options(), config=cfg)
    assert again.nothing_to_do and again.outputs == []
