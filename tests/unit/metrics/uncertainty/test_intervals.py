"""Stored intervals and their notes: a value is never outside its interval without a note
saying why, and an interval that cannot show the uncertainty says so."""

import numpy as np
import pytest

from blocwatch.metrics import registry
from blocwatch.metrics.uncertainty.intervals import MIN_REPLICATES, SMALL_BODY, metric_interval

RNG = np.random.default_rng(7)


def test_interval_method_is_declared_for_every_family():
    from blocwatch.metrics.uncertainty.resampling import INTERVAL_METHODS

    for fam in registry.FAMILIES.values():
        assert fam.interval in INTERVAL_METHODS, fam.name


def test_zero_width_interval_carries_a_caution():
    r = metric_interval("separability", 1.0, np.ones(100), n_members=8)
    assert r.low == r.high == 1.0
    assert "no spread" in r.note and "cannot show the uncertainty" in r.note


def test_small_body_interval_says_members_are_not_resampled():
    r = metric_interval("group_modularity", 0.2, RNG.normal(0.2, 0.02, 200),
                        n_members=SMALL_BODY - 1)
    assert r.low < 0.2 < r.high
    assert f"only {SMALL_BODY - 1} members" in r.note


def test_estimate_outside_its_interval_says_why():
    # Replicates far above the estimate: the percentile interval of a percentile family
    # (cohesion) leaves the estimate out, and the note names the shift and the method.
    reps = RNG.normal(0.8, 0.01, 200)
    r = metric_interval("rice_mean", 0.5, reps, n_members=40)
    assert not r.low <= 0.5 <= r.high
    assert "outside its interval" in r.note and "percentile" in r.note
    assert f"{np.median(reps):.3g}" in r.note
    neg = metric_interval("ei_index", -0.5, -reps, n_members=40).note
    assert "median is \u22120." in neg and "-0" not in neg  # a real minus sign


@pytest.mark.parametrize("metric", ["group_modularity", "cross_group_share", "rice_mean",
                                    "mds_median_gap", "separability"])
def test_no_estimate_outside_without_note(metric):
    # Property over random replicate clouds: inside, or a note.
    for k in range(50):
        rng = np.random.default_rng(k)
        est = float(rng.uniform(0.1, 0.9))
        reps = rng.normal(rng.uniform(0.1, 0.9), rng.uniform(0.0, 0.2), 100)
        r = metric_interval(metric, est, reps, n_members=40)
        assert (r.low <= est <= r.high) or "outside its interval" in r.note \
            or "no spread" in r.note


def test_too_few_replicates_give_no_interval():
    reps = np.r_[np.full(MIN_REPLICATES - 1, 0.3), np.full(50, np.nan)]
    r = metric_interval("group_modularity", 0.3, reps, n_members=40)
    assert np.isnan(r.low) and np.isnan(r.high)
    assert f"only {MIN_REPLICATES - 1} of {reps.size} resamples" in r.note
    assert metric_interval("group_modularity", 0.3, [], n_members=40).note == ""


def test_small_body_interval_widens_by_the_member_jackknife():
    # Each side grows in quadrature by z·se (z = 1.96 for 95 %): a ballot half-width h and a
    # member se s give √(h² + (1.96 s)²); the note names the jackknife.
    reps = np.random.default_rng(1).normal(0.2, 0.02, 400)
    base = metric_interval("group_modularity", 0.2, reps, n_members=9)
    wide = metric_interval("group_modularity", 0.2, reps, n_members=9, member_se=0.05)
    assert wide.low < base.low and wide.high > base.high
    assert 0.2 - wide.low == pytest.approx(np.hypot(0.2 - base.low, 1.959964 * 0.05), rel=1e-5)
    assert "only 9 members" in wide.note and "jackknife" in wide.note
    # Larger bodies keep the ballot interval; a member se of 0 says the jackknife did not move.
    big = metric_interval("group_modularity", 0.2, reps, n_members=40, member_se=0.05)
    plain = metric_interval("group_modularity", 0.2, reps, n_members=40)
    assert (big.low, big.high, big.note) == (plain.low, plain.high, plain.note)
    flat = metric_interval("separability", 1.0, np.ones(100), n_members=8, member_se=0.0)
    assert "no spread" in flat.note and "did not move the value either" in flat.note


def test_member_widening_keeps_the_bounds_and_the_estimate_inside():
    for k in range(30):
        rng = np.random.default_rng(k)
        est = float(rng.uniform(0.0, 1.0))
        r = metric_interval("rice_mean", est, rng.normal(est, 0.05, 100), n_members=7,
                            member_se=float(rng.uniform(0.01, 0.5)))
        assert 0.0 <= r.low <= est <= r.high <= 1.0
