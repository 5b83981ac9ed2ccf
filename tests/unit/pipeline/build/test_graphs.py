"""Graph rules, and the equal-likelihood threshold against a histogram crossing."""

import numpy as np
import pytest

from blocwatch.pipeline.build.graphs import build_graph, equal_likelihood_threshold, to_networkx
from blocwatch.pipeline.errors import UsageError
from blocwatch.pipeline.options import Rule, parse_rule


def _planted(n_per=40, seed=0):
    rng = np.random.default_rng(seed)
    labels = np.repeat([0, 1], n_per)
    same = labels[:, None] == labels[None, :]
    a = np.where(same, rng.normal(0.8, 0.05, (2 * n_per,) * 2),
                 rng.normal(0.5, 0.05, (2 * n_per,) * 2))
    a = np.clip(np.triu(a, 1) + np.triu(a, 1).T, 0, 1)
    np.fill_diagonal(a, 1)
    return a, labels


def test_equal_likelihood_separates_planted_blocks():
    """Same-group pairs ~ N(.8, .05) and cross pairs ~ N(.5, .05): the raw-count crossing lies
    between the means, shifted toward the cross mean because same-group pairs are fewer
    (39·40 vs 40·40 per block pair) — hand-derived bound, not a fitted value."""
    a, labels = _planted()
    t = equal_likelihood_threshold(a, labels)
    assert 0.6 < t < 0.7


def test_equal_likelihood_minimises_misplaced_pairs():
    """The chosen cut misplaces no more pairs than any cut on a fine grid (its definition)."""
    a, labels = _planted(n_per=15, seed=2)
    iu = np.triu_indices(len(labels), 1)
    vals, same = a[iu], labels[iu[0]] == labels[iu[1]]

    def errors(t):
        return int(((vals > t) & ~same).sum() + ((vals <= t) & same).sum())

    t = equal_likelihood_threshold(a, labels)
    grid = np.linspace(0, 1, 2001)
    assert errors(t) == min(errors(g) for g in grid)


def test_one_group_has_no_threshold():
    a, _ = _planted(n_per=5)
    assert np.isnan(equal_likelihood_threshold(a, np.zeros(10, dtype=int)))


def test_rules():
    a = np.array([[1, .9, .2], [.9, 1, np.nan], [.2, np.nan, 1]])
    labels = np.array([0, 0, 1])
    g = build_graph(a, labels, parse_rule("threshold:0.5"))
    assert g.edges.sum() == 2 and g.weights[0, 1] == 0.9 and g.weights[0, 2] == 0
    w = build_graph(a, labels, Rule("weighted"))
    assert w.weights[0, 2] == 0.2 and w.weights[1, 2] == 0 and np.diag(w.weights).sum() == 0
    nxg = to_networkx(w.weights, ["a", "b", "c"])
    assert nxg["a"]["c"]["weight"] == 0.2 and not nxg.has_edge("b", "c")


def test_backbone_rule_keeps_the_disparity_backbone():
    # The hand-worked graph of tests/unit/metrics/test_backbone.py as agreement (scaled by 1/10
    # to lie in [0, 1]; the filter only reads shares, so the scale cannot matter): at 0.5 the
    # backbone is 0–1 and 1–2. A missing pair (NaN) is never an edge.
    a = np.full((4, 4), np.nan)
    for i, j, v in [(0, 1, .6), (0, 2, .1), (0, 3, .1), (1, 2, .2)]:
        a[i, j] = a[j, i] = v
    np.fill_diagonal(a, 1)
    g = build_graph(a, np.array([0, 0, 1, 1]), parse_rule("backbone:0.5"))
    assert {tuple(p) for p in np.argwhere(np.triu(g.edges))} == {(0, 1), (1, 2)}
    assert g.weights[0, 1] == 0.6 and g.weights[0, 2] == 0 and np.isnan(g.threshold)
    assert parse_rule("backbone:0.5").spec == "backbone:0.5"


@pytest.mark.parametrize("spec", ["threshold:2", "threshold:x", "best", "weighted:1",
                                  "backbone", "backbone:1", "backbone:0", "backbone:x"])
def test_bad_rules_raise(spec):
    with pytest.raises(UsageError, match="rule"):
        parse_rule(spec)
