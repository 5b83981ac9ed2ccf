"""Figures and pages from result tables. Never computes a metric, never opens the store.

Library use::

    from blocwatch.dashboards import ReportTables, write_report
    paths = write_report("out", ReportTables(metrics=metrics_frame))

Names are loaded on first use so that importing one module does not pull in the rest.
"""

from __future__ import annotations

import importlib

_EXPORTS = {
    "ReportTables": "tables",
    "write_report": "report",
    "trend_chart": "trends",
    "network_chart": "network",
    "heatmap_chart": "groups",
    "headline": "verdict",
    "verdict": "verdict",
    "export_images": "images",
    "find_browser": "images",
    "Chart": "chart",
    "DashboardError": "errors",
    "ReportInputError": "errors",
    "ImageExportUnavailable": "errors",
}
__all__ = sorted(_EXPORTS)


def __getattr__(name: str):
    if name in _EXPORTS:
        module = importlib.import_module(f"blocwatch.dashboards.{_EXPORTS[name]}")
        return getattr(module, name)
    raise AttributeError(f"module 'blocwatch.dashboards' has no attribute {name!r}")
