"""Pure polarisation metrics: numpy arrays in, numbers out.

The metric families register themselves in :mod:`blocwatch.metrics.registry` when first used
(``FAMILIES``, :func:`compute_all`, :func:`metric_names`): the modules and their order are
``registry.FAMILY_MODULES``, so importing this package, or the vote codes, loads no model.
This package never imports duckdb, plotly, click or the other blocwatch packages.
"""

from blocwatch.metrics import registry
from blocwatch.metrics.registry import MetricValue, PeriodInput, compute_all, metric_names

__all__ = ["FAMILIES", "MetricValue", "PeriodInput", "compute_all", "metric_names", "registry"]


def __getattr__(name: str):
    """``FAMILIES``: every registered family, loaded on first use."""
    if name == "FAMILIES":
        return registry.loaded_families()
    raise AttributeError(f"module {__name__!r} has no attribute {name!r}")
