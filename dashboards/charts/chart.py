"""A drawn chart with everything a page or an embed needs beside the figure."""

from __future__ import annotations

import html
import math
import re
import unicodedata
from dataclasses import dataclass, field

import pandas as pd
import plotly.graph_objects as go


@dataclass
class Chart:
    """One figure plus its alternative text and the numbers behind it.

    Attributes
    ----------
    name : str
        Stable file stem, e.g. ``trend-group_modularity`` or ``network-2012``.
    title : str
        Plain-text title (escaped when rendered).
    fig : plotly.graph_objects.Figure
        The figure; user strings inside it are already HTML-escaped.
    alt : str
        Plain-text alternative text describing what the chart shows.
    data : DataFrame
        Every series drawn, with the raw (unescaped) values: written as CSV and shown as the
        table beside the chart.
    note : str
        Caption under the chart (plain text), e.g. why something is missing.
    empty : bool
        True when there is nothing to draw; pages then show the note instead of a plot.
    extra : dict of DataFrame
        Further series drawn (e.g. a network's ``edges``), each written as its own CSV.
    """

    name: str
    title: str
    fig: go.Figure
    alt: str
    data: pd.DataFrame
    note: str = ""
    empty: bool = False  # nothing to draw: pages show ``note`` ("not computed: ...") instead
    extra: dict[str, pd.DataFrame] = field(default_factory=dict)  # more CSVs, e.g. "edges"

    def __post_init__(self) -> None:
        # The alt text travels inside the figure, so JSON specs carry it; escaped like every
        # other string in a spec (plotly.js treats spec strings as HTML).
        self.fig.update_layout(meta={"alt": html.escape(self.alt)})


def plain(values) -> list:
    """A plain list for a trace (NaN → None), so specs stay readable JSON, not typed arrays.

    >>> plain(pd.Series([0.5, float("nan")]))
    [0.5, None]
    """
    return [None if (isinstance(v, float) and math.isnan(v)) else v
            for v in pd.Series(values, dtype=object).tolist()]


def slug(text: str) -> str:
    """A stable, file-name-safe form of a name.

    >>> slug("Harbour Board of Veldmark"), slug("Été 2024/25")
    ('harbour-board-of-veldmark', 'ete-2024-25')
    """
    ascii_text = unicodedata.normalize("NFKD", str(text)).encode("ascii", "ignore").decode()
    out = re.sub(r"[^a-z0-9_]+", "-", ascii_text.lower()).strip("-")
    return out[:60].strip("-") or "unnamed"
