"""The demo through the real CLI, then its briefing page in headless Chromium.

The verdict on the page must carry the demo's stored numbers: the expected first and last
values are read from ``blocwatch export --table metrics``, never typed here.
"""

import io
import shutil
import subprocess
import sys
from pathlib import Path

import pandas as pd
import pytest

from blocwatch.dashboards.charts.chart import slug
from tests.browser_util import Browser, chromium_path
from tests.interval_checks import assert_no_silent_contradiction

ARTIFACTS = Path(__file__).resolve().parents[1] / "artifacts"
CLI = ([shutil.which("blocwatch")] if shutil.which("blocwatch")
       else [sys.executable, "-c", "from blocwatch.pipeline.cli.main import main; main()"])


@pytest.fixture(scope="module")
def demo(tmp_path_factory):
    out = tmp_path_factory.mktemp("demo")
    # A guard against a hung run, not a speed check: the full-default demo takes minutes on
    # a shared 2-core machine (issue 14's 15 s target is not met yet).
    proc = subprocess.run([*CLI, "demo", "--out", str(out / "d")], capture_output=True,
                          text=True, timeout=1800)
    assert proc.returncode == 0, proc.stderr
    export = subprocess.run([*CLI, "export", "--store", str(out / "d" / "blocwatch.duckdb"),
                             "--table", "metrics"], capture_output=True, text=True, timeout=120)
    assert export.returncode == 0, export.stderr
    return out / "d", pd.read_csv(io.StringIO(export.stdout))


def _headline_parts(metrics: pd.DataFrame, body: str) -> list[str]:
    rows = metrics[(metrics.body == body) & (metrics.metric == "group_modularity")
                   & (metrics.subset == "all")
                   & metrics.value.notna()].sort_values("period_start")
    first, last = rows.iloc[0], rows.iloc[-1]

    def shown(r, name=""):
        return f"{r.value:.2f} ({name}{r.low:.2f} to {r.high:.2f})".replace("-", "\u2212")

    return [f"{shown(first, '95 % interval ')} in {first.period}",
            f"{shown(last)} in {last.period}"]


def test_demo_store_holds_no_estimate_outside_its_interval_without_a_note(demo):
    # Issue 12 on the demo's own stored rows (default bootstrap): inside, or a note says why.
    _, metrics = demo
    has = assert_no_silent_contradiction(metrics)
    assert len(has) > 100  # the demo stores many intervals; the rule ran over them


def test_demo_verdict_matches_the_stored_numbers(demo):
    out, metrics = demo
    body = metrics.body.iloc[0]
    page = out / "report" / f"briefing-{slug(body)}.html"
    html = page.read_text()
    kind = html.split("data-verdict='", 1)[1].split("'", 1)[0]
    verdict = html.split("<p class='bw-headline'", 1)[1].split(">", 1)[1].split("</p>", 1)[0]
    # The demo is a 45-seat assembly with 60 ballots a year: enough data for a verdict.
    assert kind in ("clear rise", "clear fall", "no clear change"), verdict
    assert "group modularity went from" in verdict
    for part in _headline_parts(metrics, body):
        assert part in verdict


@pytest.mark.browser
@pytest.mark.skipif(chromium_path() is None,
                    reason="needs headless Chromium (Debian package chromium)")
def test_demo_page_renders_offline(demo):
    out, metrics = demo
    body = metrics.body.iloc[0]
    with Browser(chromium_path()) as b:
        b.open((out / "report" / f"briefing-{slug(body)}.html").as_uri())
        b.wait_for("window.__bwRendered + window.__bwErrors.length === window.__bwCharts")
        assert b.eval("window.__bwErrors") == []
        mine = metrics[metrics.body == body]  # the demo holds two bodies; this page shows one
        n_metrics = mine[mine.value.notna()].metric.nunique()
        trend_plots = b.eval("document.querySelectorAll('.js-plotly-plot[id*=\"-trend-\"]')"
                             ".length")
        assert trend_plots == n_metrics
        assert b.errors() == [] and b.blocked == []
        shot = b.screenshot(ARTIFACTS / f"demo-briefing-{slug(body)}.png")
        assert shot.stat().st_size > 20_000
