"""group_modularity / modularity_graph against networkx, published check values and the toy
roll call's hand values (tests/toy_rollcall.py)."""

import networkx as nx
import numpy as np
import pytest

from blocwatch.metrics import PeriodInput
from blocwatch.metrics.graph.modularity import _family, group_modularity, modularity_graph
from tests.toy_rollcall import GROUPS as TOY_GROUPS
from tests.toy_rollcall import agreement_weights as toy_weights


def karate():
    g = nx.karate_club_graph()
    return g, [g.nodes[u]["club"] for u in g]


def test_karate_unweighted():
    g, club = karate()
    w = nx.to_numpy_array(g, weight=None)
    # [networkx 3.6.1, computed]
    assert group_modularity(w, club) == pytest.approx(0.3582347140039448, abs=1e-12)


def test_karate_weighted():
    g, club = karate()
    w = nx.to_numpy_array(g, weight="weight")
    # [networkx 3.6.1, computed]
    assert group_modularity(w, club) == pytest.approx(0.39143756676224206, abs=1e-12)


def test_karate_graph_form_matches_networkx():
    g, club = karate()
    parts = [{u for u in g if g.nodes[u]["club"] == c} for c in set(club)]
    for weight in (None, "weight"):
        ref = nx.community.modularity(g, parts, weight=weight)  # [S: networkx]
        assert modularity_graph(g, parts, weight=weight) == pytest.approx(ref, abs=1e-12)
        mapping = dict(zip(g, club))
        assert modularity_graph(g, mapping, weight=weight) == pytest.approx(ref, abs=1e-12)


def test_karate_faction_split():
    # [two public test suites; also derived by hand]: Zachary's 16/18 split (node 8 with the
    # officer side), unweighted -> 565/1521
    g, club = karate()
    hi = {u for u in g if club[u] == "Mr. Hi"} - {8}
    assert len(hi) == 16
    labels = [int(u in hi) for u in g]
    q = group_modularity(nx.to_numpy_array(g, weight=None), labels)
    assert q == pytest.approx(565 / 1521, abs=1e-12)
    assert q == pytest.approx(nx.community.modularity(g, [hi, set(g) - hi], weight=None))


def test_barbell():
    w = nx.to_numpy_array(nx.barbell_graph(3, 0))
    # [S: networkx modularity docstring]
    assert group_modularity(w, [0, 0, 0, 1, 1, 1]) == pytest.approx(5 / 14)


def test_k4_split_and_one_community():
    w = nx.to_numpy_array(nx.complete_graph(4))
    assert group_modularity(w, [0, 0, 1, 1]) == pytest.approx(-1 / 6)  # derived by hand
    assert group_modularity(w, [0, 0, 0, 0]) == pytest.approx(0.0, abs=1e-15)  # derived by hand


def test_two_blocks_formula():
    # derived by hand: Q = (h-1)w / ((h-1)w + h b) - 1/2; h=5, w=0.9, b=0.3 -> 0.205882
    h, win, b = 5, 0.9, 0.3
    w = np.full((2 * h, 2 * h), b)
    w[:h, :h] = w[h:, h:] = win
    np.fill_diagonal(w, 0.0)
    q = group_modularity(w, [0] * h + [1] * h)
    assert q == pytest.approx((h - 1) * win / ((h - 1) * win + h * b) - 0.5, abs=1e-12)
    assert q == pytest.approx(0.205882, abs=1e-6)


def test_toy_roll_call():
    # derived by hand (tests/toy_rollcall.py)
    assert group_modularity(toy_weights(), TOY_GROUPS) == pytest.approx(1 / 14)
    # derived by hand (tests/toy_rollcall.py), without v3
    assert group_modularity(toy_weights(drop=[2]), TOY_GROUPS) == pytest.approx(0.2)


def test_toy_agreement_values():
    # derived by hand (tests/toy_rollcall.py): the agreement table the two values above rest on
    w = toy_weights()
    assert w[0, 1] == w[3, 4] == 1.0
    assert w[2, 5] == 0.75 and w[0, 3] == 0.25 and w[0, 5] == 0.5


@pytest.mark.parametrize("seed", range(6))
def test_random_weighted_graphs_match_networkx(seed):
    rng = np.random.default_rng(seed)
    n = int(rng.integers(5, 30))
    w = np.triu(rng.random((n, n)) * (rng.random((n, n)) < 0.4), 1)
    w = w + w.T
    labels = rng.integers(0, 3, n)
    g = nx.from_numpy_array(w)
    parts = [set(np.flatnonzero(labels == c).tolist()) for c in np.unique(labels)]
    for gamma in (0.5, 1.0, 2.0):
        ref = nx.community.modularity(g, parts, weight="weight", resolution=gamma)  # [S: networkx]
        assert group_modularity(w, labels, resolution=gamma) == pytest.approx(ref, abs=1e-12)


def test_self_loops_follow_networkx():
    g = nx.barbell_graph(3, 0)
    g.add_edge(0, 0, weight=2.0)
    parts = [{0, 1, 2}, {3, 4, 5}]
    ref = nx.community.modularity(g, parts, weight="weight")  # [S: networkx]
    assert modularity_graph(g, parts, weight="weight") == pytest.approx(ref)


def test_labels_may_be_any_ids():
    w = nx.to_numpy_array(nx.barbell_graph(3, 0))
    assert group_modularity(w, ["x", "x", "x", "y", "y", "y"]) == \
        group_modularity(w, [7, 7, 7, 2, 2, 2])


def test_no_edges_gives_zero():
    # documented answer for m == 0 (networkx raises ZeroDivisionError)
    assert group_modularity(np.zeros((3, 3)), [0, 1, 1]) == 0.0


def test_negative_weights_raise():
    w = np.array([[0, -0.5], [-0.5, 0]])
    with pytest.raises(ValueError, match="non-negative"):
        group_modularity(w, [0, 1])


def test_bad_inputs_raise():
    with pytest.raises(ValueError, match="zero diagonal"):
        group_modularity(np.ones((2, 2)), [0, 1])
    with pytest.raises(ValueError, match="symmetric"):
        group_modularity(np.array([[0, 1.0], [0.5, 0]]), [0, 1])
    with pytest.raises(ValueError, match="expected 2 × 2"):
        group_modularity(np.zeros((3, 3)), [0, 1])
    with pytest.raises(ValueError, match="NaN"):
        group_modularity(np.zeros((2, 2)), [0, np.nan])


def test_graph_form_rejects_non_partitions():
    g = nx.path_graph(4)
    with pytest.raises(ValueError, match="every node"):
        modularity_graph(g, [{0, 1}, {2}])
    with pytest.raises(ValueError, match="exactly once"):
        modularity_graph(g, [{0, 1, 2}, {2, 3}])
    with pytest.raises(ValueError, match="undirected"):
        modularity_graph(nx.DiGraph(g), [{0, 1, 2, 3}])


def _inp(w, labels):
    n = len(labels)
    return PeriodInput(agreement=np.eye(n), shared=np.zeros((n, n), int),
                       labels=np.asarray(labels), weights=w, edges=w > 0)


def test_family_value_and_degenerate_notes():
    w = toy_weights()
    assert _family(_inp(w, [0, 0, 0, 1, 1, 1]))["group_modularity"].value == pytest.approx(1 / 14)
    one = _family(_inp(w, [0] * 6))["group_modularity"]
    assert one.value is None and "one group" in one.note
    empty = _family(_inp(np.zeros((3, 3)), [0, 1, 1]))["group_modularity"]
    assert empty.value is None and "no edges" in empty.note
