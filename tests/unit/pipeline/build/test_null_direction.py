"""Label-permutation nulls in each metric's direction of division, through the build's own
``permutation_nulls`` on planted-truth bodies (tests/spatial_sim.py)."""

from datetime import date

import numpy as np
import pytest
from scipy import stats

from blocwatch.metrics import registry
from blocwatch.pipeline.build.compute import (
    BuildOptions,
    compute_period,
    period_input,
    permutation_nulls,
)
from blocwatch.pipeline.build.matrices import VoteMatrix
from blocwatch.pipeline.build.periods import Period
from tests.spatial_sim import spatial_votes

NULL_TESTED = [m for fam in registry.FAMILIES.values() for m in fam.permutation_null]


def _vote_matrix(votes, groups) -> VoteMatrix:
    n, b = votes.shape
    ids = np.array([f"m{i:02d}" for i in range(n)], dtype=object)
    return VoteMatrix("Split Board", Period(date(2021, 1, 1), date(2021, 12, 31), "2021"), ids,
                      ids, np.array([f"g{g}" for g in groups], dtype=object),
                      np.array([f"b{j}" for j in range(b)], dtype=object),
                      np.array([""] * b, dtype=object), votes)


def test_every_null_tested_metric_has_a_direction():
    assert NULL_TESTED
    for m in NULL_TESTED:
        assert registry.metric_direction(m) in registry.DIRECTIONS


def test_registry_refuses_a_null_without_direction():
    with pytest.raises(ValueError, match="direction"):
        registry.register("doc_no_direction", ("x",), permutation_null=("x",))


def test_cleanly_split_body_is_significant_for_every_null_tested_metric():
    # Two groups far apart on the line (separation 4, spread 0.3): every measure must find
    # the split, whichever side of it means division; stored rows, as the build writes them.
    votes, _, groups = spatial_votes(30, 60, separation=4.0, spread=0.3, seed=1)
    opts = BuildOptions(bootstrap=0, permutations=99, expensive_replicates=99)
    rows = compute_period(_vote_matrix(votes, groups), opts, "test").metrics.set_index("metric")
    for m in NULL_TESTED:
        assert rows.loc[m, "null_p"] <= 0.05, m
        assert rows.loc[m, "null_z"] > 0, m  # positive z: more split than chance
        # The observed value lies on the division side of the null mean.
        side = 1 if registry.metric_direction(m) == "higher" else -1
        assert side * (rows.loc[m, "value"] - rows.loc[m, "null_mean"]) > 0, m


def _null_p_values(families, seeds, n_perm):
    """p of each null-tested metric of ``families`` on bodies whose groups carry no signal
    (both groups drawn from one position distribution)."""
    opts = BuildOptions(bootstrap=0, permutations=n_perm, expensive_replicates=n_perm)
    out: dict[str, list[float]] = {}
    for seed in seeds:
        votes, _, groups = spatial_votes(16, 30, separation=0.0, seed=seed)
        inp = period_input(votes, groups, opts, seed)
        for m, r in permutation_nulls(inp, opts, seed, families=families).items():
            out.setdefault(m, []).append(r["p"])
    return {m: np.array(p)[np.isfinite(p)] for m, p in out.items()}


def _assert_roughly_uniform(p_values, n_perm):
    # Kolmogorov–Smirnov against U(0, 1) (scipy.stats.kstest). Phipson–Smyth p-values are
    # discrete with steps 1/(N + 1) and ties make them conservative; "roughly uniform" =
    # the KS test does not reject at 1 %, and at most 10 % fall at or below 0.05.
    for m, p in p_values.items():
        assert p.size >= 20, m
        assert stats.kstest(p, "uniform").pvalue > 0.01, (m, np.sort(p))
        assert (p <= 0.05).mean() <= 0.10, (m, np.sort(p))
        assert p.min() >= 1 / (n_perm + 1)


@pytest.mark.slow
def test_labels_without_signal_give_roughly_uniform_p_cheap_families():
    p = _null_p_values(["modularity", "crossgroup"], range(100), 99)
    assert set(p) == {"group_modularity", "cross_group_share"}
    _assert_roughly_uniform(p, 99)


@pytest.mark.slow
def test_labels_without_signal_give_roughly_uniform_p_separability():
    p = _null_p_values(["separability"], range(30), 19)
    _assert_roughly_uniform(p, 19)
