"""Image export: the documented error without a browser, real PNG/SVG with one."""

import os

import plotly.graph_objects as go
import pytest

from blocwatch.dashboards.charts.images import export_images, find_browser
from blocwatch.dashboards.errors import ImageExportUnavailable
from tests.browser_util import chromium_path


def test_nonexistent_browser_gives_the_documented_message():
    with pytest.raises(ImageExportUnavailable) as err:
        find_browser("/nonexistent/chromium")
    assert str(err.value) == (
        "image export: no executable browser at '/nonexistent/chromium' — install Chromium "
        "(Debian: apt-get install chromium) or Chrome, or set BLOCWATCH_BROWSER to its "
        "executable, or turn image export off")
    assert isinstance(err.value, RuntimeError) and err.value.exit_code == 69


def test_no_browser_on_path(monkeypatch, tmp_path):
    monkeypatch.delenv("BLOCWATCH_BROWSER", raising=False)
    monkeypatch.setenv("PATH", str(tmp_path))
    with pytest.raises(ImageExportUnavailable, match="no Chrome or Chromium found on PATH"):
        export_images([(go.Figure(), tmp_path / "x", 400, 300)])


def test_environment_variable_is_used(monkeypatch):
    monkeypatch.setenv("BLOCWATCH_BROWSER", "/nonexistent/chrome")
    with pytest.raises(ImageExportUnavailable, match="/nonexistent/chrome"):
        find_browser()


def test_bad_format_is_refused(tmp_path):
    with pytest.raises(ValueError, match="expected some of"):
        export_images([(go.Figure(), tmp_path / "x", 400, 300)], formats=("gif",))


@pytest.mark.browser
@pytest.mark.skipif(chromium_path() is None, reason="needs Chromium (Debian package chromium)")
def test_real_png_and_svg(tmp_path):
    fig = go.Figure(go.Scatter(x=[1, 2, 3], y=[0.1, 0.3, 0.2], name="&lt;b&gt;Tideward"))
    paths = export_images([(fig, tmp_path / "trend", 600, 300)], browser_path=chromium_path())
    png, svg = paths
    assert png.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"  # [S: PNG specification signature]
    assert b"<svg" in svg.read_bytes()[:400] and os.path.getsize(svg) > 500
