"""The member pairs a network picture draws, kept by the build within a size budget.

The report never recomputes agreement: the build that computed a period's figures stores the
pairs of the period's edge set beside them — the ties its graph rule keeps (for ``weighted``,
the equal-likelihood ties that the tie-count measures count; :mod:`graphs`) — strongest first,
at most :data:`blocwatch.pipeline.options.EDGE_BUDGET` per period. So a picture shows the ties
its numbers counted, not every pair (a body of 45 members has 990, a hairball that hides the
split).
"""

from __future__ import annotations

import numpy as np
import pandas as pd

EDGE_COLUMNS = ["member_a", "member_b", "agreement"]


def strongest_pairs(agreement: np.ndarray, member_ids, budget: int,
                    keep: np.ndarray | None = None) -> tuple[pd.DataFrame, int]:
    """The ``budget`` member pairs with the highest agreement, and how many pairs had a value.

    ``keep``: a boolean (n, n) edge set (the graph rule's); only its pairs are candidates.
    Pairs without a value (NaN: too few shared ballots) are never kept. Ties at the cut are
    broken by member order, so the same matrix always keeps the same pairs.

    >>> a = np.array([[1, .9, np.nan], [.9, 1, .4], [np.nan, .4, 1]])
    >>> frame, n = strongest_pairs(a, np.array(["x", "y", "z"]), budget=1)
    >>> frame.values.tolist(), n
    ([['x', 'y', 0.9]], 2)
    """
    agreement = np.asarray(agreement, dtype=float)
    ids = np.asarray(member_ids, dtype=object)
    i, j = np.triu_indices(agreement.shape[0], k=1)
    value = agreement[i, j]
    ok = ~np.isnan(value)
    n_pairs = int(ok.sum())
    if keep is not None:
        ok &= np.asarray(keep, dtype=bool)[i, j]
    i, j, value = i[ok], j[ok], value[ok]
    order = np.lexsort((j, i, -value))[: max(int(budget), 0)]  # highest first, then by position
    frame = pd.DataFrame({"member_a": ids[i[order]], "member_b": ids[j[order]],
                          "agreement": value[order]}, columns=EDGE_COLUMNS)
    return frame, n_pairs
