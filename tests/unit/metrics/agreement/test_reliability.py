"""Krippendorff's alpha (metrics/agreement/reliability.py) against the `krippendorff`
package from PyPI (reference implementation, version 0.9) and Krippendorff's own worked example."""

import numpy as np
import pytest

krippendorff = pytest.importorskip("krippendorff")

from blocwatch.metrics.agreement.reliability import (  # noqa: E402
    LEVELS,
    _reliability_family,
    alpha_by_group,
    alpha_within_groups,
    krippendorff_alpha,
    split_by_group,
)
from blocwatch.metrics.registry import PeriodInput, compute_all  # noqa: E402

nan = np.nan
# Krippendorff (2011), "Computing Krippendorff's alpha-reliability": 4 observers × 12 units,
# values 1–5, with missing answers. Published: nominal 0.743, ordinal 0.815, interval 0.849.
WORKED = np.array([[1, 2, 3, 3, 2, 1, 4, 1, 2, nan, nan, nan],
                   [1, 2, 3, 3, 2, 2, 4, 1, 2, 5, nan, 3],
                   [nan, 3, 3, 3, 2, 3, 4, 2, 2, 5, 1, nan],
                   [1, 2, 3, 3, 2, 4, 4, 1, 2, 5, 1, nan]])


@pytest.mark.parametrize("level,published", [("nominal", 0.743), ("ordinal", 0.815),
                                             ("interval", 0.849)])
def test_worked_example(level, published):
    """From memory: Krippendorff (2011) worked example, three decimals as published; also
    the krippendorff package on the same data [S: krippendorff 0.9]."""
    value = krippendorff_alpha(WORKED, level=level)
    assert value == pytest.approx(published, abs=5e-4)
    ref = krippendorff.alpha(reliability_data=WORKED, level_of_measurement=level)
    assert value == pytest.approx(ref, abs=1e-12)


def _random(seed, n=8, b=30, levels=9, missing=0.3):
    rng = np.random.default_rng(seed)
    x = rng.integers(1, levels + 1, size=(n, b)).astype(float)
    # a shared signal so alpha is clearly positive, not only near 0
    x = np.clip(x + rng.integers(-2, 3, size=b)[None, :], 1, levels)
    x[rng.random(x.shape) < missing] = nan
    return x


@pytest.mark.parametrize("level", LEVELS)
@pytest.mark.parametrize("seed", [0, 1, 2, 3])
def test_equals_krippendorff_package_with_missing(level, seed):
    """[S: krippendorff.alpha, PyPI package `krippendorff`] on 1–9 scores with 30% missing."""
    x = _random(seed)
    ref = krippendorff.alpha(reliability_data=x, level_of_measurement=level)
    assert krippendorff_alpha(x, level=level) == pytest.approx(ref, abs=1e-12)


def test_interval_with_many_distinct_amounts():
    """Interval alpha on continuous amounts (closed form) [S: krippendorff package]."""
    rng = np.random.default_rng(4)
    x = rng.normal(size=(1, 40)) + 0.7 * rng.normal(size=(6, 40))
    x[rng.random(x.shape) < 0.25] = nan
    ref = krippendorff.alpha(reliability_data=x, level_of_measurement="interval")
    assert krippendorff_alpha(x, level="interval") == pytest.approx(ref, abs=1e-10)


def test_per_group_and_within_groups_equal_the_package_on_the_same_units():
    """Per group: the package on that group's rows. Within: the package on units split by
    group, built here by hand [S: krippendorff package]."""
    x = _random(5, n=10)
    labels = np.array([0] * 5 + [1] * 5)
    per = alpha_by_group(x, labels, level="ordinal")
    for g in (0, 1):
        ref = krippendorff.alpha(reliability_data=x[labels == g], level_of_measurement="ordinal")
        assert per[g] == pytest.approx(ref, abs=1e-12)
    split = np.full((10, 2 * x.shape[1]), nan)
    split[:5, :x.shape[1]] = x[:5]
    split[5:, x.shape[1]:] = x[5:]
    np.testing.assert_array_equal(split_by_group(x, labels), split)
    ref = krippendorff.alpha(reliability_data=split, level_of_measurement="interval")
    assert alpha_within_groups(x, labels, level="interval") == pytest.approx(ref, abs=1e-12)


def test_two_schools_agree_within_more_than_across():
    """Two groups scoring opposite ends: within-group alpha far above the panel's [D]."""
    rng = np.random.default_rng(6)
    quality = rng.integers(3, 8, size=20).astype(float)
    school = np.array([[2.0], [-2.0]])[np.repeat([0, 1], 4)]
    sign = np.where(np.arange(20) % 2, 1.0, -1.0)
    x = quality[None, :] + school * sign[None, :]
    labels = np.repeat([0, 1], 4)
    assert alpha_within_groups(x, labels) > 0.9 > krippendorff_alpha(x)


def test_perfect_agreement_is_one_and_degenerate_inputs_raise():
    assert krippendorff_alpha([[1, 2, 3], [1, 2, 3]], level="nominal") == 1.0
    with pytest.raises(ValueError, match="same value"):
        krippendorff_alpha([[2, 2, 2], [2, 2, nan]])
    with pytest.raises(ValueError, match="pairable"):
        krippendorff_alpha([[1, 2, 3], [nan, nan, nan]])
    with pytest.raises(ValueError, match="level"):
        krippendorff_alpha([[1, 2]], level="ratio-ish")
    with pytest.raises(ValueError, match="2-D"):
        krippendorff_alpha([1, 2, 3])
    assert np.isnan(alpha_by_group([[1, 2], [1, 2], [3, 3]], [0, 0, 1])[1])


def test_family_reads_scores_and_is_left_out_without():
    """The family measures scored ballots at their level; compute_all leaves it out of a
    yes/no period (no scores), and a direct call says why."""
    n = WORKED.shape[0]
    base = dict(agreement=np.eye(n), shared=np.zeros((n, n), int), labels=np.array([0, 0, 1, 1]),
                weights=np.zeros((n, n)), edges=np.zeros((n, n), bool))
    values = _reliability_family(PeriodInput(**base, scores=WORKED, score_level="interval"))
    assert values["krippendorff_alpha"].value == pytest.approx(0.849, abs=5e-4)
    assert values["krippendorff_alpha_within"].ok
    ordinal = _reliability_family(PeriodInput(**base, scores=WORKED, score_level="ordinal"))
    assert ordinal["krippendorff_alpha"].value == pytest.approx(0.815, abs=5e-4)
    missing = _reliability_family(PeriodInput(**base))
    assert not missing["krippendorff_alpha"].ok and "scored" in missing["krippendorff_alpha"].note
    assert "krippendorff_alpha" not in compute_all(PeriodInput(**base))
    assert "krippendorff_alpha" in compute_all(PeriodInput(**base, scores=WORKED,
                                                           score_level="nominal"))
