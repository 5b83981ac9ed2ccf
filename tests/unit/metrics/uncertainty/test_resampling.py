"""Bootstrap weights, percentile intervals and stable seeds."""

import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest

from blocwatch.metrics.uncertainty import resampling
from blocwatch.metrics.uncertainty.resampling import (
    ballot_weights,
    block_codes,
    jackknife_se,
    percentile_interval,
    stable_seed,
)


def test_plain_weights_sum_to_b_and_average_one():
    # Multinomial(b, 1/b): each row sums to b [S: definition of the nonparametric bootstrap,
    # Efron & Tibshirani 1993]; each ballot's mean count is 1 with sd ≈ 1/√B per ballot.
    w = ballot_weights(30, 4000, seed=7)
    assert w.shape == (4000, 30) and (w.sum(axis=1) == 30).all() and (w >= 0).all()
    assert np.abs(w.mean(axis=0) - 1).max() < 5 / np.sqrt(4000)


def test_weights_are_seeded():
    assert (ballot_weights(10, 5, seed=3) == ballot_weights(10, 5, seed=3)).all()
    assert (ballot_weights(10, 5, seed=3) != ballot_weights(10, 5, seed=4)).any()


def test_block_weights_keep_items_whole():
    blocks = np.array(["a", "a", "a", "b", "c", "c", "d", "e", "e", "e"])
    w = ballot_weights(blocks.size, 500, seed=11, blocks=blocks)
    for item in np.unique(blocks):
        cols = w[:, blocks == item]
        assert (cols == cols[:, :1]).all()  # one count per item per replicate
    item_counts = np.stack([w[:, np.flatnonzero(blocks == it)[0]] for it in np.unique(blocks)],
                           axis=1)
    assert (item_counts.sum(axis=1) == 5).all()  # 5 items drawn 5 times per replicate


def test_block_codes_make_missing_items_their_own_blocks():
    codes = block_codes(np.array(["x", "", "x", None, "y"], dtype=object))
    assert codes[0] == codes[2] and len({codes[1], codes[3], codes[0], codes[4]}) == 4


def test_zero_ballots_and_bad_counts():
    assert ballot_weights(0, 4, seed=0).shape == (4, 0)
    with pytest.raises(ValueError, match="non-negative integers"):
        ballot_weights(-1, 4, seed=0)
    with pytest.raises(ValueError, match="one item id per ballot"):
        ballot_weights(3, 2, seed=0, blocks=["a", "b"])


def test_percentile_interval_matches_numpy_and_ignores_nan():
    # reference: numpy.percentile (linear) on the finite values.
    rng = np.random.default_rng(0)
    x = rng.normal(size=999)
    with_nan = np.r_[x, np.nan, np.nan]
    low, high = percentile_interval(with_nan, level=0.9)
    assert (low, high) == pytest.approx(tuple(np.percentile(x, [5, 95])))
    assert all(np.isnan(percentile_interval([np.nan, np.nan])))
    with pytest.raises(ValueError, match="confidence level"):
        percentile_interval(x, level=95)


def test_stable_seed_survives_hash_randomisation():
    # Python's str hash differs per process unless PYTHONHASHSEED is fixed; ours must not.
    # Load the module file alone (not the package) to keep the two interpreters cheap.
    path = Path(resampling.__file__)
    code = ("import importlib.util as u; s = u.spec_from_file_location('r', %r); "
            "m = u.module_from_spec(s); s.loader.exec_module(m); "
            "print(m.stable_seed(1, 'b', 2))" % str(path))
    seen = set()
    for hashseed in ("1", "2"):
        env = {**os.environ, "PYTHONHASHSEED": hashseed}
        out = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True,
                             text=True, check=True)
        seen.add(int(out.stdout))
    assert seen == {stable_seed(1, "b", 2)}
    assert 0 <= stable_seed("x") < 2**63 and stable_seed("a", "b") != stable_seed("ab")


def test_ballot_bootstrap_intervals_cover_the_large_sample_value():
    # Issue 3 acceptance (cheap version): planted spatial roll call (own generator), the
    # cross-group agreement share from 100 ballots; the 95% percentile interval from
    # ballot_weights must cover the value on 30 000 ballots in ≥ 85% of 60 repetitions.
    from tests.spatial_sim import spatial_votes

    votes, _, groups = spatial_votes(n=20, b=60 * 100 + 30000, separation=1.0, seed=21)
    yes, no = (votes == 1).astype(float), (votes == 2).astype(float)
    ya, yb = yes[groups == 0].sum(0), yes[groups == 1].sum(0)
    na, nb = no[groups == 0].sum(0), no[groups == 1].sum(0)
    same, both = ya * yb + na * nb, (ya + na) * (yb + nb)  # per-ballot cross-pair counts
    truth = same[6000:].sum() / both[6000:].sum()
    covered = 0
    for r in range(60):
        cols = slice(100 * r, 100 * (r + 1))
        w = ballot_weights(100, 400, seed=r)
        boot = (w @ same[cols]) / (w @ both[cols])
        low, high = percentile_interval(boot)
        covered += low <= truth <= high
    assert covered >= 0.85 * 60, covered


class _Given:
    """Hands scipy.stats.bootstrap our own replicates (its ``bootstrap_result`` argument)."""

    def __init__(self, values):
        self.bootstrap_distribution = np.asarray(values)


@pytest.mark.parametrize("method, scipy_method", [("percentile", "percentile"),
                                                  ("basic", "basic"), ("bc", "BCa")])
def test_bootstrap_interval_matches_scipy_on_the_same_replicates(method, scipy_method):
    # [S: scipy.stats.bootstrap, n_resamples=0 with our replicates]. Data symmetric about
    # their mean make scipy's jackknife acceleration exactly 0, so its BCa is the BC interval.
    from scipy import stats

    data = np.arange(1.0, 9.0)
    reps = np.random.default_rng(0).normal(4.9, 1.0, 999)  # shifted: z0 ≠ 0
    ref = stats.bootstrap((data,), np.mean, n_resamples=0, bootstrap_result=_Given(reps),
                          method=scipy_method, confidence_level=0.9).confidence_interval
    got = resampling.bootstrap_interval(data.mean(), reps, method=method, level=0.9)
    assert got == pytest.approx((ref.low, ref.high), rel=1e-9)


def test_bootstrap_interval_properties():
    reps = np.random.default_rng(1).normal(0.3, 0.05, 400)
    pct = resampling.bootstrap_interval(0.2, reps, method="percentile")
    basic = resampling.bootstrap_interval(0.2, reps, method="basic")
    # Basic reflects the percentile interval through the estimate: same width, mirrored.
    assert basic[1] - basic[0] == pytest.approx(pct[1] - pct[0])
    assert basic[0] + pct[1] == pytest.approx(0.4) and basic[1] + pct[0] == pytest.approx(0.4)
    # An estimate at the replicates' median makes BC the percentile interval (z0 = 0).
    med = float(np.median(reps))
    assert resampling.bootstrap_interval(med, reps, method="bc") == pytest.approx(
        resampling.bootstrap_interval(med, reps, method="percentile"), abs=2e-3)
    # Bounds clip; NaN replicates are ignored; nothing finite gives NaN.
    low, _ = resampling.bootstrap_interval(0.0, np.abs(reps), method="basic", bounds=(0, 1))
    assert low == 0.0
    assert resampling.bootstrap_interval(0.2, [*reps, np.nan], method="bc") == pytest.approx(
        resampling.bootstrap_interval(0.2, reps, method="bc"))
    assert np.isnan(resampling.bootstrap_interval(0.2, [np.nan], method="basic")[0])
    with pytest.raises(ValueError, match="method"):
        resampling.bootstrap_interval(0.2, reps, method="studentised")


def test_jackknife_se_of_the_mean_is_the_standard_error():
    # Known identity (Efron & Tibshirani 1993, §11.2): the jackknife SE of the sample mean is
    # s/√n, which scipy.stats.sem computes.
    from scipy import stats

    x = np.random.default_rng(3).normal(2.0, 1.5, 25)
    loo = (x.sum() - x) / (x.size - 1)
    assert jackknife_se(loo) == pytest.approx(stats.sem(x), rel=1e-12)
    assert jackknife_se(np.r_[loo, np.nan]) == pytest.approx(stats.sem(x), rel=1e-12)
    assert np.isnan(jackknife_se([1.0, 2.0, np.nan]))  # fewer than 3 values: no estimate
    assert jackknife_se([0.5] * 9) == 0.0


def test_basic_log_is_the_basic_interval_on_the_log_scale():
    # [S: scipy.stats.bootstrap, method="basic", given the log replicates] back-transformed:
    # Davison & Hinkley (1997) §5.2.1, basic limits on a transformed scale.
    from scipy import stats

    data = np.log(np.array([2.0, 3.0, 4.0, 5.0, 6.0]))
    estimate = float(np.exp(data.mean()))
    # 1001 replicates: the 2.5 % and 97.5 % quantiles are order statistics on either scale.
    reps = np.exp(np.random.default_rng(2).normal(data.mean() - 0.1, 0.2, 1001))
    ref = stats.bootstrap((data,), np.mean, n_resamples=0, bootstrap_result=_Given(np.log(reps)),
                          method="basic", confidence_level=0.95).confidence_interval
    got = resampling.bootstrap_interval(estimate, reps, method="basic-log")
    assert got == pytest.approx((np.exp(ref.low), np.exp(ref.high)), rel=1e-9)
    # Resamples shifted down by a factor move the interval up by the same factor.
    assert got[0] > np.quantile(reps, 0.025) and got[1] > estimate
    assert np.isnan(resampling.bootstrap_interval(0.0, reps, method="basic-log")[0])


def test_normal_interval_is_centred_on_the_estimate_with_the_resample_sd():
    # [S: scipy.stats.norm.interval] with the replicates' SD (ddof=1) as the scale.
    from scipy import stats

    reps = np.random.default_rng(4).normal(1.3, 0.2, 40)
    got = resampling.bootstrap_interval(1.0, reps, method="normal", level=0.9)
    ref = stats.norm.interval(0.9, loc=1.0, scale=reps.std(ddof=1))
    assert got == pytest.approx(ref, rel=1e-12)
    assert resampling.bootstrap_interval(0.01, reps, method="normal", bounds=(0.0, 1.0))[0] == 0.0


def test_corrected_log_interval_by_hand_and_its_properties():
    # By hand from the formula: ℓ̂ = log θ̂, d = ℓ̂ − mean(log θ*), half = z·√(s² + d²).
    from scipy import stats

    reps = np.exp(np.random.default_rng(5).normal(np.log(6.5), 0.08, 80))
    est = 7.2
    logs = np.log(reps)
    d = np.log(est) - logs.mean()
    half = stats.norm.ppf(0.975) * np.hypot(logs.std(ddof=1), d)
    got = resampling.bootstrap_interval(est, reps, method="corrected-log")
    assert got == pytest.approx((est * np.exp(d - half), est * np.exp(d + half)), rel=1e-12)
    # Resamples below the estimate move the interval up; the estimate always stays inside.
    assert got[1] - est > est - got[0]
    for k in range(40):
        rng = np.random.default_rng(k)
        e = float(rng.uniform(0.5, 9.0))
        lo, hi = resampling.bootstrap_interval(e, np.exp(rng.normal(rng.uniform(-1, 2), 0.2, 60)),
                                               method="corrected-log")
        assert lo < e < hi
    # Replicates centred on the estimate (d = 0): the normal interval on the log scale.
    sym = np.exp(np.log(3.0) + np.r_[-0.1, 0.1, -0.05, 0.05])
    lo, hi = resampling.bootstrap_interval(3.0, sym, method="corrected-log")
    assert np.log(hi / 3.0) == pytest.approx(-np.log(lo / 3.0))
