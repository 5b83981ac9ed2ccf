"""Cheap coverage check of the stored intervals (the full table: tests/benchmarks/coverage.py).

A planted body (tests/spatial_sim.py: fixed member positions, fresh agendas) is built
repeatedly by the build's own compute_period; the truth is each metric's value on 8000 ballots.
Repetitions are seeded, so the counts are reproducible; the bounds leave binomial room for 24
repetitions at a true coverage of 0.95 (P(X ≤ 20 | 24, 0.95) ≈ 3 %).
"""

import pytest

from tests.benchmarks.coverage import coverage


@pytest.mark.slow
def test_cheap_headline_intervals_cover_the_planted_truth():
    table = coverage(metrics=("group_modularity", "rice_mean", "agreement_index_mean",
                              "cross_group_share", "mds_median_gap"),
                     reps=24, bootstrap=80, members=40, ballots=120, truth_ballots=8000,
                     methods=("stored", "percentile")).set_index(["metric", "method"])
    stored = table[table.index.get_level_values("method").str.endswith("(stored)")]
    assert (stored["repetitions"] == 24).all()
    # No estimate outside its own interval without a note (the rule every build keeps).
    assert (stored["outside_own"] == 0).all()
    for metric in ("group_modularity", "rice_mean", "agreement_index_mean"):
        assert stored.xs(metric, level="metric")["observed"].iloc[0] >= 21 / 24, metric
    # The biased families: their stored (basic) interval must beat the percentile interval,
    # which covers the large-sample value in well under half of the repetitions.
    for metric in ("cross_group_share", "mds_median_gap"):
        mine = stored.xs(metric, level="metric")["observed"].iloc[0]
        pct = table.loc[(metric, "percentile"), "observed"]
        assert mine >= pct + 0.25, (metric, mine, pct)
