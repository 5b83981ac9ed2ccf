"""How the measures are named and ordered on a page, and what the member scores mean.

Descriptions, formulas and references of the measures come with the results
(``ReportTables.measures``, built from the metric registry); this module holds what the page
itself decides: page order, labels for tables built without that list, which measures are
counts, and the member scores' wording. A metric known to neither is still drawn, under its name
made into words, so adding a metric to the pipeline never breaks a report.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class MetricInfo:
    label: str
    what: str
    reference: str
    integer: bool = False
    formula: str = ""
    # "higher" or "lower": which way means more division between groups ("" when neither).
    direction: str = ""


# References of the page's own methods (trend test, change points); a measure's reference comes
# with the stored metric list.
REFS = {
    "perm": "Phipson, B. & Smyth, G. K. (2010). Permutation p-values should never be zero. "
            "Statistical Applications in Genetics and Molecular Biology 9(1), article 39.",
    "mk": "Mann, H. B. (1945). Nonparametric tests against trend. Econometrica 13, 245–259; "
          "Kendall, M. G. (1975). Rank Correlation Methods.",
    "sen": "Sen, P. K. (1968). Estimates of the regression coefficient based on Kendall's tau. "
           "JASA 63, 1379–1389.",
    "pelt": "Killick, R., Fearnhead, P. & Eckley, I. A. (2012). Optimal detection of "
            "changepoints with a linear computational cost. JASA 107, 1590–1598.",
}


def _m(label: str, direction: str = "", integer: bool = False) -> MetricInfo:
    return MetricInfo(label, "", "", integer=integer, direction=direction)


# Page order, labels and count flags; "direction" is the side meaning more division (the stored
# metric list overrides every field it carries).
METRICS: dict[str, MetricInfo] = {
    "group_modularity": _m("Group modularity", "higher"),
    "best_modularity": _m("Best modularity", "higher"),
    "communities": _m("Communities", integer=True),
    "community_group_ari": _m("Community–group match", "higher"),
    "cross_group_share": _m("Cross-group tie share", "lower"),
    "cross_group_ratio": _m("Cross-group tie ratio", "lower"),
    "ei_index": _m("E–I index", "lower"),
    "separability": _m("Separability", "higher"),
    "silhouette": _m("Silhouette", "higher"),
    "rice_mean": _m("Rice cohesion (mean)", "higher"),
    "agreement_index_mean": _m("Agreement index (mean)", "higher"),
    "group_line_share": _m("Group-line ballots", "higher"),
    "mean_loyalty": _m("Loyalty (mean)", "higher"),
    "ideal_median_gap": _m("Ideal-point gap", "higher"),
    "ideal_overlap": _m("Ideal-point overlap", "lower", integer=True),
    "ideal_bimodality": _m("Ideal-point bimodality", "higher"),
    "mds_median_gap": _m("Map gap", "higher"),
    "krippendorff_alpha": _m("Panel agreement (Krippendorff's alpha)"),
    "krippendorff_alpha_within": _m("Agreement within groups (alpha)", "higher"),
}

MEMBER_METRICS: dict[str, str] = {
    "bridging": "Bridging score",
    "bridge_rank": "Bridge rank (stored)",
    "bridging_null_p": "Bridging p (shuffled groups)",
    "cross_tie_share": "Cross-group tie share",
    "participation": "Participation coefficient",
    "cross_partners": "Cross-group partners",
    "delta_q": "Modularity contribution (ΔQ)",
    "loyalty": "Loyalty",
    "ideal_point": "Ideal point",
    "mds_1": "Map position 1",
    "mds_2": "Map position 2",
}

# What each member score means (the page's Methods section and bridges table print these).
MEMBER_WHAT: dict[str, str] = {
    "bridging": "the member's mean agreement with members of other groups divided by their "
                "mean agreement with the other members of their own group: 1 = no preference "
                "for their own group, above 1 = closer to the others; no score in a group "
                "too small for an own-group mean",
    "bridge_rank": "the member's rank by bridging score among members whose score is above "
                   "what shuffled groups give (ties share a rank), as the build stored it",
    "bridging_null_p": "share of bridging scores under shuffled groups (sizes kept) at least "
                       "as high as the member's: small means the score is not what random "
                       "groups would give",
    "cross_tie_share": "share of the member's ties in the period's graph that go to members of "
                       "other groups (a member alone in a group has only such ties)",
    "participation": "how evenly the member's tie weight spreads over the groups: 0 when all "
                     "of it stays in one group, 1 − 1/K when spread evenly over K groups "
                     "(Guimerà & Amaral 2005)",
    "cross_partners": "number of members of other groups the member agrees with at least as "
                      "often as the median pair of colleagues inside a group",
    "delta_q": "change in group modularity when the member is left out: positive when the "
               "groups look more separate without them",
    "loyalty": "share of group-line ballots on which the member voted with their own group's "
               "majority",
    "ideal_point": "position on a one-dimensional probit ideal-point scale, standardised "
                   "(positive = votes yes more often)",
    "mds_1": "first coordinate of a classical-MDS map of disagreement (layout of the network "
             "picture)",
    "mds_2": "second coordinate of the same map",
}

INTEGER_MEMBER_METRICS = {"cross_partners", "bridge_rank"}

# Preferred order of charts on a page; unknown metrics follow alphabetically.
ORDER = list(METRICS)


# Abbreviations kept in capitals when a label is made from a metric's name.
_CAPITALS = {"mds": "MDS", "ari": "ARI", "ei": "E–I", "id": "ID", "q": "Q"}


def words(name: str) -> str:
    """A metric name as words: ``"mds_median_gap"`` → ``"MDS median gap"``.

    >>> words("mds_median_gap"), words("novel_index")
    ('MDS median gap', 'Novel index')
    """
    parts = [_CAPITALS.get(p, p) for p in name.split("_") if p]
    text = " ".join(parts)
    return text[:1].upper() + text[1:]


def catalogue(measures=None) -> dict[str, MetricInfo]:
    """This module's entries, overridden field by field by the stored metric list.

    ``measures`` is ``ReportTables.measures`` (columns ``metric, label, description, formula,
    direction, reference``); empty fields there keep the entry below.
    """
    out = dict(METRICS)
    if measures is None or len(measures) == 0:
        return out
    for r in measures.to_dict("records"):
        base = out.get(r["metric"]) or MetricInfo(words(r["metric"]), "", "")
        given = {"label": r.get("label"), "what": r.get("description"),
                 "formula": r.get("formula"), "direction": r.get("direction"),
                 "reference": r.get("reference")}
        given = {k: v for k, v in given.items() if isinstance(v, str) and v.strip()}
        out[r["metric"]] = MetricInfo(**{**base.__dict__, **given})
    return out


def info(metric: str, known: dict[str, MetricInfo] | None = None) -> MetricInfo:
    """Label, description and reference for ``metric`` (its name in words when unknown)."""
    return (known or METRICS).get(metric) or MetricInfo(words(metric), "", "")


def member_label(metric: str) -> str:
    return MEMBER_METRICS.get(metric) or words(metric)


def ordered(metrics) -> list[str]:
    """Known metrics in page order, then unknown ones sorted by name."""
    names = set(metrics)
    return [m for m in ORDER if m in names] + sorted(names - set(ORDER))


# First words that are names, kept capitalised inside a sentence.
_PROPER = {"Rice", "Krippendorff's", "Louvain", "Leiden"}


def in_sentence(label: str) -> str:
    """A label placed inside a sentence: first letter lowered unless it starts a name or an
    abbreviation.

    >>> in_sentence("Group modularity"), in_sentence("MDS median gap"), in_sentence("E–I index")
    ('group modularity', 'MDS median gap', 'E–I index')
    """
    first = label.split(" ", 1)[0]
    if first in _PROPER or any(c.isupper() for c in first[1:]) or not first[:1].isalpha():
        return label
    return label[:1].lower() + label[1:]
