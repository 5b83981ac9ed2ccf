"""How cleanly groups separate in the space of disagreements: classifier accuracy, silhouette.

Registers the ``separability`` family (``separability``, ``silhouette``) on
D = 1 − agreement. Kept cheap because it runs once per bootstrap replicate: the classifier
sees only the k-dimensional classical-MDS embedding.
"""

from __future__ import annotations

import numpy as np
from sklearn.metrics import silhouette_score
from sklearn.model_selection import StratifiedKFold

from blocwatch.metrics.registry import MetricValue, PeriodInput, register
from blocwatch.metrics.space.logistic import fit_logistic, predict_logistic
from blocwatch.metrics.space.mds import agreement_distances, classical_mds, impute_distances
from blocwatch.metrics.validation import check_distances, normalise_labels

__all__ = ["separability", "silhouette"]

MIN_GROUP = 2  # members a group needs to take part in cross-validation
MAX_SPLITS = 5
# The classifier is blocwatch.metrics.space.logistic (the model of scikit-learn's
# LogisticRegression(C=1), tested against it): its per-fit overhead is far below sklearn's,
# which matters because this runs per bootstrap replicate and per permutation.


def _canonical_order(d: np.ndarray, codes: np.ndarray, x: np.ndarray) -> np.ndarray:
    """Member order that ignores roster order and group numbering: groups by size and mean
    within-group distance, members by mean distance and |coordinates| (rounded so float
    noise ties). StratifiedKFold numbers classes by first appearance, so with this order
    the seeded folds are the same however members and groups are listed."""
    same = codes[:, None] == codes[None, :]
    sizes = np.bincount(codes)
    within = np.bincount(codes, weights=np.where(same, d, 0.0).sum(axis=1))
    within = within / np.maximum(sizes * (sizes - 1), 1)
    group_rank = np.empty_like(sizes)
    group_rank[np.lexsort(np.round([within, -sizes], 9))] = np.arange(sizes.size)
    keys = np.vstack([np.abs(x).T[::-1], d.mean(axis=1), group_rank[codes]])
    return np.lexsort(np.round(keys, 9))


def balanced_accuracy(y_true: np.ndarray, y_pred: np.ndarray) -> float:
    """Mean over classes of the share of that class predicted right (Brodersen et al. 2010).

    The same number as ``sklearn.metrics.balanced_accuracy_score`` without its per-call input
    validation, which cost more than the fits here (tested against it).

    >>> round(balanced_accuracy(np.array([0, 0, 0, 1]), np.array([0, 0, 1, 1])), 6)  # (2/3 + 1)/2
    0.833333
    """
    classes, y = np.unique(y_true, return_inverse=True)
    hits = np.bincount(y, weights=(y_true == y_pred), minlength=classes.size)
    return float(np.mean(hits / np.bincount(y, minlength=classes.size)))


def _separability(d: np.ndarray, codes: np.ndarray, k: int, seed: int) -> tuple[float, str]:
    """Value and note; ``d`` checked, ``codes`` normalised. Raises ValueError if undefined."""
    sizes = np.bincount(codes, minlength=1)
    keep_groups = np.flatnonzero(sizes >= MIN_GROUP)
    if keep_groups.size < 2:
        raise ValueError(f"labels: expected at least two groups of {MIN_GROUP}+ members, "
                         f"received group sizes {sorted(sizes.tolist(), reverse=True)}; "
                         "fix: separability needs two groups to tell apart")
    keep = np.flatnonzero(np.isin(codes, keep_groups))
    x, lam = classical_mds(d, k, return_eigenvalues=True)
    chance = f"chance level 1/{keep_groups.size} = {1 / keep_groups.size:.3g}"
    if lam[0] <= 0:  # every member at one point: any classifier predicts one class
        return 1.0 / keep_groups.size, f"all members coincide in the embedding; {chance}"
    x = x / np.sqrt(lam[0] / x.shape[0])  # one scale, so C = 1 means the same every period
    keep = keep[_canonical_order(impute_distances(d)[np.ix_(keep, keep)], codes[keep],
                                 x[keep])]
    xs = x[keep]
    ys = np.unique(codes[keep], return_inverse=True)[1]
    smallest = int(sizes[keep_groups].min())
    splits = min(MAX_SPLITS, smallest)
    pred = np.empty_like(ys)
    folds = StratifiedKFold(n_splits=splits, shuffle=True, random_state=seed)
    for train, test in folds.split(xs, ys):
        coef = fit_logistic(xs[train], ys[train], n_classes=keep_groups.size)
        pred[test] = predict_logistic(xs[test], coef)
    value = balanced_accuracy(ys, pred)
    notes = [f"{splits}-fold CV over {keep_groups.size} groups; {chance}"]
    dropped = codes.shape[0] - keep.shape[0]
    if dropped:
        notes.append(f"{dropped} member(s) in groups under {MIN_GROUP} members left out")
    if smallest < 4:
        notes.append(f"smallest group has {smallest} members: CV is unstable")
    return value, "; ".join(notes)


def separability(distances, labels, *, k: int = 2, seed: int = 0) -> float:
    r"""Cross-validated balanced accuracy of predicting group from a k-dim MDS embedding.

    Members are placed by :func:`~blocwatch.metrics.space.mds.classical_mds` (k dimensions,
    rescaled so axis 1 has unit RMS); a logistic regression (L2, C = 1, as scikit-learn's,
    fitted by :func:`~blocwatch.metrics.space.logistic.fit_logistic`)
    predicts each member's group from out-of-fold fits; the score is the balanced accuracy of
    the pooled out-of-fold predictions,

    .. math:: BA = \frac1G \sum_g \frac{\#\{i \in g: \hat y_i = g\}}{n_g},

    whose chance level is 1/G. Folds: ``StratifiedKFold`` with min(5, smallest group)
    splits, shuffled with ``seed`` after putting members in a canonical order (groups by
    size and spread, members by mean distance and coordinates), so the value does not depend
    on the order or numbering of members and groups. Groups with fewer than 2 members are
    left out of the classification (they stay in the embedding).

    Parameters
    ----------
    distances : array-like (n, n)
        Symmetric, non-negative, e.g. 1 − agreement; NaN imputed as in
        :func:`~blocwatch.metrics.space.mds.impute_distances`.
    labels : array-like (n,)
    k : int, keyword-only
        Embedding dimensions.
    seed : int, keyword-only
        Fold shuffle.

    Raises
    ------
    ValueError
        Fewer than two groups with at least 2 members.

    Examples
    --------
    >>> d = 1.0 - np.kron(np.eye(2), np.ones((4, 4)))  # two blocs, 0 within, 1 across
    >>> separability(d, [0] * 4 + [1] * 4, seed=0)
    1.0

    References
    ----------
    .. [1] K. H. Brodersen, C. S. Ong, K. E. Stephan, J. M. Buhmann, "The balanced accuracy
       and its posterior distribution", ICPR 2010, 3121-3124.
    .. [2] W. S. Torgerson, Psychometrika 17, 401-419, 1952.
    """
    codes, _ = normalise_labels(labels)
    d = check_distances(distances, n=codes.shape[0])
    return _separability(d, codes, k, int(seed))[0]


def _silhouette(d: np.ndarray, codes: np.ndarray, k: int) -> float:
    n = codes.shape[0]
    if not 2 <= k <= n - 1:
        raise ValueError(f"labels: expected between 2 and n - 1 = {n - 1} groups, received "
                         f"{k}; fix: silhouette needs two groups and one with 2+ members")
    return float(silhouette_score(impute_distances(d), codes, metric="precomputed"))


def silhouette(distances, labels) -> float:
    r"""Mean silhouette width of the groups on a precomputed distance matrix.

    .. math:: s_i = \frac{b_i - a_i}{\max(a_i, b_i)}

    a_i: mean distance to i's own group; b_i: smallest mean distance to another group;
    s_i = 0 for a member alone in its group. Via ``sklearn.metrics.silhouette_score(D,
    labels, metric="precomputed")`` on D with a zero diagonal and NaN imputed as in
    :func:`~blocwatch.metrics.space.mds.impute_distances`. In [−1, 1].

    Raises
    ------
    ValueError
        Fewer than 2 groups, or as many groups as members.

    Examples
    --------
    >>> x = np.array([0.0, 1.0, 10.0, 11.0])
    >>> round(silhouette(np.abs(x[:, None] - x[None, :]), [0, 0, 1, 1]), 6)
    0.899749

    References
    ----------
    .. [1] P. J. Rousseeuw, "Silhouettes: a graphical aid to the interpretation and
       validation of cluster analysis", J. Comput. Appl. Math. 20, 53-65, 1987.
    """
    codes, k = normalise_labels(labels)
    d = check_distances(distances, n=codes.shape[0])
    return _silhouette(d, codes, k)


_NAMES = ("separability", "silhouette")


@register("separability", _NAMES,
          bounds={"separability": (0.0, 1.0), "silhouette": (-1.0, 1.0)},
          permutation_null=("separability",), expensive=True,
          direction={"separability": "higher", "silhouette": "higher"})
def _family(inp: PeriodInput) -> dict[str, MetricValue]:
    codes, k = normalise_labels(inp.labels)
    d = agreement_distances(inp.agreement)
    if d.shape[0] != codes.shape[0]:
        raise ValueError(f"agreement: expected {codes.shape[0]} × {codes.shape[0]} to match "
                         f"the labels, received {d.shape}; fix: align matrix and labels")
    n = codes.shape[0]
    if n == 0:
        return {m: MetricValue.missing("no members in this period") for m in _NAMES}
    if k < 2:
        return {m: MetricValue.missing("only one group: nothing to separate")
                for m in _NAMES}
    off = ~np.eye(n, dtype=bool)
    if np.isnan(d[off]).all():
        return {m: MetricValue.missing("no two members shared a ballot") for m in _NAMES}
    out = {}
    sizes = np.bincount(codes)
    if (sizes >= MIN_GROUP).sum() < 2:
        out["separability"] = MetricValue.missing(
            f"needs two groups of {MIN_GROUP}+ members; group sizes "
            f"{sorted(sizes.tolist(), reverse=True)}")
    else:
        out["separability"] = MetricValue(*_separability(d, codes, 2, int(inp.seed)))
    if k >= n:
        out["silhouette"] = MetricValue.missing("every member is its own group")
    else:
        out["silhouette"] = MetricValue(_silhouette(d, codes, k))
    return out
