"""Labels, plain-language descriptions and references for the measures a report can show.

A metric missing here is still drawn: it gets its raw name as label and "no description yet" in
the methods section, so adding a metric to the pipeline never breaks a report.
"""

from __future__ import annotations

import math
from dataclasses import dataclass


@dataclass(frozen=True)
class MetricInfo:
    label: str
    what: str
    reference: str
    integer: bool = False


REFS = {
    "newman": "Newman, M. E. J. (2006). Modularity and community structure in networks. "
              "PNAS 103(23), 8577–8582.",
    "waugh": "Waugh, A. S., Pei, L., Fowler, J. H., Mucha, P. J. & Porter, M. A. (2009). "
             "Party polarization in Congress: a network science approach. arXiv:0907.3509.",
    "louvain": "Blondel, V. D., Guillaume, J.-L., Lambiotte, R. & Lefebvre, E. (2008). Fast "
               "unfolding of communities in large networks. J. Stat. Mech. P10008.",
    "ari": "Hubert, L. & Arabie, P. (1985). Comparing partitions. J. Classification 2, 193–218.",
    "andris": "Andris, C. et al. (2015). The rise of partisanship and super-cooperators in the "
              "U.S. House of Representatives. PLOS ONE 10(4), e0123507.",
    "ei": "Krackhardt, D. & Stern, R. N. (1988). Informal networks and organizational crises. "
          "Social Psychology Quarterly 51(2), 123–140.",
    "mds": "Torgerson, W. S. (1952). Multidimensional scaling: I. Theory and method. "
           "Psychometrika 17, 401–419.",
    "silhouette": "Rousseeuw, P. J. (1987). Silhouettes: a graphical aid to the interpretation "
                  "and validation of cluster analysis. J. Comput. Appl. Math. 20, 53–65.",
    "rice": "Rice, S. A. (1925). The behavior of legislative groups. Political Science "
            "Quarterly 40(1), 60–72.",
    "hix": "Hix, S., Noury, A. & Roland, G. (2005). Power to the parties: cohesion and "
           "competition in the European Parliament. British J. Political Science 35(2), 209–234.",
    "participation": "Guimerà, R. & Amaral, L. A. N. (2005). Functional cartography of complex "
                     "metabolic networks. Nature 433, 895–900.",
    "mk": "Mann, H. B. (1945). Nonparametric tests against trend. Econometrica 13, 245–259; "
          "Kendall, M. G. (1975). Rank Correlation Methods.",
    "sen": "Sen, P. K. (1968). Estimates of the regression coefficient based on Kendall's tau. "
           "JASA 63, 1379–1389.",
    "pelt": "Killick, R., Fearnhead, P. & Eckley, I. A. (2012). Optimal detection of "
            "changepoints with a linear computational cost. JASA 107, 1590–1598.",
}

METRICS: dict[str, MetricInfo] = {
    "group_modularity": MetricInfo(
        "Group modularity", "modularity Q of the recorded groups on the weighted agreement "
        "graph: how much more agreement falls inside groups than chance would put there",
        f"{REFS['newman']} {REFS['waugh']}"),
    "best_modularity": MetricInfo(
        "Best modularity", "modularity of the best partition Louvain finds, ignoring groups",
        REFS["louvain"]),
    "communities": MetricInfo(
        "Communities", "number of communities in that best partition", REFS["louvain"],
        integer=True),
    "community_group_ari": MetricInfo(
        "Community–group ARI", "adjusted Rand index between the best partition and the groups "
        "(1 = communities are exactly the groups)", REFS["ari"]),
    "cross_group_share": MetricInfo(
        "Cross-group tie share", "share of ties in the thresholded graph that join members of "
        "different groups", REFS["andris"]),
    "cross_group_ratio": MetricInfo(
        "Cross-group tie ratio", "cross-group tie share divided by the share expected if ties "
        "ignored groups (1 = no group effect)", REFS["andris"]),
    "ei_index": MetricInfo(
        "E–I index", "(external − internal ties) / all ties, from −1 (all ties inside groups) "
        "to +1 (all across)", REFS["ei"]),
    "separability": MetricInfo(
        "Separability", "cross-validated balanced accuracy of predicting a member's group from "
        "their position in a classical-MDS map of disagreement", REFS["mds"]),
    "silhouette": MetricInfo(
        "Silhouette", "mean silhouette of the groups on disagreement distances (1 = tight, "
        "well-apart groups)", REFS["silhouette"]),
    "rice_mean": MetricInfo(
        "Rice cohesion (mean)", "mean over groups and ballots of |yes − no| / (yes + no)",
        REFS["rice"]),
    "agreement_index_mean": MetricInfo(
        "Agreement index (mean)", "mean group agreement index over ballots, counting "
        "abstentions as a third position", REFS["hix"]),
    "group_line_share": MetricInfo(
        "Group-line ballots", "share of ballots on which group majorities opposed each other",
        REFS["rice"]),
}

MEMBER_METRICS: dict[str, str] = {
    "cross_tie_share": "Cross-group tie share",
    "participation": "Participation coefficient",
    "cross_partners": "Cross-group partners",
    "delta_q": "Modularity contribution (ΔQ)",
    "loyalty": "Loyalty",
    "ideal_point": "Ideal point",
    "mds_1": "Map position 1",
    "mds_2": "Map position 2",
}

INTEGER_MEMBER_METRICS = {"cross_partners"}

# Preferred order of charts on a page; unknown metrics follow alphabetically.
ORDER = list(METRICS)


def info(metric: str) -> MetricInfo:
    """Label, description and reference for ``metric`` (a generic entry when unknown)."""
    return METRICS.get(metric) or MetricInfo(
        metric.replace("_", " ").capitalize(), "no description recorded for this measure yet", "")


def member_label(metric: str) -> str:
    return MEMBER_METRICS.get(metric) or metric.replace("_", " ").capitalize()


def ordered(metrics) -> list[str]:
    """Known metrics in page order, then unknown ones sorted by name."""
    names = set(metrics)
    return [m for m in ORDER if m in names] + sorted(names - set(ORDER))


def fmt(value, metric: str = "") -> str:
    """Format a number for text: integers for count metrics, two decimals otherwise.

    >>> fmt(0.2049), fmt(3.0, "communities"), fmt(float("nan"))
    ('0.20', '3', '–')
    """
    if value is None:
        return "–"
    try:
        v = float(value)
    except (TypeError, ValueError):
        return "–"
    if math.isnan(v):
        return "–"
    if info(metric).integer or metric in INTEGER_MEMBER_METRICS:
        return f"{v:.0f}"
    if abs(v) >= 100:
        return f"{v:,.0f}"
    return f"{v:.2f}"


def fmt_interval(value, low, high, metric: str = "") -> str:
    """``0.21 [0.18–0.24]``, or just the value when the interval is missing."""
    text = fmt(value, metric)
    if fmt(low) != "–" and fmt(high) != "–":
        text += f" [{fmt(low, metric)}–{fmt(high, metric)}]"
    return text
