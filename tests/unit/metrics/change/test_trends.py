"""Mann–Kendall, Theil–Sen and PELT against hand-derived values, scipy and ruptures."""

import math

import numpy as np
import pytest
from scipy import stats

from blocwatch.metrics.change import trends


def test_mann_kendall_methods_series():
    # derived by hand: x = 1..5 → S = 10, Var S = 50/3, Z = 2.2045, p ≈ 0.0275, τ = 1.
    r = trends.mann_kendall([1, 2, 3, 4, 5])
    assert r.s == 10 and r.var_s == pytest.approx(50 / 3)
    assert r.z == pytest.approx(2.2045, abs=1e-4) and r.p == pytest.approx(0.0275, abs=1e-4)
    assert r.tau == 1.0


def test_mann_kendall_tau_and_tie_variance_match_scipy():
    # scipy.stats.kendalltau against the time index: τ-b, and its asymptotic p uses the same
    # tie-corrected Var S without continuity correction, so S/√VarS reproduces it.
    y = np.array([3.0, 1.0, 4.0, 1.0, 5.0, 9.0, 2.0, 6.0, 5.0, 3.0, 5.0, 8.0])
    r = trends.mann_kendall(y)
    ref = stats.kendalltau(y, np.arange(y.size), method="asymptotic")
    assert r.tau == pytest.approx(ref.statistic)
    assert 2 * stats.norm.sf(abs(r.s) / math.sqrt(r.var_s)) == pytest.approx(ref.pvalue)


def test_mann_kendall_tie_variance_by_hand():
    # hand-calculated: y = 1,2,2,3: S = 5; Var S = (4·3·13 − 2·1·9)/18 = 138/18.
    r = trends.mann_kendall([1, 2, 2, 3])
    assert r.s == 5 and r.var_s == pytest.approx(138 / 18)
    assert r.z == pytest.approx(4 / math.sqrt(138 / 18))


def test_mann_kendall_degenerate():
    r = trends.mann_kendall([2.0, 2.0, 2.0, np.nan])
    assert (r.s, r.z, r.p, r.n) == (0.0, 0.0, 1.0, 3) and math.isnan(r.tau)
    assert trends.mann_kendall([3, 2, 1]).s == -3
    with pytest.raises(ValueError, match="at least 3"):
        trends.mann_kendall([1, 2])


def test_theil_sen_methods_series_and_scipy():
    # derived by hand: slope 1 on x = 1..5; and equal to scipy.stats.theilslopes on noise.
    assert trends.theil_sen([1, 2, 3, 4, 5], [1, 2, 3, 4, 5]).slope == 1.0
    rng = np.random.default_rng(5)
    x = np.arange(2000, 2015, dtype=float)
    y = 0.03 * x + rng.normal(0, 0.1, x.size)
    ours = trends.theil_sen(y, x, alpha=0.9)
    ref = stats.theilslopes(y, x, alpha=0.9)
    assert ours == pytest.approx((ref.slope, ref.intercept, ref.low_slope, ref.high_slope))
    with pytest.raises(ValueError, match="confidence level"):
        trends.theil_sen(y, x, alpha=95)


def test_pelt_finds_the_step():
    # derived by hand: [0]*10 + [5]*10 with pen = 1 → [10, 20]; the default rule agrees.
    y = [0] * 10 + [5] * 10
    assert trends.change_points(y, penalty=1) == [10, 20]
    assert trends.change_points(y) == [10, 20]


def test_pelt_degenerate_series():
    assert trends.change_points([1.0] * 8) == [8]
    assert trends.change_points([1.0, 2.0, 3.0]) == [3]  # shorter than two segments
    with pytest.raises(ValueError, match="without NaN"):
        trends.change_points([1.0, np.nan, 2.0, 3.0])


def test_default_penalty_rule():
    # 2σ̂² log n with σ̂ = normal-consistent MAD of differences / √2 [common practice, from memory].
    y = np.array([1.0, 1.4, 0.7, 1.1, 0.8, 1.3, 0.9])
    sigma = stats.median_abs_deviation(np.diff(y), scale="normal") / math.sqrt(2)
    assert trends.default_penalty(y) == pytest.approx(2 * sigma**2 * math.log(7))


@pytest.mark.parametrize("seed", range(10))
def test_planted_jump_found_within_one_period(seed):
    # Simulation (own generator): unit noise, a jump of 5 at period 12 of 20.
    rng = np.random.default_rng(seed)
    y = rng.normal(0, 1, 20)
    y[12:] += 5
    breaks = trends.change_points(y)[:-1]
    assert any(abs(b - 12) <= 1 for b in breaks)


def test_trend_summary_row():
    y = [0.1, 0.12, 0.11, 0.2, 0.22, 0.21, 0.23]
    x = [2010, 2011, 2012, 2013, 2014, 2015, 2016]
    row = trends.trend_summary(y, x)
    assert row["n_periods"] == 7 and row["mk_s"] == trends.mann_kendall(y).s
    assert row["slope"] == pytest.approx(stats.theilslopes(y, x).slope)
    assert row["change_points"] == [2013.0] and row["change_index"] == [3]
    assert row["note"] == ""


def test_trend_summary_short_series_notes():
    short = trends.trend_summary([0.1, 0.2, np.nan])
    assert short["n_periods"] == 2 and math.isnan(short["mk_p"])
    assert "too few periods" in short["note"] and "left out" in short["note"]
    four = trends.trend_summary([0.1, 0.2, 0.3, 0.4])
    # hand-calculated: n = 4 monotone: Z = 5/√(26/3) = 1.698, p = 0.0894 > 0.05
    assert "smallest attainable p is 0.089" in four["note"]
