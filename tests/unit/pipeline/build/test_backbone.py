"""The disparity filter (Serrano, Boguñá & Vespignani 2009, PNAS 106:6483).

Checks: a four-member graph whose α values are derived by hand (in the comments); the closed
form against the paper's integral (eq. 2) evaluated by scipy.integrate.quad; properties the
paper states (a member with uniform weights keeps nothing; smaller α keeps a subset)."""

import numpy as np
import pytest
from scipy import integrate

from blocwatch.pipeline.build.backbone import disparity_alpha, disparity_backbone


def _four():
    # Ties 0–1 (6), 0–2 (1), 0–3 (1), 1–2 (2); invented.
    w = np.zeros((4, 4))
    for i, j, v in [(0, 1, 6), (0, 2, 1), (0, 3, 1), (1, 2, 2)]:
        w[i, j] = w[j, i] = v
    return w


def test_hand_worked_four_member_graph():
    # Derived by hand with α_ij = (1 − w_ij / s_i)^(k_i − 1), the tie's value the smaller end:
    # member 0 (k 3, s 8): to 1: (2/8)² = 1/16; to 2 and 3: (7/8)² = 49/64.
    # member 1 (k 2, s 8): to 0: 2/8; to 2: 6/8.   member 2 (k 2, s 3): to 0: 2/3; to 1: 1/3.
    # member 3 (k 1): (1 − 1)^0 = 1.
    a = disparity_alpha(_four())
    expected = {(0, 1): 1 / 16, (0, 2): 2 / 3, (0, 3): 49 / 64, (1, 2): 1 / 3}
    for (i, j), v in expected.items():
        assert a[i, j] == pytest.approx(v, abs=1e-15) and a[j, i] == a[i, j]
    assert np.isnan(a[1, 3]) and np.isnan(np.diag(a)).all()  # no tie, no value
    def kept(alpha):
        return {tuple(p) for p in np.argwhere(np.triu(disparity_backbone(_four(), alpha)))}

    assert kept(0.1) == {(0, 1)}
    assert kept(0.5) == {(0, 1), (1, 2)}
    assert kept(0.7) == {(0, 1), (1, 2), (0, 2)}


@pytest.mark.parametrize("k,p", [(2, 0.3), (5, 0.05), (5, 0.6), (30, 0.1), (44, 0.0227)])
def test_closed_form_equals_the_papers_integral(k, p):
    # Serrano et al. 2009, eq. 2: α = 1 − (k − 1) ∫₀^p (1 − x)^(k−2) dx, by scipy's quad.
    integral, _ = integrate.quad(lambda x: (1 - x) ** (k - 2), 0, p)
    reference = 1 - (k - 1) * integral
    # A star whose centre has k ties: one of share p, the rest sharing 1 − p; leaves have one
    # tie each, so the tie's value is the centre's.
    w = np.zeros((k + 1, k + 1))
    w[0, 1] = w[1, 0] = p
    w[0, 2:] = w[2:, 0] = (1 - p) / (k - 1)
    assert disparity_alpha(w)[0, 1] == pytest.approx(reference, rel=1e-9, abs=1e-12)


def test_uniform_weights_keep_nothing_and_smaller_alpha_keeps_a_subset():
    # Every member's weights equal: each share is 1/k, α = (1 − 1/k)^(k−1) ≥ 1/e > 0.36.
    w = np.ones((12, 12)) - np.eye(12)
    assert not disparity_backbone(w, 0.3).any()
    rng = np.random.default_rng(4)
    r = rng.gamma(0.5, size=(30, 30))
    r = np.triu(r, 1) + np.triu(r, 1).T
    loose, strict = disparity_backbone(r, 0.3), disparity_backbone(r, 0.05)
    assert (loose == loose.T).all() and not (strict & ~loose).any() and loose.sum() > strict.sum()


def test_bad_input_is_refused():
    with pytest.raises(ValueError, match="square"):
        disparity_alpha(np.ones((2, 3)))
    with pytest.raises(ValueError, match="non-negative"):
        disparity_alpha(-np.ones((2, 2)))
    with pytest.raises(ValueError, match="alpha"):
        disparity_backbone(np.ones((2, 2)), 1.0)
