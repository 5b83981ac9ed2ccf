"""Ballot bootstrap weights, percentile intervals and stable seeds.

A bootstrap replicate is a reweighting of the period's ballot columns: with multinomial count
weights w the agreement counts are ``Y·diag(w)·Yᵀ``, one matrix product per replicate, so a
replicate never re-reads or re-filters the data.
"""

from __future__ import annotations

import hashlib

import numpy as np
import pandas as pd

__all__ = ["ballot_weights", "block_codes", "percentile_interval", "bootstrap_interval",
           "INTERVAL_METHODS", "INTERVAL_WORDS", "jackknife_se", "stable_seed"]

# How an interval is read off the bootstrap replicates (see bootstrap_interval).
INTERVAL_METHODS = ("percentile", "basic", "bc", "basic-log", "normal", "corrected-log")
# Each method in words with its reference (the exported metric list names every metric's).
INTERVAL_WORDS = {
    "percentile": "percentile (Efron & Tibshirani 1993, ch. 13)",
    "basic": "basic, pivotal (Davison & Hinkley 1997, eq. 5.6)",
    "bc": "bias-corrected percentile (Efron 1987)",
    "basic-log": "basic on the log scale (Davison & Hinkley 1997, §5.2.1)",
    "normal": "standard: estimate ± 1.96 × resample SD (Efron & Tibshirani 1993, §6.5)",
    "corrected-log": "bias-corrected normal on the log scale, widened by the correction "
                     "(Efron & Tibshirani 1993, §10.6 and §6.5; the widening is our rule)",
}


def ballot_weights(n_ballots: int, n_boot: int, *, seed, blocks=None) -> np.ndarray:
    """Bootstrap count weights for the ballots of one period, shape (n_boot, n_ballots).

    Plain bootstrap: each row is Multinomial(b; 1/b, …, 1/b), i.e. how often each ballot is
    drawn when b ballots are drawn with replacement; every row sums to b.

    Block bootstrap (``blocks`` given, one agenda-item id per ballot): the u items are drawn
    with replacement u times and every ballot of an item gets its item's count, so an item's
    ballots always enter a replicate together (Künsch 1989; items play the blocks). Row sums
    then vary around b. Ballots whose item is missing (None, NaN or "") are each their own
    block.

    Parameters
    ----------
    n_ballots : int, b ≥ 0.
    n_boot : int, B ≥ 0.
    seed : anything ``np.random.default_rng`` accepts.
    blocks : (b,) array of item ids, or None.

    Returns
    -------
    (B, b) int64 array of non-negative counts.

    Examples
    --------
    >>> w = ballot_weights(5, 3, seed=1)
    >>> w.shape, w.sum(axis=1).tolist()
    ((3, 5), [5, 5, 5])

    References
    ----------
    Efron B, Tibshirani RJ (1993). An Introduction to the Bootstrap. Chapman & Hall.
    Künsch HR (1989). The jackknife and the bootstrap for general stationary observations.
    Annals of Statistics 17(3):1217–1241.
    """
    if int(n_ballots) != n_ballots or n_ballots < 0 or int(n_boot) != n_boot or n_boot < 0:
        raise ValueError(f"ballot_weights: expected non-negative integers, received "
                         f"n_ballots={n_ballots!r}, n_boot={n_boot!r}; pass counts")
    n_ballots, n_boot = int(n_ballots), int(n_boot)
    rng = np.random.default_rng(seed)
    if n_ballots == 0:
        return np.zeros((n_boot, 0), dtype=np.int64)
    if blocks is None:
        return rng.multinomial(n_ballots, np.full(n_ballots, 1.0 / n_ballots), size=n_boot)
    block_ids = block_codes(blocks)
    if block_ids.shape != (n_ballots,):
        raise ValueError(f"blocks: expected one item id per ballot ({n_ballots}), received "
                         f"shape {block_ids.shape}; pass the ballots' item column")
    n_items = int(block_ids.max()) + 1
    item_counts = rng.multinomial(n_items, np.full(n_items, 1.0 / n_items), size=n_boot)
    return item_counts[:, block_ids]


def block_codes(blocks) -> np.ndarray:
    """Item ids → codes 0..u−1; each ballot with a missing item (None, NaN, "") is its own block.

    >>> block_codes(["a", "b", "a", "", None]).tolist()
    [0, 1, 0, 2, 3]
    """
    values = pd.Series(np.asarray(blocks, dtype=object))
    values = values.where(values.astype(str).str.len() > 0, None)
    codes, uniques = pd.factorize(values, use_na_sentinel=True)
    codes = np.asarray(codes, dtype=np.int64)
    lone = codes < 0
    codes[lone] = len(uniques) + np.arange(int(lone.sum()))
    return codes


def percentile_interval(samples, *, level: float = 0.95) -> tuple[float, float]:
    """Percentile interval of bootstrap replicates, ignoring NaN replicates.

    ``(q_{(1−level)/2}, q_{(1+level)/2})`` of the finite replicates (linear interpolation);
    ``(nan, nan)`` when no replicate is finite.

    Examples
    --------
    >>> low, high = percentile_interval([np.nan, *range(101)], level=0.9)
    >>> round(low, 9), round(high, 9)
    (5.0, 95.0)

    References
    ----------
    Efron B, Tibshirani RJ (1993). An Introduction to the Bootstrap, ch. 13. Chapman & Hall.
    """
    if not 0 < level < 1:
        raise ValueError(f"level: expected a confidence level in (0, 1), received {level!r}; "
                         "e.g. level=0.95")
    x = np.asarray(samples, dtype=np.float64).ravel()
    x = x[np.isfinite(x)]
    if x.size == 0:
        return (float("nan"), float("nan"))
    low, high = np.quantile(x, [(1 - level) / 2, (1 + level) / 2])
    return (float(low), float(high))


def bootstrap_interval(estimate, replicates, *, method: str = "percentile",
                       level: float = 0.95, bounds: tuple[float, float] | None = None
                       ) -> tuple[float, float]:
    r"""A bootstrap confidence interval from the point estimate and its replicate values.

    A pure function of (estimate, replicates), so any way of forming replicates (ballot or
    block bootstrap, warm-started fits) composes with any method. NaN replicates are ignored;
    ``(nan, nan)`` when none is finite (or, for every method but "percentile", when the
    estimate is not).
    With q_p the p-quantile of the replicates θ*, α = 1 − level and z_p = Φ⁻¹(p):

    ``percentile``  (q_{α/2}, q_{1−α/2}).
    ``basic``       (2θ̂ − q_{1−α/2}, 2θ̂ − q_{α/2}): the pivotal interval; it reflects the
                    replicates' shift from θ̂ back onto θ̂, so a statistic the resampling biases
                    (θ* − θ̂ ≈ θ̂ − θ) is corrected (Davison & Hinkley 1997, eq. 5.6).
    ``bc``          (q_{Φ(2z₀ + z_{α/2})}, q_{Φ(2z₀ + z_{1−α/2})}) with
                    z₀ = Φ⁻¹(#{θ* < θ̂} + ½#{θ* = θ̂}) / B): bias-corrected percentile, BCa
                    with acceleration 0 (Efron 1987). The share is kept inside
                    [1/(2B), 1 − 1/(2B)] so z₀ stays finite.

    ``basic-log``   (θ̂²/q_{1−α/2}, θ̂²/q_{α/2}): the basic interval on the log scale, for a
                    positive ratio whose resampling shift is proportional to its size
                    (Davison & Hinkley 1997, §5.2.1, basic limits on a transformed scale).
                    Needs θ̂ > 0 and positive replicates (others are left out).
    ``normal``      θ̂ ± z_{1−α/2}·s with s the replicates' standard deviation: the standard
                    interval, centred on the estimate. For statistics whose bootstrap shift is
                    not the estimate's own bias (resampled fits move further than the estimate
                    does), and for few replicates: a standard error needs far fewer replicates
                    than 2.5 % quantiles (Efron & Tibshirani 1993, §6.5 and §13.3).

    ``corrected-log``  exp(ℓ̂ + d ± z_{1−α/2}·√(s² + d²)) with ℓ̂ = log θ̂, d = ℓ̂ − mean(log θ*)
                    and s the SD of log θ*: the bias-corrected estimate 2ℓ̂ − mean(log θ*)
                    (Efron & Tibshirani 1993, §10.6, on the log scale) with a normal interval
                    whose variance also counts the correction itself as uncertain by its own
                    size (our rule:
                    the correction varies with the data as much as it moves the estimate;
                    checked by ``tests/benchmarks/coverage.py``). As √(s² + d²) ≥ |d|, the
                    estimate always lies inside. Positive θ̂ and replicates only, as basic-log.

    ``bounds`` clips the interval to the metric's range (a basic interval can leave it).

    Examples
    --------
    Replicates shifted up by 0.2 from an estimate of 1.0:

    >>> reps = np.linspace(0.7, 1.7, 101)
    >>> [round(v, 3) for v in bootstrap_interval(1.0, reps, method="percentile")]
    [0.725, 1.675]
    >>> [round(v, 3) for v in bootstrap_interval(1.0, reps, method="basic")]
    [0.325, 1.275]

    References
    ----------
    Efron B (1987). Better bootstrap confidence intervals. Journal of the American Statistical
    Association 82(397):171–185.
    Davison AC, Hinkley DV (1997). Bootstrap Methods and their Application, ch. 5. Cambridge
    University Press.
    """
    if method not in INTERVAL_METHODS:
        raise ValueError(f"method: expected one of {INTERVAL_METHODS}, received {method!r}; "
                         "e.g. method='basic'")
    if method == "percentile":
        low, high = percentile_interval(replicates, level=level)
    else:
        x = np.asarray(replicates, dtype=np.float64).ravel()
        x = x[np.isfinite(x)]
        estimate = float(estimate) if estimate is not None else float("nan")
        if x.size == 0 or not np.isfinite(estimate):
            return (float("nan"), float("nan"))
        if method == "basic":
            q_low, q_high = percentile_interval(x, level=level)
            low, high = 2 * estimate - q_high, 2 * estimate - q_low
        elif method == "basic-log":
            x = x[x > 0]
            if x.size == 0 or estimate <= 0:
                return (float("nan"), float("nan"))
            q_low, q_high = percentile_interval(x, level=level)
            low, high = estimate ** 2 / q_high, estimate ** 2 / q_low
        elif method == "corrected-log":
            x = x[x > 0]
            if x.size < 2 or estimate <= 0:
                return (float("nan"), float("nan"))
            from scipy.stats import norm  # local: scipy is a heavy import for the cheap paths

            logs = np.log(x)
            shift = np.log(estimate) - float(logs.mean())
            half = float(norm.ppf(0.5 + level / 2)) * float(np.hypot(logs.std(ddof=1), shift))
            low, high = (estimate * float(np.exp(shift + sign * half)) for sign in (-1, 1))
        elif method == "normal":
            from scipy.stats import norm  # local: scipy is a heavy import for the cheap paths

            half = float(norm.ppf(0.5 + level / 2)) * float(x.std(ddof=1)) if x.size > 1 \
                else 0.0
            low, high = estimate - half, estimate + half
        else:
            low, high = _bias_corrected(estimate, x, level)
    if bounds is not None and np.isfinite(low):
        low, high = (float(np.clip(v, bounds[0], bounds[1])) for v in (low, high))
    return (low, high)


def _bias_corrected(estimate: float, x: np.ndarray, level: float) -> tuple[float, float]:
    from scipy.stats import norm  # local: scipy is a heavy import for the cheap paths

    b = x.size
    tol = 1e-12 * max(1.0, abs(estimate))
    share = (float((x < estimate - tol).sum()) + 0.5 * float((np.abs(x - estimate) <= tol)
                                                             .sum())) / b
    z0 = norm.ppf(min(max(share, 0.5 / b), 1 - 0.5 / b))
    alpha = (1 - level) / 2
    probs = norm.cdf(2 * z0 + norm.ppf([alpha, 1 - alpha]))
    low, high = np.quantile(x, probs)
    return (float(low), float(high))


def jackknife_se(leave_one_out) -> float:
    r"""Delete-one jackknife standard error from the statistic recomputed without each unit.

    ``se = √((n − 1)/n · Σᵢ (θ₍ᵢ₎ − θ̄₍·₎)²)`` over the n finite leave-one-out values θ₍ᵢ₎
    (Quenouille 1956, Tukey 1958); NaN values are left out, and fewer than 3 finite values
    give NaN. For the sample mean it equals the textbook s/√n.

    Leave-one-out means of the values 1, 3, 5, 7 (s/√n = 2.582/2 = 1.291):

    >>> round(jackknife_se([5.0, 13 / 3, 11 / 3, 3.0]), 4)
    1.291

    References
    ----------
    Efron B, Tibshirani RJ (1993). An Introduction to the Bootstrap, ch. 11. Chapman & Hall.
    Tukey JW (1958). Bias and confidence in not-quite large samples (abstract). Annals of
    Mathematical Statistics 29:614.
    """
    x = np.asarray(leave_one_out, dtype=np.float64).ravel()
    x = x[np.isfinite(x)]
    n = x.size
    if n < 3:
        return float("nan")
    return float(np.sqrt((n - 1) / n * np.sum((x - x.mean()) ** 2)))


def stable_seed(*parts) -> int:
    """A seed derived from ``parts`` by SHA-256, the same in every process and Python version.

    Python's ``hash()`` of a string changes per process (hash randomisation), so it must never
    seed anything that should be reproducible. Parts are joined as ``str`` with a separator
    byte; the first 8 bytes of the digest give a non-negative 63-bit int.

    >>> stable_seed(20240601, "council", "2019")
    3673173852898651632
    """
    text = "\x1f".join(str(p) for p in parts).encode("utf-8")
    return int.from_bytes(hashlib.sha256(text).digest()[:8], "big") & (2**63 - 1)
