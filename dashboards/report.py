"""``write_report``: every page and embeddable piece of a report, written into one folder.

Layout of ``out_dir`` (names are stable: they come from body, chart and metric names)::

    index.html                          links to everything below
    plotly.min.js                       the charting library, once (every page loads it)
    briefing-<body>.html                one offline page per body
    comparison.html                     every body on one chart per metric
    embed/<body>/<chart>.div.html       snippet (host page loads plotly.js once)
    embed/<body>/<chart>.json           plotly JSON spec
    embed/<body>/<chart>.csv            every series drawn (+ <chart>.edges.csv for networks)
    embed/<body>/<chart>.png|.svg       images, when a Chrome/Chromium can be driven
    embed/comparison/compare-<metric>.* the same for the comparison charts

``<chart>`` is ``trend-<metric>``, ``network-<period>`` or ``groups-heatmap``; ``<body>`` is a
file-name form of the body's name.

With ``single_file=True`` there is no ``plotly.min.js``: every page carries the library inline
and stands alone (to send one page by mail), at the library's size per page.
"""

from __future__ import annotations

import hashlib
import logging
import os
import shutil
from pathlib import Path

from blocwatch.dashboards.charts import palette
from blocwatch.dashboards.charts.chart import Chart, slug
from blocwatch.dashboards.charts.images import FORMATS, export_images, find_browser
from blocwatch.dashboards.errors import ImageExportUnavailable, ReportInputError
from blocwatch.dashboards.pages.briefing import build_briefing
from blocwatch.dashboards.pages.compare import build_comparison
from blocwatch.dashboards.pages.embed import write_pieces
from blocwatch.dashboards.pages.html import PLOTLY_BUNDLE, page
from blocwatch.dashboards.pages.safe import esc
from blocwatch.dashboards.tables import ReportTables

log = logging.getLogger("blocwatch.dashboards")
IMAGE_WIDTH = 900
PLOTLY_FILE = "plotly.min.js"  # beside the pages, which load it by this relative path


def body_slugs(bodies: list[str]) -> dict[str, str]:
    """File-name key per body; colliding keys get a short hash of the full name appended."""
    plain = {b: slug(b) for b in bodies}
    counts: dict[str, int] = {}
    for s in plain.values():
        counts[s] = counts.get(s, 0) + 1
    return {b: s if counts[s] == 1 and s != "comparison"
            else f"{s}-{hashlib.sha1(b.encode()).hexdigest()[:6]}" for b, s in plain.items()}


def write_report(out_dir: str | os.PathLike, tables: ReportTables, *,
                 bodies: list[str] | None = None,
                 periods: list[str] | dict[str, list[str]] | None = None,
                 images: bool | None = None, image_formats: tuple[str, ...] = FORMATS,
                 browser_path: str | os.PathLike | None = None, seed: int = 0,
                 n_bridges: int = 3, max_edges: int = 3000,
                 bridge_metric: str | None = None, single_file: bool = False) -> list[Path]:
    """Write briefing pages, the comparison page, the index and embeddable pieces.

    Parameters
    ----------
    out_dir : path
        Folder to write into (created if needed; files of the same name are replaced).
    tables : ReportTables
        The result tables (see ``blocwatch.dashboards.tables``).
    bodies : list of str, optional
        Bodies that get a briefing page (default: every body in the tables).
    periods : list or dict, optional
        Periods for the network pictures and heat maps, for every body (list) or per body
        (dict). Default: first period, change point(s) of the lead metric, last period.
    images : bool or None
        ``None`` (default): write PNG/SVG when a browser is found, else skip them quietly.
        ``True``: images are required — raise ``ImageExportUnavailable`` before writing
        anything when no browser is found. ``False``: never write images.
    image_formats : tuple of str
        Any of ``("png", "svg")``.
    browser_path : path, optional
        Chrome/Chromium executable for image export (else ``BLOCWATCH_BROWSER``, else PATH).
    seed : int
        Seed of the force layout used when members have no stored map positions.
    n_bridges : int
        Members listed per period in the top-bridges table.
    max_edges : int
        Strongest ties drawn per network picture.
    bridge_metric : str, optional
        Member score for node size and the bridges table (default: the first present of
        ``bridging``, ``participation``, ``cross_tie_share``, ``delta_q``, ``cross_partners``).
    single_file : bool
        False (default): plotly.js is written once into the folder as ``plotly.min.js`` and
        every page loads it from there (still offline). True: every page carries plotly.js
        inline and works on its own, e.g. sent by mail.

    Returns
    -------
    list of Path
        Every file written, pages first.

    Raises
    ------
    ReportInputError
        ``tables`` is not a ReportTables, a colour is not a CSS colour, or a named body is
        not in the tables.
    ImageExportUnavailable
        Only with ``images=True``: no usable browser (raised before anything is written), or
        the browser failed while rendering (pages and other pieces are already written).
    """
    if not isinstance(tables, ReportTables):
        raise ReportInputError("report tables", f"expected ReportTables, received "
                               f"{type(tables).__name__}", "wrap the frames in ReportTables(...)")
    known = tables.bodies()
    bodies = known if bodies is None else list(bodies)
    unknown = [b for b in bodies if b not in known]
    if unknown:
        raise ReportInputError("bodies", f"not in the results: {', '.join(unknown)}; known: "
                               f"{', '.join(known) or 'none'}", "name a body that was built")
    browser = None
    if images:
        browser = find_browser(browser_path)  # fail before writing anything
    colours = palette.group_colours({b: tables.for_body(b).groups() for b in known},
                                    tables.colours)
    out = Path(out_dir)
    out.mkdir(parents=True, exist_ok=True)
    keys = body_slugs(known)
    written: list[Path] = []
    jobs: list[tuple[Chart, Path]] = []
    pieces: list[Path] = []
    links = {b: f"briefing-{keys[b]}.html" for b in bodies}
    src = None if single_file else PLOTLY_FILE
    drawn = False  # does any page draw a chart (and so load plotly.js)?
    for body in bodies:
        chosen = periods.get(body) if isinstance(periods, dict) else periods
        html, charts = build_briefing(tables, body, colours=colours, periods=chosen, seed=seed,
                                      n_bridges=n_bridges, max_edges=max_edges,
                                      bridge=bridge_metric, plotly_src=src)
        written.append(_write(out / links[body], html))
        drawn = drawn or any(not c.empty for c in charts)
        pieces += _pieces(charts, out / "embed" / keys[body], f"bw-{keys[body]}", jobs)
    html, charts = build_comparison(tables, briefing_links=links, plotly_src=src)
    written.append(_write(out / "comparison.html", html))
    drawn = drawn or any(not c.empty for c in charts)
    if drawn and not single_file:
        written.append(Path(shutil.copyfile(PLOTLY_BUNDLE, out / PLOTLY_FILE)))
    pieces += _pieces(charts, out / "embed" / "comparison", "bw-compare", jobs)
    image_note = ""
    if images is not False and jobs:
        try:
            browser = browser or find_browser(browser_path)
            pieces += export_images(
                [(c.fig, stem, IMAGE_WIDTH, int(c.fig.layout.height or 450)) for c, stem in jobs],
                formats=image_formats, browser_path=browser)
        except ImageExportUnavailable as exc:
            if images:
                raise
            image_note = f"Images not written: {exc}"
            log.info(image_note)
    bundle = drawn and not single_file
    written.append(_write(out / "index.html", _index(links, pieces, out, image_note, bundle)))
    return written + pieces


def _write(path: Path, text: str) -> Path:
    path.write_text(text, encoding="utf-8")
    return path


def _pieces(charts: list[Chart], folder: Path, id_prefix: str,
            jobs: list[tuple[Chart, Path]]) -> list[Path]:
    paths = []
    for c in charts:
        stem = folder / slug(c.name)
        paths += write_pieces(c, stem, f"{id_prefix}-{slug(c.name)}")
        if not c.empty:
            jobs.append((c, stem))
    return paths


def _index(links: dict[str, str], pieces: list[Path], out: Path, image_note: str,
           bundle: bool) -> str:
    pages = "".join(f"<li><a href='{esc(href)}'>{esc(body)}</a></li>"
                    for body, href in links.items())
    files = "".join(f"<li><a href='{esc(p.relative_to(out).as_posix())}'>"
                    f"{esc(p.relative_to(out).as_posix())}</a></li>" for p in pieces)
    note = f"<p class='bw-note'>{esc(image_note)}</p>" if image_note else ""
    if bundle:
        note += (f"<p class='bw-note'>The pages load the charting library from "
                 f"<a href='{PLOTLY_FILE}'>{PLOTLY_FILE}</a> in this folder: keep it beside "
                 "them, and load it once on a page that hosts the snippets below. To send one "
                 "page on its own, write the report with --single-file.</p>")
    body = (f"<header><p class='bw-kicker'>blocwatch report</p><h1>Contents</h1></header>"
            f"<h2>Briefing pages</h2><ul>{pages or '<li>none</li>'}</ul>"
            f"<h2>Comparison</h2><ul><li><a href='comparison.html'>Trends across bodies</a></li>"
            f"</ul><h2>Embeddable pieces</h2>{note}<ul>{files}</ul>")
    return page("blocwatch report", body, charts=False)
