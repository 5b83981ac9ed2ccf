"""HTML building blocks: chart blocks, number tables, the page shell and its security policy.

Charts are stored as JSON data blocks (``<script type="application/json">``, never executed) and
drawn by one small render script, so a page carries exactly two scripts: plotly.js and the
renderer. plotly.js is either inline (a self-contained page, to send on its own) or one file
beside the pages, loaded by relative path (a report folder: the 4–5 MB bundle once, not once per
page). The page's Content-Security-Policy allows the inline scripts by hash, the bundle file as
``'self'`` (the page's own folder or site; Chromium counts ``file://`` pages as their own
origin) and nothing else — no network source, no other inline script — so even a string that
slipped past escaping could not run.
"""

from __future__ import annotations

import base64
import hashlib
import json
import re
from functools import lru_cache
from pathlib import Path

import pandas as pd
import plotly

from blocwatch.dashboards.charts.chart import Chart
from blocwatch.dashboards.pages.safe import esc, script_json
from blocwatch.dashboards.pages.style import CSS
from blocwatch.dashboards.prose import labels, numbers

RENDER_JS = """(function () {
  var divs = document.querySelectorAll("div[data-bw-spec]");
  window.__bwCharts = divs.length; window.__bwRendered = 0; window.__bwErrors = [];
  window.addEventListener("beforeprint", function () {
    document.querySelectorAll("details").forEach(function (d) { d.open = true; });
  });
  if (typeof Plotly === "undefined") {  // a folder page copied away from its plotly.min.js
    divs.forEach(function (div) { div.textContent = MISSING; });
    window.__bwErrors.push("plotly.js not loaded"); return;
  }
  divs.forEach(function (div) {
    try {
      var spec = JSON.parse(document.getElementById(div.getAttribute("data-bw-spec")).textContent);
      Plotly.newPlot(div, spec.data, spec.layout, spec.config).then(
        function () { window.__bwRendered += 1; },
        function (e) { window.__bwErrors.push(String(e)); });
    } catch (e) { window.__bwErrors.push(String(e)); }
  });
})();""".replace("MISSING", json.dumps(
    "Chart not drawn: this page loads plotly.min.js from its report folder. Open the page "
    "inside that folder, or write the report with --single-file for pages that stand alone."))


# The plotly.js bundle shipped inside the plotly package: read or copied, never fetched.
PLOTLY_BUNDLE = Path(plotly.__file__).parent / "package_data" / "plotly.min.js"


@lru_cache(maxsize=1)
def plotly_js() -> str:
    """The plotly.js bundle as text for an inline ``<script>`` (read once)."""
    text = PLOTLY_BUNDLE.read_text(encoding="utf-8")
    # The bundle must not be able to end its own <script> element; "<\\/" means the same in JS.
    return re.sub(r"</(script)", r"<\\/\1", text, flags=re.IGNORECASE)


def _sha256(text: str) -> str:
    return "'sha256-" + base64.b64encode(hashlib.sha256(text.encode()).digest()).decode() + "'"


def csp(scripts: list[str], *, own_files: bool = False) -> str:
    """Content-Security-Policy allowing exactly ``scripts`` (by hash) and inline styles.

    ``own_files``: also allow script files from the page's own origin (the bundle file of a
    report folder); inline scripts still need their hash.
    """
    allowed = " ".join((["'self'"] if own_files else []) + [_sha256(s) for s in scripts]) \
        or "'none'"
    return ("default-src 'none'; script-src " + allowed
            + "; style-src 'unsafe-inline'; img-src data: blob:; font-src data:; "
            "connect-src 'none'; base-uri 'none'; form-action 'none'")


def spec_json(chart: Chart) -> str:
    """The chart's plotly JSON spec (data, layout, config) as text."""
    spec = json.loads(chart.fig.to_json())
    spec["config"] = {"responsive": True, "displaylogo": False,
                      "modeBarButtonsToRemove": ["select2d", "lasso2d"],
                      "toImageButtonOptions": {"filename": chart.name}}
    return json.dumps(spec, separators=(",", ":"))


def chart_div(chart: Chart, dom_id: str, *, tall: bool = False) -> str:
    """The plot ``<div>`` and its JSON data block (rendered by RENDER_JS or a snippet script)."""
    css = "bw-chart bw-tall" if tall else "bw-chart"
    return (f'<div id="{esc(dom_id)}" class="{css}" role="img" aria-label="{esc(chart.alt)}"'
            f' data-bw-spec="{esc(dom_id)}-spec"></div>\n'
            f'<script type="application/json" id="{esc(dom_id)}-spec">'
            f"{script_json(spec_json(chart))}</script>")


INT_COLUMNS = {"n_members", "n_ballots", "n_pairs", "rank", "n_periods", "cross_partners",
               "n_dropped", "n_cast"}
VALUE_COLUMNS = {"value", "low", "high", "null_mean", "score"}


def _cell(col: str, v, metric: str) -> str:
    if v is None or (not isinstance(v, str) and pd.isna(v)):
        return "<td></td>"
    if isinstance(v, pd.Timestamp):
        return f"<td>{v:%Y-%m-%d}</td>"
    if isinstance(v, bool):
        return f"<td>{'yes' if v else ''}</td>"
    if isinstance(v, (int, float)) and col.endswith("_p"):
        return f"<td class='num'>{esc(numbers.fmt_p(v))}</td>"
    if isinstance(v, (int, float)):
        integer = (col in INT_COLUMNS or col in labels.INTEGER_MEMBER_METRICS
                   or (col in VALUE_COLUMNS and labels.info(metric).integer))
        return f"<td class='num'>{esc(numbers.fmt(v, integer=integer))}</td>"
    return f"<td>{esc(v)}</td>"


def numbers_table(frame: pd.DataFrame, columns: dict[str, str], *, metric: str = "") -> str:
    """An HTML table of ``frame[columns]`` with escaped cells and formatted numbers."""
    if frame.empty:
        return "<p class='bw-muted'>No numbers.</p>"
    columns = {c: label for c, label in columns.items() if c in frame.columns}
    head = "".join(f"<th scope='col'>{esc(label)}</th>" for label in columns.values())
    rows = ["<tr>" + "".join(_cell(c, v, metric) for c, v in rec.items()) + "</tr>"
            for rec in frame[list(columns)].to_dict("records")]
    return (f"<div class='bw-scroll'><table><thead><tr>{head}</tr></thead>"
            f"<tbody>{''.join(rows)}</tbody></table></div>")


def chart_block(chart: Chart, dom_id: str, columns: dict[str, str], *, metric: str = "",
                tall: bool = False) -> str:
    """A ``<figure>``: the chart (or "not computed"), caption, alt text and its numbers."""
    if chart.empty:
        return (f"<figure class='bw-figure bw-empty'><h3>{esc(chart.title)}</h3>"
                f"<p class='bw-muted'>{esc(chart.note or 'Not computed.')}</p></figure>")
    note = f"<p class='bw-note'>{esc(chart.note)}</p>" if chart.note else ""
    div = chart_div(chart, dom_id, tall=tall)
    return (f"<figure class='bw-figure' id='{esc(dom_id)}-figure'>\n{div}\n"
            f"<figcaption><p class='bw-alt'>{esc(chart.alt)}</p>{note}"
            f"<details><summary>Numbers behind this chart</summary>"
            f"{numbers_table(chart.data, columns, metric=metric)}</details></figcaption></figure>")


def page(title: str, body_html: str, *, charts: bool = True,
         plotly_src: str | None = None) -> str:
    """A complete offline page: inline CSS, plotly.js once, the renderer, strict CSP.

    ``plotly_src``: relative URL of the plotly.js file beside the page (a report folder);
    ``None`` puts the bundle inline, so the page works on its own (single-file mode).
    """
    bundle = plotly_src is not None and charts
    scripts = (([] if bundle else [plotly_js()]) + [RENDER_JS]) if charts else []
    loader = f"<script src='{esc(plotly_src)}'></script>\n" if bundle else ""
    tail = loader + "".join(f"<script>{s}</script>\n" for s in scripts)
    return (
        "<!DOCTYPE html>\n<html lang='en'>\n<head>\n<meta charset='utf-8'>\n"
        "<meta name='viewport' content='width=device-width, initial-scale=1'>\n"
        f'<meta http-equiv="Content-Security-Policy" content="{csp(scripts, own_files=bundle)}">\n'
        f"<meta name='generator' content='blocwatch'>\n<title>{esc(title)}</title>\n"
        f"<style>{CSS}</style>\n</head>\n<body>\n{body_html}\n{tail}</body>\n</html>\n")
