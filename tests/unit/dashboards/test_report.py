"""write_report: file set and names, offline pages, escaping, embeds, graceful emptiness."""

import json
import re

import pandas as pd
import pytest

from blocwatch.dashboards.errors import ImageExportUnavailable, ReportInputError
from blocwatch.dashboards.pages.html import PLOTLY_BUNDLE, plotly_js
from blocwatch.dashboards.pages.safe import esc as html_text
from blocwatch.dashboards.report import body_slugs, write_report
from blocwatch.dashboards.tables import ReportTables
from tests.dash_synthetic import EVIL_GROUP, EVIL_MEMBER, HARBOUR, TARN, make_tables

NO_BROWSER = "/nonexistent/chromium"


@pytest.fixture(scope="module")
def report(tmp_path_factory):
    out = tmp_path_factory.mktemp("report")
    tables = make_tables(evil=True)
    paths = write_report(out, tables, images=False)
    return out, tables, paths


def test_file_names_are_stable_and_all_returned(report):
    out, tables, paths = report
    on_disk = {p for p in out.rglob("*") if p.is_file()}
    assert set(paths) == on_disk
    rel = {p.relative_to(out).as_posix() for p in paths}
    h = "harbour-board-of-veldmark"
    assert {"index.html", "comparison.html", f"briefing-{h}.html",
            "briefing-assembly-of-the-tarn-isles.html"} <= rel
    for metric in tables.metrics.metric.unique():
        for ext in ("div.html", "json", "csv"):
            assert f"embed/{h}/trend-{metric}.{ext}" in rel
            assert f"embed/comparison/compare-{metric}.{ext}" in rel
    # Networks default to first, change point and last period.
    cp = json.loads(tables.trends.loc[tables.trends.body == HARBOUR, "change_points"].iloc[0])
    for period in ["2001", *cp, "2010"]:
        assert f"embed/{h}/network-{period}.edges.csv" in rel
    assert f"embed/{h}/groups-heatmap.csv" in rel
    assert not any(p.suffix in (".png", ".svg") for p in paths)  # images=False


def test_pages_load_the_folders_one_plotly_file(report):
    out, _, paths = report
    bundle = out / "plotly.min.js"
    assert bundle in paths and bundle.read_bytes() == PLOTLY_BUNDLE.read_bytes()
    bundle_head = plotly_js()[:200]
    for page in ("briefing-harbour-board-of-veldmark.html", "comparison.html"):
        html = (out / page).read_text()
        assert bundle_head not in html  # the library is not copied into the page
        assert re.findall(r"<script src='([^']*)'>", html) == ["plotly.min.js"]
        # Our own markup links nowhere off the page.
        assert not re.search(r"""(src|href)\s*=\s*["']?(https?:)?//""", html)
        assert "default-src 'none'" in html and "connect-src 'none'" in html
        assert "script-src 'self' 'sha256-" in html  # the file by origin, the renderer by hash
        assert len(re.findall(r"<script>", html)) == 1  # the renderer, nothing else inline
    # A page of the folder is a small fraction of the library it loads.
    page_bytes = (out / "briefing-harbour-board-of-veldmark.html").stat().st_size
    assert page_bytes < bundle.stat().st_size / 5
    assert "plotly.min.js" in (out / "index.html").read_text()


def test_single_file_pages_carry_plotly_once_inline(tmp_path):
    paths = write_report(tmp_path, make_tables(), images=False, single_file=True)
    assert not (tmp_path / "plotly.min.js").exists() and all(
        p.name != "plotly.min.js" for p in paths)
    bundle_head = plotly_js()[:200]
    for page in ("briefing-harbour-board-of-veldmark.html", "comparison.html"):
        html = (tmp_path / page).read_text()
        assert html.count(bundle_head) == 1
        assert "<script src=" not in html
        ours = html.replace(plotly_js(), "")
        # The bundle's own strings (e.g. its unused logo link) are not loads; the browser test
        # checks actual requests.
        assert not re.search(r"""(src|href)\s*=\s*["']?(https?:)?//""", ours)
        assert "'self'" not in html  # nothing is allowed from outside the page
        assert len(re.findall(r"<script>", html)) == 2  # plotly.js + renderer


def test_user_strings_never_appear_raw(report):
    out, _, paths = report
    for p in paths:
        if p.suffix in (".html", ".json"):
            text = p.read_text()
            assert EVIL_MEMBER not in text, p
            assert EVIL_GROUP not in text, p
    page = (out / "briefing-harbour-board-of-veldmark.html").read_text()
    assert "&lt;img src=x onerror=alert(1)&gt;" in page  # shown as text in the tables


def test_csv_holds_the_drawn_numbers_raw(report):
    out, tables, _ = report
    csv = pd.read_csv(out / "embed/harbour-board-of-veldmark/trend-group_modularity.csv")
    rows = tables.metrics[(tables.metrics.body == HARBOUR)
                          & (tables.metrics.metric == "group_modularity")]
    assert list(csv["value"].round(12)) == list(rows["value"].round(12))
    nodes = pd.read_csv(out / "embed/harbour-board-of-veldmark/network-2001.csv")
    assert EVIL_MEMBER in set(nodes["name"])  # CSV is data: the raw name, not HTML


def test_json_spec_is_plotly_and_parses(report):
    out, _, _ = report
    spec = json.loads((out / "embed/comparison/compare-group_modularity.json").read_text())
    assert {"data", "layout", "config"} <= set(spec)
    bodies = {tr["name"] for tr in spec["data"] if tr.get("mode") == "lines+markers"}
    assert bodies == {HARBOUR, TARN}


def test_snippet_needs_host_plotly_and_has_unique_ids(report):
    out, _, _ = report
    snip = (out / "embed/harbour-board-of-veldmark/trend-group_modularity.div.html").read_text()
    assert "bw-harbour-board-of-veldmark-trend-group_modularity" in snip
    assert "Plotly.newPlot" in snip and plotly_js()[:200] not in snip


def test_comparison_notes_different_period_lengths(report):
    out, _, _ = report
    html = (out / "comparison.html").read_text()
    assert "Period lengths differ between bodies" in html
    assert "about 12 months" in html and "about 24 months" in html


def test_reading_methods_and_provenance_sections(report):
    out, tables, _ = report
    html = (out / "briefing-harbour-board-of-veldmark.html").read_text()
    assert "Reading these figures" in html and "not why" in html
    assert "must not be used to single out" in html
    # The Methods section prints the stored metric list (here the registry's, as a build's).
    for r in tables.measures[tables.measures.metric.isin(["group_modularity", "ei_index"])
                             ].itertuples():
        assert html_text(r.reference) in html and html_text(r.description) in html
    assert tables.provenance["data_fingerprint"] in html and "run-7" in html


def test_empty_tables_degrade_to_not_computed(tmp_path):
    m = pd.DataFrame({"body": ["Tarn Harbour Trust"], "period": ["2001"], "metric": ["silhouette"],
                      "value": [float("nan")], "note": ["only one group present"]})
    paths = write_report(tmp_path, ReportTables(metrics=m), images=False)
    html = (tmp_path / "briefing-tarn-harbour-trust.html").read_text()
    assert "Not computed: only one group present." in html
    assert "Not computed: no member or tie data" in html
    assert "Not computed: no group-versus-group agreement" in html
    assert "<script>" not in html  # nothing to draw: no plotly.js at all
    assert (tmp_path / "comparison.html") in paths


def test_nothing_at_all(tmp_path):
    paths = write_report(tmp_path, ReportTables(), images=False)
    assert {p.name for p in paths} == {"comparison.html", "index.html"}


def test_colour_override_reaches_the_figures(tmp_path):
    t = make_tables(two_bodies=False)
    t.colours = {"Tideward": "#112233"}
    write_report(tmp_path, t, images=False)
    spec = json.loads((tmp_path / "embed/harbour-board-of-veldmark/network-2001.json").read_text())
    tide = next(tr for tr in spec["data"] if tr.get("name") == "Tideward")
    assert tide["marker"]["color"] == "#112233"


def test_bad_input_is_reported(tmp_path):
    with pytest.raises(ReportInputError, match="expected ReportTables"):
        write_report(tmp_path, {"metrics": None})
    with pytest.raises(ReportInputError, match="not in the results: Nowhere"):
        write_report(tmp_path, make_tables(), bodies=["Nowhere"])


def test_required_images_without_browser_fail_before_writing(tmp_path):
    with pytest.raises(ImageExportUnavailable) as err:
        write_report(tmp_path / "out", make_tables(), images=True, browser_path=NO_BROWSER)
    assert NO_BROWSER in str(err.value) and "install Chromium" in str(err.value)
    assert err.value.exit_code == 69
    assert not (tmp_path / "out").exists()


def test_optional_images_without_browser_are_skipped_with_a_note(tmp_path):
    paths = write_report(tmp_path, make_tables(two_bodies=False), browser_path=NO_BROWSER)
    assert not any(p.suffix in (".png", ".svg") for p in paths)
    assert "Images not written" in (tmp_path / "index.html").read_text()


def test_colliding_body_names_get_distinct_keys():
    keys = body_slugs(["Board A", "board-a", "comparison"])
    assert len(set(keys.values())) == 3 and keys["comparison"] != "comparison"


@pytest.mark.parametrize("only", ["metrics", "members", "group_agreement", "trends", "edges"])
def test_any_single_table_alone_still_makes_pages(tmp_path, only):
    full = make_tables(two_bodies=False, n_members=6, n_periods=3)
    tables = ReportTables(**{only: getattr(full, only)})
    paths = write_report(tmp_path, tables, images=False)
    briefing = tmp_path / "briefing-harbour-board-of-veldmark.html"
    assert briefing in paths
    html = briefing.read_text()
    assert "Reading these figures" in html and "Not computed" in html


def test_odd_values_do_not_crash(tmp_path):
    t = make_tables(two_bodies=False, n_members=6, n_periods=4)
    t.trends.loc[:, "change_points"] = "[]"
    t.members.loc[t.members.index[:5], "name"] = None
    t.members.loc[t.members.index[5:9], "group_name"] = None
    t.edges = pd.concat([t.edges, pd.DataFrame({
        "body": [HARBOUR], "period": ["2001"], "member_a": ["stranger"],
        "member_b": [t.edges.member_a.iloc[0]], "agreement": [0.5]})])
    t = ReportTables(metrics=t.metrics, members=t.members, group_agreement=t.group_agreement,
                     trends=t.trends, edges=t.edges)
    write_report(tmp_path, t, images=False)
    spec = json.loads((tmp_path / "embed/harbour-board-of-veldmark/network-2001.json").read_text())
    names = [tr["name"] for tr in spec["data"] if tr.get("mode") == "markers"]
    assert "no group" in names  # the stranger and the ungrouped members


def test_folder_is_much_smaller_than_single_file_pages(report, tmp_path):
    # Three pages draw charts here; the folder carries the library once instead of three times.
    out, tables, _ = report
    write_report(tmp_path, tables, images=False, single_file=True)

    def size(folder):
        return sum(p.stat().st_size for p in folder.rglob("*") if p.is_file())

    library = PLOTLY_BUNDLE.stat().st_size
    assert size(tmp_path) - size(out) > 1.9 * library  # two copies fewer (of three)
    assert size(out) < 0.5 * size(tmp_path)
