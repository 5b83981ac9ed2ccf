"""Pure polarisation metrics: numpy arrays in, numbers out.

Importing this package registers every metric family in :mod:`blocwatch.metrics.registry`.
This package never imports duckdb, plotly, click or the other blocwatch packages.
"""

from blocwatch.metrics import registry
from blocwatch.metrics.registry import FAMILIES, MetricValue, PeriodInput, compute_all, metric_names

# Metric family modules register themselves on import (the order of metric names is
# reference.METRIC_INFO's, whatever the import order).
# FAMILY-IMPORTS-BEGIN
# isort: off
from blocwatch.metrics import modularity, community, crossgroup, separability  # noqa: F401
from blocwatch.metrics import reliability  # noqa: F401
from blocwatch.metrics import cohesion, positions  # noqa: F401
# isort: on
# FAMILY-IMPORTS-END

__all__ = ["FAMILIES", "MetricValue", "PeriodInput", "compute_all", "metric_names", "registry"]
