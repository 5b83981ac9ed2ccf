"""Bootstrap weights, percentile intervals and stable seeds."""

import os
import subprocess
import sys

import numpy as np
import pytest
from blocwatch.metrics.resampling import (
    ballot_weights,
    block_codes,
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
    code = "from blocwatch.metrics.resampling import stable_seed; print(stable_seed(1, 'b', 2))"
    seen = set()
    for hashseed in ("1", "2"):
        env = {**os.environ, "PYTHONHASHSEED": hashseed}
        out = subprocess.run([sys.executable, "-c", code], env=env, capture_output=True,
                             text=True, check=True)
        seen.add(int(out.stdout))
    assert seen == {stable_seed(1, "b", 2)}
    assert 0 <= stable_seed("x") < 2**63 and stable_seed("a", "b") != stable_seed("ab")
