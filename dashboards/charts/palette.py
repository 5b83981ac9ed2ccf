"""Colours and the chart template: blocwatch's own neutral, colour-blind-safe look.

The hues are the eight of Okabe & Ito's colour-universal-design set (chosen to stay distinct
under the common colour-vision deficiencies), with the pale yellow swapped for a dark grey-brown
so lines stay readable on white paper, put in an order of our own: most distinct first. Each
body's groups get colours in sorted-name order from the start of the palette, once per report,
so one group keeps its colour on every page; users override any group with
``ReportTables.colours``.
"""

from __future__ import annotations

import re

import plotly.graph_objects as go

from blocwatch.dashboards.errors import ReportInputError

# Order: the first colours are the most distinct, so a body with few groups gets the clearest
# contrast (two oranges only meet from the seventh group on). Each prefix keeps the largest
# smallest difference any order starting with blue can give, judged by the worse of normal,
# deuteranomalous and protanomalous vision (CAM02-UCS colour difference;
# tests/unit/dashboards/charts/test_palette.py checks it with the colorspacious package).
PALETTE: tuple[str, ...] = (
    "#0072B2",  # blue
    "#E69F00",  # orange
    "#333333",  # near black
    "#56B4E9",  # sky blue
    "#009E73",  # bluish green
    "#6B5B4B",  # grey-brown (in place of yellow, which vanishes on white)
    "#D55E00",  # vermilion
    "#CC79A7",  # reddish purple
)
NO_GROUP = "#9A9A9A"  # members without a recorded group
INK = "#222222"
GRID = "#E3E3E3"
# Sequential scale for agreement heat maps: light to dark blue, monotone in lightness.
SEQUENTIAL = [[0.0, "#F4F7FA"], [0.5, "#7FA7C9"], [1.0, "#0B3C66"]]
FONT = "system-ui, -apple-system, 'Segoe UI', Roboto, 'Helvetica Neue', Arial, sans-serif"

_CSS_COLOUR = re.compile(
    r"^(#[0-9a-fA-F]{3,8}|[a-zA-Z]{3,30}|(rgb|rgba|hsl|hsla)\([0-9.,%\s]+\))$")


def check_colour(group: str, colour: str) -> str:
    """Return ``colour`` if it is a plain CSS colour, else raise ReportInputError.

    Colours reach chart specs and style attributes, so only hex, named and rgb()/hsl() forms
    are accepted — nothing that could close a string or carry markup.
    """
    if not isinstance(colour, str) or not _CSS_COLOUR.match(colour.strip()):
        raise ReportInputError(
            f"colour for group {group!r}",
            f"expected a CSS colour like '#1f6f8b', 'teal' or 'rgb(31,111,139)', received "
            f"{colour!r}", "fix the colour in the config's group colours")
    return colour.strip()


def group_colours(groups, overrides: dict[str, str] | None = None) -> dict[str, str]:
    """Map each group to a colour: the palette in sorted-name order, then user overrides.

    ``groups`` is a list, or a dict body -> its groups: then each body's groups take the first
    palette colours its other groups do not use, so every body starts from the most distinct
    hues (a report of several bodies does not push one body's groups down the palette), and a
    group named in two bodies keeps the colour it got first.

    >>> group_colours(["Reds", "Blues"], {"Reds": "#aa0000"})
    {'Blues': '#0072B2', 'Reds': '#aa0000'}
    >>> group_colours({"Board": ["Aft", "Bow"], "Panel": ["Cedar", "Bow"]})
    {'Aft': '#0072B2', 'Bow': '#E69F00', 'Cedar': '#0072B2'}
    """
    by_body = groups if isinstance(groups, dict) else {None: groups}
    out: dict[str, str] = {}
    for names in by_body.values():
        names = sorted(set(names))
        taken = {out[g] for g in names if g in out}
        free = [c for c in PALETTE if c not in taken]
        for g in (g for g in names if g not in out):
            out[g] = free.pop(0) if free else PALETTE[len(out) % len(PALETTE)]
    for group, colour in (overrides or {}).items():
        out[group] = check_colour(group, colour)
    return out


def series_colour(i: int) -> str:
    """Colour of the i-th body (or series) on a shared chart."""
    return PALETTE[i % len(PALETTE)]


def with_alpha(colour: str, alpha: float) -> str:
    """``rgba()`` form of a hex colour with the given opacity (other forms are returned as is)."""
    c = colour.lstrip("#")
    if len(c) == 3:
        c = "".join(ch * 2 for ch in c)
    if not re.fullmatch(r"[0-9a-fA-F]{6}", c):
        return colour
    r, g, b = (int(c[i:i + 2], 16) for i in (0, 2, 4))
    return f"rgba({r},{g},{b},{alpha:.3g})"


def template() -> go.layout.Template:
    """The plotly template for every blocwatch chart (white ground, light grid, our colours)."""
    axis = dict(showgrid=True, gridcolor=GRID, zeroline=False, linecolor="#9A9A9A",
                ticks="outside", tickcolor="#9A9A9A", automargin=True,
                title=dict(standoff=8))
    return go.layout.Template(layout=dict(
        colorway=list(PALETTE), font=dict(family=FONT, size=13, color=INK),
        paper_bgcolor="white", plot_bgcolor="white", xaxis=axis, yaxis=axis,
        hoverlabel=dict(align="left", font=dict(family=FONT)), hovermode="closest",
        legend=dict(orientation="h", yanchor="top", y=-0.18, x=0),
        margin=dict(l=56, r=16, t=48, b=40), title=dict(x=0, xanchor="left", font=dict(size=15)),
    ))
