"""Krippendorff's alpha: how far a panel's members agree beyond chance, with missing answers.

Members are the *coders*, ballots (proposals, items) the *units*. For each unit u answered by
m_u ≥ 2 members, every ordered pair of its answers adds 1/(m_u − 1) to the coincidence matrix
o_ck; n_c = Σ_k o_ck counts the pairable answers of value c and n = Σ_c n_c. Then

    α = 1 − D_o / D_e = 1 − (n − 1) Σ_ck o_ck δ²_ck / Σ_ck n_c n_k δ²_ck

with the difference function δ² of the level of measurement:

* nominal: δ²_ck = 0 if c = k else 1;
* ordinal: δ²_ck = (Σ_{g=c}^{k} n_g − (n_c + n_k)/2)² (values in rank order);
* interval: δ²_ck = (c − k)².

The coincidence matrix is one matrix product of the value × unit count array with itself.
Interval data use the closed form Σ_{i≠j in u}(x_i − x_j)² = 2(m_u Σx² − (Σx)²), so any
number of distinct amounts costs O(n·b).
"""

from __future__ import annotations

import numpy as np

from blocwatch.metrics.registry import MetricValue, PeriodInput, register
from blocwatch.metrics.validation import normalise_labels

LEVELS = ("nominal", "ordinal", "interval")
# Nominal and ordinal data build an L × L coincidence matrix over the distinct values.
MAX_DISTINCT = 5000


def _check(data, level: str) -> np.ndarray:
    x = np.asarray(data, dtype=np.float64)
    if x.ndim != 2:
        raise ValueError(f"data: expected a 2-D coder (member) × unit (ballot) array, received "
                         f"shape {x.shape}; fix: pass one row per member")
    if np.isinf(x).any():
        raise ValueError("data: expected finite values or NaN for a missing answer, received "
                         "inf; fix: replace inf with NaN")
    if level not in LEVELS:
        raise ValueError(f"level: expected one of {', '.join(LEVELS)}, received {level!r}; "
                         "fix: nominal for categories, ordinal for ranks, interval for amounts")
    return x


def _interval_sums(x: np.ndarray, pairable: np.ndarray) -> tuple[float, float, float]:
    """(n, Σ o δ², Σ n_c n_k δ²) for interval data, without a coincidence matrix."""
    cast = ~np.isnan(x) & pairable[None, :]
    v = np.where(cast, x, 0.0)
    m = cast.sum(axis=0).astype(np.float64)
    s1, s2 = v.sum(axis=0), (v * v).sum(axis=0)
    ok = m >= 2
    observed = float(np.sum(2.0 * (m[ok] * s2[ok] - s1[ok] ** 2) / (m[ok] - 1.0)))
    n = float(m.sum())
    expected = 2.0 * (n * float(s2.sum()) - float(s1.sum()) ** 2)
    return n, observed, expected


def _coincidence_sums(x: np.ndarray, pairable: np.ndarray, level: str
                      ) -> tuple[float, float, float]:
    """(n, Σ o δ², Σ n_c n_k δ²) from the coincidence matrix over the distinct values."""
    cast = ~np.isnan(x) & pairable[None, :]
    values, codes = np.unique(np.where(cast, x, np.nan)[cast], return_inverse=True)
    if values.size > MAX_DISTINCT:
        raise ValueError(f"data: expected at most {MAX_DISTINCT} distinct values for {level} "
                         f"alpha, received {values.size}; fix: use level='interval' for amounts")
    counts = np.zeros((values.size, x.shape[1]))  # value × unit
    np.add.at(counts, (codes, np.nonzero(cast)[1]), 1.0)
    m = counts.sum(axis=0)
    inv = np.where(m >= 2, 1.0 / np.maximum(m - 1.0, 1.0), 0.0)
    o = (counts * inv) @ counts.T - np.diag(counts @ inv)
    nc = o.sum(axis=1)
    if level == "nominal":
        delta = 1.0 - np.eye(values.size)
    else:  # ordinal: the mass of ranks between c and k, halving the two end values
        cum = np.concatenate([[0.0], np.cumsum(nc)])
        lo = np.minimum.outer(np.arange(values.size), np.arange(values.size))
        hi = np.maximum.outer(np.arange(values.size), np.arange(values.size))
        delta = (cum[hi + 1] - cum[lo] - (nc[:, None] + nc[None, :]) / 2.0) ** 2
    return float(nc.sum()), float((o * delta).sum()), float(nc @ delta @ nc)


def krippendorff_alpha(data, *, level: str = "interval") -> float:
    """Krippendorff's alpha for a coder × unit array with missing answers (NaN).

    ``α = 1 − (n − 1) Σ_ck o_ck δ²_ck / Σ_ck n_c n_k δ²_ck`` (see the module notes for o, n_c
    and δ²). 1 is perfect agreement, 0 agreement at chance level, below 0 systematic
    disagreement. Units answered by fewer than two coders are not pairable and are ignored.

    Parameters
    ----------
    data : (coders, units) float, NaN for a missing answer (members × ballots).
    level : "nominal", "ordinal" or "interval".

    Returns
    -------
    float in [−1, 1] (it can fall below −1 only for tiny samples).

    Raises
    ------
    ValueError
        When fewer than two pairable answers exist, or every pairable answer is the same
        value (D_e = 0: α is 0/0, undefined).

    Examples
    --------
    Two coders, three units, one disagreement (3 vs 4). Hand-calculated: n = 6 pairable
    values, Σ o δ² = 2, Σ n_c n_k δ² = 2(6·35 − 13²) = 82, so α = 1 − 5·2/82 = 36/41:

    >>> round(krippendorff_alpha([[1, 2, 3], [1, 2, 4]], level="interval"), 6)
    0.878049

    References
    ----------
    Krippendorff K (2011). Computing Krippendorff's alpha-reliability. Departmental Papers
    (ASC), University of Pennsylvania, 43.
    Hayes AF, Krippendorff K (2007). Answering the call for a standard reliability measure for
    coding data. Communication Methods and Measures 1(1):77–89.
    """
    x = _check(data, level)
    pairable = (~np.isnan(x)).sum(axis=0) >= 2
    if level == "interval":
        n, observed, expected = _interval_sums(x, pairable)
    else:
        n, observed, expected = _coincidence_sums(x, pairable, level)
    if n < 2:
        raise ValueError(f"data: expected at least two pairable answers (units answered by two "
                         f"or more coders), received {n:g}; fix: pool more ballots or members")
    if expected <= 1e-12 * max(n * n, 1.0):
        raise ValueError("data: every pairable answer has the same value, so expected "
                         "disagreement is 0 and alpha is undefined; fix: report agreement as "
                         "perfect but undefined, or pool a longer period")
    return float(1.0 - (n - 1.0) * observed / expected)


def split_by_group(data, labels) -> np.ndarray:
    """Each unit split into one unit per group: (n, b·k), NaN outside the member's group.

    >>> split_by_group([[1.0, 2.0], [3.0, 4.0]], [0, 1]).tolist()
    [[1.0, 2.0, nan, nan], [nan, nan, 3.0, 4.0]]
    """
    x = np.asarray(data, dtype=np.float64)
    lab = np.asarray(labels)
    k = int(lab.max()) + 1 if lab.size else 0
    mine = lab[:, None] == np.arange(k)[None, :]  # n × k
    out = np.where(mine[:, :, None], x[:, None, :], np.nan)  # n × k × b
    return out.reshape(x.shape[0], k * x.shape[1])


def alpha_by_group(data, labels, *, level: str = "interval") -> np.ndarray:
    """Krippendorff's alpha of each group's members alone, (k,) with NaN where undefined."""
    x = _check(data, level)
    lab = np.asarray(labels, dtype=np.int64)
    k = int(lab.max()) + 1 if lab.size else 0
    out = np.full(k, np.nan)
    for g in range(k):  # one call per group (k is small), not per pair
        try:
            out[g] = krippendorff_alpha(x[lab == g], level=level)
        except ValueError:
            pass
    return out


def alpha_within_groups(data, labels, *, level: str = "interval") -> float:
    """Alpha with each ballot × group as its own unit: agreement inside the groups only.

    Only same-group pairs enter the observed disagreement; the expected disagreement comes
    from all pairable answers. Well above the whole panel's alpha, it says the members agree
    mostly with their own school.
    """
    return krippendorff_alpha(split_by_group(_check(data, level), labels), level=level)


@register("reliability", ("krippendorff_alpha", "krippendorff_alpha_within"),
          bounds={"krippendorff_alpha": (-1.0, 1.0), "krippendorff_alpha_within": (-1.0, 1.0)},
          needs=("scores",))
def _reliability_family(inp: PeriodInput) -> dict[str, MetricValue]:
    """Alpha of the whole panel and pooled within groups, on the period's scored ballots at
    ``inp.score_level``. Yes/no bodies carry no scores and get no rows (``needs``)."""
    labels, k = normalise_labels(inp.labels, n=inp.n)
    if inp.scores is None:
        why = "needs scored ballots (categorical, ordinal or continuous); this period has none"
        return {"krippendorff_alpha": MetricValue.missing(why),
                "krippendorff_alpha_within": MetricValue.missing(why)}
    scores, level = np.asarray(inp.scores, dtype=np.float64), inp.score_level or "interval"
    out = {}
    try:
        out["krippendorff_alpha"] = MetricValue(krippendorff_alpha(scores, level=level))
    except ValueError as exc:
        out["krippendorff_alpha"] = MetricValue.missing(str(exc))
    if k < 2:
        out["krippendorff_alpha_within"] = MetricValue.missing(
            "needs at least two groups; this period has one")
        return out
    try:
        out["krippendorff_alpha_within"] = MetricValue(
            alpha_within_groups(scores, labels, level=level))
    except ValueError as exc:
        out["krippendorff_alpha_within"] = MetricValue.missing(str(exc))
    return out
