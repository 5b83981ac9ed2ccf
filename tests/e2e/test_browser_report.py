"""The report in a real headless Chromium: offline load, every chart drawn, nothing injected.

Pages load from file:// while every non-file request is intercepted and failed (and recorded);
the console must stay free of errors, and the hostile names must show up as plain text.
"""

import base64
import json
import shutil
from pathlib import Path

import pytest

from blocwatch.dashboards.pages.html import plotly_js
from blocwatch.dashboards.report import write_report
from tests.browser_util import Browser, chromium_path
from tests.dash_synthetic import EVIL_GROUP, EVIL_MEMBER, HARBOUR, make_tables

pytestmark = [pytest.mark.browser,
              pytest.mark.skipif(chromium_path() is None,
                                 reason="needs headless Chromium (Debian package chromium)")]
ARTIFACTS = Path(__file__).resolve().parents[1] / "artifacts"
BRIEFING = "briefing-harbour-board-of-veldmark.html"

PLOTS = """Array.from(document.querySelectorAll('.js-plotly-plot')).map(function (gd) {
  return {id: gd.id, traces: gd.data.length, drawn: gd.querySelectorAll('g.trace').length,
          types: gd.data.map(function (t) { return t.type || 'scatter'; }),
          modes: gd.data.map(function (t) { return t.mode || ''; }),
          points: gd.querySelectorAll('.scatterlayer .trace .points path').length}; })"""


@pytest.fixture(scope="module")
def site(tmp_path_factory):
    out = tmp_path_factory.mktemp("site")
    tables = make_tables(evil=True)
    write_report(out, tables, images=False)
    return out, tables


@pytest.fixture(scope="module")
def browser():
    with Browser(chromium_path(), width=800, height=1000) as b:
        yield b


def load(browser, path: Path):
    browser.events.clear()
    browser.blocked.clear()
    browser.open(path.as_uri())
    browser.wait_for("window.__bwCharts === undefined || "
                     "window.__bwRendered + window.__bwErrors.length === window.__bwCharts")


def test_interception_really_blocks_the_network(browser, tmp_path):
    # Sanity check of the harness: a page asking for a remote image gets it failed and logged.
    page = tmp_path / "probe.html"
    page.write_text("<!doctype html><img src='http://127.0.0.1:9/probe.png'>")
    load(browser, page)
    browser.pump(0.5)
    assert any("127.0.0.1:9/probe.png" in u for u in browser.blocked)


def test_briefing_renders_every_chart_offline(site, browser):
    out, tables = site
    load(browser, out / BRIEFING)
    assert browser.eval("window.__bwErrors") == []
    plots = browser.eval(PLOTS)
    m = tables.metrics[tables.metrics.body == HARBOUR]
    cps = json.loads(tables.trends.loc[tables.trends.body == HARBOUR, "change_points"].iloc[0])
    periods = sorted({m.period.min(), m.period.max(), *cps})
    # One trend chart per metric with any value, one network per chosen period, one heat map,
    # and one chart of each pair of groups' agreement when the body has three or more groups.
    n_metrics = m[m.value.notna()].metric.nunique()
    ga = tables.group_agreement[tables.group_agreement.body == HARBOUR]
    n_pairs = int(len(set(ga.group_a) | set(ga.group_b)) >= 3)
    assert len([p for p in plots if "-pairs-" in p["id"]]) == n_pairs
    assert len(plots) == browser.eval("window.__bwCharts") == (n_metrics + len(periods) + 1
                                                               + n_pairs)
    trends = [p for p in plots if "-trend-" in p["id"]]
    networks = [p for p in plots if "-network-" in p["id"]]
    heat = [p for p in plots if p["id"].endswith("groups-heatmap")]
    assert len(trends) == n_metrics and len(networks) == len(periods) and len(heat) == 1
    for p in trends:
        assert p["modes"].count("lines+markers") == 1  # one body on its own page
        assert p["drawn"] == p["traces"]  # every trace reached the SVG
    members = tables.members[(tables.members.body == HARBOUR)]
    for p in networks:
        period = p["id"].rsplit("network-", 1)[1]
        n = members[members.period == period].member_id.nunique()
        assert p["points"] == n  # one drawn marker per member
    assert heat[0]["types"] == ["heatmap"] * len(periods)
    # Every chart carries alternative text and the table of its numbers beside it.
    assert browser.eval("""Array.from(document.querySelectorAll('.js-plotly-plot')).every(
        function (gd) { var f = gd.closest('figure');
          return gd.getAttribute('role') === 'img' && gd.getAttribute('aria-label').length > 40
                 && f.querySelector('details table tbody tr') !== null; })""")
    assert browser.blocked == []
    assert browser.errors() == []


def test_folder_pages_share_one_library_file(site, browser):
    # The folder's pages draw from the one plotly.min.js beside them (loaded from file://,
    # the network blocked): the page itself does not carry the library.
    out, _ = site
    page = out / BRIEFING
    assert plotly_js()[:200] not in page.read_text()
    load(browser, page)
    assert browser.eval("typeof Plotly") == "object"
    assert browser.eval("window.__bwRendered") == browser.eval("window.__bwCharts") > 5
    assert browser.eval("document.querySelector('script[src]').src") == \
        (out / "plotly.min.js").as_uri()
    assert browser.blocked == [] and browser.errors() == []


def test_single_file_page_stands_alone(browser, tmp_path):
    # --single-file: one page copied on its own to an empty folder still draws every chart.
    write_report(tmp_path / "site", make_tables(evil=True), images=False, single_file=True)
    alone = tmp_path / "mail" / BRIEFING
    alone.parent.mkdir()
    shutil.copy(tmp_path / "site" / BRIEFING, alone)
    load(browser, alone)
    assert browser.eval("window.__bwErrors") == []
    assert browser.eval("window.__bwRendered") == browser.eval("window.__bwCharts") > 5
    assert browser.blocked == [] and browser.errors() == []


def test_folder_page_without_its_library_says_so(site, browser, tmp_path):
    # A folder page copied away from plotly.min.js keeps its text and tables and puts a
    # message where each chart would be, instead of failing silently.
    out, _ = site
    shutil.copy(out / BRIEFING, tmp_path / BRIEFING)
    browser.events.clear()
    browser.open((tmp_path / BRIEFING).as_uri())
    browser.wait_for("window.__bwErrors !== undefined && window.__bwErrors.length > 0")
    n = browser.eval("window.__bwCharts")
    texts = browser.eval("Array.from(document.querySelectorAll('div[data-bw-spec]'))"
                         ".map(function (d) { return d.textContent; })")
    assert len(texts) == n > 5
    assert all(t.startswith("Chart not drawn") and "--single-file" in t for t in texts)
    assert browser.eval("document.querySelectorAll('details table').length") >= n


def test_hostile_names_are_text_and_run_nothing(site, browser):
    out, _ = site
    load(browser, out / BRIEFING)
    assert browser.eval("typeof window.__pwned") == "undefined"
    assert browser.eval("document.querySelectorAll('img').length") == 0
    text = browser.eval("document.body.innerText")
    assert EVIL_MEMBER in text and EVIL_GROUP in text
    legend = browser.eval("Array.from(document.querySelectorAll('.legendtext'))"
                          ".map(function (e) { return e.textContent; })")
    assert EVIL_GROUP in legend  # plotly shows the escaped name as the original characters
    assert not any("dialog" in e for e in browser.errors())


def test_readable_at_800px_and_screenshot_saved(site, browser):
    out, _ = site
    load(browser, out / BRIEFING)
    assert browser.eval("document.documentElement.scrollWidth") <= 800
    shot = browser.screenshot(ARTIFACTS / "briefing-harbour-board-of-veldmark.png")
    assert shot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n" and shot.stat().st_size > 20_000


def test_comparison_page_shows_every_body_per_chart(site, browser):
    out, tables = site
    load(browser, out / "comparison.html")
    plots = browser.eval(PLOTS)
    assert len(plots) == tables.metrics[tables.metrics.value.notna()].metric.nunique()
    for p in plots:
        bodies_with_metric = tables.metrics[tables.metrics.value.notna()
                                            & (tables.metrics.metric == p["id"].split(
                                                "compare-", 1)[1])].body.nunique()
        assert p["modes"].count("lines+markers") == bodies_with_metric
    assert browser.errors() == [] and browser.blocked == []
    browser.screenshot(ARTIFACTS / "comparison.png")


def test_snippets_render_on_a_host_page(site, browser, tmp_path):
    out, _ = site
    (tmp_path / "plotly.min.js").write_text(plotly_js())
    pieces = out / "embed" / "harbour-board-of-veldmark"
    snippets = [(pieces / f"{name}.div.html").read_text()
                for name in ("trend-group_modularity", "network-2001")]
    host = tmp_path / "host.html"
    host.write_text("<!doctype html><meta charset='utf-8'><script src='plotly.min.js'></script>"
                    "<h1>Board paper</h1>" + "".join(snippets))
    shutil.copy(out / "index.html", tmp_path / "index.html")
    load(browser, host)
    browser.wait_for("document.querySelectorAll('.js-plotly-plot .main-svg').length >= 2")
    assert browser.eval("document.querySelectorAll('.js-plotly-plot').length") == 2
    assert browser.errors() == [] and browser.blocked == []


def test_print_stylesheet_and_pdf(site, browser):
    out, _ = site
    load(browser, out / BRIEFING)
    browser.call("Emulation.setEmulatedMedia", media="print")
    try:
        assert browser.eval("getComputedStyle(document.querySelector('nav')).display") == "none"
        assert browser.eval("getComputedStyle(document.body).maxWidth") == "none"
    finally:
        browser.call("Emulation.setEmulatedMedia", media="")
    pdf = browser.call("Page.printToPDF", paperWidth=8.27, paperHeight=11.69)["data"]
    assert base64.b64decode(pdf)[:5] == b"%PDF-"  # [S: PDF specification header]
    # Printing opened every numbers table so the paper copy carries them.
    assert browser.eval("Array.from(document.querySelectorAll('details'))"
                        ".every(function (d) { return d.open; })")
    assert browser.errors() == []
