"""The result tables a report is drawn from.

``ReportTables`` is the one input of the dashboards package: plain pandas DataFrames that the store
loader (or a user) builds from stored results. Dashboards never open the store and never compute
a metric; they only arrange, label and draw the numbers in these frames.

Every frame may be empty or missing optional columns: the constructor adds missing optional
columns as empty, coerces types once, and raises ``ReportInputError`` only when a frame lacks a
column without which nothing can be drawn (for example a metrics frame without ``value``).
"""

from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any

import pandas as pd

from blocwatch.dashboards.errors import ReportInputError

# name -> (required columns, optional columns). Order is the documented column order.
SCHEMAS: dict[str, tuple[tuple[str, ...], tuple[str, ...]]] = {
    "metrics": (
        ("body", "period", "metric", "value"),
        ("period_start", "period_end", "low", "high", "null_mean", "null_z", "null_p",
         "n_members", "n_ballots", "note", "run_id", "n_dropped", "subset"),
    ),
    "members": (
        ("body", "period", "member_id", "metric", "value"),
        ("name", "group_name", "note", "previous_period", "change", "group_before",
         "switched_on"),
    ),
    "group_agreement": (
        ("body", "period", "group_a", "group_b", "agreement"),
        ("n_pairs", "low", "high"),
    ),
    "trends": (
        ("body", "metric"),
        ("n_periods", "mk_s", "mk_z", "mk_p", "tau", "slope", "slope_low", "slope_high",
         "change_points", "note", "subset"),
    ),
    "edges": (
        ("body", "period", "member_a", "member_b", "agreement"),
        ("n_pairs",),
    ),
    "measures": (
        ("metric",),
        ("label", "description", "formula", "direction", "reference"),
    ),
}
# Tables that belong to no body (kept whole by ``for_body``).
_SHARED = {"measures"}

_TEXT = {"body", "period", "metric", "member_id", "name", "group_name", "group_a", "group_b",
         "member_a", "member_b", "note", "run_id", "change_points", "label", "description",
         "formula", "direction", "reference", "subset", "previous_period", "group_before"}
_DATES = {"period_start", "period_end", "switched_on"}


def _normalise(name: str, frame: pd.DataFrame | None) -> pd.DataFrame:
    required, optional = SCHEMAS[name]
    columns = required + optional
    if frame is None:
        frame = pd.DataFrame(columns=list(columns))
    if not isinstance(frame, pd.DataFrame):
        raise ReportInputError(
            f"table {name!r}", f"expected a pandas DataFrame, received {type(frame).__name__}",
            "pass the result table as a DataFrame (or None when it was not computed)")
    missing = [c for c in required if c not in frame.columns]
    if missing and len(frame.columns) > 0:
        raise ReportInputError(
            f"table {name!r}", f"missing column(s) {', '.join(missing)}; "
            f"received {', '.join(map(str, frame.columns))}",
            f"give it the columns {', '.join(required)}")
    out = frame.copy()
    for col in columns:
        if col not in out.columns:
            out[col] = pd.NA
    for col in columns:  # columns beyond the schema are kept as they came
        if col in _DATES:
            out[col] = pd.to_datetime(out[col], errors="coerce")
        elif col in _TEXT:
            # Keep missing text missing (not the string "nan"): notes and names may be absent.
            out[col] = out[col].astype("object").where(out[col].notna(), None)
            out[col] = out[col].map(lambda v: None if v is None else str(v))
        else:
            out[col] = pd.to_numeric(out[col], errors="coerce").astype("float64")
    return out.reset_index(drop=True)


@dataclass
class ReportTables:
    """Result tables for one report.

    Parameters
    ----------
    metrics : DataFrame
        One row per body × period × metric: ``body, period, period_start, period_end, metric,
        value, low, high, null_mean, null_z, null_p, n_members, n_ballots, note, run_id,
        n_dropped`` (members left out of the period).
        ``low``/``high`` are an interval (drawn as a band), ``note`` says why a value is empty.
        Unknown metric names are drawn generically with their raw name as label.
    members : DataFrame, optional
        Member-level scores, long form: ``body, period, member_id, name, group_name, metric,
        value`` (e.g. ``cross_tie_share``, ``participation``, ``delta_q``, ``mds_1``, ``mds_2``),
        optionally the members export's trajectory columns ``previous_period, change,
        group_before, switched_on`` (the date a member joined its present group, where the
        group differs from the previous period's; moves are marked at that date).
    group_agreement : DataFrame, optional
        ``body, period, group_a, group_b, agreement, n_pairs`` for the group heat map.
    trends : DataFrame, optional
        One row per body × metric: ``n_periods, mk_s, mk_z, mk_p, tau, slope, slope_low,
        slope_high, change_points`` (a JSON list of period names), ``note``.
        ``metrics`` and ``trends`` may carry a ``subset`` column (``all`` when missing): rows
        of other subsets (``topic:<name>``, ``agenda-standardised``, ``pair:<A>|<B>``) are
        kept apart in ``subset_metrics`` and ``subset_trends`` for the "what moved it" charts.
    edges : DataFrame, optional
        ``body, period, member_a, member_b, agreement`` for the network pictures.
    measures : DataFrame, optional
        The metric list: ``metric, label, description, formula, direction, reference``
        (direction: ``higher`` or ``lower``, the side meaning more division). The Methods
        section prints these; ``dashboards.prose.labels`` fills in what is missing.
    provenance : dict
        Shown in the footer: e.g. ``data_fingerprint, tool_version, parameters, run_id,
        run_time``. Any keys are accepted; values are shown as text.
    colours : dict, optional
        Group name → CSS colour, overriding the default palette for those groups.
    """

    metrics: pd.DataFrame | None = None
    members: pd.DataFrame | None = None
    group_agreement: pd.DataFrame | None = None
    trends: pd.DataFrame | None = None
    edges: pd.DataFrame | None = None
    measures: pd.DataFrame | None = None
    provenance: dict[str, Any] = field(default_factory=dict)
    colours: dict[str, str] | None = None

    def __post_init__(self) -> None:
        for name in SCHEMAS:
            setattr(self, name, _normalise(name, getattr(self, name)))
        # Rows of a subset other than 'all' (one topic, agenda-standardised, a pair of groups)
        # move to subset_metrics / subset_trends, so every other chart sees the whole body.
        for name in ("metrics", "trends"):
            frame = getattr(self, name)
            whole = frame["subset"].fillna("all") == "all"
            setattr(self, f"subset_{name}", frame[~whole].reset_index(drop=True))
            setattr(self, name, frame[whole].reset_index(drop=True))
        self.provenance = dict(self.provenance or {})
        self.colours = {str(k): str(v) for k, v in (self.colours or {}).items()}

    def bodies(self) -> list[str]:
        """Body names in order of first appearance in the metrics (then the other tables)."""
        seen: dict[str, None] = {}
        for name in (n for n in SCHEMAS if n not in _SHARED):
            for body in getattr(self, name)["body"].dropna():
                seen.setdefault(body, None)
        return list(seen)

    def for_body(self, body: str) -> ReportTables:
        """The same tables restricted to one body (provenance and colours kept)."""
        parts = {name: getattr(self, name) for name in SCHEMAS}
        for name in ("metrics", "trends"):
            parts[name] = pd.concat([parts[name], getattr(self, f"subset_{name}")],
                                    ignore_index=True)
        parts = {name: df if name in _SHARED else df[df["body"] == body]
                 for name, df in parts.items()}
        return ReportTables(**parts, provenance=self.provenance, colours=self.colours)

    def groups(self) -> list[str]:
        """Every group name in the member and group tables, sorted (fixes palette order)."""
        names = set(self.members["group_name"].dropna())
        names |= set(self.group_agreement["group_a"].dropna())
        names |= set(self.group_agreement["group_b"].dropna())
        return sorted(names)
