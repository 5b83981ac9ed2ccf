"""The list of registered period metrics with their methods reference, for people and pages.

One row per metric in export order: name, family, plain-words label, description, formula,
direction (which way means more division, where the registry declares it), reference, check
values and the bootstrap interval method with its reference. ``blocwatch metrics`` prints it;
a report can hand the same frame to the page's Methods section. The texts live in
:mod:`blocwatch.metrics.reference`; this module only tabulates them.
"""

from __future__ import annotations

import json

import pandas as pd

from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.options import METRIC_LIST_FORMATS

COLUMNS = ["metric", "family", "label", "direction", "description", "formula", "reference",
           "checks", "interval"]


def metric_list() -> pd.DataFrame:
    """Every registered metric with its reference (``checks`` joined by " | ")."""
    from blocwatch.metrics import FAMILIES
    from blocwatch.metrics.registry import metric_info, metric_names
    from blocwatch.metrics.uncertainty.resampling import INTERVAL_WORDS

    family_of = {m: fam for fam in FAMILIES.values() for m in fam.metrics}
    rows = []
    for name in metric_names():  # the explicit export order, not registration order
        family, info = family_of[name], metric_info(name)
        direction = getattr(family, "direction", None)
        if isinstance(direction, dict):  # per metric, where a family declares it so
            direction = direction.get(name)
        rows.append([name, family.name, info.label, direction or "", info.description,
                     info.formula, info.reference, " | ".join(info.checks),
                     INTERVAL_WORDS[family.interval]])
    return pd.DataFrame(rows, columns=COLUMNS)


def format_metric_list(frame: pd.DataFrame, fmt: str = "text") -> str:
    """The list as an aligned text table (name, label, direction, reference), CSV or JSON."""
    if fmt == "csv":
        return frame.to_csv(index=False)
    if fmt == "json":
        return json.dumps(frame.to_dict("records"), indent=2, ensure_ascii=False) + "\n"
    if fmt != "text":
        raise UsageError(f"format {fmt!r}", "is not a metric list format",
                         f"use one of: {', '.join(METRIC_LIST_FORMATS)}")
    cols = ["metric", "label", "direction", "reference"]
    if not frame["direction"].astype(bool).any():
        cols.remove("direction")  # no family declares one yet
    cells = [cols] + frame[cols].astype(str).values.tolist()
    widths = [max(len(r[i]) for r in cells) for i in range(len(cols) - 1)]
    lines = ["  ".join([*(c.ljust(w) for c, w in zip(r, widths)), r[-1]]).rstrip()
             for r in cells]
    return "\n".join(lines) + "\n"
