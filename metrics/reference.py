"""The methods reference: what each registered period metric means, in words a reader can use.

One :class:`MetricInfo` per metric name of :data:`blocwatch.metrics.registry.FAMILIES`: a
plain-words label, a description (what it measures and how to read it), the formula, the
published reference, and check values with their source (a published example, a reference
library, or a value derived by hand — the unit tests named in each check confirm it). The
registry hands these out (:func:`blocwatch.metrics.registry.metric_info`), ``blocwatch metrics``
lists them, and ``tests/meta/test_metric_reference.py`` fails when a registered metric has no
entry or an empty field. Pure data: no imports beyond the standard library.
"""

from __future__ import annotations

from dataclasses import dataclass


@dataclass(frozen=True)
class MetricInfo:
    label: str  # plain words, for headings and tables
    description: str  # what it measures, how to read it, what it cannot say
    formula: str  # plain text; the function's docstring carries the full derivation
    reference: str  # the published source(s)
    checks: tuple[str, ...] = ()  # "input → value [source; unit test]"


_NEWMAN = ("Newman MEJ (2004). Analysis of weighted networks. Phys. Rev. E 70:056131; "
           "Newman MEJ (2006). Modularity and community structure in networks. PNAS 103:8577")
_WAUGH = ("Waugh AS, Pei L, Fowler JH, Mucha PJ, Porter MA (2009). Party polarization in "
          "Congress: a network science approach. arXiv:0907.3509")
_LEIDEN = ("Traag VA, Waltman L, van Eck NJ (2019). From Louvain to Leiden: guaranteeing "
           "well-connected communities. Sci. Rep. 9:5233; Blondel VD, Guillaume J-L, Lambiotte R, "
           "Lefebvre E (2008). Fast unfolding of communities in large networks. J. Stat. Mech. "
           "P10008")
_KS = ("Krackhardt D, Stern RN (1988). Informal networks and organizational crises. Social "
       "Psychology Quarterly 51(2):123–140")
_RICE = ("Rice SA (1925). The behavior of legislative groups: a method of measurement. "
         "Political Science Quarterly 40(1):60–72")
_HNR = ("Hix S, Noury A, Roland G (2005). Power to the parties: cohesion and competition in "
        "the European Parliament. British J. Political Science 35(2):209–234")
_KRIPP = ("Krippendorff K (2011). Computing Krippendorff's alpha-reliability. Annenberg School "
          "for Communication, University of Pennsylvania")
_IRT = ("Clinton J, Jackman S, Rivers D (2004). The statistical analysis of roll call data. "
        "APSR 98(2):355–370; Imai K, Lo J, Olmsted J (2016). Fast estimation of ideal points "
        "with massive data. APSR 110(4):631–656")
_MDS = ("Torgerson WS (1952). Multidimensional scaling: I. Theory and method. Psychometrika "
        "17:401–419; Gower JC (1966). Biometrika 53:325–338")
_MEDIAN_GAP = ("McCarty N, Poole KT, Rosenthal H (2006). Polarized America. MIT Press "
               "(party-median distance); Cohen J (1988). Statistical Power Analysis, 2nd ed. "
               "(pooled SD)")
_TOY = "the toy roll call of tests/toy_rollcall.py, derived by hand"

METRIC_INFO: dict[str, MetricInfo] = {
    "group_modularity": MetricInfo(
        "Group modularity",
        "How much more agreement falls inside the recorded groups than a random graph with "
        "the same member totals would put there. 0: groups do not matter; higher: votes "
        "follow group lines. Dense agreement graphs compress it, so compare periods of one "
        "body rather than bodies.",
        "Q = (1/2m) Σ_ij [A_ij − k_i k_j / 2m] δ(g_i, g_j); A the weighted agreement graph, "
        "k_i = Σ_j A_ij, 2m = Σ_ij A_ij",
        f"{_NEWMAN}; {_WAUGH}",
        ("networkx barbell_graph(3, 0), its two triangles → 5/14 [networkx modularity "
         "docstring; tests/unit/metrics/graph/test_modularity.py]",
         "karate club, 'club' split, unweighted → 0.3582347140039448 [networkx 3.6.1; same "
         "test]",
         f"four-ballot toy roll call → 1/14, 0.2 without its unanimous ballot [{_TOY}]")),
    "best_modularity": MetricInfo(
        "Best modularity",
        "Modularity of the best split the Leiden algorithm finds without looking at the groups: "
        "how divided the body is along any lines. High even on random graphs, so read it "
        "beside group modularity.",
        "max over partitions c of Q(c), searched by Leiden (a lower bound on the maximum)",
        f"{_LEIDEN}; Guimerà R, Sales-Pardo M, Amaral LAN (2004). Phys. Rev. E 70:025101",
        ("karate club, unweighted, exact maximum → 0.4197896120973046; the search reaches "
         "≥ 0.41 [igraph's exact-optimum unit test; tests/unit/metrics/graph/test_community.py]",)),
    "communities": MetricInfo(
        "Communities",
        "Number of communities in the best split Leiden finds (isolated members count as "
        "their own).",
        "number of blocks of the Leiden partition",
        _LEIDEN,
        ("networkx barbell_graph(3, 0) → 2 [doctest of blocwatch.metrics.graph.community]",)),
    "community_group_ari": MetricInfo(
        "Community–group match",
        "Adjusted Rand index between the communities found and the recorded groups: 1 when "
        "the communities are exactly the groups, about 0 when unrelated.",
        "ARI = (RI − E[RI]) / (max RI − E[RI]) over member pairs",
        "Hubert L, Arabie P (1985). Comparing partitions. J. Classification 2:193–218",
        ("computed by sklearn.metrics.adjusted_rand_score [scikit-learn]; barbell_graph(3, 0) "
         "vs its two halves → 1.0 [doctest]",)),
    "cross_group_share": MetricInfo(
        "Cross-group tie share",
        "Share of the graph's ties that join members of different groups. Lower: fewer "
        "bridges between groups. Depends on group sizes; the ratio below corrects for them.",
        "E / (E + I); E ties between groups, I ties within, on the thresholded graph",
        _KS,
        ("karate club, 'club' split → 11/78 [networkx partition_quality coverage 67/78; "
         "tests/unit/metrics/graph/test_crossgroup.py]",)),
    "cross_group_ratio": MetricInfo(
        "Cross-group tie ratio",
        "Cross-group tie share divided by the share random group labels (same sizes) would "
        "give: 1 means ties ignore groups, towards 0 groups never tie across.",
        "(E / (E + I)) / (1 − π), π = Σ_g n_g(n_g − 1) / (n(n − 1))",
        _KS,
        ("path a–b, a–c with groups {a, b}, {c} → (1/2)/(2/3) = 0.75 [derived by hand; "
         "doctest]",)),
    "ei_index": MetricInfo(
        "E–I index",
        "External minus internal ties over all ties: −1 every tie inside groups, +1 every tie "
        "across. Random labels give 1 − 2π, not 0.",
        "EI = (E − I) / (E + I)",
        _KS,
        ("karate club, 'club' split → (11 − 67)/78 = −0.717949 [networkx partition_quality; "
         "tests/unit/metrics/graph/test_crossgroup.py]",)),
    "separability": MetricInfo(
        "Separability",
        "How well a member's group can be told from their voting alone: cross-validated "
        "balanced accuracy of a classifier on a map of disagreement. Chance is 1/(number of "
        "groups); 1 means every member is placed in their group.",
        "BA = (1/G) Σ_g #{i ∈ g: ŷ_i = g} / n_g, out-of-fold logistic regression on a "
        "classical-MDS embedding of 1 − agreement",
        f"Brodersen KH et al. (2010). The balanced accuracy and its posterior distribution. "
        f"ICPR 2010; {_MDS}",
        ("any predictions → sklearn.metrics.balanced_accuracy_score; the logistic fit → "
         "scikit-learn's LogisticRegression [scikit-learn; tests/unit/metrics/"
         "test_separability.py, test_logistic.py]",
         "every pair agreeing fully → exactly 1/G [derived by hand; same test]")),
    "silhouette": MetricInfo(
        "Silhouette",
        "How tight and far apart the groups are on disagreement distances: near 1 tight, "
        "well-apart groups; near 0 overlapping; below 0 members closer to another group.",
        "s_i = (b_i − a_i) / max(a_i, b_i), mean over members; a_i mean distance to own group, "
        "b_i to the nearest other group",
        "Rousseeuw PJ (1987). Silhouettes. J. Comput. Appl. Math. 20:53–65",
        ("points {0, 1} vs {10, 11} → 0.899749 [derived by hand; equals "
         "sklearn.metrics.silhouette_score; tests/unit/metrics/space/test_separability.py]",)),
    "krippendorff_alpha": MetricInfo(
        "Panel agreement (Krippendorff's alpha)",
        "How far the members' scores agree beyond chance on scored ballots: 1 perfect, 0 "
        "chance level, below 0 systematic disagreement. Only periods with scored ballots.",
        "α = 1 − D_o / D_e = 1 − (n − 1) Σ_ck o_ck δ²_ck / Σ_ck n_c n_k δ²_ck",
        _KRIPP,
        ("Krippendorff (2011) worked example, 4 observers × 12 units → nominal 0.743, "
         "ordinal 0.815, interval 0.849 [published; also the PyPI package krippendorff 0.9; "
         "tests/unit/metrics/agreement/test_reliability.py]",)),
    "krippendorff_alpha_within": MetricInfo(
        "Agreement within groups (alpha)",
        "Krippendorff's alpha counting only pairs of members of the same group: well above "
        "the whole panel's alpha, members agree mostly with their own group.",
        "α with each ballot × group as its own unit (same-group pairs in D_o, all pairable "
        "answers in D_e)",
        _KRIPP,
        ("units split by group → the krippendorff package's alpha [PyPI krippendorff 0.9; "
         "tests/unit/metrics/agreement/test_reliability.py]",)),
    "rice_mean": MetricInfo(
        "Rice cohesion (mean)",
        "How united each group votes, averaged over ballots and groups (weighted by size): "
        "1 every group votes as one, 0 every group splits evenly. Abstentions ignored.",
        "Rice_g = mean over ballots of |Y − N| / (Y + N); size-weighted mean over groups of "
        "two or more members",
        _RICE,
        ("one defector in a group of three → 1/3 on that ballot [Rice 1925; doctest]",
         f"group A of the toy roll call → 5/6 [{_TOY}]")),
    "agreement_index_mean": MetricInfo(
        "Agreement index (mean)",
        "Group unity counting abstain as a third option: 1 a group votes as one, 0 it splits "
        "evenly over yes, no and abstain (0.25 is the floor with yes and no only).",
        "AI = [max(Y, N, A) − ½((Y + N + A) − max(Y, N, A))] / (Y + N + A)",
        _HNR,
        ("(6 yes, 3 no, 1 abstain) → 0.4; (10, 0, 0) → 1; (4, 4, 4) → 0 [derived by hand; "
         "tests/unit/metrics/agreement/test_cohesion.py]",)),
    "group_line_share": MetricInfo(
        "Group-line ballots",
        "Share of ballots on which one group's majority voted yes and another's no.",
        "#{ballots where some group's line is yes and another's is no} / #ballots",
        _RICE,
        (f"toy roll call → 3 of 4 ballots [{_TOY}]",)),
    "mean_loyalty": MetricInfo(
        "Loyalty (mean)",
        "Share of group-line ballots on which a member voted with their group's majority, "
        "averaged over members. A summary of the body, not a judgement of anyone.",
        "mean over members of #{group-line ballots voted with own group's line} / "
        "#{group-line ballots the member voted on}",
        _HNR,
        (f"toy roll call, member A3 → 2/3 [{_TOY}]",)),
    "ideal_median_gap": MetricInfo(
        "Ideal-point gap",
        "Distance between the two largest groups' median ideal points, in pooled standard "
        "deviations: 0 the groups sit together, larger further apart.",
        "|med_g − med_h| / s_p, s_p² = ((n_g − 1)s_g² + (n_h − 1)s_h²) / (n_g + n_h − 2), "
        "on probit ideal points fitted by EM",
        f"{_IRT}; {_MEDIAN_GAP}",
        ("positions 0, 1, 2 vs 4, 5, 6 → 4.0 [derived by hand; doctest]",
         "the EM fit → the posterior mode scipy.optimize L-BFGS-B finds [tests/unit/metrics/"
         "test_ideal_points.py]")),
    "ideal_overlap": MetricInfo(
        "Ideal-point overlap",
        "Members of the two largest groups lying beyond the other group's most extreme "
        "member on the ideal-point line: 0 the groups do not overlap.",
        "#{i ∈ L: x_i > min_H} + #{i ∈ H: x_i < max_L}",
        f"{_IRT}; Poole KT, Rosenthal H (1997). Congress: A Political-Economic History of "
        "Roll Call Voting. Oxford University Press",
        ("0, 1, 5 vs 4, 6, 7 → 2 [derived by hand; doctest]",)),
    "ideal_bimodality": MetricInfo(
        "Ideal-point bimodality",
        "Sarle's bimodality coefficient of the ideal points: above 5/9 (a uniform spread) "
        "suggests two camps; a normal spread gives about 1/3.",
        "BC = (g₁² + 1) / (g₂ + 3(n − 1)² / ((n − 2)(n − 3))), bias-corrected skewness g₁ "
        "and excess kurtosis g₂",
        "Pfister R, Schwarz KA, Janczyk M, Dale R, Freeman JB (2013). Good things peak in "
        "pairs. Frontiers in Psychology 4:700",
        ("uniform → 5/9, normal → 1/3 [Pfister et al. 2013; tests/unit/metrics/"
         "test_positions.py]", "fifty at −1 and fifty at +1 → 0.9507 [doctest]")),
    "mds_median_gap": MetricInfo(
        "Map gap",
        "Distance between the two largest groups' medians on the first axis of a classical "
        "MDS map of disagreement, in pooled standard deviations.",
        "median gap as for ideal points, on the first classical-MDS axis of D = 1 − agreement",
        f"{_MDS}; {_MEDIAN_GAP}",
        ("two equal blocks, agreement 1 within and 0 across → every member at ±½, "
         "λ₁ = n/4 [derived by hand; tests/unit/metrics/space/test_mds.py]",)),
}
