"""Fixed prose of the pages: reading notes, methods list and the provenance footer."""

from __future__ import annotations

import json
from importlib import metadata

from blocwatch.dashboards.pages.safe import esc
from blocwatch.dashboards.prose import labels

READING = (
    "These figures describe how members voted, not why. Agreement can come from shared views, "
    "bargains, group discipline or simply a shared agenda; roll-call records cannot tell these "
    "apart.",
    "What comes to a vote moves every measure. A period of routine, consensual business reads as "
    "low polarisation and a period of contested items as high, with the same members; read a "
    "change beside what was on the agenda.",
    "Small bodies, small groups and periods with few contested ballots give wide intervals. "
    "Where the shaded bands of two periods overlap, the records do not show a clear difference.",
    "Member-level scores (bridge scores, positions, loyalty) are descriptive summaries of "
    "recorded votes. They must not be used to single out, rank or target individual people.",
    "An empty value means the measure could not be computed for that period (for example, only "
    "one group was present); the reason is listed in the chart's numbers.",
)

EXTRA_METHODS = (
    ("Shaded bands and intervals", "95 % intervals stored with the results (see the run "
     "parameters in the footer for how they were made; absent where the run computed none). "
     "An interval that does not contain its own estimate is withheld and the row says so; an "
     "interval with no width at the precision shown is not printed as one: the page says that "
     "resampling showed no spread, which with few members or ballots is not certainty.", ""),
    ("Dotted lines", "the mean of the measure with group labels shuffled among the members "
     "present, group sizes kept: the level to expect if groups did not matter.", ""),
    ("Permutation p", "the share of shuffles of the group labels (sizes kept, the graph "
     "rebuilt for each) that look at least as divided as the real groups, counted as "
     "(b + 1)/(m + 1) so it is never 0. The test is one-sided, in the direction that means more "
     "division for that measure (higher group modularity and separability, lower cross-group "
     "tie share): a small p says the groups split the votes more than chance would, and says "
     "nothing about why. The exported z-score (null_z) is signed the same way: positive means "
     "more split than chance, negative less.", labels.REFS["perm"]),
    ("Trend test", "Mann–Kendall test with Kendall's τ, and the Theil–Sen slope per period.",
     f"{labels.REFS['mk']} {labels.REFS['sen']}"),
    ("Change points", "penalised change-point detection (PELT) on each series.",
     labels.REFS["pelt"]),
    ("Network layout", "stored map positions where present, else a seeded force-directed "
     "layout (networkx spring layout). Layout is for reading only: it is not a measure.",
     "Fruchterman, T. M. J. & Reingold, E. M. (1991). Graph drawing by force-directed "
     "placement. Software: Practice and Experience 21(11), 1129–1164."),
)


def _cap(text: str) -> str:
    return text[:1].upper() + text[1:]


def reading_html() -> str:
    items = "".join(f"<li>{esc(t)}</li>" for t in READING)
    return (f"<section id='reading'><h2>Reading these figures</h2>"
            f"<div class='bw-caution'><ul>{items}</ul></div></section>")


DIRECTION_WORDS = {"higher": "Higher values mean more division between groups.",
                   "lower": "Lower values mean more division between groups."}


def methods_html(metric_names: list[str], member_metric_names: list[str],
                 known: dict[str, labels.MetricInfo] | None = None) -> str:
    """Every measure on the page: label, name, description, formula, direction, reference."""
    rows = []
    for m in labels.ordered(metric_names):
        i = labels.info(m, known)
        what = (f"{esc(_cap(i.what))}." if i.what
                else "Not described by this version of blocwatch; see the exported metric list.")
        formula = f"<br>Formula: <code>{esc(i.formula)}</code>" if i.formula else ""
        direction = DIRECTION_WORDS.get(i.direction, "Neither direction alone means more division.")
        ref = f"<br><span class='bw-ref'>{esc(i.reference)}</span>" if i.reference else ""
        rows.append(f"<dt>{esc(i.label)} <code>{esc(m)}</code></dt>"
                    f"<dd>{what}{formula}<br>{esc(direction)}{ref}</dd>")
    for title, what, ref in EXTRA_METHODS:
        ref_html = f"<br><span class='bw-ref'>{esc(ref)}</span>" if ref else ""
        rows.append(f"<dt>{esc(title)}</dt><dd>{esc(_cap(what))}{ref_html}</dd>")
    for m in sorted(member_metric_names):
        what = labels.MEMBER_WHAT.get(m, "a member score stored with the results")
        rows.append(f"<dt>Member score: {esc(labels.member_label(m))} <code>{esc(m)}</code></dt>"
                    f"<dd>{esc(_cap(what))}. Describes recorded votes only.</dd>")
    return (f"<section id='methods'><h2>Methods</h2><dl class='bw-methods'>{''.join(rows)}"
            "</dl></section>")


def _version() -> str:
    try:
        return metadata.version("blocwatch")
    except metadata.PackageNotFoundError:  # running from a source tree without install
        return "unknown"


def provenance_html(provenance: dict, run_ids: list[str]) -> str:
    items = dict(provenance)
    items.setdefault("tool_version", _version())
    if run_ids and "run_id" not in items:
        items["run_id"] = ", ".join(run_ids)
    rows = []
    for key, value in items.items():
        text = value if isinstance(value, str) else json.dumps(value, default=str, sort_keys=True)
        rows.append(f"<dt>{esc(str(key).replace('_', ' '))}</dt><dd>{esc(text)}</dd>")
    return (f"<footer id='provenance'><p>Made by blocwatch from stored results. Provenance:</p>"
            f"<dl>{''.join(rows)}</dl></footer>")
