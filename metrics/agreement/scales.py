"""Pairwise agreement for ballots that are not yes/no: categories, ordered scores, amounts.

What counts as "close" depends on the kind of answer. Categories only match or differ; ordered
scores and amounts have a distance. Every function here works on a member × ballot array and
returns n × n matrices from matrix products (or, for arbitrary amounts, a chunked broadcast
with a stated memory bound) — never a loop over member pairs.

Encodings used throughout:

* ``codes`` — int array (n, b), the answer's level or option index ``0..L−1``; ``−1`` where the
  member cast no answer (absent, abstained, or the ballot is not of this kind).
* ``positions`` — float array (n, b), the answer placed on [0, 1] by its ballot's range,
  ``(x − low) / (high − low)``; NaN where no answer was cast.
* ``ballot_weights`` — optional (b,) non-negative weights (bootstrap counts); each ballot's
  contribution to every sum is multiplied by its weight.

Count functions return ``(sum, shared)`` pairs so that a body mixing kinds can add them up
ballot by ballot (see :mod:`blocwatch.pipeline.scales`).
"""

from __future__ import annotations

import numpy as np

# Working memory one broadcast chunk of :func:`distance_counts` may use (bytes).
DEFAULT_CHUNK_BYTES = 32 * 2**20
# Up to this many distinct positions the exact level-product form is used instead.
MAX_LEVELS_FOR_PRODUCT = 64


def _check_codes(codes) -> np.ndarray:
    c = np.asarray(codes)
    if c.ndim != 2:
        raise ValueError(f"codes: expected a 2-D member × ballot array, received shape "
                         f"{c.shape}; fix: pass one row per member")
    if c.size and not np.issubdtype(c.dtype, np.integer):
        raise ValueError(f"codes: expected integer level codes (−1 = no answer), received dtype "
                         f"{c.dtype}; fix: map options to 0..L−1 first")
    if c.size and c.min() < -1:
        raise ValueError(f"codes: expected codes ≥ −1, received {c.min()}; fix: use −1 for "
                         "'no answer'")
    return c.astype(np.int64)


def _check_positions(positions) -> np.ndarray:
    p = np.asarray(positions, dtype=np.float64)
    if p.ndim != 2:
        raise ValueError(f"positions: expected a 2-D member × ballot array, received shape "
                         f"{p.shape}; fix: pass one row per member")
    finite = p[~np.isnan(p)]
    if finite.size and (np.isinf(finite).any() or finite.min() < 0 or finite.max() > 1):
        raise ValueError(f"positions: expected values in [0, 1] (NaN = no answer), received "
                         f"{finite.min()}..{finite.max()}; fix: divide by the ballot's range")
    return p


def _ballot_weights(ballot_weights, b: int) -> np.ndarray:
    if ballot_weights is None:
        return np.ones(b)
    w = np.asarray(ballot_weights, dtype=np.float64)
    if w.shape != (b,) or (w < 0).any():
        raise ValueError(f"ballot_weights: expected {b} non-negative weights, received shape "
                         f"{w.shape}; fix: pass one weight per ballot column")
    return w


def level_one_hot(codes, n_levels: int | None = None) -> np.ndarray:
    """The (L, n, b) 0/1 array X with X[k, i, j] = 1 when member i gave level k on ballot j.

    >>> level_one_hot([[0, -1], [1, 1]]).astype(int).tolist()
    [[[1, 0], [0, 0]], [[0, 0], [1, 1]]]
    """
    c = _check_codes(codes)
    top = int(c.max()) + 1 if c.size else 0
    L = top if n_levels is None else int(n_levels)
    if top > L:
        raise ValueError(f"codes: expected levels 0..{L - 1}, received {top - 1}; fix: pass "
                         "n_levels covering every option")
    return (c[None, :, :] == np.arange(L)[:, None, None]).astype(np.float64)


def match_counts(codes, *, ballot_weights=None) -> tuple[np.ndarray, np.ndarray]:
    """``(same, shared)``: weighted counts of shared ballots answered alike / answered by both.

    ``same = Σ_k X_k W X_kᵀ`` and ``shared = C W Cᵀ`` with X_k the one-hot array of level k,
    C the answered mask and W = diag(ballot weights).

    >>> same, shared = match_counts([[0, 1, 2], [0, 2, 2]])
    >>> same[0, 1], shared[0, 1]
    (np.float64(2.0), np.float64(3.0))
    """
    c = _check_codes(codes)
    w = _ballot_weights(ballot_weights, c.shape[1])
    cast = (c >= 0).astype(np.float64)
    shared = (cast * w) @ cast.T
    x = level_one_hot(c)
    n_levels = x.shape[0]
    x = x.transpose(1, 0, 2).reshape(c.shape[0], -1)  # n × (L·b), level-major columns
    same = (x * np.tile(w, n_levels)) @ x.T
    return same, shared


def ratio_matrix(num: np.ndarray, denom: np.ndarray, *, min_shared: float = 1,
                 shared: np.ndarray | None = None, complement: bool = False) -> np.ndarray:
    """num / denom (or 1 − num / denom) as float64, NaN where the pair shared fewer than
    ``min_shared`` ballots or ``denom`` is 0; diagonal 1.

    ``shared`` counts the ballots both members answered when it differs from ``denom`` (e.g.
    kappa, defined on fewer ballots than were shared); by default it is ``denom``. This is the
    one divider every agreement matrix goes through.

    >>> ratio_matrix(np.array([[2., 1.], [1., 2.]]), np.array([[2., 4.], [4., 2.]]),
    ...              min_shared=5).tolist()
    [[1.0, nan], [nan, 1.0]]
    """
    denom = np.asarray(denom)
    shared = denom if shared is None else np.asarray(shared)
    out = np.full(denom.shape, np.nan)
    ok = (shared >= max(min_shared, 1e-12)) & (denom > 0)
    np.divide(num, denom.astype(np.float64), out=out, where=ok)
    if complement:
        out = 1.0 - out
    np.fill_diagonal(out, 1.0)
    return out


def match_agreement(codes, *, ballot_weights=None, min_shared: int = 1) -> np.ndarray:
    """Share of shared ballots on which two members gave the same category.

    ``a_ij = Σ_b w_b [x_ib = x_jb] / Σ_b w_b``, the sum over ballots both answered: Cohen's
    observed proportion of agreement p_o. Any two different options are equally far apart.

    Parameters
    ----------
    codes : (n, b) int, option index per answer, −1 for no answer.
    ballot_weights : (b,) float, optional.
    min_shared : pairs with fewer shared ballots get NaN.

    Returns
    -------
    (n, n) float in [0, 1], NaN where undefined, diagonal 1.

    Examples
    --------
    >>> match_agreement([[0, 1, 2, 0], [0, 2, 2, -1]])[0, 1]
    np.float64(0.6666666666666666)

    References
    ----------
    Cohen J (1960). A coefficient of agreement for nominal scales. Educational and
    Psychological Measurement 20(1):37–46.
    """
    same, shared = match_counts(codes, ballot_weights=ballot_weights)
    return ratio_matrix(same, shared, min_shared=min_shared)


def _level_distance_sum(p: np.ndarray, cast: np.ndarray, w: np.ndarray,
                        levels: np.ndarray) -> np.ndarray:
    """Σ_b w_b C_i C_j |p_i − p_j| exactly, for positions drawn from a few sorted levels.

    |x − y| = x + y − 2·min(x, y) and min(x, y) − v₀ = Σ_t g_t 1[x ≥ v_t] 1[y ≥ v_t] (gaps
    g_t = v_t − v_{t−1}), so the sum is two plain products and one product of stacked
    threshold indicators ("thermometer" columns), n × ((L − 1)·b).
    """
    q = np.where(cast > 0, p - levels[0], 0.0)
    plain = (q * w) @ cast.T
    gaps = np.diff(levels)
    thermo = (p[None, :, :] >= levels[1:, None, None]) & (cast[None, :, :] > 0)
    t = (thermo * np.sqrt(gaps)[:, None, None]).transpose(1, 0, 2).reshape(p.shape[0], -1)
    tw = t * np.tile(w, len(gaps))
    return plain + plain.T - 2.0 * (tw @ t.T)


def _broadcast_distance_sum(p: np.ndarray, cast: np.ndarray, w: np.ndarray,
                            max_bytes: int) -> np.ndarray:
    """Σ_b w_b C_i C_j |p_i − p_j| by broadcasting a block of rows at a time.

    Each block holds rows × n × b float64, at most ``max_bytes``; total time O(n²·b).
    """
    n, b = p.shape
    q = np.where(cast > 0, p, 0.0)
    out = np.zeros((n, n))
    rows = max(1, int(max_bytes // max(8 * n * b, 1)))
    for start in range(0, n, rows):  # blocks of rows, not pairs
        stop = min(n, start + rows)
        diff = np.abs(q[start:stop, None, :] - q[None, :, :])
        both = cast[start:stop, None, :] * cast[None, :, :]
        out[start:stop] = (diff * both) @ w
    return out


def distance_counts(positions, *, ballot_weights=None, max_bytes: int = DEFAULT_CHUNK_BYTES
                    ) -> tuple[np.ndarray, np.ndarray]:
    """``(distance, shared)``: Σ over shared ballots of w_b |p_ib − p_jb|, and of w_b.

    Exact either way: with at most :data:`MAX_LEVELS_FOR_PRODUCT` distinct positions (any
    integer scale) by level products, otherwise by a chunked broadcast whose working memory
    stays under ``max_bytes``.

    >>> d, s = distance_counts([[0.0, 0.5, 1.0], [0.25, 0.5, np.nan]])
    >>> float(d[0, 1]), float(s[0, 1])
    (0.25, 2.0)
    """
    p = _check_positions(positions)
    w = _ballot_weights(ballot_weights, p.shape[1])
    cast = (~np.isnan(p)).astype(np.float64)
    shared = (cast * w) @ cast.T
    levels = np.unique(p[cast > 0])
    if levels.size <= 1:
        return np.zeros_like(shared), shared
    if levels.size <= MAX_LEVELS_FOR_PRODUCT:
        dist = _level_distance_sum(p, cast, w, levels)
    else:
        dist = _broadcast_distance_sum(p, cast, w, max_bytes)
    np.fill_diagonal(dist, 0.0)
    return np.maximum(dist, 0.0), shared


def distance_agreement(positions, *, ballot_weights=None, min_shared: int = 1) -> np.ndarray:
    """Agreement on ordered scores or amounts: one minus the mean scaled distance.

    ``a_ij = 1 − Σ_b w_b |x_ib − x_jb| / (range_b Σ_b w_b)`` over ballots both answered, with
    positions already divided by each ballot's range. A 4 and a 5 on a 1–9 scale agree 7/8; a
    1 and a 5 agree 1/2. This is Cohen's linear disagreement weight |k − l| / (L − 1) applied
    to the observed pairs, without the chance correction (see :func:`pairwise_kappa`).

    Parameters
    ----------
    positions : (n, b) float in [0, 1], NaN for no answer.
    ballot_weights : (b,) float, optional.
    min_shared : pairs with fewer shared ballots get NaN.

    Returns
    -------
    (n, n) float in [0, 1], NaN where undefined, diagonal 1.

    Examples
    --------
    >>> x = (np.array([[4.0], [5.0], [1.0]]) - 1) / 8  # 1–9 scale
    >>> distance_agreement(x)[0].round(12).tolist()
    [1.0, 0.875, 0.625]

    References
    ----------
    Cohen J (1968). Weighted kappa: nominal scale agreement with provision for scaled
    disagreement or partial credit. Psychological Bulletin 70(4):213–220.
    """
    dist, shared = distance_counts(positions, ballot_weights=ballot_weights)
    return ratio_matrix(dist, shared, min_shared=min_shared, complement=True)


def pairwise_pearson(scores, *, ballot_weights=None, min_shared: int = 3) -> np.ndarray:
    """Pearson correlation of two members' answers across the ballots both answered.

    ``r_ij = (N S_xy − S_x S_y) / √((N S_xx − S_x²)(N S_yy − S_y²))`` with every sum over the
    pair's shared ballots (weights w_b), each a product of masked arrays. Scores are centred
    per member first, which leaves r unchanged and limits cancellation.

    Returns (n, n) in [−1, 1]; NaN where fewer than ``min_shared`` ballots were shared or a
    member's answers on them do not vary; diagonal 1.

    Examples
    --------
    Hand-calculated: deviations (−1, 0, 1) and (−1, 1, 0) give 1/√(2·2) = 1/2.

    >>> r = pairwise_pearson([[1.0, 2, 3], [1, 3, 2], [3, 2, 1]])
    >>> round(float(r[0, 1]), 12), round(float(r[0, 2]), 12)
    (0.5, -1.0)

    References
    ----------
    Pearson K (1895). Notes on regression and inheritance in the case of two parents.
    Proceedings of the Royal Society of London 58:240–242.
    """
    s = np.asarray(scores, dtype=np.float64)
    if s.ndim != 2:
        raise ValueError(f"scores: expected a 2-D member × ballot array, received shape "
                         f"{s.shape}; fix: pass one row per member")
    w = _ballot_weights(ballot_weights, s.shape[1])
    cast = (~np.isnan(s)).astype(np.float64)
    with np.errstate(invalid="ignore"):
        centre = np.nanmean(np.where(cast > 0, s, np.nan), axis=1, keepdims=True)
    x = np.where(cast > 0, s - np.nan_to_num(centre), 0.0)
    cw = cast * w
    n = cw @ cast.T
    sx = (x * w) @ cast.T  # i's sum on ballots shared with j
    sxx = (x * x * w) @ cast.T
    sxy = (x * w) @ x.T
    num = n * sxy - sx * sx.T
    var = n * sxx - sx * sx
    den2 = var * var.T
    scale = np.maximum(np.abs(n * sxx), 1.0)
    ok = (n >= max(min_shared, 2)) & (var > 1e-12 * scale) & (var.T > 1e-12 * scale.T)
    out = np.full(n.shape, np.nan)
    np.divide(num, np.sqrt(np.where(ok, den2, 1.0)), out=out, where=ok)
    np.clip(out, -1.0, 1.0, out=out)
    np.fill_diagonal(out, 1.0)
    return out


def nonnegative(signed, *, how: str = "clip") -> np.ndarray:
    """Map a signed agreement (kappa, correlation) in [−1, 1] to a graph weight in [0, 1].

    ``clip``: max(s, 0) — chance-level and worse-than-chance pairs get no tie, so 0 keeps its
    meaning "no affinity beyond chance" and modularity's degree null model stays valid (it
    needs weights ≥ 0).
    ``shift``: (s + 1)/2 — keeps the order of negative values but gives chance-level pairs 1/2,
    which brings back the dense-graph compression of modularity. NaN stays NaN.

    >>> nonnegative(np.array([-0.5, 0.0, 0.6])).tolist()
    [0.0, 0.0, 0.6]
    >>> nonnegative(np.array([-0.5, 0.0, 0.6]), how="shift").tolist()
    [0.25, 0.5, 0.8]

    References
    ----------
    Gómez S, Jensen P, Arenas A (2009). Analysis of community structure in networks of
    correlated data. Physical Review E 80:016114 (why signed weights need their own null).
    """
    s = np.asarray(signed, dtype=np.float64)
    if how == "clip":
        return np.where(np.isnan(s), np.nan, np.maximum(s, 0.0))
    if how == "shift":
        return (s + 1.0) / 2.0
    raise ValueError(f"how: expected 'clip' or 'shift', received {how!r}; fix: pick one")
