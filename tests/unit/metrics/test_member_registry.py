"""Member-level registry: shapes, notes, invariance, and agreement with the functions."""

import numpy as np
import pytest

from blocwatch.metrics import member_registry
from blocwatch.metrics.agreement import cohesion
from blocwatch.metrics.graph import bridges
from blocwatch.metrics.member_registry import MEMBER_FAMILIES, compute_members
from blocwatch.metrics.registry import PeriodInput
from tests.spatial_sim import spatial_votes

EXPECTED = ["cross_tie_share", "participation", "cross_partners", "delta_q", "loyalty",
            "ideal_point", "mds_1", "mds_2", "bridging", "bridge_rank", "bridging_null_p"]


def _inp(votes, labels):
    """A period input built the way the pipeline does (agreement over yes/no, edges above
    the mean agreement, weights = agreement on every pair)."""
    cast = (votes == 1) | (votes == 2)
    both = cast.astype(float) @ cast.T.astype(float)
    same = sum((votes == c).astype(float) @ (votes == c).T.astype(float) for c in (1, 2))
    agreement = np.where(both > 0, same / np.maximum(both, 1), np.nan)
    weights = np.nan_to_num(agreement)
    np.fill_diagonal(weights, 0)
    edges = weights > np.mean(weights[weights > 0])
    return PeriodInput(agreement=agreement, shared=both.astype(int), labels=np.asarray(labels),
                       weights=weights, edges=edges, votes=votes)


def test_names_and_shapes():
    votes, _, groups = spatial_votes(n=24, b=50, seed=1)
    inp = _inp(votes, groups)
    out = compute_members(inp)
    assert list(out) == EXPECTED == member_registry.member_metric_names()
    assert all(v.shape == (24,) and v.dtype == np.float64 for v in out.values())
    np.testing.assert_array_equal(out["loyalty"], cohesion.loyalty(votes, groups))
    np.testing.assert_array_equal(out["delta_q"],
                                  bridges.leave_one_out_delta_q(inp.weights, groups))
    # planted groups: positions separate the groups on the first axis
    assert abs(np.corrcoef(out["ideal_point"], groups)[0, 1]) > 0.8
    assert abs(np.corrcoef(out["mds_1"], groups)[0, 1]) > 0.8


def test_member_permutation_permutes_scores_and_group_names_do_not_matter():
    votes, _, groups = spatial_votes(n=20, b=40, seed=2)
    base = compute_members(_inp(votes, groups))
    perm = np.random.default_rng(0).permutation(20)
    other = compute_members(_inp(votes[perm], (1 - groups)[perm]))
    for m in ("cross_tie_share", "participation", "cross_partners", "delta_q", "loyalty",
              "ideal_point"):
        np.testing.assert_allclose(other[m], base[m][perm], atol=1e-4, err_msg=m)
    for m in ("mds_1", "mds_2"):  # axes carry their own sign rule: compare up to sign
        np.testing.assert_allclose(np.abs(other[m]), np.abs(base[m][perm]), atol=1e-8)


def test_failures_become_nan_with_notes():
    votes, _, groups = spatial_votes(n=12, b=30, seed=3)
    inp = _inp(votes, groups)
    no_votes = PeriodInput(inp.agreement, inp.shared, inp.labels, inp.weights, inp.edges, None)
    notes = {}
    out = compute_members(no_votes, notes=notes)
    assert np.isnan(out["loyalty"]).all() and np.isnan(out["ideal_point"]).all()
    assert "vote matrix" in notes["loyalty"] and "vote matrix" in notes["ideal_point"]
    assert np.isfinite(out["participation"]).all() and "participation" not in notes
    singles = _inp(votes[:3], np.array([0, 1, 2]))  # no same-group pair: no default cut-off
    notes = {}
    assert np.isnan(compute_members(singles, notes=notes)["cross_partners"]).all()
    assert "cutoff" in notes["cross_partners"]


def test_family_subset_and_double_registration():
    votes, _, groups = spatial_votes(n=10, b=20, seed=4)
    assert list(compute_members(_inp(votes, groups), families=["mds"])) == ["mds_1", "mds_2"]
    with pytest.raises(ValueError, match="registered twice"):
        member_registry.register_member("mds", ("x",))(lambda inp: {})
    assert set(MEMBER_FAMILIES) >= {"cross_ties", "delta_q", "ideal", "mds"}
