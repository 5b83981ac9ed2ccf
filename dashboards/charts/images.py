"""PNG and SVG export of charts through kaleido, which drives a local Chrome or Chromium.

Which browser: the ``browser_path`` argument, else the ``BLOCWATCH_BROWSER`` environment
variable, else the first of a few usual names on ``PATH`` (``chromium``, ``chromium-browser``,
``google-chrome``, ``google-chrome-stable``, ``chrome``). When none can be used,
``ImageExportUnavailable`` says which path was tried and how to fix it; nothing crashes and no
browser is ever downloaded. Rendering uses the plotly.js bundled with plotly and no MathJax, so
export needs no network either.
"""

from __future__ import annotations

import os
import shutil
from pathlib import Path

import plotly

from blocwatch.dashboards.errors import ImageExportUnavailable

FORMATS = ("png", "svg")
BROWSER_NAMES = ("chromium", "chromium-browser", "google-chrome", "google-chrome-stable",
                 "chrome")
FIX = ("install Chromium (Debian: apt-get install chromium) or Chrome, or set "
       "BLOCWATCH_BROWSER to its executable, or turn image export off")


def find_browser(browser_path: str | os.PathLike | None = None) -> str:
    """Path of the browser kaleido should drive; raise ImageExportUnavailable when unusable."""
    given = browser_path or os.environ.get("BLOCWATCH_BROWSER")
    if given:
        path = Path(given)
        if not (path.is_file() and os.access(path, os.X_OK)):
            raise ImageExportUnavailable(
                "image export", f"no executable browser at {str(path)!r}", FIX)
        return str(path)
    for name in BROWSER_NAMES:
        found = shutil.which(name)
        if found:
            return found
    raise ImageExportUnavailable(
        "image export", "no Chrome or Chromium found on PATH (looked for "
        + ", ".join(BROWSER_NAMES) + ")", FIX)


def export_images(jobs: list[tuple[object, Path, int, int]], *,
                  formats: tuple[str, ...] = FORMATS,
                  browser_path: str | os.PathLike | None = None, scale: float = 2.0
                  ) -> list[Path]:
    """Write each figure as every format in ``formats``; return the written paths.

    ``jobs`` holds ``(figure, path_stem, width, height)``; files are ``path_stem.<format>``.
    One browser session serves every image.
    """
    bad = [f for f in formats if f not in FORMATS]
    if bad:
        raise ValueError(f"image formats: expected some of {FORMATS}, received {bad}; "
                         "pass formats=('png', 'svg') or a subset")
    browser = find_browser(browser_path)
    try:
        import kaleido
    except ImportError as exc:  # kaleido is the optional "images" extra
        raise ImageExportUnavailable(
            "image export", f"the kaleido package is not importable ({exc})",
            "pip install 'blocwatch[images]'") from exc
    bundle = Path(plotly.__file__).parent / "package_data" / "plotly.min.js"
    todo, written = [], []
    for fig, stem, width, height in jobs:
        for fmt in formats:
            path = Path(stem).with_name(Path(stem).name + f".{fmt}")
            path.parent.mkdir(parents=True, exist_ok=True)
            todo.append({"fig": fig, "path": str(path),
                         "opts": {"format": fmt, "width": width, "height": height,
                                  "scale": scale if fmt == "png" else 1}})
            written.append(path)
    if not todo:
        return []
    try:
        kaleido.write_fig_from_object_sync(
            todo, kopts={"path": browser, "mathjax": False, "plotlyjs": str(bundle)})
    except Exception as exc:  # any launch/render failure of the browser: report, don't crash
        raise ImageExportUnavailable(
            "image export", f"the browser at {browser!r} could not render images "
            f"({type(exc).__name__}: {exc})", FIX) from exc
    missing = [p for p in written if not p.is_file()]
    if missing:
        raise ImageExportUnavailable(
            "image export", f"{len(missing)} image(s) were not written, first {missing[0]}",
            FIX)
    return written
