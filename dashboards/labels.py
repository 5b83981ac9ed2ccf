"""Labels, plain-language descriptions and references for the measures a report can show.

The page prefers what the results carry (``ReportTables.measures``, the exported metric list);
this catalogue fills in what they lack, so a page reads in words even from an older store. A
metric known to neither is still drawn, under its name made into words, so adding a metric to the
pipeline never breaks a report (``tests/meta`` checks every registered metric is described).
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
    "gap": "Cohen, J. (1988). Statistical Power Analysis for the Behavioral Sciences, 2nd ed. "
           "(pooled SD); McCarty, N., Poole, K. T. & Rosenthal, H. (2006). Polarized America. "
           "MIT Press.",
    "overlap": "Poole, K. T. & Rosenthal, H. (1997). Congress: A Political-Economic History of "
               "Roll Call Voting. Oxford University Press.",
    "bimodality": "Pfister, R., Schwarz, K. A., Janczyk, M., Dale, R. & Freeman, J. B. (2013). "
                  "Good things peak in pairs: a note on the bimodality coefficient. Frontiers "
                  "in Psychology 4, 700.",
    "alpha": "Krippendorff, K. (2004). Content Analysis: An Introduction to Its Methodology, "
             "2nd ed. Sage.",
    "pelt": "Killick, R., Fearnhead, P. & Eckley, I. A. (2012). Optimal detection of "
            "changepoints with a linear computational cost. JASA 107, 1590–1598.",
}

METRICS: dict[str, MetricInfo] = {
    "group_modularity": MetricInfo(
        "Group modularity", "modularity Q of the recorded groups on the weighted agreement "
        "graph: how much more agreement falls inside groups than chance would put there",
        f"{REFS['newman']} {REFS['waugh']}",
        formula="Q = (1/2m) Σ_ij [w_ij − k_i k_j / 2m] δ(g_i, g_j)", direction="higher"),
    "best_modularity": MetricInfo(
        "Best modularity", "modularity of the best partition Louvain finds, ignoring groups",
        REFS["louvain"], formula="Q of the Louvain partition (same formula as group "
        "modularity)", direction="higher"),
    "communities": MetricInfo(
        "Communities", "number of communities in that best partition", REFS["louvain"],
        integer=True, formula="count of blocks in the Louvain partition"),
    "community_group_ari": MetricInfo(
        "Community–group ARI", "adjusted Rand index between the best partition and the groups "
        "(1 = communities are exactly the groups)", REFS["ari"],
        formula="ARI = (RI − E[RI]) / (max RI − E[RI])", direction="higher"),
    "cross_group_share": MetricInfo(
        "Cross-group tie share", "share of ties in the thresholded graph that join members of "
        "different groups", REFS["andris"],
        formula="ties between groups / all ties", direction="lower"),
    "cross_group_ratio": MetricInfo(
        "Cross-group tie ratio", "cross-group tie share divided by the share expected if ties "
        "ignored groups (1 = no group effect)", REFS["andris"],
        formula="cross-group share / (1 − Σ_g n_g(n_g − 1) / n(n − 1))", direction="lower"),
    "ei_index": MetricInfo(
        "E–I index", "external minus internal ties over all ties, from −1 (all ties inside "
        "groups) to +1 (all across)", REFS["ei"], formula="(E − I) / (E + I)",
        direction="lower"),
    "separability": MetricInfo(
        "Separability", "cross-validated balanced accuracy of predicting a member's group from "
        "their position in a classical-MDS map of disagreement", REFS["mds"],
        formula="mean over groups of the share of members placed in their own group "
                "(held-out folds)", direction="higher"),
    "silhouette": MetricInfo(
        "Silhouette", "mean silhouette of the groups on disagreement distances (1 = tight, "
        "well-apart groups)", REFS["silhouette"],
        formula="mean of (b_i − a_i) / max(a_i, b_i), a_i within-group and b_i nearest "
                "other group mean distance", direction="higher"),
    "rice_mean": MetricInfo(
        "Rice cohesion (mean)", "how united groups vote: 0 when a group splits evenly, 1 when "
        "it votes as one, averaged over groups and ballots", REFS["rice"],
        formula="mean of |yes − no| / (yes + no)", direction="higher"),
    "agreement_index_mean": MetricInfo(
        "Agreement index (mean)", "mean group agreement index over ballots, counting "
        "abstentions as a third position", REFS["hix"],
        formula="(max(Y, N, A) − ½(Y + N + A − max(Y, N, A))) / (Y + N + A)",
        direction="higher"),
    "group_line_share": MetricInfo(
        "Share of group-line ballots", "share of ballots on which group majorities opposed "
        "each other", REFS["rice"],
        formula="ballots where two group majorities differ / all counted ballots",
        direction="higher"),
    "mean_loyalty": MetricInfo(
        "Mean loyalty", "average over members of the share of group-line ballots on which a "
        "member voted with their own group's majority", REFS["hix"],
        formula="mean_i #{group-line ballots voted with own line} / #{group-line ballots "
                "cast}", direction="higher"),
    "ideal_median_gap": MetricInfo(
        "Ideal-point median gap", "distance between the median ideal points of the two "
        "largest groups, in pooled standard deviations, from a one-dimensional probit "
        "ideal-point fit", REFS["gap"], formula="|med_g − med_h| / s_pooled",
        direction="higher"),
    "ideal_overlap": MetricInfo(
        "Ideal-point overlap", "members of the two largest groups lying beyond the other "
        "group's most extreme member on the ideal-point line (0 = fully separated)",
        REFS["overlap"], integer=True,
        formula="#{i ∈ L : x_i > min H} + #{i ∈ H : x_i < max L}", direction="lower"),
    "ideal_bimodality": MetricInfo(
        "Ideal-point bimodality", "Sarle's bimodality coefficient of the ideal points: above "
        "5/9 (a uniform spread) suggests two camps, about 1/3 for a normal spread",
        REFS["bimodality"], formula="(g₁² + 1) / (g₂ + 3(n − 1)² / ((n − 2)(n − 3)))",
        direction="higher"),
    "mds_median_gap": MetricInfo(
        "MDS median gap", "distance between the median positions of the two largest groups "
        "on the first axis of a classical-MDS map of disagreement, in pooled standard "
        "deviations", f"{REFS['mds']} {REFS['gap']}", formula="|med_g − med_h| / s_pooled",
        direction="higher"),
    "krippendorff_alpha": MetricInfo(
        "Krippendorff's alpha", "agreement of the whole panel on scored ballots beyond "
        "chance: 1 perfect, 0 chance level, below 0 systematic disagreement",
        REFS["alpha"], formula="α = 1 − D_o / D_e"),
    "krippendorff_alpha_within": MetricInfo(
        "Krippendorff's alpha within groups", "the same agreement counted only between "
        "members of the same group; well above the whole panel's alpha, members agree mostly "
        "with their own group", REFS["alpha"], formula="α over ballot × group units",
        direction="higher"),
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

# What each member score means (the page's Methods section and bridges table print these).
MEMBER_WHAT: dict[str, str] = {
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

INTEGER_MEMBER_METRICS = {"cross_partners"}

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
_PROPER = {"Rice", "Krippendorff's", "Louvain"}


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
