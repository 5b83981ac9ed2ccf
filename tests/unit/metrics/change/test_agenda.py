"""Direct standardisation of pair agreement and the within-topic bootstrap.

References: the weighted mean is checked against ``numpy.average`` (the library); the
identities (one topic; the period's own mix) follow from the definition of direct
standardisation (Fleiss, Levin & Paik 2003, ch. 19): a rate standardised to the population's
own make-up is the crude rate.
"""

import numpy as np
import pytest

from blocwatch.metrics.change.agenda import (
    standardise_agreement,
    stratified_ballot_weights,
    topic_mix,
)
from blocwatch.metrics.registry import NO, YES
from blocwatch.pipeline.build.agreement import agreement_counts, agreement_matrix


def _agreement(votes):
    same, both = agreement_counts(votes)
    return agreement_matrix(same, both, min_shared=1)


def test_weighted_mean_matches_numpy_average():
    rng = np.random.default_rng(3)
    a = rng.uniform(0, 1, size=(4, 5, 5))
    w = np.array([0.1, 0.4, 0.3, 0.2])
    got = standardise_agreement(a, w)
    np.testing.assert_allclose(got, np.average(a, axis=0, weights=w), rtol=1e-13)  # [numpy]


def test_unknown_topics_drop_out_and_weights_rescale():
    a = np.full((2, 2, 2), 0.5)
    a[0, 0, 1] = np.nan
    a[1, 0, 1] = 0.9
    got = standardise_agreement(a, np.array([0.7, 0.3]))
    assert got[0, 1] == pytest.approx(0.9)  # only topic 2 known for this pair
    a[1, 0, 1] = np.nan
    assert np.isnan(standardise_agreement(a, np.array([0.7, 0.3]))[0, 1])


def test_own_mix_reproduces_raw_agreement_exactly():
    """Every member votes on every ballot: agreement = Σ_t (b_t/b)·agreement_t."""
    rng = np.random.default_rng(11)
    votes = rng.choice(np.array([YES, NO], dtype=np.int8), size=(12, 40))
    topics = np.array(["a"] * 7 + ["b"] * 20 + ["c"] * 13)
    mix = topic_mix(topics)
    per_topic = np.stack([_agreement(votes[:, topics == t]) for t in mix])
    got = standardise_agreement(per_topic, np.array(list(mix.values())))
    np.testing.assert_allclose(got, _agreement(votes), rtol=0, atol=1e-12)


def test_single_topic_is_the_raw_agreement():
    rng = np.random.default_rng(5)
    votes = rng.choice(np.array([YES, NO], dtype=np.int8), size=(6, 15))
    raw = _agreement(votes)
    np.testing.assert_array_equal(standardise_agreement(raw[None], np.array([0.37])), raw)


def test_bad_input_is_a_clear_error():
    with pytest.raises(ValueError, match="expected"):
        standardise_agreement(np.zeros((2, 3, 3)), np.ones(3))
    with pytest.raises(ValueError, match=">= 0"):
        standardise_agreement(np.zeros((1, 2, 2)), np.array([-1.0]))
    with pytest.raises(ValueError, match="at least one ballot"):
        topic_mix([])


def test_stratified_weights_keep_every_topics_size():
    topics = np.array(list("aabbbbcd"))
    w = stratified_ballot_weights(topics, 200, seed=4)
    for t in set(topics):
        assert (w[:, topics == t].sum(axis=1) == (topics == t).sum()).all()
    # within a topic every ballot is drawn with probability 1/n_t per draw: mean count 1
    assert w[:, topics == "b"].mean() == pytest.approx(1.0, abs=0.1)
    # a topic of one ballot is always drawn once: no variation from it
    assert (w[:, topics == "c"] == 1).all()
