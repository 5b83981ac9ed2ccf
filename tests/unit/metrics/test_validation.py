"""Shared input checks: label codes and adjacency checks on their fast and general paths."""

import numpy as np
import pytest

from blocwatch.metrics.validation import check_adjacency, normalise_labels


@pytest.mark.parametrize("seed", range(5))
def test_integer_labels_get_the_codes_numpy_unique_gives(seed):
    # Reference: numpy.unique(return_inverse=True), the general path's own definition of the
    # codes (sorted order of the original labels); sparse and dense integer labels alike.
    rng = np.random.default_rng(seed)
    for labels in (rng.integers(0, 5, 40), rng.integers(0, 200, 30), rng.integers(-3, 3, 20),
                   rng.choice([7, 2, 9], 25).astype(np.uint8)):
        uniq, inverse = np.unique(labels, return_inverse=True)
        codes, k = normalise_labels(labels)
        assert codes.dtype == np.int64 and k == uniq.size
        np.testing.assert_array_equal(codes, inverse)
        strings, k_str = normalise_labels(labels.astype(str).astype(object))
        assert k_str == k  # the same groups, however they are spelled


def test_adjacency_symmetry_within_rounding_is_accepted_and_asymmetry_refused():
    a = np.array([[0.0, 0.5], [0.5, 0.0]])
    rounded = a.copy()
    rounded[0, 1] += 1e-14  # rounding of a sum taken in another order
    assert check_adjacency(rounded)[0, 1] == pytest.approx(0.5)
    a[0, 1] = 0.6
    with pytest.raises(ValueError, match="expected a symmetric matrix"):
        check_adjacency(a)
